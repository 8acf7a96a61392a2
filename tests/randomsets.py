"""Deterministic random requirement files for robustness tests (numpy default_rng, fixed seed).

Each file is one of the example files with the value of each requirement moved by a random
factor, up to 3 % the harder way or 15 % the easier way (a speed or Mach at most 5 % higher,
to stay under the speed limit and inside the polar's Mach table), the payload scaled by 0.8 to
1 (lighter: an example near weight runaway stays closable), and in most files one extra
requirement added (a stall speed, a sustained turn, a dash, a ceiling; a climb for propeller
aircraft): the mix the JSON crash of issue 13 came from. One
file in twenty also asks for a 30 kn stall speed, which no design meets (the wing it needs
weighs more than the closure allows), so the set holds infeasible files whatever the examples'
tuning; each costs a diagnosis, about a second.

# common practice, no source: a generator of inputs for robustness tests; it checks no published value.
"""
from __future__ import annotations

import re
from pathlib import Path

import numpy as np
import yaml

ROOT = Path(__file__).resolve().parents[1]
TEMPLATES = sorted((ROOT / "requirements").glob("*.yaml"))
# the value fields that are scaled; ids, kinds and configurations stay
SCALED = ("speed", "cas", "eas", "mach", "load_factor", "altitude", "climb_rate", "ground_roll", "distance",
          "balanced_field", "field_length", "gradient")
# extra requirements a file may get (jets / propeller aircraft), values scaled too
EXTRA_JET = ({"id": "x-stall", "kind": "stall-speed", "speed": "110 kn", "config": "landing"},
             {"id": "x-turn", "kind": "sustained-turn", "load_factor": 3.0, "mach": 0.6, "altitude": "15000 ft"},
             {"id": "x-dash", "kind": "max-mach", "mach": 0.8, "altitude": "30000 ft"},
             {"id": "x-ceiling", "kind": "ceiling", "altitude": "40000 ft"})
EXTRA_PROP = ({"id": "x-stall", "kind": "stall-speed", "cas": "70 kn", "config": "landing"},
              {"id": "x-climb", "kind": "climb", "climb_rate": "900 ft/min", "speed": "100 kn",
               "config": "takeoff"})
IMPOSSIBLE = {"id": "x-impossible", "kind": "stall-speed", "cas": "30 kn", "config": "landing"}
_NUM = re.compile(r"^\s*([-+]?[0-9.]+(?:[eE][-+]?\d+)?)(\s*.*)$")


def _scale(v, f):
    if isinstance(v, bool):
        return v
    if isinstance(v, (int, float)):
        return round(float(v) * f, 4)
    if isinstance(v, str):
        m = _NUM.match(v)
        if m:
            return f"{float(m.group(1)) * f:.6g}{m.group(2)}"
    return v


def _harder(kind, key) -> int:
    """+1 when a larger value is harder to meet, -1 when a smaller one is (the tool's own rule,
    sizing.problem.capability.HARDER)."""
    from sizing.problem.capability import HARDER

    h = HARDER.get(key, +1)
    return h.get(kind, +1) if isinstance(h, dict) else h


def generate(n=200, seed=13):
    """[(name, yaml text)] of n requirement files (same seed, same files)."""
    rng = np.random.default_rng(seed)
    raw = [(p.stem, yaml.safe_load(p.read_text())) for p in TEMPLATES]
    out = []
    for i in range(n):
        stem, base = raw[int(rng.integers(len(raw)))]
        data = yaml.safe_load(yaml.safe_dump(base))           # a deep copy
        prop = "prop" in data["aircraft"]["propulsion"]["type"] or "piston" in data["aircraft"]["propulsion"]["type"]
        extra = EXTRA_PROP if prop else EXTRA_JET
        k = int(rng.integers(len(extra) + 1))                  # k == len(extra): none added
        if k < len(extra):
            data["requirements"].append(dict(extra[k]))
        if i % 20 == 7:          # one file in twenty cannot be met: a 30 kn stall needs a wing so large
            data["requirements"].append(dict(IMPOSSIBLE))     # its mass alone closes no design
        for r in data["requirements"]:
            for key in SCALED:
                if key in r:
                    # up to 3 % harder (a speed or Mach at most 5 % higher: under the speed limit
                    # and inside the polar's Mach table) or up to 15 % easier
                    harder = _harder(r["kind"], key)
                    u = float(rng.uniform(-0.15, 0.03))
                    f = 1.0 + harder * u
                    if key in ("mach", "speed", "cas", "eas"):
                        f = min(f, 1.05)
                    r[key] = _scale(r[key], f)
        w = data["aircraft"]["weights"]
        w["payload"] = _scale(w["payload"], float(rng.uniform(0.8, 1.0)))
        if "max_payload" in w:
            w["max_payload"] = _scale(w["max_payload"], 3.0)
        data["title"] = f"random set from {stem}"          # the title is part of the structure
        out.append((f"random-{i:03d}-{stem}.yaml", yaml.safe_dump(data, sort_keys=False)))
    return out
