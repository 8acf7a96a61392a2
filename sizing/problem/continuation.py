"""A quick step from a solved neighbour: Newton's method on the optimality conditions of the
neighbour's active set (what a trade study does between close points).

When a parameter changes a little, the same requirements stay active and the optimum moves
smoothly: it solves the Karush-Kuhn-Tucker conditions of that active set, a small square
system (stationarity of the Lagrangian in the free unknowns, the active rows on their
bounds), which Newton's method solves in two or three steps from the neighbour's answer.
The step is taken only when it proves itself: converged, every active row's multiplier of
the right sign, every other row satisfied, every unknown inside its bounds and the
Lagrangian's Hessian positive on the directions the active rows leave free (a minimum, not a
saddle). Otherwise it returns None and the caller runs IPOPT.

An unknown that neither the objective nor an active row depends on (the free speed of a
requirement that is not active) is a flat direction of the problem; it keeps its value.

References
----------
Nocedal, J., Wright, S. J., *Numerical Optimization*, 2nd ed., Springer, 2006, §12.3
(first-order conditions, Theorem 12.1) and §12.5 (second-order sufficient conditions,
Theorem 12.6).
"""
from __future__ import annotations

import casadi as ca
import numpy as np

ACTIVE_MULTIPLIER = 1e-8    # a row (bound) with a larger multiplier is in the active set
KKT_TOL = 1e-11             # converged when every optimality condition is met to this
MAX_STEPS = 8               # Newton steps for one active set
SWAPS = 3                   # rows that may join or leave the active set on the way


class Continuation:
    """Newton steps on the active set's optimality conditions of a built
    :class:`~sizing.problem.nlp.Problem` (built once; :meth:`step` per point)."""

    def __init__(self, prob):
        x, p, f, g = prob.x_sym, prob.p_sym, prob.f_sym, prob.g_sym
        lam = ca.SX.sym("lam", g.shape[0])
        lag = f + ca.dot(lam, g)
        grad = ca.gradient(lag, x)
        hess = ca.jacobian(grad, x)
        jac = ca.jacobian(g, x)
        n, m = x.shape[0], g.shape[0]
        # one dense output vector (one conversion to numpy per evaluation): the gradient of
        # the Lagrangian, its Hessian and the rows' Jacobian (column-major), the rows
        # (x and the multipliers in one input, the parameters converted once per point: a
        # conversion from numpy costs more than the evaluation)
        self._kkt = ca.Function("kkt", [ca.vertcat(x, lam), p],
                                [ca.vertcat(grad, ca.vec(ca.densify(hess)), ca.vec(ca.densify(jac)), g)])
        self._cuts = np.cumsum([n, n * n, m * n])
        self._n, self._m = n, m
        self.depends = np.array(ca.DM(jac.sparsity(), 1)).astype(bool)               # rows x unknowns
        self.objective_depends = np.array(ca.DM(ca.jacobian(f, x).sparsity(), 1)).ravel().astype(bool)
        self.lbx, self.ubx, self.lbg, self.ubg = prob.lbx, prob.ubx, prob.lbg, prob.ubg
        self.equality = np.asarray(self.lbg == self.ubg)

    def step(self, x0, lam_g0, lam_x0, p):
        """(x, lam_g, lam_x, Newton steps, constraint rows at x) at parameters p from a
        neighbour's solution (x0, lam_g0, lam_x0), or None when the step does not prove itself.

        When the converged point violates a row the neighbour left inactive, that row joins
        the active set; when an active row's multiplier has the wrong sign, it leaves; then
        Newton runs again (at most :data:`SWAPS` such changes)."""
        x = np.array(x0, dtype=float)
        lam_g0, lam_x0 = np.asarray(lam_g0, dtype=float), np.asarray(lam_x0, dtype=float)
        p = ca.DM(np.asarray(p, dtype=float))
        active = self.equality | (np.abs(lam_g0) > ACTIVE_MULTIPLIER)
        at_bound = np.abs(lam_x0) > ACTIVE_MULTIPLIER
        x[at_bound] = np.where(lam_x0[at_bound] < 0, self.lbx[at_bound], self.ubx[at_bound])
        lam = np.where(active, lam_g0, 0.0)
        steps = 0
        with np.errstate(all="ignore"):
            for _swap in range(SWAPS + 1):
                res = self._newton(x, lam, p, active, at_bound)
                if res is None:
                    return None
                x, lam, grad, hess, jac, g, n = res
                steps += n
                ineq = active & ~self.equality
                wrong = np.where(ineq, lam, -np.inf)
                short = np.where(active, np.inf, g - self.lbg)
                if wrong.max() > ACTIVE_MULTIPLIER:            # a row that wants to leave its bound
                    k = int(np.argmax(wrong))
                    active[k], lam[k] = False, 0.0
                elif short.min() < -1e-9:                      # a row the step went past
                    active[int(np.argmin(short))] = True
                else:
                    break
            else:
                return None
            lam_x = np.zeros_like(x)
            lam_x[at_bound] = -(grad + jac.T @ lam)[at_bound]
            F = np.flatnonzero(self._moving(active, at_bound))
            A = np.flatnonzero(active)
            if not self._proves_itself(x, lam, lam_x, g, hess[np.ix_(F, F)], jac[np.ix_(A, F)], active, at_bound):
                return None
        return x, lam, lam_x, steps, g

    def _moving(self, active, at_bound):
        return ~at_bound & (self.objective_depends | self.depends[active].any(axis=0))

    def _newton(self, x, lam, p, active, at_bound):
        """Newton's method on the optimality conditions of one active set; None when it
        does not converge in :data:`MAX_STEPS`."""
        x, lam = x.copy(), lam.copy()
        A, F = np.flatnonzero(active), np.flatnonzero(self._moving(active, at_bound))
        nf = F.size
        FF, AF = np.ix_(F, F), np.ix_(A, F)
        K = np.zeros((nf + A.size, nf + A.size))
        for n in range(1, MAX_STEPS + 1):
            grad, hess, jac, g = self._evaluate(x, p, lam)
            r = np.concatenate([grad[F], g[A] - self.lbg[A]])
            if not np.all(np.isfinite(r)):
                return None
            if np.max(np.abs(r), initial=0.0) <= KKT_TOL:
                return x, lam, grad, hess, jac, g, n
            J = jac[AF]
            K[:nf, :nf] = hess[FF]
            K[:nf, nf:] = J.T
            K[nf:, :nf] = J
            try:
                dz = np.linalg.solve(K, -r)
            except np.linalg.LinAlgError:
                return None
            x[F] += dz[:nf]
            lam[A] += dz[nf:]
        return None

    def _evaluate(self, x, p, lam):
        """(gradient of the Lagrangian, its Hessian, the rows' Jacobian, the rows) at (x, p, lam)."""
        v = np.array(self._kkt(ca.DM(np.concatenate([x, lam])), p).nonzeros())
        grad, hess, jac, g = np.split(v, self._cuts)
        return grad, hess.reshape(self._n, self._n, order="F"), jac.reshape(self._m, self._n, order="F"), g

    def _proves_itself(self, x, lam, lam_x, g, H, J, active, at_bound) -> bool:
        if np.any(g[~active] > self.ubg[~active] + 1e-9):
            return False
        free = ~at_bound
        if np.any(x[free] < self.lbx[free]) or np.any(x[free] > self.ubx[free]):
            return False
        lower = at_bound & (x == self.lbx)
        if np.any(lam_x[lower] > ACTIVE_MULTIPLIER) or np.any(lam_x[at_bound & ~lower] < -ACTIVE_MULTIPLIER):
            return False
        # second order: the Hessian on the null space of the active rows' Jacobian is positive
        if H.shape[0] > J.shape[0]:
            _u, s, vt = np.linalg.svd(J) if J.size else (None, np.zeros(0), np.eye(H.shape[0]))
            rank = int(np.sum(s > 1e-10 * max(s.max(initial=0.0), 1.0)))
            Z = vt[rank:].T
            if Z.size and np.linalg.eigvalsh(Z.T @ H @ Z).min() <= 0.0:
                return False
        return True
