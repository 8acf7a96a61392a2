"""The flight-envelope commands in-process (sizing vn, turn, wat, payload-range, envelope --json), their
files, the new keys of the file format with their located errors, the wing load-factor option of the
empty-mass model, and the review report's new sections.

Consistency checks (# common practice, no source) unless a source is named.
"""
import copy
import json
import re
from pathlib import Path

import pytest

from sizing import weights as Wt
from sizing.cli import main
from sizing.common.caution import CAUTION, LOADS_CAUTION
from sizing.common.errors import InputError
from sizing.inputs.spec import load, validate
from sizing.problem import solve
from sizing.problem import tree as M
from sizing.reports import review as R

ROOT = Path(__file__).resolve().parents[1]
EX = ROOT / "requirements"
PNG = b"\x89PNG\r\n\x1a\n"        # Source: PNG signature, ISO/IEC 15948 §5.2
LB = 0.45359237


def run(capsys, *argv):
    rc = main([str(a) for a in argv])
    out = capsys.readouterr()
    return rc, out.out, out.err


@pytest.mark.parametrize("cmd, example, words", [
    ("vn", "touring-piston", ["limit load factor, positive", "VA design manoeuvring speed", "VC design cruising speed",
                              "VD design dive speed", "gust at VC"]),
    ("turn", "trainer-jet", ["corner speed", "best sustained turn rate", "turn-4g"]),
    ("wat", "regional-turboprop", ["second-segment", "hot and high", "OAT 45 C"]),
    ("payload-range", "long-range-jet", ["range at maximum payload", "ferry range", "10,000 km"]),
])
def test_chart_commands_write_figure_and_csv(capsys, tmp_path, cmd, example, words):
    fig, csv = tmp_path / f"{cmd}.png", tmp_path / f"{cmd}.csv"
    rc, out, err = run(capsys, cmd, EX / f"{example}.yaml", "-o", fig, "--data", csv)
    assert rc == 0, err
    for w in words:
        assert w in out, w
    assert CAUTION in out and f"wrote {fig}" in out
    if cmd == "vn":
        assert LOADS_CAUTION in out
    assert fig.read_bytes()[:8] == PNG
    head = csv.read_text().splitlines()
    assert head[0].startswith("# ") and any(CAUTION in h for h in head[:3])
    columns = next(h for h in head if not h.startswith("#")).split(",")
    assert all(re.search(r"_(kn|m_s|m|ft|kg|km|nmi|deg_s|c|f|k)$", c) or c in
               ("mach", "corner", "what", "limited_by", "sustained_limited_by") or c.startswith("n_") or
               c.endswith("load_factor") for c in columns), columns


def test_json_outputs(capsys, tmp_path):
    rc, out, _ = run(capsys, "vn", EX / "long-range-jet.yaml", "--json", "--altitude", "10000 ft")
    d = json.loads(out)
    assert rc == 0 and d["category"] == "transport" and d["altitude_m"] == pytest.approx(3048.0)
    assert {"stall", "maneuvering", "cruise", "dive"} <= set(d["speeds_eas_m_s"])
    assert set(d["gust"]) == {"rough_air", "cruise", "dive"} and d["mean_chord_m"] > 0
    assert d["lift_curve_slope_per_rad"] > 0 and d["weight_fraction"] == 1.0 and d["caution"] == CAUTION
    rc, out, _ = run(capsys, "turn", EX / "touring-piston.yaml", "--json", "--altitude", "0, 2000 m")
    d = json.loads(out)
    assert [a["altitude_m"] for a in d["altitudes"]] == [0.0, 2000.0]
    assert all(a["max_sustained_turn_rate_deg_s"] > 0 for a in d["altitudes"])
    rc, out, _ = run(capsys, "wat", EX / "touring-piston.yaml", "--json", "--elevations", "0, 5000 ft",
                     "--temperatures", "59, 95 F")
    d = json.loads(out)
    assert [round(r["oat_c"], 6) for r in d["table"]] == [15.0, 35.0, 15.0, 35.0]    # Source: T_C = (T_F - 32)/1.8
    assert all(r["max_takeoff_mass_kg"] > 0 and r["limited_by"] for r in d["table"])
    rc, out, _ = run(capsys, "payload-range", EX / "long-range-jet.yaml", "--json")
    d = json.loads(out)
    assert set(d["corners"]) == {"max-payload", "design", "max-fuel", "ferry"}
    assert d["corners"]["design"]["range_km"] == pytest.approx(10000.0, rel=1e-6)
    rc, out, _ = run(capsys, "envelope", EX / "trainer-jet.yaml", "--json")
    d = json.loads(out)
    assert d["absolute_ceiling"]["altitude_m"] > 0 and d["top_speeds"]
    assert d["coffin_corner"]["meet"]["altitude_m"] > d["absolute_ceiling"]["altitude_m"]
    assert d["coffin_corner"]["narrowest_band"]["width_mach"] > 0
    assert d["zoom_ceiling_upper_bound"]["energy_height_m"] > d["absolute_ceiling"]["altitude_m"]


def test_json_writes_no_default_figure(capsys, tmp_path, monkeypatch):
    monkeypatch.chdir(tmp_path)
    rc, out, _ = run(capsys, "wat", EX / "trainer-jet.yaml", "--json", "--elevations", "0 ft", "--temperatures", "15 C")
    assert rc == 0 and json.loads(out) and list(tmp_path.iterdir()) == []


@pytest.mark.parametrize("argv, words", [
    (["payload-range", "touring-piston"], "no payload-range diagram: it sizes the fuel as a fixed fraction"),
    (["vn", "touring-piston", "-o", "vn.txt"], "not a figure format"),
    (["vn", "touring-piston", "--altitude", "3 parsecs"], "--altitude"),
    (["wat", "touring-piston", "--temperatures", "30 Q"], "not a temperature unit"),
    (["wat", "touring-piston", "--elevations", "30000 ft"], "outside"),
    (["turn", "touring-piston", "--weight-fraction", "3"], "weight fraction"),
])
def test_bad_arguments_exit_2(capsys, tmp_path, argv, words):
    argv = [argv[0], EX / f"{argv[1]}.yaml"] + [tmp_path / a if a.endswith(".txt") else a for a in argv[2:]]
    rc, out, err = run(capsys, *argv)
    assert rc == 2 and words in err and "Traceback" not in err


def test_infeasible_file_says_so(capsys, tmp_path):
    import yaml

    data = copy.deepcopy(load(EX / "trainer-jet.yaml").data)
    data["requirements"] = [dict(r, load_factor=7.5) if r["id"] == "turn-4g" else r for r in data["requirements"]]
    p = tmp_path / "infeasible.yaml"
    p.write_text(yaml.safe_dump(data))
    rc, out, _ = run(capsys, "vn", p, "-o", tmp_path / "x.png")
    assert rc == 3 and "infeasible" in out.lower() and not (tmp_path / "x.png").exists()


# --------------------------------------------------------------------------
# The file format
# --------------------------------------------------------------------------

def _with(change):
    data = copy.deepcopy(load(EX / "touring-piston.yaml").data)
    change(data)
    return data


@pytest.mark.parametrize("change, field, words", [
    (lambda d: d["aircraft"]["aerodynamics"].update(cl_min=0.8), "cl_min", "negative"),
    (lambda d: d["aircraft"]["aerodynamics"].update(lift_curve_slope=0.08), "lift_curve_slope", "per degree"),
    (lambda d: d["aircraft"].update(design_speeds={"cruise": "150 kn", "dive": "140 kn"}), "dive", "above cruise"),
    (lambda d: d["aircraft"].update(category="aerobatic"), "category", "acrobatic"),
    (lambda d: d["aircraft"]["weights"].update(max_payload="200 kg"), "max_payload", "below the design payload"),
    (lambda d: d["aircraft"]["weights"]["empty"].update(wing_load_factor={"reference": 3.8}), "wing_load_factor",
     "aircraft.category"),
    (lambda d: d["aircraft"].update(category="normal") or d["aircraft"]["weights"]["empty"].update(
        wing_load_factor={"reference": 3.8, "wing_share": 0.2}), "wing_share", "statistical model"),
])
def test_new_keys_have_located_errors(change, field, words):
    with pytest.raises(InputError) as e:
        validate(_with(change), "f.yaml")
    assert field in (e.value.field or "") and words in str(e.value)


def test_new_keys_reach_the_tree():
    spec = validate(_with(lambda d: d["aircraft"].update(
        category="utility", design_speeds={"cruise": "150 kn"}) or d["aircraft"]["aerodynamics"].update(
        cl_min=-1.0, lift_curve_slope=5.0) or d["aircraft"]["weights"].update(max_fuel="250 kg")))
    a = M.spec_tree(spec)["aircraft"]
    assert a["category"] == "utility" and a["design_speeds"]["cruise"] == pytest.approx(150 * 1852 / 3600)
    assert a["aerodynamics"]["cl_min"] == -1.0 and a["weights"]["max_fuel"] == 250.0


# --------------------------------------------------------------------------
# The wing load-factor option of the empty-mass model
# --------------------------------------------------------------------------

def test_wing_mass_follows_the_limit_load_factor():
    # Source: 14 CFR 23.337(a)(3) (acrobatic 6.0) and the wing term (n/n_ref)^x of the option; hand calculation
    # (docs/references.md check 11.6-a)
    e = {"model": "components", "other": 0.4, "wing": 12.0, "propulsion": 1.3e-3,
         "wing_load_factor": {"reference": 3.8, "exponent": 0.49}}
    W_S, Y, m = 1300.0, 14.0, 2000.0
    base = Wt.empty_fraction({"empty": {k: v for k, v in e.items() if k != "wing_load_factor"}}, {}, m, W_S, Y, True)
    got = Wt.empty_fraction({"empty": e}, {"category": "acrobatic"}, m, W_S, Y, True)
    wing = 12.0 * 9.80665 / W_S
    assert float(got) == pytest.approx(float(base) + wing * ((6.0 / 3.8) ** 0.49 - 1.0), rel=1e-12)
    # a requirement above the category's minimum raises it (normal at 2 000 kg: 3.80 cap; 4.5 g asked)
    got = Wt.empty_fraction({"empty": e}, {"category": "normal"}, m, W_S, Y, True, [2.0, 4.5])
    assert float(got) == pytest.approx(float(base) + wing * ((4.5 / 3.8) ** 0.49 - 1.0), rel=1e-12)
    # statistical: a wing share of the empty fraction scales; Raymer Table 3.1 GA single, 3 000 lb -> 0.55851
    st = {"model": "statistical", "preset": "general-aviation-single",
          "wing_load_factor": {"reference": 3.8, "exponent": 0.49, "wing_share": 0.2}}
    got = Wt.empty_fraction({"empty": st}, {"category": "utility"}, 3000 * LB, W_S, Y, True)
    assert float(got) == pytest.approx(0.55851 * (1 + 0.2 * ((4.4 / 3.8) ** 0.49 - 1)), abs=1e-5)


def test_higher_category_costs_structure_mass(solved):
    # the same trainer sized with its wing mass given at 4 g: acrobatic (6 g) must come out heavier than a
    # normal-category structure held at the 4 g the turn requirement asks; the latter equals the plain solve
    spec, res = solved["trainer-jet.yaml"]
    data = copy.deepcopy(spec.data)
    data["aircraft"]["weights"]["empty"]["wing_load_factor"] = {"reference": 4.0, "exponent": 0.5}
    out = {}
    for cat in ("acrobatic", "normal"):
        data["aircraft"]["category"] = cat
        r = solve(validate(copy.deepcopy(data), f"trainer-{cat}.yaml"))
        assert r.feasible
        out[cat] = r.design.takeoff_mass
    assert out["normal"] == pytest.approx(res.design.takeoff_mass, rel=1e-6)
    assert out["acrobatic"] > 1.2 * out["normal"]


# --------------------------------------------------------------------------
# The review report
# --------------------------------------------------------------------------

def test_report_sections(solved, tmp_path):
    spec, res = solved["long-range-jet.yaml"]
    text = R.render_report(spec, res, "md", diagram=False)
    for heading in ("## Load-factor (V-n) chart", "## Turn performance", "## Hot-and-high limits (WAT)",
                    "## Payload-range", "## Envelope check"):
        assert heading in text, heading
    for words in ("VA design manoeuvring speed", "VC design cruising speed", "VD design dive speed", "corner speed",
                  "coffin corner", "**Hot-day payload**", "ferry range", LOADS_CAUTION):
        assert words in text, words
    assert len(re.findall(r"!\[[^\]]*\]\(data:image/png;base64,", text)) == 5    # envelope + the four charts
