"""Constraint diagram: every example renders, the figure shows what the solver used.

Most checks here are consistency checks against independent re-evaluation
of the project's own constraint and weight functions
(# common practice, no source); unit conversions and the palette checks
name their external sources beside them.
"""
import csv
import io
import math
import os
import subprocess
import sys
import xml.etree.ElementTree as ET
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from sizing import constraints as C
from sizing import weights as Wt
from sizing.charts import diagram as P
from sizing.charts import diagram_data as PD
from sizing.charts import style as PS
from sizing.common.caution import CAUTION
from sizing.common.errors import InputError
from sizing.inputs.spec import load, validate
from sizing.physics.propulsion import is_propeller
from sizing.problem import solve
from sizing.problem import tree as M

from .cliutil import run as run_cli

ROOT = Path(__file__).resolve().parents[1]
EXAMPLES = sorted((ROOT / "requirements").glob("*.yaml"))
SVG_NS = "{http://www.w3.org/2000/svg}"




@pytest.fixture(scope="module")
def drawn(solved):
    return {name: P.constraint_diagram(spec, result=res) for name, (spec, res) in solved.items()}


@pytest.fixture(scope="module")
def infeasible():
    """The trainer example asked for a 7.5 g sustained turn: no design closes."""
    spec = load(ROOT / "requirements" / "trainer-jet.yaml")
    data = dict(spec.data)
    data["requirements"] = [dict(r, load_factor=7.5) if r["id"] == "turn-4g" else r for r in data["requirements"]]
    spec = validate(data, "trainer-7g5.yaml", text="trainer-7g5")
    res = solve(spec)
    assert not res.feasible   # precondition of the tests below
    return spec, res


def svg_texts(svg: bytes):
    root = ET.fromstring(svg)
    return ["".join(t.itertext()) for t in root.iter(f"{SVG_NS}text")]


# ------------------------------------------------------------------- rendering

@pytest.mark.parametrize("name", [p.name for p in EXAMPLES])
def test_every_example_renders_png_svg_pdf(drawn, solved, name):
    h = drawn[name]
    spec, res = solved[name]
    png, svg, pdf = (PS.figure_bytes(h.figure, f, dpi=30) for f in ("png", "svg", "pdf"))
    # Source: PNG signature (ISO/IEC 15948 §5.2), PDF header (ISO 32000-1 §7.5.2)
    assert png[:8] == b"\x89PNG\r\n\x1a\n"
    assert pdf[:5] == b"%PDF-"
    texts = svg_texts(svg)        # SVG parses as XML (W3C SVG 1.1) and keeps text as text
    joined = "\n".join(texts)
    for r in spec.requirements:   # common practice, no source: every id labelled on the plot
        assert any(t == r.id or t.startswith(r.id + " ") for t in texts), r.id
    assert spec.title in joined
    assert spec.sha256[:12] in joined and Path(spec.path).name in joined
    assert "conceptual-design estimate only" in joined
    if res.feasible:
        assert "design point" in joined


@pytest.mark.parametrize("name", [p.name for p in EXAMPLES])
def test_labels_do_not_overlap(drawn, name):
    # common practice, no source: no label hides another on the slide
    from matplotlib.backends.backend_agg import FigureCanvasAgg

    h = drawn[name]
    canvas = FigureCanvasAgg(h.figure)
    canvas.draw()                    # positions the design label's box at this dpi
    renderer = canvas.get_renderer()
    boxes = [t.get_window_extent(renderer) for t in h.labels.values()]
    if h.design_label is not None:
        boxes.append(h.design_label.get_bbox_patch().get_window_extent(renderer))
    ax_box = h.ax.get_window_extent(renderer)
    for i, a in enumerate(boxes):
        assert a.x0 >= ax_box.x0 - 1 and a.x1 <= ax_box.x1 + 1 and a.y0 >= ax_box.y0 - 1 and a.y1 <= ax_box.y1 + 1
        for b in boxes[i + 1:]:
            assert not a.overlaps(b)


# ----------------------------------------------------------- design point

@pytest.mark.parametrize("name", [p.name for p in EXAMPLES])
def test_design_point_is_the_solve_result(drawn, solved, name):
    # common practice, no source: the marker sits at the solver's answer
    spec, res = solved[name]
    h = drawn[name]
    d = res.design
    Y = d.power_to_weight if res.propeller else d.thrust_to_weight
    assert h.design_point.get_xdata()[0] == pytest.approx(d.wing_loading, rel=1e-12)
    assert h.design_point.get_ydata()[0] == pytest.approx(Y, rel=1e-12)
    assert f"{d.takeoff_mass:,.0f} kg" in h.design_label.get_text()
    lo, hi = h.ax.get_xlim()
    assert lo <= d.wing_loading <= hi
    lo, hi = h.ax.get_ylim()
    assert lo <= Y <= hi


def test_design_point_in_us_units(solved):
    spec, res = solved["trainer-jet.yaml"]
    h = P.constraint_diagram(spec, result=res, units="us", mass_lines=False)
    # Source: NIST SP 811 (2008) Appendix B.8: 1 lbf/ft^2 = 47.88026 Pa; 1 lb = 0.45359237 kg
    assert h.design_point.get_xdata()[0] == pytest.approx(res.design.wing_loading / 47.88026, rel=1e-6)
    assert f"{res.design.takeoff_mass / 0.45359237:,.0f} lb" in h.design_label.get_text()


def test_propeller_power_in_hp_per_lb(solved):
    spec, res = solved["touring-piston.yaml"]
    h = P.constraint_diagram(spec, result=res, units="us", mass_lines=False, hatch=False)
    # Source: NIST SP 811 Appendix B.8: 1 hp (550 ft lbf/s) = 745.6999 W; 1 lbf = 4.448222 N
    want = res.design.power_to_weight * 4.448222 / 745.6999
    assert h.design_point.get_ydata()[0] == pytest.approx(want, rel=1e-6)
    assert "hp/lb" in h.ax.get_ylabel()


@pytest.mark.parametrize("name", [p.name for p in EXAMPLES])
def test_constant_mass_line_through_the_design_closes_to_its_mass(solved, name):
    # common practice, no source: the weight closure of the diagram is the solver's
    spec, res = solved[name]
    d = res.design
    Y = d.power_to_weight if res.propeller else d.thrust_to_weight
    m = PD.closure_mass_grid(spec, [d.wing_loading], [Y])
    assert m[0, 0] == pytest.approx(d.takeoff_mass, rel=1e-6)


# ------------------------------------------------------------------ CSV data

def _independent_curve(spec, rid, W_S, mass=None):
    """required_curve at each wing loading on its own, betas from the mission directly (at the
    design's takeoff mass where a propeller diameter makes the curves depend on it)."""
    tree = M.spec_tree(spec)
    ac = M.aircraft(tree, mass)
    r = tree["requirements"][rid]
    thrust, limit = [], []
    for w in W_S:
        wf = r.get("weight_fraction")
        beta = None
        if isinstance(wf, dict):
            beta = {n: float(be) for n, _f, be in Wt.mission_fractions(tree, ac, float(w))}[wf["after"]]
        with np.errstate(all="ignore"):
            t, lim, _ = C.required_curve(M.requirement(r, ac, beta), ac, np.array([float(w)]))
        thrust.append(None if t is None else float(t[0]))
        limit.append(None if lim is None else float(lim[0]))
    return thrust, limit


def _check_csv(spec, text, every=10, mass=None):
    if mass is None and M.needs_takeoff_mass(M.spec_tree(spec)):
        mass = solve(spec).design.takeoff_mass
    lines = text.splitlines()
    assert lines[0].startswith("# ") and f"# {CAUTION}" in lines      # the caution as a comment line
    rows = list(csv.reader(io.StringIO("\n".join(ln for ln in lines if not ln.startswith("#")))))
    head, body = rows[0], rows[1:]
    assert head[0] == "wing_loading_Pa"
    y = "power_to_weight_W_per_N" if is_propeller(spec.model.aircraft.propulsion.type) else "thrust_to_weight"
    col = {name: i for i, name in enumerate(head)}
    assert all(":" in n for n in head[1:])      # every requirement column names its quantity and unit
    assert {n.split(":")[0] for n in head[1:]} == {r.id for r in spec.requirements}
    assert all(v.lower() not in ("inf", "-inf", "nan") for r in body for v in r)   # empty where none exists
    picked = body[::every]
    W_S = [float(r[0]) for r in picked]

    def num(v):
        return float(v) if v != "" else math.inf

    for req in spec.requirements:
        thrust, limit = _independent_curve(spec, req.id, W_S, mass)
        if thrust[0] is not None:
            got = [num(r[col[f"{req.id}:{y}"]]) for r in picked]
            np.testing.assert_allclose(got, thrust, rtol=1e-9)
        else:
            assert f"{req.id}:{y}" not in col
        if limit[0] is not None:
            got = [num(r[col[f"{req.id}:wing_loading_limit_Pa"]]) for r in picked]
            np.testing.assert_allclose(got, limit, rtol=1e-9)
        else:
            assert f"{req.id}:wing_loading_limit_Pa" not in col
    # pandas reads it as written, the comment lines skipped (empty cells as NaN)
    frame = pd.read_csv(io.StringIO(text), comment="#")
    assert list(frame.columns) == head and len(frame) == len(body)


@pytest.mark.parametrize("name", [p.name for p in EXAMPLES])
def test_csv_equals_required_curve(drawn, solved, name):
    spec, res = solved[name]
    _check_csv(spec, PD.curves_csv(drawn[name].data), mass=res.design.takeoff_mass)


def test_drawn_curves_are_the_sampled_data(drawn):
    # common practice, no source: the lines drawn hold the sampled numbers (SI view)
    h = drawn["trainer-jet.yaml"]
    for c in h.data.curves:
        if c.thrust is not None:
            y = h.curves[c.id].get_ydata()
            ok = np.isfinite(y)
            np.testing.assert_allclose(y[ok], c.thrust[ok], rtol=1e-12)
        if c.thrust is None:
            assert h.limits[c.id].get_xdata()[0] == pytest.approx(c.limit[0], rel=1e-12)


# ------------------------------------------------------------------ infeasible

def test_infeasible_set_still_draws(infeasible, tmp_path):
    spec, res = infeasible
    h = P.constraint_diagram(spec, result=res)
    assert h.design_point is None
    texts = svg_texts(PS.figure_bytes(h.figure, "svg", dpi=30))
    assert "no feasible design" in texts
    for r in spec.requirements:   # common practice, no source
        assert any(t == r.id or t.startswith(r.id + " ") for t in texts), r.id
    out = P.write_diagram(spec, res, tmp_path / "d.png", data=tmp_path / "c.csv", dpi=30)
    assert [Path(p).name for p in out] == ["d.png", "c.csv"]
    _check_csv(spec, (tmp_path / "c.csv").read_text(), every=40)


# ------------------------------------------------------------------ API, CLI

def test_api_draws_into_a_given_axes_and_rejects_unknown_keywords(solved):
    from matplotlib.figure import Figure

    spec, res = solved["touring-piston.yaml"]
    fig = Figure(figsize=(6, 4))
    ax = fig.add_subplot()
    h = res.diagram(ax=ax, mass_lines=False, hatch=False, footer=False)
    assert h.ax is ax and h.figure is fig
    assert set(h.curves) | set(h.limits) == {r.id for r in spec.requirements}
    with pytest.raises(TypeError):
        res.diagram(colour="red")
    with pytest.raises(ValueError, match="units"):
        P.constraint_diagram(spec, result=res, units="imperial")


def test_unknown_suffix_is_a_located_input_error(solved, tmp_path):
    spec, res = solved["touring-piston.yaml"]
    with pytest.raises(InputError, match=r"\.png, \.svg, \.pdf"):
        P.write_diagram(spec, res, tmp_path / "diagram.jpg")
    assert not (tmp_path / "diagram.jpg").exists()


def test_console_script_writes_svg_and_csv(tmp_path):
    src = ROOT / "requirements" / "regional-turboprop.yaml"
    out, data = tmp_path / "d.svg", tmp_path / "curves.csv"
    p = run_cli("diagram", src, "-o", out, "--data", data)
    assert p.returncode == 0, p.stderr
    assert CAUTION in p.stdout
    spec = load(src)
    texts = svg_texts(out.read_bytes())
    for r in spec.requirements:
        assert any(t == r.id or t.startswith(r.id + " ") for t in texts), r.id
    _check_csv(spec, data.read_text(), every=30)
    p = run_cli("diagram", src, "-o", tmp_path / "d.gif")
    assert p.returncode == 2 and "Traceback" not in p.stderr and ".png" in p.stderr


def test_no_pyplot_no_display_nothing_left_open():
    # common practice, no source: figures are plain Figure objects, pyplot is never imported
    code = ("import sys\nfrom sizing.inputs.spec import load\nfrom sizing.problem import solve\n"
            "from sizing.charts.diagram import constraint_diagram; from sizing.charts.style import figure_bytes\n"
            "s = load('requirements/touring-piston.yaml'); h = constraint_diagram(s, solve(s), mass_lines=False)\n"
            "figure_bytes(h.figure, 'png', dpi=20)\n"
            "assert 'matplotlib.pyplot' not in sys.modules\n")
    env = {k: v for k, v in os.environ.items() if k not in ("DISPLAY", "MPLBACKEND", "WAYLAND_DISPLAY")}
    p = subprocess.run([sys.executable, "-c", code], cwd=ROOT, capture_output=True, text=True, timeout=120,
                       env=env)
    assert p.returncode == 0, p.stderr


# ------------------------------------------------------------------ palette

def _srgb_to_linear(c):
    c = np.asarray(c, float)
    return np.where(c <= 0.04045, c / 12.92, ((c + 0.055) / 1.055) ** 2.4)


def _hex(h):
    return np.array([int(h[i:i + 2], 16) / 255.0 for i in (1, 3, 5)])


def _lab(lin):
    # Source: IEC 61966-2-1 sRGB -> XYZ (D65) matrix; CIE 1976 L*a*b* (CIE 15:2004 §8.2.1)
    X = np.array([[0.4124, 0.3576, 0.1805], [0.2126, 0.7152, 0.0722], [0.0193, 0.1192, 0.9505]]) @ lin
    t = X / np.array([0.95047, 1.0, 1.08883])
    f = np.where(t > (6 / 29) ** 3, np.cbrt(t), t / (3 * (6 / 29) ** 2) + 4 / 29)
    return np.array([116 * f[1] - 16, 500 * (f[0] - f[1]), 200 * (f[1] - f[2])])


def test_palette_contrast_on_white():
    # Source: WCAG 2.1, SC 1.4.11 (non-text contrast >= 3:1) with the relative luminance
    # and contrast ratio definitions of WCAG 2.1 §Definitions
    for h in PS.PALETTE:
        L = float(np.array([0.2126, 0.7152, 0.0722]) @ _srgb_to_linear(_hex(h)))
        assert (1.0 + 0.05) / (L + 0.05) >= 3.0, h


def test_palette_stays_distinct_under_colour_vision_deficiency():
    # Source: Machado, Oliveira & Fernandes, "A physiologically-based model for simulation of
    # color vision deficiency", IEEE TVCG 15(6), 2009: severity-1.0 matrices on linear RGB
    # (matrix values from memory). Threshold Delta E*ab >= 20: our own design target.
    sims = {
        "normal": np.eye(3),
        "protanopia": np.array([[0.152286, 1.052583, -0.204868], [0.114503, 0.786281, 0.099216],
                                [-0.003882, -0.048116, 1.051998]]),
        "deuteranopia": np.array([[0.367322, 0.860646, -0.227968], [0.280085, 0.672501, 0.047413],
                                  [-0.011820, 0.042940, 0.968881]]),
        "tritanopia": np.array([[1.255528, -0.076749, -0.178779], [-0.078411, 0.930809, 0.147602],
                                [0.004733, 0.691367, 0.303900]]),
    }
    for name, Msim in sims.items():
        labs = [_lab(np.clip(Msim @ _srgb_to_linear(_hex(h)), 0, 1)) for h in PS.PALETTE]
        for i in range(len(labs)):
            for j in range(i + 1, len(labs)):
                d = float(np.linalg.norm(labs[i] - labs[j]))
                assert d >= 20.0, (name, PS.PALETTE[i], PS.PALETTE[j], d)
    assert len(set(PS.MARKERS)) == len(PS.MARKERS) >= len(PS.PALETTE)


# ------------------------------------------------------- labels clear of every line

def _label_outline(text, renderer):
    """The drawn outline of a label in display pixels: its box patch (rotated with it), else its extent."""
    from matplotlib.path import Path as MPath

    patch = text.get_bbox_patch()
    if patch is not None:
        return patch.get_path().transformed(patch.get_transform())
    return MPath.unit_rectangle().transformed(
        __import__("matplotlib.transforms", fromlist=["BboxTransformTo"]).BboxTransformTo(
            text.get_window_extent(renderer)))


def _line_pixels(line, ax_box):
    """The drawn path of a Line2D in display pixels, densified to 0.5 px, inside the axes."""
    xy = line.get_transform().transform(np.asarray(line.get_xydata(), float))
    out = []
    for a, b in zip(xy[:-1], xy[1:]):
        if not (np.all(np.isfinite(a)) and np.all(np.isfinite(b))):
            continue
        n = int(min(max(np.hypot(*(b - a)) / 0.5, 1), 20000))
        out.append(a + np.linspace(0.0, 1.0, n + 1)[:, None] * (b - a))
    if not out:
        return np.empty((0, 2))
    p = np.vstack(out)
    return p[(p[:, 0] >= ax_box.x0) & (p[:, 0] <= ax_box.x1) & (p[:, 1] >= ax_box.y0) & (p[:, 1] <= ax_box.y1)]


def _cuts(h):
    """[(label text, line label)] where a label of the diagram lies over a drawn line not its own."""
    from matplotlib.backends.backend_agg import FigureCanvasAgg

    canvas = FigureCanvasAgg(h.figure)
    canvas.draw()
    renderer = canvas.get_renderer()
    ax_box = h.ax.get_window_extent(renderer)
    lines = [ln for ln in h.ax.lines if len(ln.get_xydata()) > 1]
    pix = {id(ln): _line_pixels(ln, ax_box) for ln in lines}
    own = {}
    for key, t in h.labels.items():
        rid = key.split(":")[0]
        own[id(t)] = {id(x) for x in (h.curves.get(rid) if ":" not in key else None, h.limits.get(rid)) if x is not None}
    for t, m in h.mass_labels:
        own[id(t)] = {id(ln) for mk, ln in h.mass_lines if mk == m}
    texts = list(h.labels.values()) + [t for t, _ in h.mass_labels] + list(h.region_labels)
    texts += [t for _, t in h.references.values() if t is not None]
    if h.design_label is not None:      # the design's callout may cover lines of constant mass, nothing else
        texts.append(h.design_label)
        own[id(h.design_label)] = {id(ln) for _, ln in h.mass_lines}
    bad = []
    for t in texts:
        outline = _label_outline(t, renderer)
        for ln in lines:
            if id(ln) in own.get(id(t), ()) or not len(pix[id(ln)]):
                continue
            if outline.contains_points(pix[id(ln)]).any():
                bad.append((t.get_text(), ln.get_label()))
    return bad


@pytest.mark.parametrize("labels", ["short", "full"])
@pytest.mark.parametrize("name", [p.name for p in EXAMPLES])
def test_labels_never_cut_a_line(solved, name, labels):
    # common practice, no source: a label is read over clear paper, never over another curve
    spec, res = solved[name]
    h = P.constraint_diagram(spec, result=res, labels=labels, samples=151)
    assert _cuts(h) == []
    named = set(h.labels) | ({t.get_text() for t in h.unlabelled.get_texts()} if h.unlabelled else set())
    for r in spec.requirements:         # every id is named: on its line, or in the key under the axes
        assert any(k == r.id or k.startswith(r.id + ":") or k.startswith(r.id + " ") for k in named), r.id
    if labels == "full":                # the condition is written under the id
        for key, t in h.labels.items():
            if ":" not in key:
                assert "W/W_TO" in t.get_text(), t.get_text()


def test_the_label_test_sees_a_label_over_a_line(solved):
    # the check above can fail: a label moved onto another requirement's curve is caught
    spec, res = solved["trainer-jet.yaml"]
    h = P.constraint_diagram(spec, result=res, samples=151)
    t = h.labels["field"]
    line = h.curves["dash"]
    x, y = line.get_xdata(), line.get_ydata()
    k = int(np.nanargmin(np.abs(x - 0.5 * (h.ax.get_xlim()[0] + h.ax.get_xlim()[1]))))
    t.set_position((x[k], y[k]))
    assert ("field", line.get_label()) in _cuts(h)


@pytest.mark.parametrize("name", [p.name for p in EXAMPLES])
def test_a_part_is_drawn_as_a_driver_only_where_the_design_sits_on_it(solved, name):
    # common practice, no source: bold = the design point lies on that curve or limit line
    spec, res = solved[name]
    h = P.constraint_diagram(spec, result=res, samples=151)
    d = res.design
    W0, Y0 = d.wing_loading, d.power_to_weight if res.propeller else d.thrust_to_weight
    exact = PD.sample_requirements(spec, np.array([W0]), takeoff_mass=PD.takeoff_mass_for(spec, res))
    for c in h.data.curves:
        t, lim = exact[c.id]
        on_curve = t is not None and abs(float(t[0]) / Y0 - 1) < 1e-3 and c.active
        on_limit = lim is not None and abs(W0 / float(lim[0]) - 1) < 1e-3 and c.active
        if c.id in h.curves:
            assert (h.curves[c.id].get_linewidth() > 2.0) == on_curve, c.id
        if c.id in h.limits:
            assert (h.limits[c.id].get_linewidth() > 2.0) == on_limit, c.id
        if c.id in h.labels:
            assert (h.labels[c.id].get_fontweight() == "bold") == (on_curve if c.id in h.curves else on_limit)
    assert h.data.curves[[c.id for c in h.data.curves].index(res.drivers[0])].active


def test_trainer_turn_lift_limit_is_not_drawn_as_a_driver(solved):
    # the turn requirement is active through its thrust curve; its CLmax limit lies far right of the design
    spec, res = solved["trainer-jet.yaml"]
    h = P.constraint_diagram(spec, result=res, samples=151)
    assert res.requirement("turn-4g").active
    assert h.curves["turn-4g"].get_linewidth() > 2.0
    assert h.limits["turn-4g"].get_linewidth() < 2.0
    lab = h.labels.get("turn-4g:limit")
    assert lab is None or lab.get_fontweight() == "normal"


def _colorspacious():
    """colorspacious's converter; its sources carry an old invalid escape in a docstring, which
    Python compiles with a warning (an error under this suite's filter) when the package
    was installed without byte-compiling."""
    import warnings

    with warnings.catch_warnings():
        warnings.simplefilter("ignore", DeprecationWarning)     # Python 3.12 and later: SyntaxWarning
        warnings.simplefilter("ignore", SyntaxWarning)
        from colorspacious import cspace_convert
    return cspace_convert


# ------------------------------------------------- one colour per id, safe for colour-blind readers

@pytest.mark.parametrize("cvd", ["deuteranomaly", "protanomaly", "tritanomaly"])
def test_palette_apart_under_simulated_colour_vision_deficiency_by_an_independent_library(cvd):
    # Source: Machado, Oliveira & Fernandes, IEEE TVCG 15(6), 2009, severity 100, as implemented by
    # the colorspacious library (a second implementation beside the written-out matrices above);
    # Delta E*ab (CIE76) >= 20 between every pair: our own design target.
    cspace_convert = _colorspacious()
    from matplotlib.colors import to_rgb

    sim = {"name": "sRGB1+CVD", "cvd_type": cvd, "severity": 100}
    labs = [cspace_convert(np.clip(cspace_convert(to_rgb(c), sim, "sRGB1"), 0, 1), "sRGB1", "CIELab")
            for c in PS.PALETTE]
    worst = min(float(np.linalg.norm(labs[i] - labs[j])) for i in range(len(labs)) for j in range(i + 1, len(labs)))
    assert worst >= 20.0, (cvd, worst)


def test_written_out_deuteranopia_matrix_agrees_with_the_library():
    # Source: Machado et al. 2009 (see above): our matrix on linear RGB and colorspacious agree
    cspace_convert = _colorspacious()
    from matplotlib.colors import to_rgb

    M = np.array([[0.367322, 0.860646, -0.227968], [0.280085, 0.672501, 0.047413],
                  [-0.011820, 0.042940, 0.968881]])
    for c in PS.PALETTE:
        ours = np.clip(M @ _srgb_to_linear(_hex(c)), 0, 1)
        lib = _srgb_to_linear(np.clip(cspace_convert(to_rgb(c), {"name": "sRGB1+CVD", "cvd_type": "deuteranomaly",
                                                                  "severity": 100}, "sRGB1"), 0, 1))
        assert np.allclose(ours, lib, atol=2e-3), c


@pytest.mark.parametrize("name", [p.name for p in EXAMPLES])
def test_ids_stay_apart_in_greyscale_and_by_colour(solved, name):
    # common practice, no source: no two ids share colour and line style, nor marker, in a file
    # of up to ten requirements; stall-speed, takeoff and landing keep their colour across files
    spec, _ = solved[name]
    st = PS.styles_of(spec)
    assert len({(s.colour, str(s.linestyle)) for s in st.values()}) == len(st)
    if len(st) <= len(PS.MARKERS):
        assert len({s.marker for s in st.values()}) == len(st)
    firsts = {}
    for r in spec.requirements:
        firsts.setdefault(r.kind, r.id)
    for kind, rid in firsts.items():
        if kind in PS.KIND_SLOTS:
            assert st[rid].colour == PS.PALETTE[PS.KIND_SLOTS[kind]], (kind, rid)


def test_styles_of_many_requirements_never_repeat():
    # common practice, no source: past eight ids the colours repeat with the next line style
    st = PS.requirement_styles([(f"r{i}", "takeoff") for i in range(20)])
    assert len({(s.colour, str(s.linestyle)) for s in st.values()}) == 20
    assert st["r0"].colour == PS.PALETTE[PS.KIND_SLOTS["takeoff"]]


@pytest.mark.parametrize("name", ["touring-piston.yaml", "trainer-jet.yaml"])
def test_one_colour_per_id_across_every_figure(solved, name):
    # common practice, no source: the diagram, the envelope, the turn chart and the WAT chart draw
    # an id in the same colour
    from matplotlib.colors import same_color

    from sizing.charts.envelope import compute_envelope
    from sizing.charts.envelope_plot import plot_envelope
    from sizing.charts.hot_high import compute_wat
    from sizing.charts.hot_high_plot import plot_wat
    from sizing.charts.turn import compute_turn
    from sizing.charts.turn_plot import plot_turn

    spec, res = solved[name]
    st = PS.styles_of(spec)
    seen = {}
    h = P.constraint_diagram(spec, result=res, samples=101)
    for rid, ln in list(h.curves.items()) + list(h.limits.items()):
        seen.setdefault(rid, set()).add(ln.get_color())
    env = plot_envelope(compute_envelope(spec, res, altitudes=30, machs=40), details=False)
    for rid, ln in env["points"].items():
        seen.setdefault(rid, set()).add(ln.get_markerfacecolor())
    turn = plot_turn(compute_turn(spec, res, machs=40, rates=20))
    for rid, ln in turn["points"].items():
        seen.setdefault(rid, set()).add(ln.get_markerfacecolor())
    wat = compute_wat(spec, res, temperatures=[288.15], curve_points=2)
    wh = plot_wat(wat)
    for ln in wh["ax"].lines:
        lab = ln.get_label()
        if lab.startswith("limited by "):
            seen.setdefault(lab[len("limited by "):], set()).add(ln.get_markeredgecolor())
    assert set(seen) <= set(st)
    assert len(seen) >= len(spec.requirements) - 1
    for rid, colours in seen.items():
        assert all(same_color(c, st[rid].colour) for c in colours), (rid, colours, st[rid].colour)
