"""The condensed contact problem: frictionless, unilateral, with free bodies.

Find nodal normal forces lam and rigid axial translations delta with

    gap = g + C lam + B delta >= 0,   lam >= 0,   lam . gap = 0,   B^T lam = -e

C (compliance, SPD) and B (axial part of the gap operator per free body) come
from the condensation; e is the external axial force on each free body.  These
are the optimality conditions of the convex QP  min 1/2 lam C lam + g lam  over
lam >= 0, B^T lam = -e, with delta the multipliers of the balance equations
(Nocedal & Wright, Numerical Optimization 2006, §16.1 KKT conditions).

Solved by a primal-dual active set (Hintermueller, Ito & Kunisch, SIAM J. Optim.
2003: semismooth Newton, usually converges in a few sweeps), from full contact or from a
given closed set (a warm start: a sequence of nearby problems, e.g. the time steps of
fem/engagement.py, then needs one or two sweeps; the answer is the same, the exact solve on
the final closed set).  Should it cycle,
a primal active-set method (Nocedal & Wright 2006, Algorithm 16.3) finishes
from a feasible point found by linear programming.  Where balance and bound
constraints are dependent (degenerate) an active set can cycle; then the problem
is solved as a weighted non-negative least-squares problem (Lawson & Hanson 1974),
which is finite, and polished on its support.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy.optimize import linprog, nnls

# A node counts as closed when its gap is below GAP_TOLERANCE times the
# largest displacement scale of the problem; forces below FORCE_TOLERANCE times
# the largest force are treated as zero.  Both are far below what the
# discretisation resolves, but above round-off of the dense solves.
GAP_TOLERANCE = 1e-10
FORCE_TOLERANCE = 1e-12


class ContactError(RuntimeError):
    """The interface cannot carry the load as asked (the CLI maps this to exit 3)."""


@dataclass
class LcpSolution:
    lam: np.ndarray
    delta: np.ndarray
    gap: np.ndarray
    iterations: int
    method: str


def _kkt(C, g, B, e, S, consistent=False):
    """Equality-constrained subproblem on the closed set S; None if the
    balance equations cannot be met with S (a free body has no closed node).

    ``consistent=True``: the caller knows the balance holds on S (the primal
    active set keeps it along its path), so a free body without a closed node
    is unloaded and its translation is taken as the least-norm one.
    """
    s = np.flatnonzero(S)
    nb = B.shape[1]
    Bs = B[s]
    deficient = nb and np.linalg.matrix_rank(Bs) < nb
    if deficient and not consistent:
        return None
    M = np.zeros((s.size + nb, s.size + nb))
    M[:s.size, :s.size] = C[np.ix_(s, s)]
    M[:s.size, s.size:] = Bs
    M[s.size:, :s.size] = Bs.T
    rhs = np.concatenate([-g[s], -e])
    y = np.linalg.lstsq(M, rhs, rcond=None)[0] if deficient else np.linalg.solve(M, rhs)
    lam = np.zeros(g.size)
    lam[s] = y[:s.size]
    return lam, y[s.size:]


def _gap(C, g, B, lam, delta):
    return g + C @ lam + B @ delta


def _scales(C, g, B, e, lam):
    force = max(np.abs(lam).max(initial=0.0), np.abs(e).max(initial=0.0), 1e-300)
    disp = max(np.abs(g).max(initial=0.0), np.abs(C).max(initial=0.0) * force, 1e-300)
    return GAP_TOLERANCE * disp, FORCE_TOLERANCE * force


def primal_dual(C, g, B, e, max_iter=100, start=None):
    """The primal-dual active set from full contact, or from ``start`` (one bool per node); None
    when it does not settle.  C need not be symmetric (fem/engagement.py's coupled compliance)."""
    n = g.size
    S = np.ones(n, dtype=bool) if start is None else np.array(start, dtype=bool)
    if S.shape != (n,):
        raise ValueError(f"start: one closed flag per contact node ({n}) expected, got {S.shape}")
    for it in range(1, max_iter + 1):
        sol = _kkt(C, g, B, e, S)
        if sol is None:
            return None
        lam, delta = sol
        gap = _gap(C, g, B, lam, delta)
        tol_g, tol_f = _scales(C, g, B, e, lam)
        new = np.where(S, lam > tol_f, gap < -tol_g)
        if np.array_equal(new, S):
            return LcpSolution(np.where(S, np.maximum(lam, 0.0), 0.0), delta, gap, it, "pdas")
        S = new
    return None


def _feasible_start(B, e):
    n, nb = B.shape
    if nb == 0:
        return np.zeros(n)
    res = linprog(np.ones(n), A_eq=B.T, b_eq=-e, bounds=(0, None), method="highs")
    if res.status != 0:
        return None
    return np.maximum(res.x, 0.0)


def primal_active_set(C, g, B, e, max_iter=None):
    n, nb = B.shape
    if nb and np.linalg.matrix_rank(B) < nb:
        raise ContactError("the axial positions of the free bodies are not fixed by their "
                           "contacts (a free body only touches other free bodies)")
    lam = _feasible_start(B, e)
    if lam is None:
        return None
    F = lam > 0
    # keep the working set independent: every free body needs a free node
    for i in np.argsort(g):
        if nb == 0 or np.linalg.matrix_rank(B[F]) == nb:
            break
        if not F[i] and np.any(B[i] != 0) and \
                np.linalg.matrix_rank(B[F | (np.arange(n) == i)]) > np.linalg.matrix_rank(B[F]):
            F[i] = True
    max_iter = max_iter or 10 * n + 50
    for it in range(1, max_iter + 1):
        y, delta = _kkt(C, g, B, e, F, consistent=True)
        p = np.where(F, y - lam, 0.0)
        tol_g, tol_f = _scales(C, g, B, e, np.abs(lam) + np.abs(y))
        if np.abs(p).max(initial=0.0) <= tol_f:
            lam = np.where(F, np.maximum(y, 0.0), 0.0)
            gap = _gap(C, g, B, lam, delta)
            gap_w = np.where(F, np.inf, gap)
            i = int(np.argmin(gap_w)) if n else 0
            if n == 0 or gap_w[i] >= -tol_g:
                return LcpSolution(lam, delta, gap, it, "primal active set")
            # with dependent constraints the translations are not unique: another choice may
            # close every gap at this lam, and then lam is optimal (adding i would cycle)
            other = _other_translation(C, g, B, lam, tol_g)
            if other is not None:
                return LcpSolution(lam, other, _gap(C, g, B, lam, other), it, "primal active set")
            F[i] = True
            continue
        blocking = F & (p < -tol_f)     # round-off must not block a step
        ratios = np.full(n, np.inf)
        ratios[blocking] = -lam[blocking] / p[blocking]
        j = int(np.argmin(ratios))
        alpha = min(1.0, ratios[j])
        lam = lam + alpha * p
        if alpha < 1.0:
            F[j] = False
            lam[j] = 0.0
    # degenerate problems (dependent balance and bound constraints) can make the active set cycle;
    # the weighted least-squares form below is finite and does not
    return penalised_nnls(C, g, B, e)


def penalised_nnls(C, g, B, e) -> LcpSolution:
    """The same problem as non-negative least squares (Lawson & Hanson 1974, ch. 23), the balance
    equations weighted heavily (their weighting method for equality constraints, ch. 22), then the
    forces polished by the exact subproblem on their support and the translations found by LP."""
    n, nb = B.shape
    R = np.linalg.cholesky(C).T                      # C = R^T R, so 1/2 lam C lam + g lam = 1/2 |R lam + c|^2 + const
    c = np.linalg.solve(R.T, g)
    weight = 1e6 * np.abs(R).max() / max(np.abs(B).max(initial=0.0), 1e-300)
    A = np.vstack([R, weight * B.T])
    b = np.concatenate([-c, -weight * e])
    lam, _ = nnls(A, b, maxiter=50 * (n + nb) + 100)
    tol_g, tol_f = _scales(C, g, B, e, lam)
    support = lam > tol_f
    exact = _kkt(C, g, B, e, support, consistent=True)
    if exact is not None and np.all(exact[0][support] >= -tol_f):
        lam = np.where(support, np.maximum(exact[0], 0.0), 0.0)
    delta = _other_translation(C, g, B, lam, tol_g)
    if delta is None:
        if nb and np.abs(B.T @ lam + e).max(initial=0.0) > 1e3 * tol_f:
            raise ContactError("the balance of the free bodies cannot be met with compressive "
                               "contact forces: the interface cannot carry the load")
        delta = np.linalg.lstsq(B[support], -(g + C @ lam)[support], rcond=None)[0] if nb else np.zeros(0)
    return LcpSolution(lam, delta, _gap(C, g, B, lam, delta), 0, "weighted NNLS")


def _other_translation(C, g, B, lam, tol_g):
    """Translations delta with gap = 0 where lam > 0 and gap >= 0 elsewhere, or None (an LP)."""
    nb = B.shape[1]
    if nb == 0:
        return None
    base = g + C @ lam
    carrying = lam > 0
    # -tol <= (B delta + base)_i <= tol where lam_i > 0;  (B delta + base)_i >= 0 elsewhere
    A_ub = np.vstack([B[carrying], -B[carrying], -B[~carrying]])
    b_ub = np.concatenate([tol_g - base[carrying], tol_g + base[carrying], base[~carrying]])
    res = linprog(np.zeros(nb), A_ub=A_ub, b_ub=b_ub, bounds=[(None, None)] * nb, method="highs")
    return res.x if res.status == 0 else None


def solve_lcp(C, g, B, e, start=None) -> LcpSolution:
    """Exact solution of the condensed contact problem (see module docstring); ``start``: a
    closed set to warm-start the active set from (one bool per node)."""
    if g.size == 0:
        raise ContactError("no contact nodes: the bodies cannot transmit the load")
    sol = primal_dual(C, g, B, e, start=start)
    if sol is None and start is not None:      # a poor start may cycle where full contact does not
        sol = primal_dual(C, g, B, e)
    if sol is None:
        sol = primal_active_set(C, g, B, e)
    if sol is None:
        raise ContactError("no compressive contact forces can balance the loads on the "
                           "axially free bodies (the interface would have to pull)")
    return sol
