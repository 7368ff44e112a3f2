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
Optim. 2003).  Each sweep's equality-constrained subproblem on the closed set S,
min ½ λᵀC λ + gᵀλ with Bᵀλ = −e, is one projected preconditioned conjugate-gradient run
(Gould, Hribar & Nocedal, SIAM J. Sci. Comput. 2001): the balance equations are kept exact
by projecting every preconditioned residual, so the rigid-mode unknowns δ cost no extra
solves (they are the multipliers, read off at the end).  Preconditioner: the exact inverse
of the compliance of the whole face restricted to S, applied by FFT as well.
Sweeps run at a loose CG tolerance until the closed set settles, then once more at
CG_TOLERANCE (residual relative to the right-hand side) before the set is accepted, so
the answer does not depend on the start.  A start (closed set and forces, e.g. the
previous tilt of a sweep) only saves sweeps.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .lcp import ContactError

CG_TOLERANCE = 1e-11
LOOSE_TOLERANCE = 1e-4       # while the closed set is still moving: its decisions need no more
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
        self._mult = np.ascontiguousarray(self.M * self.C)
        self._inv = np.ascontiguousarray(np.linalg.inv(self.C) / self.M)
        self.scale = float(np.abs(self.C).max())

    @property
    def shape(self) -> tuple[int, int]:
        return self.k, self.M

    def _apply(self, mult, lam):
        # real and imaginary parts as two columns of one batched real product: C_n is real,
        # and this is several times faster than a complex einsum on 2 cores
        spec = np.fft.rfft(lam, axis=-1)                            # (..., k, M/2 + 1)
        lead = spec.shape[:-2]
        s = np.moveaxis(spec, -1, 0)                                # (M/2 + 1, ..., k)
        s = s.reshape(s.shape[0], -1, self.k)                       # (M/2 + 1, b, k)
        parts = np.concatenate([s.real, s.imag], axis=1).transpose(0, 2, 1)   # (f, k, 2b)
        out = mult @ parts
        b = s.shape[1]
        out = (out[:, :, :b] + 1j * out[:, :, b:]).transpose(0, 2, 1).reshape((out.shape[0],) + lead + (self.k,))
        return np.fft.irfft(np.moveaxis(out, 0, -1), n=self.M, axis=-1)

    def apply(self, lam: np.ndarray) -> np.ndarray:
        """Gaps of forces ``lam`` (k, M), or of a stack of them (..., k, M)."""
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
    closed: np.ndarray       # (k, M) bool, the accepted closed set (a start for a nearby problem)


class _Projection:
    """z = W r − W B (BᵀW B)⁻¹ BᵀW r on the closed set, W the masked preconditioner:
    Bᵀz = 0, so CG steps along z keep the balance equations (Gould, Hribar & Nocedal 2001)."""

    def __init__(self, op, B, S):
        self.op, self.S = op, S
        self.B = np.where(S[None], B, 0.0)                          # (nc, k, M)
        self.WB = np.where(S[None], op.inverse(self.B), 0.0) if B.shape[0] else self.B
        A = np.tensordot(self.B, self.WB, axes=([1, 2], [1, 2]))    # (nc, nc) BᵀWB
        if B.shape[0] and np.linalg.matrix_rank(A) < B.shape[0]:
            raise ContactError("a free body has no closed contact node left: its position is undetermined")
        self.A = A

    def multipliers(self, Wr):
        """(BᵀWB)⁻¹ BᵀW r."""
        if not self.B.shape[0]:
            return np.zeros(0)
        return np.linalg.solve(self.A, np.tensordot(self.B, Wr, axes=([1, 2], [0, 1])))

    def __call__(self, r):
        """Projected preconditioned residual z and the multipliers δ = −(BᵀWB)⁻¹BᵀW r."""
        z = np.where(self.S, self.op.inverse(r), 0.0)
        m = self.multipliers(z)
        return (z - np.tensordot(m, self.WB, axes=1) if self.B.shape[0] else z), -m

    def feasible(self, lam, e):
        """λ corrected along W B so that Bᵀλ = −e."""
        if not self.B.shape[0]:
            return lam
        miss = -e - np.tensordot(self.B, lam, axes=([1, 2], [0, 1]))
        return lam + np.tensordot(np.linalg.solve(self.A, miss), self.WB, axes=1)


def _projected_cg(op, proj, g, e, lam0, tol):
    """min ½λᵀCλ + gᵀλ on the closed set with Bᵀλ = −e; returns λ, δ, iterations.

    r is the gap residual g + Cλ + Bδ on S with the multipliers found so far: each
    projection's increment of δ is folded back into r ("residual resetting", Gould, Hribar &
    Nocedal 2001), otherwise z is the small difference of two large vectors near the
    solution and the balance Bᵀλ = −e drifts.  Converged when ‖r‖ is below ``tol`` times
    the larger of the free gap and the gap of the forces, the measure of fem/lcp.py."""
    S = proj.S
    gS = np.where(S, g, 0.0)
    g_norm = float(np.linalg.norm(gS))
    lam = proj.feasible(np.where(S, lam0, 0.0), e)
    r = np.where(S, op.apply(lam) + g, 0.0)
    delta = np.zeros(proj.B.shape[0])

    def project(r):
        z, d = proj(r)
        r += np.tensordot(d, proj.B, axes=1)
        return z, delta + d

    z, delta = project(r)
    p = -z
    rz = float(np.vdot(r, z))
    for it in range(0, 20 * int(S.sum()) + 50):
        gap_of_forces = float(np.linalg.norm(r - gS - np.tensordot(delta, proj.B, axes=1)))
        if np.linalg.norm(r) <= tol * max(g_norm, gap_of_forces, 1e-300) or rz <= 0.0:
            return lam, delta, it
        Cp = np.where(S, op.apply(p), 0.0)
        a = rz / float(np.vdot(p, Cp))
        lam += a * p
        r += a * Cp
        z, delta = project(r)
        rz_new = float(np.vdot(r, z))
        p = -z + (rz_new / rz) * p
        rz = rz_new
    raise ContactError("the grid contact subproblem did not converge (conjugate gradients)")


def solve_grid_contact(op: CirculantCompliance, g: np.ndarray, B: np.ndarray, e: np.ndarray,
                       closed: np.ndarray | None = None, lam0: np.ndarray | None = None,
                       max_sweeps: int = 80) -> GridSolution:
    """Solve the contact problem of the module docstring.

    ``g`` (k, M) gap without contact forces; ``B`` (k, M, nc) gap per unit rigid-mode
    unknown; ``e`` (nc,) external generalised force on each mode; ``closed`` a start
    guess of the closed set (default: the whole face) and ``lam0`` of the forces.
    """
    k, M = op.shape
    g = np.asarray(g, float).reshape(k, M)
    Bm = np.moveaxis(np.asarray(B, float).reshape(k, M, -1), 2, 0)     # (nc, k, M)
    e = np.asarray(e, float).reshape(-1)
    S = np.ones((k, M), bool) if closed is None else np.asarray(closed, bool).copy()
    lam = np.zeros((k, M)) if lam0 is None else np.asarray(lam0, float).reshape(k, M).copy()
    cg_total = 0
    seen = set()
    tol = LOOSE_TOLERANCE
    for sweep in range(1, max_sweeps + 1):
        if not S.any():
            raise ContactError("no node of the face stays closed: the interface cannot carry the load")
        proj = _Projection(op, Bm, S)
        lam, delta, it = _projected_cg(op, proj, g, e, lam, tol)
        cg_total += it
        lam = np.where(S, lam, 0.0)
        gap = g + op.apply(lam) + np.tensordot(delta, Bm, axes=1)
        force = max(np.abs(lam).max(), np.abs(e).max(initial=0.0), 1e-300)
        disp = max(np.abs(g).max(), op.scale * force, 1e-300)
        new = np.where(S, lam > FORCE_TOLERANCE * force, gap < -GAP_TOLERANCE * disp)
        key = new.tobytes()
        if np.array_equal(new, S) or key in seen:
            if tol == CG_TOLERANCE:
                if np.array_equal(new, S):
                    lam = np.where(S, np.maximum(lam, 0.0), 0.0)
                    return GridSolution(lam, delta, np.where(S, 0.0, gap), sweep, cg_total, S.copy())
                raise ContactError("the grid contact active set cycles; refine the θ grid or the mesh")
            # settled (or cycling) on loose solves: decide the set again on exact ones
            tol, seen = CG_TOLERANCE, set()
            S = new
            continue
        seen.add(key)
        S = new
    raise ContactError(f"grid contact did not settle in {max_sweeps} active-set sweeps")
