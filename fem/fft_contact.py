"""Contact on an (s, θ) grid of a face of revolution, compliance applied by FFT along θ.

The face carries k nodes along its slant (the FE interface nodes) and M equally spaced
angles.  λ[i, j] is the normal force (N) of node ring i concentrated on the sector of
angle θ_j.  Harmonic n of the line load of ring i' moves ring i by C_n[i, i'] times its
amplitude F_n = 2 Σ_j λ[i', j] cos n(θ − θ_j) (fem/harmonic.py convention), so the
compliance of the grid is block-circulant in θ with kernel

    h(θ_m) = C_0 + 2 Σ_{n=1}^{M/2-1} C_n cos nθ_m + C_{M/2} cos(π m)

and gap = C λ costs one real FFT, one small matrix product per harmonic and one inverse
FFT (Polonsky & Keer, Wear 1999, who apply the influence matrix by FFT in the same way).
All M/2 + 1 harmonics are kept: a grid finer than the harmonics would give C a null space.

The contact problem is the one of fem/lcp.py on the grid (frictionless, unilateral, with
rigid modes fixed by balance equations Bᵀλ = −e):

    gap = g + C λ + B δ ≥ 0,   λ ≥ 0,   λ · gap = 0,   Bᵀ λ = −e.

Solved by the primal-dual active set of fem/lcp.py (Hintermüller, Ito & Kunisch, SIAM J.
Optim. 2003), with each equality-constrained subproblem solved by preconditioned
conjugate gradients on the closed set (preconditioner: the exact inverse of the
compliance of the whole face, applied by FFT as well).  Tolerance: CG residual
CG_TOLERANCE relative to the right-hand side.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .lcp import ContactError

CG_TOLERANCE = 1e-11
GAP_TOLERANCE = 1e-8         # relative to the displacement scale: beyond CG round-off
FORCE_TOLERANCE = 1e-10      # relative to the largest force


class CirculantCompliance:
    """gap = C λ on a (k, M) grid from the harmonic compliances C_0 … C_{M/2}."""

    def __init__(self, harmonics: np.ndarray):
        C = np.asarray(harmonics, dtype=float)            # (M/2 + 1, k, k)
        self.C = 0.5 * (C + C.transpose(0, 2, 1))
        self.M = 2 * (C.shape[0] - 1)
        self.k = C.shape[1]
        if self.M < 2:
            raise ValueError("at least harmonics 0 and 1 are needed")
        # irfft(rfft(x)) = x, so the multiplier of harmonic n is M C_n
        self._mult = self.M * self.C
        self._inv = np.linalg.inv(self.C) / self.M

    @property
    def shape(self) -> tuple[int, int]:
        return self.k, self.M

    def _apply(self, mult, lam):
        spec = np.fft.rfft(lam, axis=1)                    # (k, M/2 + 1)
        out = np.einsum("fij,jf->if", mult, spec)
        return np.fft.irfft(out, n=self.M, axis=1)

    def apply(self, lam: np.ndarray) -> np.ndarray:
        return self._apply(self._mult, lam)

    def inverse(self, gap: np.ndarray) -> np.ndarray:
        """Forces that close the whole face to the given gap (full-contact inverse)."""
        return self._apply(self._inv, gap)

    def diagonal(self) -> np.ndarray:
        c = self.C[:, np.arange(self.k), np.arange(self.k)]
        return c[0] + 2.0 * c[1:-1].sum(axis=0) + c[-1]


@dataclass
class GridSolution:
    lam: np.ndarray          # (k, M) N
    delta: np.ndarray        # rigid-mode unknowns
    gap: np.ndarray          # (k, M) mm
    iterations: int          # active-set sweeps
    cg_iterations: int


def _pcg(apply, precond, b, x0, S, tol):
    """CG on the closed set S (mask); unknowns off S stay zero."""
    x = np.where(S, x0, 0.0)
    r = np.where(S, b - apply(x), 0.0)
    norm_b = max(np.linalg.norm(np.where(S, b, 0.0)), 1e-300)
    z = np.where(S, precond(r), 0.0)
    p = z.copy()
    rz = np.vdot(r, z)
    for it in range(1, 20 * S.sum() + 50):
        if np.linalg.norm(r) <= tol * norm_b:
            return x, it - 1
        Ap = np.where(S, apply(p), 0.0)
        a = rz / np.vdot(p, Ap)
        x += a * p
        r -= a * Ap
        z = np.where(S, precond(r), 0.0)
        rz_new = np.vdot(r, z)
        p = z + (rz_new / rz) * p
        rz = rz_new
    raise ContactError("the grid contact subproblem did not converge (conjugate gradients)")


def solve_grid_contact(op: CirculantCompliance, g: np.ndarray, B: np.ndarray, e: np.ndarray,
                       closed: np.ndarray | None = None, max_sweeps: int = 80) -> GridSolution:
    """Solve the contact problem of the module docstring.

    ``g`` (k, M) gap without contact forces; ``B`` (k, M, nc) gap per unit rigid-mode
    unknown; ``e`` (nc,) external generalised force on each mode; ``closed`` a start
    guess of the closed set (default: the whole face).
    """
    k, M = op.shape
    g = np.asarray(g, float).reshape(k, M)
    B = np.asarray(B, float).reshape(k, M, -1)
    e = np.asarray(e, float).reshape(-1)
    nc = B.shape[2]
    S = np.ones((k, M), bool) if closed is None else np.asarray(closed, bool).copy()
    precond = op.inverse
    lam = np.zeros((k, M))
    X = np.zeros((nc, k, M))
    cg_total = 0
    seen = set()
    for sweep in range(1, max_sweeps + 1):
        if not S.any():
            raise ContactError("no node of the face stays closed: the interface cannot carry the load")
        y, it = _pcg(op.apply, precond, -g, lam, S, CG_TOLERANCE)
        cg_total += it
        for c in range(nc):
            X[c], it = _pcg(op.apply, precond, B[:, :, c], X[c], S, CG_TOLERANCE)
            cg_total += it
        Bs = np.where(S[:, :, None], B, 0.0).reshape(k * M, nc)
        A = Bs.T @ X.reshape(nc, -1).T
        if nc and np.linalg.matrix_rank(A) < nc:
            raise ContactError("a free body has no closed contact node left: its position is undetermined")
        delta = np.linalg.solve(A, Bs.T @ y.ravel() + e) if nc else np.zeros(0)
        lam = y - np.tensordot(delta, X, axes=1) if nc else y
        gap = g + op.apply(lam) + (B @ delta if nc else 0.0)
        force = max(np.abs(lam).max(), np.abs(e).max(initial=0.0), 1e-300)
        disp = max(np.abs(g).max(), np.abs(op.C).max() * force, 1e-300)
        new = np.where(S, lam > FORCE_TOLERANCE * force, gap < -GAP_TOLERANCE * disp)
        if np.array_equal(new, S):
            lam = np.where(S, np.maximum(lam, 0.0), 0.0)
            return GridSolution(lam, delta, np.where(S, 0.0, gap), sweep, cg_total)
        key = new.tobytes()
        if key in seen:
            raise ContactError("the grid contact active set cycles; refine the θ grid or the mesh")
        seen.add(key)
        S = new
    raise ContactError(f"grid contact did not settle in {max_sweeps} active-set sweeps")
