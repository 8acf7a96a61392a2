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
import math
import os
import re
from dataclasses import dataclass, field, replace
from pathlib import Path

import numpy as np

from ..common.errors import InputError
from ..inputs.reader import read_text, read_yaml
from ..inputs.spec import load, validate
from ..inputs.units import finite, short_repr
from ..problem import tree as M

STUDY_KEYS = ("title", "base", "sweep", "sample")
SAMPLE_KEYS = ("count", "seed", "vary")
DISTRIBUTIONS = {"normal": "{normal: {mean: <value>, std: <value>}}", "uniform": "{uniform: [<low>, <high>]}",
                 "triangular": "{triangular: [<low>, <mode>, <high>]}"}
MAX_POINTS = 1_000_000
VALIDATE_ALL = 50          # validate every distinct value of a path up to this many
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
        num, unit = finite(v), ""
    else:
        m = _NUM_UNIT.match(v) if isinstance(v, str) else None
        if m is None:
            return None
        num, unit = float(m.group(1)), m.group(2)
    return (num, unit) if math.isfinite(num) else None


def _as_raw(num: float, unit: str):
    """The raw YAML value for a number in a unit (what validation sees)."""
    num = float(num)
    return f"{format(num, 'g') if float(format(num, 'g')) == num else repr(num)} {unit}" if unit else num


def _shown(num, unit):
    return f"{num:g}" + (f" {unit}" if unit else "")


def _near(word, options):
    near = difflib.get_close_matches(str(word), [str(o) for o in options], 1)
    return f" (did you mean {near[0]!r}?)" if near else ""


def _located(msg, study_file, lines, key, fld=None) -> InputError:
    """An InputError at the line of ``key`` (or of its nearest parent) in the study file."""
    while key and key not in lines:
        key = key[:-1]
    return InputError(msg, study_file, lines.get(key), fld)


def _nodes(tree, path):
    """The nodes along a path of the SI tree (the root excluded)."""
    out, node = [], tree
    for k in path:
        node = node[k]
        out.append(node)
    return out


class _Reader:
    """Reads one study: resolves its paths in the base file, checks values with its schema."""

    def __init__(self, spec, study_file, lines):
        self.spec, self.file, self.lines = spec, study_file, lines
        self.tree = M.spec_tree(spec)
        self.structure = M.structure_key(self.tree)
        self.index = {p: i for i, (p, _v) in enumerate(M.flatten(self.tree))}
        self._cache = {}

    def err(self, msg, key, fld=None) -> InputError:
        return _located(msg, self.file, self.lines, key, fld)

    def value(self, v, key, fld):
        sv = _split_value(v)
        if sv is None:
            finite_form = isinstance(v, (int, float)) and not isinstance(v, bool) or \
                isinstance(v, str) and _NUM_UNIT.match(v)
            raise self.err(f"{short_repr(v)} is not a finite number" if finite_form else
                           f"{short_repr(v)} is not a value (a number, or a number with a unit such as "
                           f"'700 m')", key, fld)
        return sv

    def resolve(self, text, key) -> Varied:
        """Where a dotted path points in the base file; InputError if it names no parameter."""
        def fail(msg):
            return self.err(msg, key, text)

        parts = str(text).split(".")
        if any(p == "" for p in parts):
            raise fail("write a dotted path such as requirements.<id>.<field> or aircraft.aerodynamics.cd0")
        head, rest = parts[0], parts[1:]
        if head in M.STRUCTURAL_KEYS:
            raise fail(f"{head!r} is structure of the problem, not a parameter a study can vary")
        tops = [k for k in ("aircraft", "mission", "requirements") if k in self.tree]
        if head not in tops:
            raise fail(f"unknown section {head!r}{_near(head, tops)}; a path starts with one of: {', '.join(tops)}")
        tpath, rpath, tnode = (head,), (head,), self.tree[head]
        if head == "requirements":
            rid = next((".".join(rest[:k]) for k in range(len(rest), 0, -1)   # ids may contain dots
                        if ".".join(rest[:k]) in tnode), None)
            if rid is None:
                got = rest[0] if rest else ""
                raise fail(f"no requirement with id {got!r}{_near(got, tnode)}; ids in {self.spec.path}: "
                           f"{', '.join(tnode)}")
            rest = rest[len(rid.split(".")):]
            pos = next(i for i, r in enumerate(self.spec.data["requirements"]) if r.get("id") == rid)
            tpath, rpath, tnode = tpath + (rid,), rpath + (pos,), tnode[rid]
        for i, part in enumerate(rest):
            where = ".".join(parts[:len(parts) - len(rest) + i])
            if isinstance(tnode, list):
                names = [e.get("name") if isinstance(e, dict) else None for e in tnode]
                j = int(part) if part.isdigit() else (names.index(part) if part in names else None)
                if j is None or j >= len(tnode):
                    raise fail(f"{where} is a list of {len(tnode)} entries; address one by index 0 to "
                               f"{len(tnode) - 1}" + (" or by segment name" if any(names) else ""))
                part = j
            elif not isinstance(tnode, dict) or part not in tnode:
                keys = [k for k, v in tnode.items() if not isinstance(v, (str, bool))] if isinstance(tnode, dict) else []
                raise fail(f"no parameter {part!r} in {where}{_near(part, keys)}; parameters there: "
                           f"{', '.join(keys) or 'none'} (a field the base file leaves unset cannot be varied: "
                           f"set it in the base file first)")
            tpath, rpath, tnode = tpath + (part,), rpath + (part,), tnode[part]
        if isinstance(tnode, dict):
            if M.is_table(tnode):
                raise fail("this is a Mach table: its breakpoints and values are the problem's structure "
                           "(its monotone interpolant is built from numbers), so a study cannot vary it; "
                           "write one base file per table")
            raise fail(f"this is a group ({', '.join(tnode)}), not a single value")
        if tpath not in self.index:
            if len(tpath) >= 2 and tpath[-2] == "mach":
                raise fail("Mach-table breakpoints are the problem's structure, not parameters; a study "
                           "cannot move them (vary the table's values, or write one base file per breakpoint set)")
            if any(M.is_table(n) for n in _nodes(self.tree, tpath)):
                raise fail("Mach-table entries are the problem's structure, not parameters; a study cannot "
                           "vary them (write one base file per table)")
            raise fail(f"{tnode!r} is a setting of the problem's structure, not a numeric parameter")
        return Varied(str(text), tpath, rpath, self.index[tpath], "", self.lines.get(key))

    def check(self, settings, key, fld):
        """Validate the base file with values set [(target, number, unit)]; their SI values."""
        ck = tuple((t.tree_path, n, u) for t, n, u in settings)
        if ck in self._cache:
            return self._cache[ck]
        data = copy.deepcopy(self.spec.data)
        for t, num, unit in settings:
            node = data
            for k in t.raw_path[:-1]:
                node = node.setdefault(k, {}) if isinstance(node, dict) else node[k]
            node[t.raw_path[-1]] = _as_raw(num, unit)
        shown = (_shown(*settings[0][1:]) if len(settings) == 1 else
                 ", ".join(f"{t.path} = {_shown(n, u)}" for t, n, u in settings))
        try:
            tree = M.spec_tree(validate(data, self.spec.path))
        except InputError as e:
            raise self.err(f"{shown} does not fit the base file {self.spec.path}: {e.message}", key, fld) from None
        if M.structure_key(tree) != self.structure:
            raise self.err(f"{shown} changes the problem's structure (not only a parameter value); a study "
                           f"re-solves one built problem, so it cannot vary this", key, fld)
        out = []
        for t, _n, _u in settings:
            v = tree
            for k in t.tree_path:
                v = v[k]
            out.append(float(v))
        self._cache[ck] = out
        return out

    def si(self, t, nums, unit, key_of):
        """SI values of one path's values (one unit): every distinct value validated when
        there are few; otherwise the two extremes (the schema's checks are ranges, so
        values between two valid ones are valid) and the affine map they define."""
        nums = np.asarray(nums, dtype=float)
        distinct = np.unique(nums)
        if distinct.size <= VALIDATE_ALL:
            table = {float(d): self.check([(t, float(d), unit)], key_of(float(d)), t.path)[0] for d in distinct}
            return np.array([table[float(v)] for v in nums])
        lo, hi = float(distinct[0]), float(distinct[-1])
        s_lo, s_hi = (self.check([(t, v, unit)], key_of(v), t.path)[0] for v in (lo, hi))
        return s_lo + (s_hi - s_lo) / (hi - lo) * (nums - lo)

    def corners(self, varied, cols, key, fld):
        """Parameters together: every corner of their box must validate too."""
        if 2 <= len(varied) <= 6:
            for c in range(2 ** len(varied)):
                self.check([(v, float(col.max() if c >> i & 1 else col.min()), v.unit)
                            for i, (v, col) in enumerate(zip(varied, cols))], key, fld)

    def sweep(self, sweep):
        if not isinstance(sweep, dict) or not 1 <= len(sweep) <= 2:
            raise self.err("sweep is a mapping of one or two parameter paths to their values, e.g. "
                           "requirements.turn-4g.load_factor: [3.0, 3.5, 4.0]", ("sweep",), "sweep")
        varied, axes_u, axes_s = [], [], []
        for name, vals in sweep.items():
            key, fld = ("sweep", name), str(name)
            t = self.resolve(fld, key)
            if any(v.tree_path == t.tree_path for v in varied):
                raise self.err("this parameter is already swept", key, fld)
            if isinstance(vals, list) and vals:
                parsed = [self.value(v, key + (i,), fld) for i, v in enumerate(vals)]
                unit = parsed[0][1]
                odd = next((i for i, (_n, u) in enumerate(parsed) if u != unit), None)
                if odd is not None:        # the schema's own message first (a missing unit, say), then ours
                    self.check([(t, *parsed[odd])], key + (odd,), fld)
                    raise self.err(f"write every value of the list in the same unit ({parsed[odd][1] or 'none'!r} "
                                   f"here, {unit or 'none'!r} first)", key + (odd,), fld)
                user = np.array([n for n, _u in parsed])
                first = {}
                for i, (n, _u) in enumerate(parsed):
                    first.setdefault(n, i)
                si = self.si(t, user, unit, lambda d: key + (first[d],))
            elif isinstance(vals, dict) and set(vals) == {"from", "to", "steps"}:
                steps = vals["steps"]
                if isinstance(steps, bool) or not isinstance(steps, int) or not 2 <= steps <= MAX_POINTS:
                    raise self.err(f"steps must be a whole number from 2 up, got {steps!r}", key + ("steps",), fld)
                (a, unit), (b, unit_b) = (self.value(vals[k], key + (k,), fld) for k in ("from", "to"))
                if unit != unit_b or a == b:
                    raise self.err("write from and to in the same unit" if unit != unit_b else
                                   "from and to are equal; give a list for a single value", key + ("to",), fld)
                with np.errstate(all="ignore"):
                    user = np.linspace(a, b, steps)
                if not np.all(np.isfinite(user)):
                    raise self.err(f"from {_shown(a, unit)} to {_shown(b, unit)} spans more than a number "
                                   f"can hold", key + ("to",), fld)
                ends = {a: key + ("from",), b: key + ("to",)}
                si = self.si(t, user, unit, lambda d: ends.get(d, key))
            else:
                raise self.err(f"give a list of values or {{from: <value>, to: <value>, steps: <count>}}, "
                               f"got {vals!r}", key, fld)
            varied.append(replace(t, unit=unit))
            axes_u.append(user)
            axes_s.append(si)
        shape = tuple(len(a) for a in axes_u)
        if math.prod(shape) > MAX_POINTS:
            raise self.err(f"the sweep has {math.prod(shape):,} points; at most {MAX_POINTS:,}", ("sweep",), "sweep")
        self.corners(varied, axes_u, ("sweep",), "sweep")
        user = np.stack([g.ravel() for g in np.meshgrid(*axes_u, indexing="ij")], axis=1)
        si = np.stack([g.ravel() for g in np.meshgrid(*axes_s, indexing="ij")], axis=1)
        return varied, user, si, shape

    def sample(self, sample):
        key0 = ("sample",)
        if not isinstance(sample, dict):
            raise self.err("sample is a mapping with count, seed and vary", key0, "sample")
        for k in sample:
            if k not in SAMPLE_KEYS:
                raise self.err(f"unknown key {k!r} in sample{_near(k, SAMPLE_KEYS)}; valid keys: "
                               f"{', '.join(SAMPLE_KEYS)}", key0 + (k,), f"sample.{k}")
        count, seed, vary = sample.get("count"), sample.get("seed", 0), sample.get("vary")
        for name, v, lo in (("count", count, 1), ("seed", seed, 0)):
            if isinstance(v, bool) or not isinstance(v, int) or not lo <= v <= (MAX_POINTS if lo else 2 ** 63):
                raise self.err(f"sample.{name} must be a whole number from {lo} up"
                               + (f" to {MAX_POINTS:,}" if lo else "") + f", got {v!r}", key0 + (name,),
                               f"sample.{name}")
        if not isinstance(vary, dict) or not vary:
            raise self.err("sample.vary maps parameter paths to distributions, e.g. aircraft.aerodynamics.cd0: "
                           "{normal: {mean: 0.020, std: 0.002}}", key0 + ("vary",), "sample.vary")
        rng = np.random.Generator(np.random.PCG64(seed))
        varied, cols_u, cols_s, dists = [], [], [], {}
        for name, dist in vary.items():
            key, fld = key0 + ("vary", name), str(name)
            t = self.resolve(fld, key)
            if any(v.tree_path == t.tree_path for v in varied):
                raise self.err("this parameter is already varied", key, fld)
            kind = next(iter(dist)) if isinstance(dist, dict) and len(dist) == 1 else None
            if kind not in DISTRIBUTIONS:
                raise self.err(f"unknown distribution {kind or dist!r}{_near(kind, DISTRIBUTIONS)}; write one of "
                               + "; ".join(DISTRIBUTIONS.values()), key, fld)
            a, kkey = dist[kind], key + (kind,)
            raw = ([a.get("mean"), a.get("std")] if isinstance(a, dict) and set(a) == {"mean", "std"} else
                   list(a) if kind != "normal" and isinstance(a, list) and len(a) == (2 if kind == "uniform" else 3)
                   else None)
            if raw is None:
                raise self.err(f"write {DISTRIBUTIONS[kind]}", kkey, fld)
            parsed = [self.value(v, kkey, fld) for v in raw]
            unit, nums = parsed[0][1], [n for n, _u in parsed]
            if any(u != unit for _n, u in parsed):
                raise self.err("write every argument of the distribution in the same unit", kkey, fld)
            if not ((kind == "normal" and nums[1] > 0) or (kind == "uniform" and nums[1] > nums[0]) or
                    (kind == "triangular" and nums[0] <= nums[1] <= nums[2] and nums[0] < nums[2])):
                raise self.err(f"{kind} needs " + {"normal": "std > 0", "uniform": "low < high",
                                                   "triangular": "low <= mode <= high, low < high"}[kind], kkey, fld)
            with np.errstate(all="ignore"):
                draws = getattr(rng, kind)(*nums, count)
            if not np.all(np.isfinite(draws)):
                raise self.err(f"the {kind} distribution draws values past what a number can hold", kkey, fld)
            lo, hi = float(draws.min()), float(draws.max())
            try:
                s_lo, s_hi = (self.check([(t, v, unit)], kkey, fld)[0] for v in (lo, hi))
            except InputError as e:
                e.message = (f"the {kind} distribution draws values from {_shown(lo, unit)} to {_shown(hi, unit)} "
                             f"in {count:,} samples, not all valid: {e.message}; narrow the distribution")
                e.args = (e.describe(),)
                raise
            cols_s.append(s_lo + (s_hi - s_lo) * (draws - lo) / (hi - lo) if hi > lo else np.full(count, s_lo))
            cols_u.append(draws)
            varied.append(replace(t, unit=unit))
            dists[t.path] = {kind: nums, "unit": unit}
        self.corners(varied, cols_u, key0 + ("vary",), "sample.vary")
        return varied, np.stack(cols_u, axis=1), np.stack(cols_s, axis=1), (count,), seed, dists


def load_study(source, base_dir=None) -> Study:
    """Parse and check a study file (path) or mapping; raises :class:`InputError`.

    A mapping's ``base`` is relative to ``base_dir`` (default: the current
    directory); a file's to the study file's folder.
    """
    if isinstance(source, dict):
        data, lines, study_file = copy.deepcopy(source), {}, "<study>"
        folder = Path(base_dir) if base_dir is not None else Path(".")
    else:
        study_file = str(source)
        text = read_text(source, "a study file")
        data, lines = read_yaml(text, study_file, "the study file is empty; a study is a mapping with base "
                                                  "and sweep (or sample)")
        folder = Path(base_dir) if base_dir is not None else Path(source).parent
    if not isinstance(data, dict):
        raise InputError("a study file is a mapping with base and sweep (or sample)", study_file, 1)
    for k in data:
        if k not in STUDY_KEYS:
            raise _located(f"unknown key {k!r}{_near(k, STUDY_KEYS)}; valid keys: {', '.join(STUDY_KEYS)}",
                           study_file, lines, (k,), str(k))
    base_rel = data.get("base")
    if not isinstance(base_rel, str) or not base_rel.strip():
        raise _located("missing base: the requirement file the study varies, relative to the study file",
                       study_file, lines, ("base",), "base")
    base_file = Path(os.path.normpath(folder / base_rel))
    if not base_file.is_file():
        raise _located(f"base file {base_rel!r} not found (looked for {base_file})", study_file, lines,
                       ("base",), "base")
    if ("sweep" in data) == ("sample" in data):
        raise _located("give either sweep (one or two parameters) or sample (Monte Carlo), not both or neither",
                       study_file, lines, ("sample",) if "sample" in data else (), "sweep")
    spec = load(base_file)
    reader = _Reader(spec, study_file, lines)
    title = str(data.get("title") or f"Trade study on {spec.title}")
    if "sweep" in data:
        return Study(study_file, title, str(base_file), spec, "sweep", *reader.sweep(data["sweep"]))
    varied, user, si, shape, seed, dists = reader.sample(data["sample"])
    return Study(study_file, title, str(base_file), spec, "sample", varied, user, si, shape, seed, dists)
