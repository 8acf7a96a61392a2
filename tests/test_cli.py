"""The command line on the example files; the --json object of docs/file-format.md §10.

Most checks call :func:`sizing.cli.main` in this process (tests/cliutil.py); a handful of
smoke tests run the installed console script itself: a solve, --json, a broken file, an
infeasible set and ``python -m sizing``.

# common practice, no source (interface checks against README.md "Usage" and "When things go wrong", docs/file-format.md §9-10)
"""
import json
import subprocess
import sys
from pathlib import Path

import pytest

from .cliutil import run, script
from .test_infeasible import CONFLICT, text_of

ROOT = Path(__file__).resolve().parents[1]
EXAMPLES = sorted((ROOT / "requirements").glob("*.yaml"))


@pytest.mark.parametrize("path", EXAMPLES, ids=[p.stem for p in EXAMPLES])
def test_solve_prints_design_drivers_margins_and_caution(path):
    r = run("solve", path)
    assert r.returncode == 0, r.stderr
    out = r.stdout
    for text in ("Design point", "wing loading", "N/m^2", "kg/m^2", "lb/ft^2", "takeoff mass", "wing area",
                 "empty mass", "fuel mass", "Drivers", "Margins", "not for certification"):
        assert text.lower() in out.lower(), text
    assert ("kW/kg" in out and "hp/lb" in out) or "thrust-to-weight" in out
    assert "Traceback" not in r.stderr


@pytest.mark.parametrize("path", EXAMPLES, ids=[p.stem for p in EXAMPLES])
def test_json_has_the_design_fields(path):
    r = run("solve", path, "--json")
    assert r.returncode == 0, r.stderr
    obj = json.loads(r.stdout)
    assert {"title", "status", "design", "drivers", "requirements", "infeasibility"} <= set(obj)
    assert obj["status"] == "optimal" and obj["infeasibility"] is None
    d = obj["design"]
    prop = "power_to_weight_W_per_N" in d
    need = {"wing_loading_Pa", "takeoff_mass_kg", "wing_area_m2", "empty_mass_kg", "fuel_mass_kg"}
    need |= {"power_to_weight_W_per_N", "power_W"} if prop else {"thrust_to_weight", "thrust_N"}
    assert need <= set(d)
    # weight statement adds up: crew + payload + empty + fuel = takeoff
    assert d["wing_area_m2"] == pytest.approx(d["takeoff_mass_kg"] * 9.80665 / d["wing_loading_Pa"], rel=1e-9)
    ids = [q["id"] for q in obj["requirements"]]
    assert len(ids) == len(set(ids)) and ids
    for q in obj["requirements"]:
        assert {"id", "kind", "active", "margin", "sensitivity", "capability", "cost_of_step"} <= set(q)
        assert {"step", "unit", "delta_mass_kg", "linear_estimate_kg"} <= set(q["cost_of_step"])
        assert set(q["sensitivity"]) == {"value", "unit"} and q["sensitivity"]["unit"].startswith("kg per ")
        assert q["margin"] >= 0
        assert q["active"] == (q["margin"] == 0)
    assert set(obj["drivers"]) - {"mission fuel"} == {q["id"] for q in obj["requirements"] if q["active"]}
    assert {"growth_factor", "runaway_margin", "warning"} <= set(obj["closure"])


def test_weight_statement_closes(solved):
    # Source: Raymer Ch. 3 closure, W0 = W_crew + W_payload + W_fuel + W_empty
    for _spec, res in solved.values():
        d = res.design
        assert d.crew_mass + d.payload_mass + d.empty_mass + d.fuel_mass == pytest.approx(d.takeoff_mass, rel=1e-8)


def test_check():
    r = run("check", EXAMPLES[0])
    assert r.returncode == 0 and "valid" in r.stdout


# ------------------------------------------------------------------ the real console script

def test_console_script_solves_and_keeps_ipopt_quiet():
    # the installed entry point: design, drivers, caution; IPOPT's own output (written by C
    # code, so only a real process shows it) never reaches the terminal
    r = script("solve", ROOT / "requirements" / "trainer-jet.yaml")
    assert r.returncode == 0, r.stderr
    assert "Design point" in r.stdout and "Drivers" in r.stdout and "not for certification" in r.stdout.lower()
    assert "Ipopt" not in r.stdout + r.stderr and "EXIT:" not in r.stdout and r.stderr == ""


def test_console_script_json_and_module_entry_point():
    r = script("solve", "--json", EXAMPLES[0])
    assert r.returncode == 0 and json.loads(r.stdout)["status"] == "optimal"
    r2 = subprocess.run([sys.executable, "-m", "sizing", "solve", str(EXAMPLES[0]), "--json"],
                        capture_output=True, text=True, cwd=ROOT, timeout=300)
    assert r2.returncode == 0 and json.loads(r2.stdout) == json.loads(r.stdout)


def test_console_script_broken_file_is_exit_2_without_traceback():
    path = ROOT / "tests" / "broken" / "unknown-unit.yaml"
    r = script("solve", path)
    assert r.returncode == 2 and r.stdout == "" and "Traceback" not in r.stderr
    assert r.stderr.startswith(f"error: {path}:18: requirements[0] (id approach-stall).speed: ")


def test_console_script_infeasible_set_is_exit_3(tmp_path):
    f = tmp_path / "conflict.yaml"
    # hand calculation: at the 40 kn stall wing loading (518 Pa) the M 0.9 dash needs a dry T/W of at
    # least 1.3 for its zero-lift drag alone: outside a 0.8 box
    f.write_text(text_of(CONFLICT, extra="design_space: {thrust_to_weight: [0, 0.8]}\n"))
    r = script("solve", f)
    assert r.returncode == 3 and "NO FEASIBLE DESIGN" in r.stdout and "Traceback" not in r.stderr
