"""Review report: self-contained HTML and Markdown with every required part.

Checks are consistency checks of the report against the solve result and
the input file (# common practice, no source) unless a source is named.
"""
import base64
import re
from html.parser import HTMLParser
from pathlib import Path

import pytest

import sizing
from sizing.common.caution import CAUTION
from sizing.inputs.spec import load, validate
from sizing.problem import solve
from sizing.problem.facts import design_facts
from sizing.reports import review as R
from sizing.reports.summary import cost_line

from .cliutil import run as run_cli

ROOT = Path(__file__).resolve().parents[1]
EXAMPLES = sorted((ROOT / "requirements").glob("*.yaml"))
PNG = b"\x89PNG\r\n\x1a\n"      # Source: PNG signature, ISO/IEC 15948 §5.2




class _Collect(HTMLParser):
    def __init__(self):
        super().__init__()
        self.stack, self.imgs, self.text, self.errors = [], [], [], []

    def handle_starttag(self, tag, attrs):
        if tag == "img":
            self.imgs.append(dict(attrs))
        elif tag not in ("meta", "br"):
            self.stack.append(tag)

    def handle_endtag(self, tag):
        if not self.stack or self.stack[-1] != tag:
            self.errors.append(tag)
        else:
            self.stack.pop()

    def handle_data(self, data):
        self.text.append(data)


def parse_html(text):
    p = _Collect()
    p.feed(text)
    return p


def embedded_pngs(text):
    return [base64.b64decode(m) for m in re.findall(r"data:image/png;base64,([A-Za-z0-9+/=]+)", text)]


def raw_values(spec):
    """Every requirement value exactly as the user wrote it in the file."""
    for raw in spec.data["requirements"]:
        for k, v in raw.items():
            if k not in ("id", "kind", "note") and not isinstance(v, dict):
                yield raw["id"], str(v)


@pytest.mark.parametrize("name", [p.name for p in EXAMPLES])
def test_html_report_has_every_part(solved, name):
    spec, res = solved[name]
    text = R.render_report(spec, res, "html", envelope=False, flight=False)
    doc = parse_html(text)
    assert not doc.errors and not doc.stack          # tags balanced
    body = "".join(doc.text)
    for r in spec.requirements:
        assert r.id in body
    for rid, v in raw_values(spec):                   # inputs echoed as written
        assert v in body, (rid, v)
    assert CAUTION in body
    assert spec.title in body and spec.sha256[:12] in body and spec.sha256 in body
    assert f"sizing {sizing.__version__}" in body
    assert res.stats["return_status"] in body
    pngs = embedded_pngs(text)
    assert pngs and all(p[:8] == PNG for p in pngs)
    assert len(doc.imgs) == len(pngs)
    assert not re.search(r'src="(?!data:)', text)     # self-contained: no external resources
    d = res.design
    for v in (d.crew_mass, d.payload_mass, d.empty_mass, d.fuel_mass, d.takeoff_mass):
        assert f"{v:,.0f}" in body
    for r in res.requirements:
        if r.active:
            assert cost_line(r) in body
        else:
            assert f"+{r.margin * 100:,.1f} %" in body


def test_weight_statement_adds_up(solved):
    # Source: Raymer, Aircraft Design: A Conceptual Approach, Ch. 3: W0 = Wcrew + Wpayload
    # + Wfuel + Wempty (the weight build-up the closure solves)
    for spec, res in solved.values():
        d = res.design
        assert d.crew_mass + d.payload_mass + d.empty_mass + d.fuel_mass == pytest.approx(d.takeoff_mass, rel=1e-6)
        rows = R._weight_rows(res)
        parts = sum(float(r[1].replace(",", "")) for r in rows[:4])
        assert parts == pytest.approx(float(rows[4][1].replace(",", "")), abs=2.0)   # printed to 1 kg
        f = design_facts(spec, res)
        rows = R._weight_rows(res, f)
        empty = float(next(r for r in rows if r[0] == "empty")[1].replace(",", ""))
        parts = sum(float(r[1].replace(",", "")) for r in rows if r[0].startswith("  of which"))
        assert parts == pytest.approx(empty, abs=1.0 + len(f.empty_breakdown))     # printed to 1 kg each


def test_markdown_report_writes_its_figures_as_files_beside_it(solved, tmp_path):
    spec, res = solved["touring-piston.yaml"]
    path = R.write_report(spec, res, tmp_path / "review.md", fmt="md", envelope=False, flight=False)
    text = Path(path).read_text()
    assert "data:image" not in text
    links = re.findall(r"!\[[^\]]*\]\(([^)]+)\)", text)
    assert links and all(link.startswith("review-figures/") for link in links)
    for link in links:      # Source: PNG signature (ISO/IEC 15948 §5.2)
        assert (tmp_path / link).read_bytes()[:8] == PNG
    # a second, shorter report leaves no stale figure behind
    R.write_report(spec, res, tmp_path / "review.md", fmt="md", diagram=False, envelope=False, flight=False)
    assert list((tmp_path / "review-figures").glob("*.png")) == []
    for r in spec.requirements:
        assert f"| {r.id} |" in text
    assert CAUTION in text
    # every table row has as many cells as its header (GitHub-flavoured Markdown tables)
    for block in re.findall(r"((?:^\|.*\|\n)+)", text, flags=re.M):
        lines = block.strip().splitlines()
        n = lines[0].count(" | ")
        assert all(ln.replace("\\|", "").count(" | ") == n for ln in lines if not ln.startswith("|-"))


def test_envelope_section_is_included(solved, tmp_path):
    spec, res = solved["trainer-jet.yaml"]
    text = Path(R.write_report(spec, res, tmp_path / "r.html")).read_text()
    md, png = R.envelope_section(spec, res)
    first_heading = re.search(r"^#+\s+(.*)$", md, flags=re.M).group(1)
    assert f">{first_heading}<" in text
    # diagram, envelope, V-n, turn and WAT charts; the trainer has no mission, so payload-range is a paragraph
    assert len(embedded_pngs(text)) == 5
    assert "No payload-range diagram" in text


def test_report_without_the_envelope_section(solved):
    spec, res = solved["touring-piston.yaml"]
    blocks = R.document(spec, res, envelope=False, flight=False)
    text = "\n".join(str(b[1:2]) + str(b[2:3]) for b in blocks if b[0] in ("h", "md"))
    assert "Envelope check" not in text and "Constraint diagram" in text


def test_infeasible_report_names_conflicts_and_relaxations(tmp_path):
    spec = load(ROOT / "requirements" / "trainer-jet.yaml")
    data = dict(spec.data)
    data["requirements"] = [dict(r, load_factor=7.5) if r["id"] == "turn-4g" else r for r in data["requirements"]]
    spec = validate(data, "trainer-7g5.yaml", text="trainer-7g5")
    res = solve(spec)
    assert not res.feasible
    text = R.render_report(spec, res, "html")
    body = "".join(parse_html(text).text)
    assert "No feasible design" in body and "Design point" not in body
    for rid in res.infeasibility.conflicts:
        assert rid in body and res.infeasibility.relaxations[rid]["text"] in body
    assert CAUTION in body and embedded_pngs(text)


def test_markdown_tables_become_html_tables():
    # common practice, no source: the envelope's Markdown section rendered in the HTML report
    html = R.md_to_html("## Envelope\n\nSome **bold** text.\n\n| a | b |\n|---|---|\n| 1 | x<y |\n\n- one\n- two\n")
    assert "<h2>Envelope</h2>" in html and "<strong>bold</strong>" in html
    assert "<td>x&lt;y</td>" in html and "<th>a</th>" in html and "<li>two</li>" in html


def test_console_script_report(tmp_path):
    out = tmp_path / "review.md"
    p = run_cli("report", ROOT / "requirements" / "regional-turboprop.yaml", "-o", out, "--revision", "A")
    assert p.returncode == 0, p.stderr
    text = out.read_text()
    assert text.startswith("# ") and CAUTION in text and "revision A" in text
    pngs = [(tmp_path / link).read_bytes() for link in re.findall(r"!\[[^\]]*\]\(([^)]+)\)", text)]
    assert pngs and all(p[:8] == PNG for p in pngs)


def test_report_header_has_date_revision_tool_and_hash(solved, monkeypatch):
    # common practice, no source: a reviewer can tell which file, revision, tool and day
    from sizing.common.version import __version__

    spec, res = solved["trainer-jet.yaml"]
    monkeypatch.setenv("SOURCE_DATE_EPOCH", "1767225600")      # 2026-01-01T00:00:00Z
    text = R.render_report(spec, res, "md", envelope=False, flight=False, diagram=False, revision="C-2")
    head = text.split("\n\n")[1]
    assert "revision C-2" in head and "2026-01-01" in head and f"sizing {__version__}" in head
    assert spec.sha256[:12] in head and spec.sha256 in text


def test_report_has_span_thrust_per_engine_and_cruise_lift(solved):
    # the span from the aspect ratio and wing area, b = sqrt(A S) (definition of the aspect ratio);
    # CL = W/(q S) and L/D from the file's polar at the cruise condition (computed here)
    import math

    from sizing.physics.atmosphere import isa

    spec, res = solved["long-range-jet.yaml"]
    f = design_facts(spec, res)
    d = res.design
    assert f.span == pytest.approx(math.sqrt(9.0 * d.wing_area), rel=1e-12)
    assert f.thrust_per_engine == pytest.approx(d.thrust / 2, rel=1e-12)
    c = next(c for c in f.cruise if c.name.startswith("initial-cruise"))
    air = isa(41000 * 0.3048)     # the file's initial-cruise altitude
    V = 0.80 * float(air.speed_of_sound)
    CL = res.requirement("initial-cruise").beta * d.wing_loading / (0.5 * float(air.density) * V ** 2)
    assert c.CL == pytest.approx(CL, rel=1e-9)
    k = 1.0 / (math.pi * 9.0 * 0.80)        # induced factor 1/(pi A e), the file's CD0 table brackets M 0.80
    assert CL / (0.0200 + k * CL ** 2) <= c.lift_to_drag <= CL / (0.0180 + k * CL ** 2)
    text = R.render_report(spec, res, "md", envelope=False, flight=False, diagram=False)
    assert "wing span" in text and "thrust per engine" in text and "| L/D |" in text
    assert "of which wing" in text and "of which propulsion" in text


def test_export_workbook_round_trips(solved, tmp_path, capsys):
    # the workbook read back with pandas/openpyxl holds the solve's numbers, the caution on every
    # sheet and a unit in every header (common practice, no source)
    import pandas as pd

    from sizing.cli import main

    out = tmp_path / "design.xlsx"
    assert main(["export", str(ROOT / "requirements" / "trainer-jet.yaml"), "-o", str(out)]) == 0
    assert "wrote" in capsys.readouterr().out
    spec, res = solved["trainer-jet.yaml"]
    book = pd.read_excel(out, sheet_name=None, header=None)
    assert {"design", "weights", "requirements", "diagram curves", "inputs"} <= set(book)
    for name, sheet in book.items():
        assert sheet.iloc[0, 0] == CAUTION, name
        header = [str(h) for h in sheet.iloc[3].dropna()]
        assert header and all(re.search(r"\[[^\]]+\]", h) for h in header), (name, header)
    design = pd.read_excel(out, sheet_name="design", skiprows=3)
    row = design[(design.iloc[:, 0] == "takeoff mass") & (design.iloc[:, 2] == "kg")]
    assert float(row.iloc[0, 1]) == pytest.approx(res.design.takeoff_mass, rel=1e-12)
    reqs = pd.read_excel(out, sheet_name="requirements", skiprows=3)
    assert list(reqs["id [text]"]) == [r.id for r in res.requirements]
    assert list(reqs["active [yes/no]"]) == ["yes" if r.active else "no" for r in res.requirements]
    curves = pd.read_excel(out, sheet_name="diagram curves", skiprows=3)
    assert "wing loading W/S [N/m²]" in curves.columns and any(c.startswith("turn-4g") for c in curves.columns)
    assert main(["export", str(ROOT / "requirements" / "trainer-jet.yaml"), "-o", str(tmp_path / "d.csv")]) == 2


def test_class_cross_check_flags_an_outlier_and_needs_a_declared_class(solved):
    # Source: Raymer Table 3.1 (docs/references.md §11.7, from memory): single-engine general aviation
    # We/W0 = 2.36 W0^-0.18; the check says OUTLIER outside +/-10 % of it, and nothing without a class
    from sizing.problem.crosscheck import cross_check
    from sizing.weights.classes import CLASSES, typical_empty_fraction

    spec, res = solved["touring-piston.yaml"]
    check = cross_check(res, spec)
    assert check is not None and check.name == "general-aviation-single"
    t, lo, hi = typical_empty_fraction(CLASSES[check.name], res.design.takeoff_mass)
    assert t == pytest.approx(2.36 * (res.design.takeoff_mass / 0.45359237) ** -0.18, rel=1e-12)
    row = check.rows[0]
    assert row.inside == (lo <= res.design.empty_mass / res.design.takeoff_mass <= hi)
    data = {k: v for k, v in spec.data.items()}
    data["aircraft"] = {k: v for k, v in spec.data["aircraft"].items() if k != "class"}
    plain = validate(data, "no-class.yaml", text="no class")
    assert cross_check(res, plain) is None
    data["aircraft"] = dict(spec.data["aircraft"], weights=dict(spec.data["aircraft"]["weights"],
                                                               empty=dict(spec.data["aircraft"]["weights"]["empty"],
                                                                          other=0.40)))
    heavy = validate(data, "heavy.yaml", text="heavy")
    from sizing.problem import solve

    hc = cross_check(solve(heavy), heavy)
    assert hc.rows[0].verdict.startswith("OUTLIER") and hc.outliers


@pytest.mark.parametrize("name", ["touring-piston.yaml", "regional-turboprop.yaml", "trainer-jet.yaml",
                                  "long-range-jet.yaml"])
def test_every_example_passes_its_own_class_cross_check(solved, name):
    # each invented example sits inside the published ranges of the class its file declares
    from sizing.problem.crosscheck import cross_check

    spec, res = solved[name]
    check = cross_check(res, spec)
    assert check is not None, "every example declares aircraft.class"
    assert not check.outliers, "\n".join(check.lines())
