"""Harmonic (Fourier) elasticity and the FFT grid contact on small hand-built sections.

Sources beside each check: Zienkiewicz & Taylor, The Finite Element Method, "axisymmetric
solids under non-symmetric load" (harmonic strains, rigid modes); Johnson, Contact
Mechanics (1985), elastic-foundation (Winkler) model of a thin layer.
"""
import math

import numpy as np

from clutchfe.fem import assemble
from clutchfe.fem.fft_contact import CirculantCompliance
from clutchfe.fem.harmonic import HarmonicStiffness
from clutchfe.fem.tilted import TiltedContactSolver
from clutchfe.verification.tilted import LINING_E as E_LINING
from clutchfe.verification.tilted import LINING_T as T_LINING
from clutchfe.verification.tilted import R1, R2, W

from tests.helpers.models import lined_blocks


def test_harmonic_zero_reproduces_the_axisymmetric_stiffness():
    # n = 0 strains of the harmonic set are the axisymmetric ones (Zienkiewicz & Taylor)
    system = assemble(lined_blocks())
    hs = HarmonicStiffness(system)
    K0 = hs.matrix(0)[hs.dof3][:, hs.dof3]
    assert abs(K0 - system.K).max() <= 1e-12 * abs(system.K).max()


def test_only_the_first_harmonic_holds_the_rigid_tilt():
    # a rigid rotation about a diameter is a first harmonic: u_r = (z - z0), u_θ = -(z - z0),
    # u_z = -r (Zienkiewicz & Taylor); it strains every other harmonic
    system = assemble(lined_blocks(E_steel=2e5))
    hs = HarmonicStiffness(system)
    x, z = hs.basis.doflocs[0], hs.basis.doflocs[1]
    mode = np.zeros(hs.basis.N)
    for comp, value in ((0, z - 3.0), (2, -(z - 3.0)), (1, -x)):
        d = np.concatenate(hs._dofs(hs.basis, comp))
        mode[d] = value[d]
    energy = {}
    for n in (0, 1, 2, 5):
        K = hs.matrix(n)
        assert abs(K - K.T).max() <= 1e-12 * abs(K).max()
        energy[n] = mode @ (K @ mode)
    assert abs(energy[1]) <= 1e-12 * max(energy.values())
    assert min(energy[0], energy[2], energy[5]) > 1e6 * abs(energy[1])


def test_circulant_compliance_matches_the_dense_kernel():
    # the FFT product equals the dense block-circulant matrix h(θ_m) = C0 + 2 Σ Cn cos nθ_m + C_{M/2} cos πm
    rng = np.random.default_rng(4)
    k, M = 3, 8
    C = []
    for _ in range(M // 2 + 1):
        a = rng.normal(size=(k, k))
        C.append(a @ a.T + k * np.eye(k))
    op = CirculantCompliance(np.array(C))
    lam = rng.normal(size=(k, M))
    th = 2 * np.pi * np.arange(M) / M
    dense = np.zeros((k, M))
    for j in range(M):
        for jj in range(M):
            m = (j - jj) % M
            h = C[0] + sum(2 * C[n] * np.cos(n * th[m]) for n in range(1, M // 2)) + C[M // 2] * np.cos(np.pi * m)
            dense[:, j] += h @ lam[:, jj]
    assert np.allclose(op.apply(lam), dense, rtol=1e-12, atol=1e-12)
    assert np.allclose(op.inverse(op.apply(lam)), lam, atol=1e-10)


def test_winkler_lining_under_small_tilt():
    """Thin lining on numerically rigid steel: p = k (δ0 + φ r cos θ), k = E / t for ν = 0
    (elastic-foundation model, Johnson, Contact Mechanics 1985, §5.8).
    The tilting moment is then k φ ∫ r² cos²θ dA = k φ π (r2⁴ − r1⁴) / 4."""
    solver = TiltedContactSolver(lined_blocks(), "top", grid=16)
    k = E_LINING / T_LINING
    area = math.pi * (R2 ** 2 - R1 ** 2)
    delta0 = W / (k * area)
    phi = 0.5 * delta0 / R2                      # keeps the whole face closed
    res = solver.solve(tilt_deg=math.degrees(phi))
    g = res.interfaces[0]
    assert g.in_contact.all()
    expected = k * (delta0 + phi * g.r[:, None] * np.cos(g.theta)[None])
    inner = (g.r > R1 + 2 * T_LINING) & (g.r < R2 - 2 * T_LINING)     # away from the free lining ends
    err = np.abs(g.pressure[inner] - expected[inner]).max() / expected.max()
    assert err < 0.01, err
    moment = k * phi * math.pi * (R2 ** 4 - R1 ** 4) / 4
    assert abs(abs(res.moment[0]) - moment) / moment < 0.02
    assert abs(res.moment[1]) < 1e-8 * moment


def test_zero_tilt_equals_the_axisymmetric_solve():
    # linear elasticity: with no tilt the θ-uniform gap excites harmonic 0 only
    solver = TiltedContactSolver(lined_blocks(E_steel=2e5), "top", grid=16)
    ax = solver.base.solve(fields=False).interfaces[0]
    g = solver.solve().interfaces[0]
    # measured (HEAD 0f9d85f): ring forces 7e-15 of the largest, peak pressure 0 (round-off only)
    assert np.allclose(g.normal_force.sum(axis=1), ax.normal_force, rtol=1e-6, atol=1e-9 * W)
    assert np.abs(g.normal_force.sum(axis=1) - ax.normal_force).max() <= 1e-13 * np.abs(ax.normal_force).max()
    assert abs(g.pressure.max() / ax.pressure.max() - 1) < 1e-13
