"""Trade studies: sweeps and Monte Carlo sampling of a requirement file.

A study file (``studies/*.yaml``) names a base requirement file and either
``sweep`` (one or two parameters, each a list of values or
``{from, to, steps}``) or ``sample`` (``count``, ``seed`` and a ``vary``
mapping of distributions)::

    base: ../requirements/trainer-jet.yaml
    sweep:
      requirements.turn-4g.load_factor: [3.0, 3.5, 4.0, 4.5, 5.0]
      requirements.field.ground_roll: {from: "600 m", to: "900 m", steps: 4}

Parameters are addressed by path: ``requirements.<id>.<field>`` or the
file's own keys (``aircraft.aerodynamics.cd0``; list entries by index,
mission segments also by name). Values carry units where the field has one.
Every path and value is checked before any solve, against the real schema
(:func:`sizing.spec.validate` of the base file with the value set); a bad
one raises :class:`sizing.errors.InputError` with the study file and line.

The runner builds the sizing problem once per worker process and re-solves
it with new parameter values, warm-started from the nearest point already
solved. Points are cut into chunks that depend on the study alone, never on
the executor, so serial, local processes and a Dask cluster give identical
numbers. A point with no feasible design is kept with status
``infeasible`` and NaNs.
"""
from __future__ import annotations

import copy
import difflib
import hashlib
import math
import os
import re
import sys
import time
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from . import model as M
from .atmosphere import g0 as G0
from .errors import InputError, SizingError

STUDY_KEYS = ("title", "base", "sweep", "sample")
SAMPLE_KEYS = ("count", "seed", "vary")
DISTRIBUTIONS = {
    "normal": "{normal: {mean: <value>, std: <value>}}",
    "uniform": "{uniform: [<low>, <high>]}",
    "triangular": "{triangular: [<low>, <mode>, <high>]}",
}
MAX_POINTS = 1_000_000
VALIDATE_ALL = 50          # validate every distinct value of a path up to this many
STATUS_OK, STATUS_INFEASIBLE, STATUS_FAILED = "optimal", "infeasible", "failed"
_CODES = {0: STATUS_OK, 1: STATUS_INFEASIBLE, 2: STATUS_FAILED}
# IPOPT outcomes that mean "no design meets everything" (the same set for which
# Problem.solve diagnoses infeasibility instead of raising)
_INFEASIBLE_RETURNS = {"Infeasible_Problem_Detected", "Solve_Succeeded", "Solved_To_Acceptable_Level",
                       "Restoration_Failed", "Maximum_Iterations_Exceeded",
                       "Search_Direction_Becomes_Too_Small", "Converged_To_Local_Infeasibility"}
_NUM_UNIT = re.compile(r"^\s*([-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?)\s*(.*?)\s*$")


# --------------------------------------------------------------------------
# Study definition
# --------------------------------------------------------------------------

@dataclass(frozen=True)
class Varied:
    """One varied parameter: its path as written, where it lives, its unit."""

    path: str            # as written in the study file
    tree_path: tuple     # path in the SI tree (requirements keyed by id) = Problem.paths entry
    raw_path: tuple      # path in the base file's raw YAML data (requirements by list index)
    index: int           # position in the parameter vector
    unit: str            # the user's unit ("" for a plain number)
    line: int | None     # line of the entry in the study file


@dataclass
class Study:
    """A parsed, fully checked study: every point's values in user and SI units."""

    file: str
    title: str
    base_file: str
    base: object                 # sizing.spec.Spec of the base file
    mode: str                    # "sweep" | "sample"
    varied: list
    user_values: np.ndarray      # (points, parameters) in the user's units
    si_values: np.ndarray        # (points, parameters) SI, as in the parameter vector
    shape: tuple                 # grid shape of a sweep; (count,) for sampling
    seed: int | None = None
    distributions: dict = field(default_factory=dict)

    @property
    def size(self) -> int:
        return int(self.si_values.shape[0])

    @property
    def columns(self) -> list:
        return [v.path for v in self.varied]


def _err(msg, study_file, lines, key, fld=None):
    if fld and msg.startswith(f"{fld}: "):
        msg = msg[len(fld) + 2:]          # the field is shown once, by InputError
    line = None
    while key:
        if key in lines:
            line = lines[key]
            break
        key = key[:-1]
    return InputError(msg, study_file, line, fld)


def _split_value(v):
    """(number, unit text) of a value as written; None when it is not a value.

    Examples
    --------
    Hand calculation: the number and the unit as the user wrote them.

    >>> _split_value(4.5), _split_value("700 m"), _split_value("6 %")
    ((4.5, ''), (700.0, 'm'), (6.0, '%'))
    >>> _split_value("fast") is None
    True
    """
    if isinstance(v, bool):
        return None
    if isinstance(v, (int, float)):
        return float(v), ""
    if isinstance(v, str):
        m = _NUM_UNIT.match(v)
        if m:
            return float(m.group(1)), m.group(2)
    return None


def _as_raw(num: float, unit: str):
    """The raw YAML value for a number in a unit (what validation sees)."""
    return float(num) if not unit else f"{float(num)!r} {unit}"


class _Paths:
    """Resolves study paths in a base file and checks values against its schema."""

    def __init__(self, spec, study_file, lines):
        self.spec, self.file, self.lines = spec, study_file, lines
        self.tree = M.spec_tree(spec)
        self.structure = M.structure_key(self.tree)
        self.paths = [p for p, _ in M.flatten(self.tree)]
        self.index = {p: i for i, p in enumerate(self.paths)}
        self._cache = {}

    def resolve(self, text: str, key) -> tuple:
        """(tree path, raw path) of a dotted path; InputError if it names no parameter."""
        def fail(msg):
            return _err(f"{text}: {msg}", self.file, self.lines, key, text)

        parts = [p for p in str(text).split(".")]
        if not text or any(p == "" for p in parts):
            raise fail("write a dotted path such as requirements.<id>.<field> or aircraft.aerodynamics.cd0")
        data, tree = self.spec.data, self.tree
        head = parts[0]
        if head in M._STRUCTURAL_KEYS:
            raise fail(f"{head!r} is structure of the problem, not a parameter a study can vary")
        tops = [k for k in ("aircraft", "mission", "requirements") if k in tree]
        if head not in tops:
            near = difflib.get_close_matches(head, tops, 1)
            raise fail(f"unknown section {head!r}" + (f" (did you mean {near[0]!r}?)" if near else "")
                       + f"; a path starts with one of: {', '.join(tops)}")
        rest = parts[1:]
        tree_path, raw_path = (head,), (head,)
        tnode, rnode = tree[head], data.get(head)
        if head == "requirements":
            ids = list(tnode.keys())
            rid = None
            for k in range(len(rest), 0, -1):        # ids may contain dots: longest match wins
                if ".".join(rest[:k]) in tnode:
                    rid, rest = ".".join(rest[:k]), rest[k:]
                    break
            if rid is None:
                got = rest[0] if rest else ""
                near = difflib.get_close_matches(got, ids, 1)
                raise fail(f"no requirement with id {got!r}" + (f" (did you mean {near[0]!r}?)" if near else "")
                           + f"; ids in {self.spec.path}: {', '.join(ids)}")
            pos = next(i for i, r in enumerate(rnode) if isinstance(r, dict) and r.get("id") == rid)
            tree_path, raw_path = tree_path + (rid,), raw_path + (pos,)
            tnode, rnode = tnode[rid], rnode[pos]
        for i, part in enumerate(rest):
            where = ".".join(parts[:len(parts) - len(rest) + i]) or head
            if isinstance(tnode, list):
                j = None
                if re.fullmatch(r"\d+", part):
                    j = int(part)
                else:
                    names = [e.get("name") if isinstance(e, dict) else None for e in tnode]
                    if part in names:
                        j = names.index(part)
                if j is None or not 0 <= j < len(tnode):
                    raise fail(f"{where} is a list of {len(tnode)} entries; address one by index "
                               f"0 to {len(tnode) - 1}" + (" or by segment name" if where.endswith("segments") else ""))
                tree_path, raw_path = tree_path + (j,), raw_path + (j,)
                tnode = tnode[j]
                rnode = rnode[j] if isinstance(rnode, list) and j < len(rnode) else None
                continue
            if not isinstance(tnode, dict) or part not in tnode:
                keys = [k for k, v in tnode.items() if not isinstance(v, (str, bool))] if isinstance(tnode, dict) else []
                near = difflib.get_close_matches(part, keys, 1)
                hint = f" (did you mean {near[0]!r}?)" if near else ""
                raise fail(f"no parameter {part!r} in {where}{hint}; parameters there: {', '.join(keys) or 'none'}"
                           f" (a field the base file leaves unset cannot be varied: set it in the base file first)")
            tree_path, raw_path = tree_path + (part,), raw_path + (part,)
            tnode = tnode[part]
            rnode = rnode.get(part) if isinstance(rnode, dict) else None
        if isinstance(tnode, dict):
            if M._is_table(tnode):
                name = next(k for k in tnode if k != "mach")
                raise fail(f"this is a Mach table; vary one entry, e.g. {text}.{name}.0 "
                           f"(entries 0 to {len(tnode[name]) - 1})")
            raise fail(f"this is a group ({', '.join(tnode)}), not a single value")
        if tree_path not in self.index:
            if len(tree_path) >= 2 and tree_path[-2] == "mach" and isinstance(tree_path[-1], int):
                raise fail("Mach-table breakpoints are the problem's structure, not parameters; a study "
                           "cannot move them (vary the table's values, or write one base file per breakpoint set)")
            raise fail(f"{tnode!r} is a setting of the problem's structure, not a numeric parameter")
        return tree_path, raw_path

    def check(self, var_path, tree_path, raw_path, num, unit, key) -> float:
        """Validate the base file with one value set; its SI value (raises InputError)."""
        ck = (tree_path, num, unit)
        if ck in self._cache:
            return self._cache[ck]
        return self.check_many([(tree_path, raw_path, num, unit)], key, var_path)

    def check_many(self, settings, key, label) -> float:
        """Validate the base file with several values set at once; SI of the first."""
        from .spec import validate

        data = copy.deepcopy(self.spec.data)
        for _tp, raw_path, num, unit in settings:
            node = data
            for k in raw_path[:-1]:
                if isinstance(node, dict) and k not in node:
                    node[k] = {}
                node = node[k]
            node[raw_path[-1]] = _as_raw(num, unit)
        shown = ", ".join(f"{_shown(n, u)}" for _tp, _rp, n, u in settings)
        try:
            spec = validate(data, self.spec.path)
        except InputError as e:
            raise _err(f"{label} = {shown} does not fit the base file {self.spec.path}: {e.message}",
                       self.file, self.lines, key, label) from None
        tree = M.spec_tree(spec)
        if M.structure_key(tree) != self.structure:
            raise _err(f"{label} = {shown} changes the problem's structure (not only a parameter value); "
                       f"a study re-solves one built problem, so it cannot vary this", self.file, self.lines, key, label)
        out = None
        for tp, _rp, num, unit in settings:
            v = tree
            for k in tp:
                v = v[k]
            si = float(v)
            if not math.isfinite(si):
                raise _err(f"{label} = {shown} is not finite", self.file, self.lines, key, label)
            if len(settings) == 1:
                self._cache[(tp, num, unit)] = si
            out = si if out is None else out
        return out


def _shown(num, unit):
    return f"{num:g}" if not unit else f"{num:g} {unit}"


def _values_si(paths, var, tree_path, raw_path, nums, unit, key_of):
    """SI values of one path's user values (all in one unit).

    Every distinct value is validated when there are few; otherwise the two
    extremes (the schema's checks are ranges, so values between two valid
    extremes are valid) and the values in between mapped by the affine map
    the two define.
    """
    nums = np.asarray(nums, dtype=float)
    distinct = np.unique(nums)
    if distinct.size <= VALIDATE_ALL:
        table = {float(d): paths.check(var, tree_path, raw_path, float(d), unit, key_of(float(d))) for d in distinct}
        return np.array([table[float(v)] for v in nums])
    lo, hi = float(distinct[0]), float(distinct[-1])
    s_lo = paths.check(var, tree_path, raw_path, lo, unit, key_of(lo))
    s_hi = paths.check(var, tree_path, raw_path, hi, unit, key_of(hi))
    return s_lo + (s_hi - s_lo) / (hi - lo) * (nums - lo)


def _parse_sweep(paths, sweep, study_file, lines):
    if not isinstance(sweep, dict) or not 1 <= len(sweep) <= 2:
        raise _err("sweep is a mapping of one or two parameter paths to their values, e.g. "
                   "requirements.turn-4g.load_factor: [3.0, 3.5, 4.0]", study_file, lines, ("sweep",), "sweep")
    varied, axes_user, axes_si, seen = [], [], [], set()
    for name, spec_v in sweep.items():
        key = ("sweep", name)
        tree_path, raw_path = paths.resolve(str(name), key)
        if tree_path in seen:
            raise _err(f"{name}: this parameter is already swept", study_file, lines, key, str(name))
        seen.add(tree_path)
        if isinstance(spec_v, list):
            if not spec_v:
                raise _err(f"{name}: give at least one value", study_file, lines, key, str(name))
            parsed = []
            for i, v in enumerate(spec_v):
                sv = _split_value(v)
                if sv is None:
                    raise _err(f"{name}: {v!r} is not a value (a number, or a number with a unit such "
                               f"as '700 m')", study_file, lines, key + (i,), str(name))
                parsed.append(sv)
            unit = parsed[0][1]
            odd = next((i for i, (_n, u) in enumerate(parsed) if u != unit), None)
            if odd is not None:
                # the schema's own message first (a missing unit, say), then ours
                paths.check(str(name), tree_path, raw_path, parsed[odd][0], parsed[odd][1], key + (odd,))
                raise _err(f"{name}: write every value of the list in the same unit ({parsed[odd][1] or 'none'!r} "
                           f"here, {unit or 'none'!r} first)", study_file, lines, key + (odd,), str(name))
            user = np.array([n for n, _ in parsed])
            first = {}
            for i, (n, _u) in enumerate(parsed):
                first.setdefault(n, i)
            si = _values_si(paths, str(name), tree_path, raw_path, user, unit, lambda d: key + (first[d],))
        elif isinstance(spec_v, dict):
            extra = sorted(set(spec_v) - {"from", "to", "steps"})
            if extra or not {"from", "to", "steps"} <= set(spec_v):
                raise _err(f"{name}: a range is {{from: <value>, to: <value>, steps: <count>}}"
                           + (f"; unknown key {extra[0]!r}" if extra else ""), study_file, lines, key, str(name))
            steps = spec_v["steps"]
            if isinstance(steps, bool) or not isinstance(steps, int) or not 2 <= steps <= MAX_POINTS:
                raise _err(f"{name}: steps must be a whole number from 2 up, got {steps!r}", study_file, lines,
                           key + ("steps",), str(name))
            a, b = _split_value(spec_v["from"]), _split_value(spec_v["to"])
            for k, sv in (("from", a), ("to", b)):
                if sv is None:
                    raise _err(f"{name}: {k} {spec_v[k]!r} is not a value (a number, or a number with a unit)",
                               study_file, lines, key + (k,), str(name))
            if a[1] != b[1]:
                raise _err(f"{name}: write from and to in the same unit (got {a[1] or 'none'!r} and "
                           f"{b[1] or 'none'!r})", study_file, lines, key + ("to",), str(name))
            if a[0] == b[0]:
                raise _err(f"{name}: from and to are equal; give a list for a single value", study_file, lines,
                           key + ("to",), str(name))
            unit = a[1]
            user = np.linspace(a[0], b[0], steps)
            s_a = paths.check(str(name), tree_path, raw_path, a[0], unit, key + ("from",))
            s_b = paths.check(str(name), tree_path, raw_path, b[0], unit, key + ("to",))
            si = s_a + (s_b - s_a) * (user - a[0]) / (b[0] - a[0])
            if steps <= VALIDATE_ALL:
                si = np.array([paths.check(str(name), tree_path, raw_path, float(u), unit, key) for u in user])
        else:
            raise _err(f"{name}: give a list of values or {{from, to, steps}}, got {spec_v!r}", study_file, lines,
                       key, str(name))
        varied.append(Varied(str(name), tree_path, raw_path, paths.index[tree_path], unit, lines.get(key)))
        axes_user.append(np.asarray(user, float))
        axes_si.append(np.asarray(si, float))
    shape = tuple(len(a) for a in axes_user)
    if math.prod(shape) > MAX_POINTS:
        raise _err(f"the sweep has {math.prod(shape):,} points; at most {MAX_POINTS:,}", study_file, lines,
                   ("sweep",), "sweep")
    if len(varied) == 2:
        # the two parameters together: the corners of the box must validate too
        for i in (0, -1):
            for j in (0, -1):
                paths.check_many([(v.tree_path, v.raw_path, float(ax[k]), v.unit)
                                  for v, ax, k in zip(varied, axes_user, (i, j))], ("sweep",), "sweep")
    grids_u = np.meshgrid(*axes_user, indexing="ij")
    grids_s = np.meshgrid(*axes_si, indexing="ij")
    user = np.stack([g.ravel() for g in grids_u], axis=1)
    si = np.stack([g.ravel() for g in grids_s], axis=1)
    return varied, user, si, shape


def _draw(rng, kind, args, count):
    if kind == "normal":
        return rng.normal(args[0], args[1], count)
    if kind == "uniform":
        return rng.uniform(args[0], args[1], count)
    return rng.triangular(args[0], args[1], args[2], count)


def _parse_sample(paths, sample, study_file, lines):
    key0 = ("sample",)
    if not isinstance(sample, dict):
        raise _err("sample is a mapping with count, seed and vary", study_file, lines, key0, "sample")
    for k in sample:
        if k not in SAMPLE_KEYS:
            near = difflib.get_close_matches(str(k), SAMPLE_KEYS, 1)
            raise _err(f"unknown key {k!r} in sample" + (f" (did you mean {near[0]!r}?)" if near else "")
                       + f"; valid keys: {', '.join(SAMPLE_KEYS)}", study_file, lines, key0 + (k,), f"sample.{k}")
    count, seed, vary = sample.get("count"), sample.get("seed", 0), sample.get("vary")
    if isinstance(count, bool) or not isinstance(count, int) or not 1 <= count <= MAX_POINTS:
        raise _err(f"sample.count must be a whole number from 1 to {MAX_POINTS:,}, got {count!r}", study_file, lines,
                   key0 + ("count",), "sample.count")
    if isinstance(seed, bool) or not isinstance(seed, int) or seed < 0:
        raise _err(f"sample.seed must be a non-negative whole number, got {seed!r}", study_file, lines,
                   key0 + ("seed",), "sample.seed")
    if not isinstance(vary, dict) or not vary:
        raise _err("sample.vary maps parameter paths to distributions, e.g. aircraft.aerodynamics.cd0: "
                   "{normal: {mean: 0.020, std: 0.002}}", study_file, lines, key0 + ("vary",), "sample.vary")
    rng = np.random.Generator(np.random.PCG64(seed))
    varied, cols_u, cols_s, dists, seen = [], [], [], {}, set()
    for name, dist in vary.items():
        key = key0 + ("vary", name)
        label = str(name)
        tree_path, raw_path = paths.resolve(label, key)
        if tree_path in seen:
            raise _err(f"{label}: this parameter is already varied", study_file, lines, key, label)
        seen.add(tree_path)
        valid = "; ".join(DISTRIBUTIONS.values())
        if not isinstance(dist, dict) or len(dist) != 1 or next(iter(dist)) not in DISTRIBUTIONS:
            got = next(iter(dist)) if isinstance(dist, dict) and dist else dist
            near = difflib.get_close_matches(str(got), list(DISTRIBUTIONS), 1)
            raise _err(f"{label}: unknown distribution {got!r}" + (f" (did you mean {near[0]!r}?)" if near else "")
                       + f"; write one of {valid}", study_file, lines, key, label)
        kind, a = next(iter(dist.items()))
        kkey = key + (kind,)
        if kind == "normal":
            if not isinstance(a, dict) or set(a) != {"mean", "std"}:
                raise _err(f"{label}: {DISTRIBUTIONS['normal']}", study_file, lines, kkey, label)
            raw_args = [a["mean"], a["std"]]
        else:
            n_args = 2 if kind == "uniform" else 3
            if not isinstance(a, list) or len(a) != n_args:
                raise _err(f"{label}: {DISTRIBUTIONS[kind]}", study_file, lines, kkey, label)
            raw_args = list(a)
        parsed = [_split_value(v) for v in raw_args]
        if any(p is None for p in parsed):
            bad = raw_args[[p is None for p in parsed].index(True)]
            raise _err(f"{label}: {bad!r} is not a value (a number, or a number with a unit)", study_file, lines,
                       kkey, label)
        units_ = {u for _, u in parsed}
        if len(units_) != 1:
            raise _err(f"{label}: write every argument of the distribution in the same unit "
                       f"(got {', '.join(sorted(repr(u) for u in units_))})", study_file, lines, kkey, label)
        unit = parsed[0][1]
        nums = [n for n, _ in parsed]
        if kind == "normal" and not nums[1] > 0:
            raise _err(f"{label}: std must be positive, got {nums[1]:g}", study_file, lines, kkey, label)
        if kind == "uniform" and not nums[1] > nums[0]:
            raise _err(f"{label}: uniform [low, high] needs low < high", study_file, lines, kkey, label)
        if kind == "triangular" and not (nums[0] <= nums[1] <= nums[2] and nums[0] < nums[2]):
            raise _err(f"{label}: triangular [low, mode, high] needs low <= mode <= high, low < high",
                       study_file, lines, kkey, label)
        draws = _draw(rng, kind, nums, count)
        lo, hi = float(draws.min()), float(draws.max())
        try:
            s_lo = paths.check(label, tree_path, raw_path, lo, unit, kkey)
            s_hi = paths.check(label, tree_path, raw_path, hi, unit, kkey) if hi != lo else s_lo
        except InputError as e:
            e.message = (f"the {kind} distribution draws values from {_shown(lo, unit)} to {_shown(hi, unit)} "
                         f"in {count:,} samples, not all valid: {e.message}; narrow the distribution")
            e.args = (e.describe(),)
            raise
        si = s_lo + (s_hi - s_lo) * (draws - lo) / (hi - lo) if hi != lo else np.full(count, s_lo)
        varied.append(Varied(label, tree_path, raw_path, paths.index[tree_path], unit, lines.get(key)))
        cols_u.append(draws)
        cols_s.append(si)
        dists[label] = {kind: nums, "unit": unit}
    if 2 <= len(varied) <= 6:
        # parameters together: every corner of the drawn box must validate
        for corner in range(2 ** len(varied)):
            settings = [(v.tree_path, v.raw_path,
                         float(cols_u[i].max() if corner >> i & 1 else cols_u[i].min()), v.unit)
                        for i, v in enumerate(varied)]
            paths.check_many(settings, key0 + ("vary",), "sample.vary")
    return varied, np.stack(cols_u, axis=1), np.stack(cols_s, axis=1), (count,), seed, dists


def load_study(source, base_dir=None) -> Study:
    """Parse and check a study file (path) or mapping; raises :class:`InputError`.

    A mapping's ``base`` is relative to ``base_dir`` (default: the current
    directory); a file's to the study file's folder.
    """
    from .spec import load
    from .units import read_yaml

    if isinstance(source, dict):
        data, lines, study_file = copy.deepcopy(source), {}, "<study>"
        folder = Path(base_dir) if base_dir is not None else Path.cwd()
    else:
        study_file = str(source)
        try:
            text = Path(source).read_text(encoding="utf-8")
        except (OSError, UnicodeDecodeError) as e:
            raise InputError(f"cannot read the study file: {getattr(e, 'strerror', None) or e}", study_file) from None
        data, lines = read_yaml(text, study_file, "the study file is empty; a study is a mapping with base "
                                                  "and sweep (or sample)")
        folder = Path(base_dir) if base_dir is not None else Path(source).parent
    if not isinstance(data, dict):
        raise InputError("a study file is a mapping with base and sweep (or sample)", study_file, 1)
    for k in data:
        if k not in STUDY_KEYS:
            near = difflib.get_close_matches(str(k), STUDY_KEYS, 1)
            raise _err(f"unknown key {k!r}" + (f" (did you mean {near[0]!r}?)" if near else "")
                       + f"; valid keys: {', '.join(STUDY_KEYS)}", study_file, lines, (k,), str(k))
    base_rel = data.get("base")
    if not isinstance(base_rel, str) or not base_rel.strip():
        raise _err("missing base: the requirement file the study varies, relative to the study file",
                   study_file, lines, ("base",), "base")
    base_file = Path(os.path.normpath(folder / base_rel))
    if not base_file.is_file():
        raise _err(f"base file {base_rel!r} not found (looked for {base_file})", study_file, lines, ("base",), "base")
    spec = load(base_file)
    if ("sweep" in data) == ("sample" in data):
        raise _err("give either sweep (one or two parameters) or sample (Monte Carlo), not both or neither",
                   study_file, lines, ("sample",) if "sample" in data else (), "sweep")
    paths = _Paths(spec, study_file, lines)
    title = str(data.get("title") or f"Trade study on {spec.title}")
    if "sweep" in data:
        varied, user, si, shape = _parse_sweep(paths, data["sweep"], study_file, lines)
        return Study(study_file, title, str(base_file), spec, "sweep", varied, user, si, shape)
    varied, user, si, shape, seed, dists = _parse_sample(paths, data["sample"], study_file, lines)
    return Study(study_file, title, str(base_file), spec, "sample", varied, user, si, shape, seed, dists)


# --------------------------------------------------------------------------
# Solving chunks (runs in worker processes; no Problem crosses a process)
# --------------------------------------------------------------------------

# The study's own warm-start solver for the neighbour-to-neighbour steps: the same
# NLP (the Problem's expressions), the same tolerances, IPOPT's warm-start options
# with a monotone barrier started small, and an iteration cap: a step to a close
# neighbour converges in a few iterations, and one that does not is handed to
# Problem.solve_raw with every starting point instead of running on.
WARM_MAX_ITER = 60
_WARM_OPTIONS = {"ipopt.warm_start_init_point": "yes", "ipopt.warm_start_bound_push": 1e-10,
                 "ipopt.warm_start_mult_bound_push": 1e-10, "ipopt.mu_strategy": "monotone",
                 "ipopt.mu_init": 1e-8, "ipopt.max_iter": WARM_MAX_ITER}


def _warm_solver(prob):
    import casadi as ca

    from .solve import _IPOPT

    nlp = {"x": prob._x, "p": prob._P, "f": prob._f_expr, "g": prob._g_expr}
    return ca.nlpsol("study_warm", "ipopt", nlp, {**_IPOPT, **_WARM_OPTIONS})


class _Context:
    """A worker's built problem for one base file, and its solved base point."""

    def __init__(self, job):
        from .solve import Problem
        from .spec import validate

        self.spec = validate(copy.deepcopy(job["data"]), job["filename"])
        # a fresh Problem (not the structure cache): its scaling comes from the base
        # file in every process, so every executor solves the very same problem
        self.prob = Problem(self.spec)
        self.p0 = self.prob.parameters(self.spec)
        self.index = np.asarray(job["index"], dtype=int)
        self.confirm = bool(job.get("confirm", True))
        x, lg, lx, _st, ok = self.prob.solve_raw(self.p0)
        self.base_warm = (x, lg, lx) if ok else None
        self.warm_solver = _warm_solver(self.prob)


_CONTEXTS: dict = {}


def _context(job) -> _Context:
    ctx = _CONTEXTS.get(job["key"])
    if ctx is None:
        _CONTEXTS.clear()
        ctx = _CONTEXTS[job["key"]] = _Context(job)
    return ctx


def _drivers(prob, x, p):
    """Active requirements from the constraint rows (the rule of Problem._package)."""
    from .solve import ACTIVE_TOL

    g = np.array(prob._g_fun(x, p)[0], dtype=float).ravel()
    W_S, Y = x[0] * prob.WS_scale, x[1] * prob.Y_scale
    index = {path: i for i, path in enumerate(prob.paths)}
    worst = {}
    for (rid, what), v in zip(prob.rows, g):
        if what == "thrust":
            need = Y - v * prob.Y_scale
            margin = Y / need - 1.0
        elif what == "wing_loading":
            margin = v * prob.WS_scale / W_S
        elif what == "stall":
            # q CLmax / (beta W/S) - 1; beta as given (1 for "after:" fractions, which
            # only rescales a margin that is either ~0 or far above the tolerance)
            j = index.get(("requirements", rid, "weight_fraction"))
            beta = float(p[j]) if j is not None else 1.0
            margin = v * prob.WS_scale / (beta * W_S)
        else:
            continue
        worst[rid] = min(worst.get(rid, math.inf), margin)
    drivers = [rid for rid in prob.req_ids if worst.get(rid, math.inf) <= ACTIVE_TOL]
    try:
        mission = prob._mission_drives(x, p, prob.rows, g)
    except TypeError:          # the older signature (x, p, drivers)
        mission = prob._mission_drives(x, p, drivers)
    if mission:
        drivers.append("mission fuel")
    return drivers


def _rows_ok(prob, vals) -> np.ndarray:
    """The acceptance rule of Problem.verify on constraint rows (scalars or arrays)."""
    from .solve import VERIFY_TOL

    ok = True
    for (_rid, what), v in zip(prob.rows, vals):
        v = np.asarray(v, dtype=float)
        good = np.isfinite(v) & ((np.abs(v) <= 1e-6) if what == "closure" else (v >= -VERIFY_TOL))
        ok = ok & good
    return np.asarray(ok, dtype=bool)


def _solve_point(ctx, p, warm):
    """(code, x, (x, lam_g, lam_x) or None, iterations, checked_in_numpy) for one point.

    Fast path: one warm-started IPOPT solve from the neighbour (capped at
    WARM_MAX_ITER iterations), accepted when IPOPT succeeds and every
    constraint row holds (rows evaluated by CasADi; the plain-numpy check
    follows for the whole chunk at once, see :func:`_verify_chunk`).
    Otherwise Problem.solve_raw with the single solve's starting points,
    numpy-verified there.
    """
    prob = ctx.prob
    iters = 0
    warm_status = None
    if warm is not None:
        x0, lg, lx = warm
        solver = ctx.warm_solver
        sol = solver(x0=x0, p=p, lbx=prob.lbx, ubx=prob.ubx, lbg=prob.lbg, ubg=prob.ubg, lam_g0=lg, lam_x0=lx)
        st = solver.stats()
        iters = st.get("iter_count", 0) or 0
        warm_status = st.get("return_status")
        x = np.array(sol["x"]).ravel()
        if warm_status in ("Solve_Succeeded", "Solved_To_Acceptable_Level"):
            g = np.array(prob._g_fun(x, p)[0], dtype=float).ravel()
            if _rows_ok(prob, g):
                return 0, x, (x, np.array(sol["lam_g"]).ravel(), np.array(sol["lam_x"]).ravel()), iters, False
    if not ctx.confirm and warm_status is not None and not _scan_feasible(prob, p):
        # quick verdict: IPOPT found no feasible design from the neighbour's answer
        # (within WARM_MAX_ITER) and the single solve's coarse W/S scan finds none either
        return 1, x, None, iters, True
    # every starting point of a single solve (exactly what sizing.solve.solve tries),
    # so a point called infeasible here is one the single solve calls infeasible too
    x, lg2, lx2, st, ok = prob.solve_raw(p)
    iters += st.get("iter_count", 0) or 0
    if ok:
        return 0, x, (x, lg2, lx2), iters, True
    code = 1 if st.get("return_status") in _INFEASIBLE_RETURNS else 2
    return code, x, None, iters, True


def _scan_feasible(prob, p, tol=1e-3) -> bool:
    """Whether the coarse numpy W/S scan of Problem.initial_guess finds a design.

    The scan's best point is a feasible, closed design when one exists on its
    grid (it minimises the closed mass over the points that meet every
    requirement); otherwise it is the least-thrust point, which violates a
    row or the closure.
    """
    x = prob.initial_guess(p)
    g = np.array(prob._g_fun(x, p)[0], dtype=float).ravel()
    for (_rid, what), v in zip(prob.rows, g):
        if not np.isfinite(v) or (abs(v) > tol if what == "closure" else v < -tol):
            return False
    return True


def _verify_chunk(ctx, X, P):
    """Plain-numpy re-evaluation of every constraint at many answers at once.

    X: (n, nx) solutions, P: (n, k) values of the varied parameters. The
    expressions are the solver's own (Problem.expressions), on arrays; where
    they cannot take arrays, point by point with Problem.verify.
    """
    prob = ctx.prob
    n = X.shape[0]
    if n == 0:
        return np.zeros(0, dtype=bool)
    try:
        values = {path: float(ctx.p0[i]) for i, path in enumerate(prob.paths)}
        for j, i in enumerate(ctx.index):
            values[prob.paths[i]] = P[:, j].copy()
        tree = M.substitute(prob.tree0, values)
        V = {rid: X[:, 3 + i] * prob.V_scale for i, rid in enumerate(prob.free)}
        with np.errstate(all="ignore"):
            _rows, vals, *_ = prob.expressions(tree, X[:, 0] * prob.WS_scale, X[:, 1] * prob.Y_scale,
                                               X[:, 2] * prob.m_ref, V)
        ok = np.broadcast_to(_rows_ok(prob, vals), (n,)).copy()
        if ok.shape == (n,):
            return ok
    except Exception:  # noqa: BLE001 - a model that takes only scalars: check one by one
        pass
    out = np.empty(n, dtype=bool)
    for i in range(n):
        p = ctx.p0.copy()
        p[ctx.index] = P[i]
        out[i] = prob.verify(X[i], p)
    return out


def _run_chunk(job, chunk):
    """Solve one chunk: (chunk id, point indices, normalised coordinates, SI values).

    Each point warm-starts from the nearest point of the chunk already solved
    (the first from the base point). Returns a dict of arrays.
    """
    cid, idx, Z, P = chunk
    ctx = _context(job)
    prob = ctx.prob
    n = len(idx)
    code = np.full(n, 2, dtype=np.int8)
    X = np.full((n, len(prob.lbx)), np.nan)
    numpy_checked = np.zeros(n, dtype=bool)
    iters = np.zeros(n, dtype=np.int64)
    solved_z, solved_w = [], []
    t0 = time.perf_counter()

    def params(i):
        p = ctx.p0.copy()
        p[ctx.index] = P[i]
        return p

    for i in range(n):
        p = params(i)
        warm = ctx.base_warm
        if solved_z:
            d = np.sum((np.asarray(solved_z) - Z[i]) ** 2, axis=1)
            warm = solved_w[int(np.argmin(d))]
        try:
            c, x, w, it, checked = _solve_point(ctx, p, warm)
        except Exception:  # noqa: BLE001 - one bad point never stops a study
            c, x, w, it, checked = 2, None, None, 0, True
        code[i], iters[i], numpy_checked[i] = c, it, checked
        if c == 0:
            X[i] = x
            solved_z.append(Z[i])
            solved_w.append(w)
    # the plain-numpy check of every answer the fast path accepted; a point that
    # fails it is solved again from scratch (Problem.solve_raw verifies in numpy)
    todo = np.flatnonzero((code == 0) & ~numpy_checked)
    if todo.size:
        good = _verify_chunk(ctx, X[todo], P[todo])
        for i in todo[~good]:
            try:
                x, _lg, _lx, st, ok = prob.solve_raw(params(i))
                iters[i] += st.get("iter_count", 0) or 0
                code[i] = 0 if ok else (1 if st.get("return_status") in _INFEASIBLE_RETURNS else 2)
                X[i] = x if ok else np.nan
            except Exception:  # noqa: BLE001
                code[i], X[i] = 2, np.nan
    out = np.full((n, 4), np.nan)
    drivers = [""] * n
    for i in np.flatnonzero(code == 0):
        x = X[i]
        W_S, Y, m = x[0] * prob.WS_scale, x[1] * prob.Y_scale, x[2] * prob.m_ref
        out[i] = (W_S, Y, m, m * G0 / W_S)
        try:
            drivers[i] = ";".join(_drivers(prob, x, params(i)))
        except Exception:  # noqa: BLE001
            drivers[i] = ""
    return {"chunk": cid, "idx": np.asarray(idx), "code": code, "out": out, "drivers": drivers,
            "iterations": iters, "fallbacks": int(numpy_checked.sum()), "seconds": time.perf_counter() - t0,
            "pid": os.getpid()}


def _pool_init(job):
    global _POOL_JOB
    _POOL_JOB = job
    _context(job)


def _pool_chunk(chunk):
    return _run_chunk(_POOL_JOB, chunk)


_POOL_JOB = None


# --------------------------------------------------------------------------
# Ordering, chunks, executors
# --------------------------------------------------------------------------

def chunk_size(n: int) -> int:
    """Points per chunk: depends on the study size only (so every executor agrees)."""
    return int(max(16, min(200, math.ceil(n / 32))))


def _order(study, n):
    """Point order along which neighbours are close (serpentine grid / Morton curve)."""
    si = study.si_values[:n]
    span = np.ptp(si, axis=0)
    Z = (si - si.min(axis=0)) / np.where(span > 0, span, 1.0)
    if study.mode == "sweep":
        shape = study.shape
        ij = np.array(np.unravel_index(np.arange(n), shape)).T
        if len(shape) == 1:
            key = np.argsort(si[:, 0], kind="stable")
            return key, Z
        # serpentine: along the second axis, reversing every other row of the first
        a_rank = np.argsort(np.argsort(study.si_values[::shape[1], 0], kind="stable"), kind="stable")
        b_rank = np.argsort(np.argsort(study.si_values[:shape[1], 1], kind="stable"), kind="stable")
        ra, rb = a_rank[ij[:, 0]], b_rank[ij[:, 1]]
        rb = np.where(ra % 2 == 0, rb, shape[1] - 1 - rb)
        return np.lexsort((rb, ra)), Z
    q = np.minimum((Z * 1023).astype(np.int64), 1023)
    code = np.zeros(n, dtype=np.int64)
    k = q.shape[1]
    for bit in range(10):
        for d in range(min(k, 6)):
            code |= ((q[:, d] >> bit) & 1) << (bit * min(k, 6) + d)
    return np.argsort(code, kind="stable"), Z


def _chunks(study, n):
    order, Z = _order(study, n)
    size = chunk_size(n)
    out = []
    for c, start in enumerate(range(0, n, size)):
        idx = order[start:start + size]
        out.append((c, idx, Z[idx], study.si_values[idx]))
    return out


def _job(study, confirm=True):
    """What a worker needs (picklable: raw data, never a built Problem)."""
    data = study.base.data
    index = [v.index for v in study.varied]
    key = hashlib.sha256(repr((data, study.base.path, index, confirm)).encode()).hexdigest()
    return {"key": key, "data": data, "filename": study.base.path, "index": index, "confirm": bool(confirm)}


class Progress:
    """A one-line progress bar on stderr; silent when stderr is not a terminal."""

    def __init__(self, total, label="study", stream=None, enabled=None):
        self.stream = stream or sys.stderr
        self.enabled = (getattr(self.stream, "isatty", lambda: False)() if enabled is None else enabled)
        self.total, self.label, self.done = total, label, 0
        self.t0 = self._last = time.perf_counter()

    def update(self, n):
        self.done += n
        now = time.perf_counter()
        if self.enabled and (now - self._last > 0.1 or self.done >= self.total):
            self._last = now
            frac = self.done / self.total if self.total else 1.0
            width = 30
            bar = "#" * int(frac * width) + "." * (width - int(frac * width))
            el = now - self.t0
            eta = el / frac - el if frac > 0 else float("nan")
            self.stream.write(f"\r{self.label} [{bar}] {self.done}/{self.total} points  {el:5.1f} s"
                              f"  eta {eta:5.1f} s ")
            self.stream.flush()

    def close(self):
        if self.enabled:
            self.stream.write("\n")
            self.stream.flush()


def _run_serial(job, chunks, progress):
    for ch in chunks:
        r = _run_chunk(job, ch)
        progress.update(len(ch[1]))
        yield r


def _mp_context():
    import multiprocessing as mp
    import threading

    # fork is fastest (the worker inherits the imported modules); with other threads
    # running (a Dask client, say) forking is unsafe, so spawn a clean interpreter
    if "fork" in mp.get_all_start_methods() and threading.active_count() == 1:
        return mp.get_context("fork")
    return mp.get_context("spawn")


def _run_pool(job, chunks, workers, progress):
    from concurrent.futures import ProcessPoolExecutor, as_completed

    with ProcessPoolExecutor(max_workers=workers, mp_context=_mp_context(), initializer=_pool_init,
                             initargs=(job,)) as ex:
        futs = [ex.submit(_pool_chunk, ch) for ch in chunks]
        for f in as_completed(futs):
            r = f.result()
            progress.update(len(r["idx"]))
            yield r


def _run_dask(job, chunks, address, progress):
    try:
        from dask.distributed import Client, as_completed
    except ImportError as e:
        raise SizingError("--dask needs dask.distributed: install the [dask] extra "
                          "(pip install 'sizing[dask]')") from e
    own = not hasattr(address, "submit")
    try:
        client = Client(address, timeout=10) if own else address
    except (OSError, TimeoutError) as e:
        raise SizingError(f"cannot reach the Dask scheduler at {address}: {e}") from e
    try:
        job_f = client.scatter(job, broadcast=True)
        futs = [client.submit(_run_chunk, job_f, ch, pure=False) for ch in chunks]
        for f in as_completed(futs):
            r = f.result()
            progress.update(len(r["idx"]))
            yield r
    finally:
        if own:
            client.close()


# --------------------------------------------------------------------------
# Results
# --------------------------------------------------------------------------

@dataclass
class StudyResult:
    """A finished study: the table (pandas) and what the plots need."""

    study: Study
    table: object                 # pandas DataFrame, one row per point, in the study's order
    base: object = None           # sizing.model.Result of a full solve at the base point
    executor: str = "serial"
    workers: int = 1
    elapsed_s: float = 0.0
    iterations: int = 0
    points: int = 0
    fallbacks: int = 0            # points the warm step did not settle (every start of a single solve tried)

    @property
    def propeller(self) -> bool:
        return self.study.base.is_propeller

    @property
    def y_column(self) -> str:
        return "power_to_weight_W_per_N" if self.propeller else "thrust_to_weight"

    @property
    def feasible_fraction(self) -> float:
        """Share of the points with a feasible design (for sampling: the probability)."""
        return float((self.table["status"] == STATUS_OK).mean()) if len(self.table) else float("nan")

    def percentiles(self, q=(5, 50, 95)) -> dict:
        m = self.table.loc[self.table["status"] == STATUS_OK, "takeoff_mass_kg"].to_numpy()
        return {k: (float(np.percentile(m, k)) if m.size else float("nan")) for k in q}

    def write(self, output_dir) -> list:
        """Write results.csv, study.json and the plots into output_dir; the paths."""
        return write_outputs(self, output_dir)


def run_study(source, workers=None, dask=None, limit=None, progress=None, costs=True, base_dir=None,
              confirm_infeasible=True) -> StudyResult:
    """Run a study (file path, mapping or :class:`Study`); returns a :class:`StudyResult`.

    workers: local processes (default all cores; 1 runs in this process);
    dask: a scheduler address or a ``dask.distributed.Client``; limit: only the
    first N points; progress: show a bar (default: when stderr is a terminal);
    costs: also solve the base point fully for the requirement costs;
    confirm_infeasible: a point is called infeasible only after every starting
    point of a single solve failed (default); False calls it infeasible when
    the warm start from the neighbour's answer fails and the single solve's
    coarse W/S scan finds no design either (much faster where many points are
    infeasible; a heuristic that can miss a feasible window narrower than the
    scan's spacing: compare with the default before relying on it).
    """
    import pandas as pd

    study = source if isinstance(source, Study) else load_study(source, base_dir)
    n = study.size if limit is None else max(0, min(int(limit), study.size))
    if limit is not None and int(limit) < 1:
        raise InputError(f"--limit must be at least 1, got {limit}", study.file)
    if workers is not None and int(workers) < 1:
        raise InputError(f"--workers must be at least 1, got {workers}", study.file)
    job = _job(study, confirm_infeasible)
    chunks = _chunks(study, n)
    bar = Progress(n, label="study", enabled=progress)
    t0 = time.perf_counter()
    if dask is not None:
        executor, nw = "dask", 0
        results = _run_dask(job, chunks, dask, bar)
    else:
        nw = min(int(workers or os.cpu_count() or 1), len(chunks)) or 1
        executor = "serial" if nw == 1 else "processes"
        results = _run_serial(job, chunks, bar) if nw == 1 else _run_pool(job, chunks, nw, bar)
    code = np.full(n, 2, dtype=np.int8)
    out = np.full((n, 4), np.nan)
    drivers = np.array([""] * n, dtype=object)
    iters = fallbacks = 0
    try:
        for r in results:
            code[r["idx"]] = r["code"]
            out[r["idx"]] = r["out"]
            drivers[r["idx"]] = r["drivers"]
            iters += int(r["iterations"].sum())
            fallbacks += r["fallbacks"]
    finally:
        bar.close()
    elapsed = time.perf_counter() - t0
    cols = {v.path: study.user_values[:n, j] for j, v in enumerate(study.varied)}
    y_col = "power_to_weight_W_per_N" if study.base.is_propeller else "thrust_to_weight"
    table = pd.DataFrame({**cols, "status": [_CODES[int(c)] for c in code],
                          "wing_loading_Pa": out[:, 0], y_col: out[:, 1], "takeoff_mass_kg": out[:, 2],
                          "wing_area_m2": out[:, 3], "drivers": list(drivers)})
    base = None
    if costs:
        from .solve import solve

        base = solve(study.base)
    return StudyResult(study, table, base, executor, nw, elapsed, iters, n, fallbacks)


def write_outputs(result: StudyResult, output_dir) -> list:
    """results.csv, study.json and the plots; returns the written paths."""
    import json

    from . import study_plots
    from .fileio import atomic_write
    from .report import CAUTION

    out = Path(output_dir)
    written = [atomic_write(out / "results.csv", result.table.to_csv(index=False, float_format="%.10g"))]
    st = result.study
    meta = {
        "title": st.title, "study_file": st.file, "base_file": st.base_file, "base_sha256": st.base.sha256,
        "mode": st.mode, "points": result.points, "of_points": st.size,
        "parameters": [{"path": v.path, "unit": v.unit or None, "parameter_path": list(v.tree_path)}
                       for v in st.varied],
        "seed": st.seed, "distributions": st.distributions or None,
        "feasible_fraction": _finite(result.feasible_fraction),
        "takeoff_mass_percentiles_kg": {str(k): _finite(v) for k, v in result.percentiles().items()},
        "executor": result.executor, "workers": result.workers, "elapsed_s": result.elapsed_s,
        "ipopt_iterations": result.iterations, "points_solved_from_scratch": result.fallbacks,
        "caution": CAUTION,
    }
    written.append(atomic_write(out / "study.json", json.dumps(meta, indent=2, allow_nan=False) + "\n"))
    written += study_plots.write_plots(result, out)
    return written


def _finite(x):
    return x if isinstance(x, float) and math.isfinite(x) else None


def summary(result: StudyResult) -> str:
    """Terminal lines for a finished study."""
    st, t = result.study, result.table
    ok = t["status"] == STATUS_OK
    n = len(t)
    what = (f"sweep of {len(st.varied)} parameter{'s' if len(st.varied) > 1 else ''}" if st.mode == "sweep"
            else f"Monte Carlo, {st.size:,} samples, seed {st.seed}")
    lines = [st.title, "=" * len(st.title), f"base: {st.base_file}", f"{what}: {n:,} points"
             + (f" (first {n:,} of {st.size:,})" if n < st.size else "")]
    lines.append("varied: " + ", ".join(f"{v.path}" + (f" [{v.unit}]" if v.unit else "") for v in st.varied))
    n_ok, n_inf = int(ok.sum()), int((t["status"] == STATUS_INFEASIBLE).sum())
    lines.append(f"feasible at {n_ok:,} of {n:,} points ({100 * n_ok / n if n else 0:.1f} %); "
                 f"infeasible {n_inf:,}; failed {n - n_ok - n_inf:,}")
    if n_ok:
        m = t.loc[ok, "takeoff_mass_kg"]
        lines.append(f"takeoff mass {m.min():,.0f} to {m.max():,.0f} kg")
        if st.mode == "sample":
            pc = result.percentiles()
            lines.append("takeoff mass percentiles: " + ", ".join(f"P{k} {v:,.0f} kg" for k, v in pc.items()))
        counts = t.loc[ok, "drivers"].replace("", "(none)").value_counts()
        lines.append("drivers: " + "; ".join(f"{k.replace(';', ' + ')} at {v:,}" for k, v in counts.head(6).items()))
    how = {"serial": "in this process", "processes": f"{result.workers} local processes",
           "dask": "on a Dask cluster"}[result.executor]
    lines.append(f"solved {how} in {result.elapsed_s:.2f} s "
                 f"({1000 * result.elapsed_s / max(n, 1):.2f} ms per point)")
    return "\n".join(lines)


def run_study_cli(file, output_dir, workers=None, dask=None, limit=None) -> int:
    """What ``sizing study`` runs: solve, write, print; the exit code (0, 2 bad input)."""
    from .report import CAUTION

    try:
        result = run_study(file, workers=workers, dask=dask, limit=limit)
    except InputError as e:
        print(f"error: {e.describe()}", file=sys.stderr)
        return 2
    written = write_outputs(result, output_dir)
    print(summary(result))
    for w in written:
        print(f"wrote {w}")
    print(CAUTION)
    return 0
