"""Trade studies: sweeps and sampling against independent single solves, executors,
reproducibility, the example studies through the console script, located input errors.

The reference for every study point is an independent single solve of the modified
requirement file (sizing.solve.solve of sizing.spec.validate of the changed YAML):
a study is a faster way to get the same answers.  # common practice, no source
"""
import copy
import math
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from sizing.common.caution import CAUTION
from sizing.common.errors import InputError
from sizing.inputs.spec import load, validate
from sizing.problem import solve
from sizing.studies.runner import load_study, run_study

from .cliutil import run as run_cli

ROOT = Path(__file__).resolve().parents[1]
TRAINER = ROOT / "requirements" / "trainer-jet.yaml"
STUDIES = sorted((ROOT / "studies").glob("*.yaml"))

# two parameters, 3 x 2 points; load factor 6.5 has no feasible design with this
# trainer (checked below against the single solve, not assumed)
SWEEP = {"base": str(TRAINER),
         "sweep": {"requirements.turn-4g.load_factor": [3.5, 4.6, 6.5],
                   "requirements.field.ground_roll": ["600 m", "850 m"]}}


def _single(spec, values):
    """Independent single solve with the values set in the raw YAML (user units)."""
    data = copy.deepcopy(spec.data)
    for path, value in values.items():
        parts = path.split(".")
        if parts[0] == "requirements":
            node = next(r for r in data["requirements"] if r["id"] == parts[1])
            parts = parts[2:]
        else:
            node = data
        for k in parts[:-1]:
            node = node[k]
        node[parts[-1]] = value
    return solve(validate(data, str(TRAINER)))


def test_sweep_points_equal_single_solves():
    res = run_study(SWEEP, workers=1, costs=False)
    t = res.table
    assert list(t.columns) == ["requirements.turn-4g.load_factor", "requirements.field.ground_roll", "status",
                               "wing_loading_Pa", "thrust_to_weight", "takeoff_mass_kg", "wing_area_m2",
                               "runaway_margin", "drivers", "conflicting"]
    assert len(t) == 6
    spec = load(TRAINER)
    statuses = set()
    for _, row in t.iterrows():
        ref = _single(spec, {"requirements.turn-4g.load_factor": float(row.iloc[0]),
                             "requirements.field.ground_roll": f"{row.iloc[1]:g} m"})
        assert row.status == ref.status
        statuses.add(ref.status)
        if ref.feasible:
            d = ref.design
            assert row.takeoff_mass_kg == pytest.approx(d.takeoff_mass, rel=1e-6)
            assert row.wing_loading_Pa == pytest.approx(d.wing_loading, rel=1e-5)
            assert row.thrust_to_weight == pytest.approx(d.thrust_to_weight, rel=1e-5)
            assert row.wing_area_m2 == pytest.approx(d.wing_area, rel=1e-5)
            # the components model is linear in m_TO at a held point: 1 - f_empty - f_fuel
            # (hand calculation from the sizing equation, Raymer 2018 Eq. 3.4)
            assert row.runaway_margin == pytest.approx(1 - (d.empty_mass + d.fuel_mass) / d.takeoff_mass, abs=1e-5)
            assert row.drivers == ";".join(ref.drivers)
        else:
            # infeasible points are kept, with NaNs, never dropped
            assert math.isnan(row.takeoff_mass_kg) and math.isnan(row.wing_loading_Pa)
            assert row.drivers == ""
    assert statuses == {"optimal", "infeasible"}     # the sweep exercises both outcomes


def test_values_in_other_units_give_the_same_point():
    # Source: 1 ft = 0.3048 m exactly (international yard and pound agreement, 1959;
    # NIST SP 811 App. B.8). 700 m = 2296.5879265 ft.
    in_m = load_study({"base": str(TRAINER), "sweep": {"requirements.field.ground_roll": ["700 m"]}})
    in_ft = load_study({"base": str(TRAINER), "sweep": {"requirements.field.ground_roll": ["2296.5879265 ft"]}})
    assert in_m.si_values[0, 0] == pytest.approx(700.0, rel=1e-12)
    assert in_ft.si_values[0, 0] == pytest.approx(700.0, rel=1e-9)
    assert in_ft.varied[0].unit == "ft"
    # a range in a unit: ends and steps in that unit, SI by the unit's scale
    # Source: 1 kn = 1852 m / 3600 s exactly (BIPM SI Brochure, 9th ed., Table 8)
    rng = load_study({"base": str(TRAINER),
                      "sweep": {"requirements.approach-stall.speed": {"from": "90 kn", "to": "110 kn", "steps": 5}}})
    np.testing.assert_allclose(rng.user_values[:, 0], [90, 95, 100, 105, 110])
    np.testing.assert_allclose(rng.si_values[:, 0], np.array([90, 95, 100, 105, 110]) * 1852 / 3600, rtol=1e-12)


def test_executor_changes_nothing():
    from dask.distributed import Client, LocalCluster

    study = {"base": str(TRAINER),
             "sweep": {"requirements.turn-4g.load_factor": [3.0, 3.4, 3.8, 4.2, 4.6, 5.0, 6.5],
                       "requirements.field.ground_roll": ["600 m", "750 m", "900 m", "1000 m"]}}
    serial = run_study(study, workers=1, costs=False)
    assert serial.executor == "serial" and len(serial.table) == 28
    assert set(serial.table["status"]) == {"optimal", "infeasible"}
    pool = run_study(study, workers=2, costs=False)
    assert pool.executor == "processes" and pool.workers == 2
    pd.testing.assert_frame_equal(serial.table, pool.table, check_exact=True)
    with LocalCluster(n_workers=1, threads_per_worker=1, processes=False, dashboard_address=None) as cluster, \
            Client(cluster) as client:
        on_dask = run_study(study, dask=client, costs=False)
        by_address = run_study(study, dask=cluster.scheduler_address, limit=10, costs=False)
    assert on_dask.executor == "dask"
    pd.testing.assert_frame_equal(serial.table, on_dask.table, check_exact=True)
    assert len(by_address.table) == 10
    np.testing.assert_allclose(by_address.table["takeoff_mass_kg"], serial.table["takeoff_mass_kg"][:10],
                               rtol=1e-7)


def _sample(seed, count=24):
    return {"base": str(TRAINER), "sample": {"count": count, "seed": seed, "vary": {
        "aircraft.aerodynamics.oswald_efficiency": {"normal": {"mean": 0.80, "std": 0.03}},
        "aircraft.propulsion.throttle_ratio": {"uniform": [1.0, 1.1]},
        "requirements.field.ground_roll": {"triangular": ["650 m", "700 m", "800 m"]}}}}


def test_sampling_is_reproducible_from_the_seed():
    a = run_study(_sample(7), workers=1, costs=False)
    b = run_study(_sample(7), workers=2, costs=False)
    pd.testing.assert_frame_equal(a.table, b.table, check_exact=True)
    c = load_study(_sample(8))
    assert not np.allclose(c.user_values, a.study.user_values)
    u = a.study.user_values
    assert ((u[:, 1] >= 1.0) & (u[:, 1] <= 1.1)).all()
    assert ((u[:, 2] >= 650) & (u[:, 2] <= 800)).all()
    # a reduced run draws the same first samples as the full one
    full = load_study(_sample(7, count=2000))
    np.testing.assert_array_equal(full.user_values[:24, 0], u[:, 0])
    # common practice, no source: 2000 normal draws have a sample mean within
    # 4 standard errors (4 * 0.03 / sqrt(2000) = 0.0027) of the distribution's mean
    assert abs(full.user_values[:, 0].mean() - 0.80) < 4 * 0.03 / math.sqrt(2000)
    assert a.feasible_fraction == (a.table["status"] == "optimal").mean()


@pytest.mark.parametrize("path", STUDIES, ids=[p.stem for p in STUDIES])
def test_example_studies_run_reduced_through_the_console_script(path, tmp_path):
    out = tmp_path / "out"
    r = run_cli("study", path, "-o", out, "--limit", "6", cwd=ROOT)
    assert r.returncode == 0, r.stderr
    assert "CAUTION" in r.stdout and f"wrote {out / 'results.csv'}" in r.stdout
    text = (out / "results.csv").read_text()
    assert text.startswith("# ") and f"# {CAUTION}\n" in text            # the caution as a comment line
    assert "inf" not in text.split(CAUTION)[-1].lower().replace("infeasible", "")   # empty where none exists
    t = pd.read_csv(out / "results.csv", comment="#")
    assert len(t) == 6
    study = load_study(path)
    # each varied column names its unit as the study writes it ([-] for a plain number)
    assert list(t.columns[:len(study.varied)]) == [f"{v.path} [{v.unit or '-'}]" for v in study.varied]
    assert set(t["status"]) <= {"optimal", "infeasible", "failed"}
    pngs = sorted(p.name for p in out.glob("*.png"))
    assert "costs.png" in pngs
    assert ("mass-distribution.png" in pngs) if study.mode == "sample" else ("mass.png" in pngs)
    if study.mode == "sweep" and len(study.varied) == 2:
        assert "carpet.png" in pngs and "drivers-map.png" in pngs


BAD = [
    # (study text after the base line, line of the error, words in the message)
    ("sweep:\n  requirements.turn-4g.load_factr: [3.0, 4.0]\n", 3, "load_factor"),
    ("sweep:\n  requirements.turn-4h.load_factor: [3.0, 4.0]\n", 3, "turn-4g"),
    ("sweep:\n  requirements.field.ground_roll:\n    - 600 m\n    - 700\n", 5, "unit"),
    ("sweep:\n  requirements.turn-4g.load_factor: [4.0, -2.0]\n", 3, "must lie in"),
    ("sweep:\n  aircraft.aerodynamics.cd0: [0.02, 0.03]\n", 3, "Mach table"),
    ("sweep:\n  aircraft.aerodynamics.cd0.mach.1: [0.7, 0.8]\n", 3, "breakpoints"),
    ("sweep:\n  requirements.field.weight_fraction: [0.9, 1.0]\n", 3, "unset"),
    ("sample:\n  count: 100\n  seed: 1\n  vary:\n    aircraft.propulsion.throttle_ratio: {gauss: [1, 2]}\n", 6, "normal"),
    ("sampel:\n  count: 10\n", 2, "sample"),
]


@pytest.mark.parametrize("body,line,words", BAD, ids=[b[2] for b in BAD])
def test_invalid_path_or_value_is_a_located_error(tmp_path, body, line, words):
    f = tmp_path / "bad-study.yaml"
    f.write_text(f"base: {TRAINER}\n{body}")
    with pytest.raises(InputError) as e:
        load_study(f)
    assert e.value.file == str(f) and e.value.line == line, e.value.describe()
    assert words in e.value.describe()


def test_invalid_study_exits_2_through_the_console_script(tmp_path):
    f = tmp_path / "bad-study.yaml"
    f.write_text(f"base: {TRAINER}\nsweep:\n  requirements.field.ground_roll: {{from: 600 m, to: 900, steps: 4}}\n")
    r = run_cli("study", f, "-o", tmp_path / "out")
    assert r.returncode == 2
    assert f"{f}:3:" in r.stderr and "Traceback" not in r.stderr
    assert not (tmp_path / "out").exists()        # rejected before any solve or output


def test_quick_infeasibility_verdict_agrees_here():
    # the heuristic verdict (confirm_infeasible=False) against the default, on points
    # on both sides of the feasibility boundary  # common practice, no source
    full = run_study(SWEEP, workers=1, costs=False)
    quick = run_study(SWEEP, workers=1, costs=False, confirm_infeasible=False)
    assert list(quick.table["status"]) == list(full.table["status"])
    np.testing.assert_allclose(quick.table["takeoff_mass_kg"], full.table["takeoff_mass_kg"], rtol=1e-7)


def test_batched_numpy_check_matches_the_solver_check_point_by_point():
    # the chunk's batched re-evaluation must accept and reject exactly what
    # Problem.verify does point by point  # common practice, no source
    from sizing.studies import runner as S

    st = load_study(_sample(3, count=12))
    ctx = S._context(S._job(st))
    X, P = [], st.si_values
    for values in P:
        x, *_rest, ok = ctx.prob.solve_raw(ctx.params(values))
        assert ok
        X.append(x)
    X = np.array(X)
    X_bad = X.copy()
    X_bad[::3, 1] *= 0.97          # 3 % less thrust than the optimum: some requirement fails
    for XX in (X, X_bad):
        expected = [ctx.prob.verify(XX[i], ctx.params(P[i])) for i in range(len(P))]
        assert list(S._verify_chunk(ctx, XX, P)) == expected
    assert not all(S._verify_chunk(ctx, X_bad, P))


def test_study_summary_warns_of_designs_near_weight_runaway():
    """A sweep of the empty-mass 'other' fraction: where 1 - f_empty - f_fuel falls below 0.10 the
    summary warns and counts the designs (threshold: common practice, no source; the margin of the
    components model is 1 - f_empty - f_fuel, Raymer 2018 Eq. 3.4 by hand)."""
    from sizing.studies.plots import summary

    res = run_study({"base": str(TRAINER), "sweep": {"aircraft.weights.empty.other": [0.30, 0.36]}},
                    workers=1, costs=False)
    t = res.table
    assert (t["status"] == "optimal").all()
    near = t["runaway_margin"] < 0.10
    assert near.tolist() == [False, True]            # 0.12 at the file's 0.32; less with more empty mass
    text = summary(res)
    assert "WARNING: near weight runaway (runaway margin below 0.1) at 1 of 2 designs" in text
