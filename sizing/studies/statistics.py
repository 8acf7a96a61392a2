"""Statistics of a Monte Carlo study that count every sample.

A percentile over the feasible samples alone answers "how heavy is the design
when one exists"; it hides the samples for which no design meets the
requirements. :func:`percentiles_all` counts those as heavier than every
feasible design (the requirement set would need an aircraft heavier than any
the closure gives), so a percentile that lands among them is *not reached*:
no mass meets the requirements with that probability. :func:`rank_influence`
ranks the uncertain inputs by how strongly they move the takeoff mass
(Spearman's rank correlation, on the same all-samples ranking).

Samples whose solve failed (neither a design nor an infeasibility verdict)
are left out of both and counted separately.
"""
from __future__ import annotations

import math

import numpy as np

OK, INFEASIBLE = "optimal", "infeasible"


def percentiles_feasible(mass, status, q=(5, 50, 95)) -> dict:
    """{q: takeoff mass [kg]} over the feasible samples only (numpy's linear interpolation);
    NaN where there is no feasible sample."""
    m = np.asarray(mass, float)[np.asarray(status) == OK]
    return {k: (float(np.percentile(m, k)) if m.size else float("nan")) for k in q}


def percentiles_all(mass, status, q=(5, 50, 95)) -> dict:
    """{q: takeoff mass [kg] or None} over every sample with a verdict, infeasible samples
    ranked above every feasible mass; None ("not reached") where the percentile lands
    among them. Same interpolation as :func:`percentiles_feasible` (linear between the
    two order statistics around position (n - 1) q / 100).

    >>> percentiles_all([1.0, 2.0, 3.0, float("nan")], ["optimal"] * 3 + ["infeasible"], (0, 50, 66, 100))
    {0: 1.0, 50: 2.5, 66: 2.98, 100: None}
    """
    status = np.asarray(status)
    m = np.asarray(mass, float)
    keep = (status == OK) | (status == INFEASIBLE)
    v = np.sort(np.where(status == OK, m, np.inf)[keep])
    out = {}
    for k in q:
        if not v.size:
            out[k] = None
            continue
        h = (v.size - 1) * k / 100.0
        lo, hi = int(math.floor(h)), int(math.ceil(h))
        if not math.isfinite(v[hi]):
            out[k] = None
        else:
            out[k] = float(v[lo] + (h - lo) * (v[hi] - v[lo]))
    return out


def _ranks(x):
    """Average ranks (ties share the mean of their positions), 1-based; +inf is the largest."""
    import pandas as pd

    return pd.Series(np.asarray(x, float)).rank(method="average").to_numpy()


def rank_influence(inputs: dict, mass, status) -> list:
    """[(name, rho)] for every uncertain input, strongest first: Spearman's rank correlation
    between the input and the takeoff mass over every sample with a verdict (an infeasible
    sample ranks above every feasible mass, ties sharing their mean rank). A positive rho:
    larger values of the input make the design heavier (or infeasible). An input with no
    spread gets NaN and is listed last.

    >>> rank_influence({"a": [1, 2, 3, 4], "b": [4, 3, 2, 1]}, [1.0, 2.0, 3.0, 0.0],
    ...                ["optimal"] * 3 + ["infeasible"])
    [('a', 1.0), ('b', -1.0)]
    """
    status = np.asarray(status)
    keep = (status == OK) | (status == INFEASIBLE)
    m = np.where(status == OK, np.asarray(mass, float), np.inf)[keep]
    rm = _ranks(m)
    out = []
    for name, x in inputs.items():
        rx = _ranks(np.asarray(x, float)[keep])
        if rx.size < 3 or np.ptp(rx) == 0 or np.ptp(rm) == 0:
            out.append((name, float("nan")))
            continue
        out.append((name, float(np.corrcoef(rx, rm)[0, 1])))
    return sorted(out, key=lambda t: (not math.isfinite(t[1]), -abs(t[1]) if math.isfinite(t[1]) else 0.0))
