"""A tiny math shim: one expression, two backends.

Every physics function that takes a design variable (wing loading,
thrust-to-weight, takeoff mass, a free flight speed) is written once with
these helpers. They dispatch on the argument type: CasADi symbols (SX, MX,
DM) go to CasADi, everything else to numpy. No Python ``if`` is taken on a
value that may be symbolic; branches use :func:`if_else` or
:func:`clip`-based forms.

Examples
--------
Hand calculation: sqrt(16) = 4 on either backend.

>>> float(sqrt(16.0))
4.0
>>> import casadi as ca
>>> x = ca.SX.sym("x")
>>> float(ca.Function("f", [x], [sqrt(x)])(16.0))
4.0
"""
from __future__ import annotations

import casadi as ca
import numpy as np

_CASADI_TYPES = (ca.SX, ca.MX, ca.DM)
# exact types that are never symbolic: the common numeric case is decided by one set lookup
# per argument instead of an isinstance test against the CasADi types
_PLAIN = frozenset({float, int, bool, np.ndarray, np.float64, np.bool_, np.int64})


def is_symbolic(*args) -> bool:
    """True when any argument is a CasADi SX/MX/DM object."""
    for a in args:
        if type(a) not in _PLAIN and isinstance(a, _CASADI_TYPES):
            return True
    return False


def is_scalar_sx(*args) -> bool:
    """True when the arguments are numbers or 1 x 1 CasADi SX, at least one of them SX."""
    sx = False
    for a in args:
        if type(a) is ca.SX:
            if a.shape != (1, 1):
                return False
            sx = True
        elif type(a) not in _PLAIN or (type(a) is np.ndarray and a.size != 1):
            return False
    return sx


_INLINED: dict = {}


def inline(formula, n_in, n_out, key=()):
    """A CasADi function of ``n_in`` scalars made once from ``formula`` (a Python function
    written with this shim) and remembered under (formula, key): calling it on SX symbols
    copies its whole expression graph in one call instead of one Python call per
    operation (the same operations, so the same values). ``key`` tells apart the
    formulas of one Python function that differ in numbers they close over."""
    k = (formula.__module__, formula.__qualname__, key)
    fun = _INLINED.get(k)
    if fun is None:
        xs = [ca.SX.sym(f"a{i}") for i in range(n_in)]
        out = formula(*xs)
        out = out if isinstance(out, tuple) else (out,)
        assert len(out) == n_out
        fun = ca.Function("inlined", xs, [ca.SX(o) for o in out])
        _INLINED[k] = fun
    return fun


def _pick(*args):
    return ca if is_symbolic(*args) else np


def sqrt(x):
    """Square root."""
    if type(x) in _PLAIN or not isinstance(x, _CASADI_TYPES):
        return np.sqrt(x)
    return ca.sqrt(x)


def exp(x):
    """Exponential."""
    if type(x) in _PLAIN or not isinstance(x, _CASADI_TYPES):
        return np.exp(x)
    return ca.exp(x)


def log(x):
    """Natural logarithm."""
    if type(x) in _PLAIN or not isinstance(x, _CASADI_TYPES):
        return np.log(x)
    return ca.log(x)


def sin(x):
    """Sine [rad]."""
    return _pick(x).sin(x)


def cos(x):
    """Cosine [rad]."""
    return _pick(x).cos(x)


def tan(x):
    """Tangent [rad]."""
    return _pick(x).tan(x)


def asin(x):
    """Arc sine [rad]."""
    return ca.asin(x) if is_symbolic(x) else np.arcsin(x)


def power(x, y):
    """x ** y (with symbolic exponents allowed)."""
    if type(x) in _PLAIN and type(y) in _PLAIN:
        return np.power(x, y)
    if is_symbolic(x, y):
        return ca.power(x, y)
    return np.power(x, y)


def fmax(a, b):
    """Element-wise maximum."""
    if type(a) in _PLAIN and type(b) in _PLAIN:
        return np.maximum(a, b)
    if is_symbolic(a, b):
        return ca.fmax(a, b)
    return np.maximum(a, b)


def fmin(a, b):
    """Element-wise minimum."""
    if type(a) in _PLAIN and type(b) in _PLAIN:
        return np.minimum(a, b)
    if is_symbolic(a, b):
        return ca.fmin(a, b)
    return np.minimum(a, b)


def smooth_max(a, b, blend=0.02):
    """A smooth maximum of two positive quantities: ((a + b) + sqrt((a - b)^2 + (blend (a + b)/2)^2))/2.

    Equal to max(a, b) within a relative 0.01 % once they differ by a tenth, and at most
    ``blend``/2 above it where they cross (a corner an optimizer would otherwise oscillate on).

    Examples
    --------
    Hand calculation: equal arguments 1 and 1 -> 1 + 0.02/2 = 1.01.

    >>> round(float(smooth_max(1.0, 1.0)), 12)
    1.01
    """
    return 0.5 * ((a + b) + sqrt((a - b) ** 2 + (0.5 * blend * (a + b)) ** 2))


def clip(x, lo, hi):
    """Clip x to [lo, hi] (``min(max(x, lo), hi)``, also where lo > hi)."""
    if type(x) in _PLAIN and type(lo) in _PLAIN and type(hi) in _PLAIN:
        return np.minimum(np.maximum(x, lo), hi)
    return fmin(fmax(x, lo), hi)


def if_else(cond, a, b):
    """a where cond holds, else b (both branches are evaluated)."""
    if type(cond) in _PLAIN and type(a) in _PLAIN and type(b) in _PLAIN:
        return np.where(cond, a, b)
    if is_symbolic(cond, a, b):
        return ca.if_else(cond, a, b)
    return np.where(cond, a, b)


def pchip_slopes(xs, ys):
    """Knot slopes of the Fritsch-Carlson monotone cubic (as SciPy's PCHIP).

    Interior: weighted harmonic mean of the neighbouring secants, zero where
    they change sign; ends: the shape-preserving three-point formula. The
    tests compare with ``scipy.interpolate.PchipInterpolator``; written out
    here so a cold ``sizing solve`` does not import SciPy.
    """
    xs = np.asarray(xs, dtype=float)
    ys = np.asarray(ys, dtype=float)
    h = np.diff(xs)
    delta = np.diff(ys) / h
    n = xs.size
    d = np.zeros(n)
    if n == 2:
        d[:] = delta[0]
        return d
    for k in range(1, n - 1):
        if delta[k - 1] * delta[k] > 0:
            w1 = 2 * h[k] + h[k - 1]
            w2 = h[k] + 2 * h[k - 1]
            d[k] = (w1 + w2) / (w1 / delta[k - 1] + w2 / delta[k])

    def end(h0, h1, m0, m1):
        s = ((2 * h0 + h1) * m0 - h0 * m1) / (h0 + h1)
        if np.sign(s) != np.sign(m0):
            return 0.0
        if np.sign(m0) != np.sign(m1) and abs(s) > abs(3 * m0):
            return 3 * m0
        return s

    d[0] = end(h[0], h[1], delta[0], delta[1])
    d[-1] = end(h[-1], h[-2], delta[-1], delta[-2])
    return d


def monotone_cubic(x, xs, ys, slopes=None):
    """Monotone piecewise-cubic Hermite interpolation (PCHIP), held flat outside.

    The knot slopes are Fritsch and Carlson's (:func:`pchip_slopes`), so a monotone table stays
    monotone and the curve is continuously differentiable, which keeps IPOPT
    happy when Mach is a free variable crossing a breakpoint. Evaluated as a
    telescoping sum of Hermite cubics in clipped local coordinates, so it is
    branch-free and works on floats, arrays and CasADi symbols. The table
    (``xs``, ``ys``) must be numeric.

    References
    ----------
    Fritsch, F. N., Carlson, R. E., "Monotone piecewise cubic interpolation",
    SIAM J. Numer. Anal. 17(2), 1980.

    Examples
    --------
    Hand calculation: a straight-line table is reproduced exactly.

    >>> round(float(monotone_cubic(0.25, [0.0, 0.5, 1.0], [1.0, 2.0, 3.0])), 12)
    1.5
    """
    xs = np.asarray(xs, dtype=float)
    ys = np.asarray(ys, dtype=float)
    if xs.size == 1:
        return ys[0] + 0.0 * x
    d = pchip_slopes(xs, ys) if slopes is None else slopes
    if not is_symbolic(x) and np.size(x) <= 256:      # small: one array call per term (faster)
        return _monotone_cubic_numeric(x, xs, ys, np.asarray(d, dtype=float))
    if is_scalar_sx(x):
        d = np.asarray(d, dtype=float)
        key = (xs.tobytes(), ys.tobytes(), d.tobytes())
        return inline(lambda t: _monotone_cubic_sum(t, xs, ys, d), 1, 1, key)(x)
    return _monotone_cubic_sum(x, xs, ys, d)


def _monotone_cubic_sum(x, xs, ys, d):
    """:func:`monotone_cubic` as a sum over the intervals (any backend)."""
    y = float(ys[0]) + 0.0 * x
    for i in range(xs.size - 1):
        h = float(xs[i + 1] - xs[i])
        t = clip((x - float(xs[i])) / h, 0.0, 1.0)
        t2, t3 = t * t, t * t * t
        h10 = t3 - 2.0 * t2 + t
        h01 = -2.0 * t3 + 3.0 * t2
        h11 = t3 - t2
        y = y + (float(ys[i + 1]) - float(ys[i])) * h01 + h * (float(d[i]) * h10 + float(d[i + 1]) * h11)
    return y


def _monotone_cubic_numeric(x, xs, ys, d):
    """:func:`monotone_cubic` on numbers: every interval's two terms at once (along a new
    first axis), summed in the order of the symbolic form by ``cumsum``, so the value is
    the same to the last bit."""
    xa = np.asarray(x, dtype=float)
    col = (-1,) + (1,) * xa.ndim
    h = (xs[1:] - xs[:-1]).reshape(col)
    t = np.minimum(np.maximum((xa - xs[:-1].reshape(col)) / h, 0.0), 1.0)
    t2, t3 = t * t, t * t * t
    h10 = t3 - 2.0 * t2 + t
    h01 = -2.0 * t3 + 3.0 * t2
    h11 = t3 - t2
    terms = np.empty((2 * h.size + 1,) + xa.shape)
    terms[0] = float(ys[0]) + 0.0 * xa
    terms[1::2] = (ys[1:] - ys[:-1]).reshape(col) * h01
    terms[2::2] = h * (d[:-1].reshape(col) * h10 + d[1:].reshape(col) * h11)
    return np.cumsum(terms, axis=0)[-1][()]


def piecewise_linear(x, xs, ys):
    """Piecewise-linear interpolation through (xs, ys), held flat outside.

    Written as a sum of clipped ramps, so it is branch-free and works when
    ``x`` (and even the table values) are CasADi symbols. Linear pieces keep
    a monotone table monotone.

    Parameters
    ----------
    x : float, array or symbol
        Where to interpolate.
    xs : sequence of float
        Strictly increasing breakpoints (at least one).
    ys : sequence of float or symbols
        Values at the breakpoints.

    Examples
    --------
    Hand calculation: halfway between (0, 1) and (1, 3) is 2.

    >>> float(piecewise_linear(0.5, [0.0, 1.0], [1.0, 3.0]))
    2.0
    """
    y = ys[0] + 0.0 * x
    for i in range(len(xs) - 1):
        slope = (ys[i + 1] - ys[i]) / (xs[i + 1] - xs[i])
        y = y + slope * (clip(x, xs[i], xs[i + 1]) - xs[i])
    return y
