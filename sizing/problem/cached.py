"""The built CasADi functions of a problem structure, kept in the on-disk cache.

Building a :class:`~sizing.problem.nlp.Problem` spends most of its time on the
symbolic graph (every requirement's constraint function called on CasADi
symbols) and on IPOPT's derivative functions (``nlpsol``). Both depend only on
the file's *structure* (:func:`sizing.problem.tree.structure_key`: every
numeric value is a parameter), the few numbers the graph holds as constants
(the scales), the solver options and this code. A file loaded with
``load(path, cache=True)`` (the command line) keeps them in the cache of
:mod:`sizing.common.cache` under a key of exactly those, with CasADi's own
serialization: the expressions as one function (called on fresh symbols to
give the graph back) and the solver. An entry that does not read back as
what was stored (a damaged file, other sizes) is ignored.
"""
from __future__ import annotations

import json

import casadi as ca

from ..common import cache as disk_cache

FORMAT = 1
KEEP = 24         # entries of about 1 MB each (the newest kept)


def wanted(spec) -> bool:
    """Whether a problem of this spec uses the cache: the spec was loaded with it, and it is on."""
    return bool(getattr(spec, "cached", False)) and disk_cache.enabled()


def key(*parts) -> str:
    """The entry's name: parts that determine the built functions (with the code's fingerprint)."""
    return disk_cache.key("problem", ca.__version__, *parts)


def load(name: str, nx: int, np_: int):
    """(rows, expressions, solver) or None. ``expressions(x, p)`` gives (g, f, fuel
    fraction, empty fraction); ``solver`` is the IPOPT function as built."""
    payload = disk_cache.read(name)
    if payload is None:
        return None
    try:
        head, _, body = payload.partition(b"\n")
        h = json.loads(head)
        if h.get("format") != FORMAT:
            return None
        n_expr, n_solver = int(h["expr"]), int(h["solver"])
        if len(body) != n_expr + n_solver:
            return None
        expr = ca.Function.deserialize(body[:n_expr].decode("ascii"))
        solver = ca.Function.deserialize(body[n_expr:].decode("ascii"))
        rows = [(str(rid), str(what)) for rid, what in h["rows"]]
        ok = (expr.n_in() == 2 and expr.n_out() == 4 and expr.size1_in(0) == nx and expr.size1_in(1) == np_
              and expr.size1_out(0) == len(rows) and solver.size1_in("x0") == nx and solver.size1_in("p") == np_
              and solver.size1_out("g") == len(rows))
    except Exception:          # anything unexpected in a cache entry: not used
        return None
    return (rows, expr, solver) if ok else None


def save(name: str, rows, expr, solver) -> None:
    """Store the functions of a freshly built problem (best effort)."""
    try:
        e, s = expr.serialize().encode("ascii"), solver.serialize().encode("ascii")
    except Exception:          # a function CasADi cannot serialize: not cached
        return
    head = json.dumps({"format": FORMAT, "rows": [list(r) for r in rows], "expr": len(e), "solver": len(s)})
    disk_cache.write(name, head.encode() + b"\n" + e + s, keep=KEEP)
