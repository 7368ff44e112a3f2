"""The speed rows: the centrifugal body force ρ ω² r (fem/centrifugal.py), its stresses, the mean hoop
stress and the burst estimate against closed forms.

Steel throughout: E = 210 GPa, ν = 0.3, ρ = 7850 kg/m³, at 10 000 rpm (tests/fem/test_centrifugal.py's
speed; every row but the ω² law's holds at any speed, the stresses scaling with ω²).  The models are rectangular (r, z) blocks of :mod:`.meshes`, P2; the same builders
serve tests/fem/test_centrifugal.py, which has the finer and coarser meshes; docs/speed.md lists their
measured errors.  Every function takes the model's knobs as keywords (defaults: the verified
configuration), so a test can run a deliberately wrong model through the same rows and see them fail.

Which row catches what:

* rotating disc: the body force's amplitude and its radial distribution (ρ, ω², the ring weight 2π r
  of the load), the axisymmetric stiffness and the P2 stress (P1 misses σ_r by 9.6 %);
* thin ring: the same amplitude on a free body with no support at all;
* mean hoop stress and burst speed: the half-ring balance ∫σ_θ dA = ∫ρω²r² dA, which the FE meets on
  any mesh to round-off (the discrete equation of v_r = 1), so any wrong factor in the load shows
  at 1e-9; the burst estimate then inherits it;
* the ω² law: the load's power of ω whatever its amplitude at the verified speed (ω instead of ω²
  gives 2× for 2ω, and a load not proportional to ω² would not scale either).
"""
from __future__ import annotations

import math

import numpy as np

from ..fem import SpringSupport, vertex_stress
from ..fem.centrifugal import STEEL_DENSITY, burst_speed, linear_solve_at_speed, mean_hoop_stress, rad_per_s
from .checks import Check, absolute, relative
from .meshes import BlockSection

E, NU = 210000.0, 0.3                      # MPa, -
RHO = STEEL_DENSITY                        # t/mm³
OMEGA = rad_per_s(10000.0)                 # rad/s
UTS = 500.0                                # MPa: a plain steel's tensile strength, its order (from memory); the
#                                            burst row checks the estimate's arithmetic, not the value

DISC_SOURCE = "Timoshenko & Goodier, Theory of Elasticity 1970, §32 (rotating disc, free edges)"
RING_SOURCE = "Timoshenko & Goodier, Theory of Elasticity 1970, §32 (thin ring, a → b); common practice"
BALANCE_SOURCE = ("Timoshenko & Goodier, Theory of Elasticity, 3rd ed. 1970 (rotating discs): the half ring cut "
                  "through the axis in equilibrium, ∫σ_θ dA = ∫ρω²r² dA")
BURST_SOURCE = ("ω_b = ω √(σ_uts/σ̄_θ), the estimate's definition on the half-ring balance (Timoshenko & Goodier "
                "1970); the average-tangential-stress burst criterion itself is common practice, from memory")
LINEAR_SOURCE = "linear elasticity: load ρω² × a fixed vector (Timoshenko & Goodier 1970)"

# thin annular disc: bore 20 mm, rim 100 mm, 1 mm thick (t/(b − a) = 1/80, t/b = 1/100).  Plane stress
# holds because both faces are free (σ_z = 0 there) and a disc this thin cannot build σ_z between them;
# the row on σ_z measures it (2e-5 of the bore's σ_θ).  The half 0 <= z <= 0.5 is modelled with the
# mid-plane z = 0 held axially (a symmetry plane, free radially), 80 × 1 cells of 1 × 0.5 mm, each
# split into two P2 triangles
DISC_A, DISC_B, DISC_T, DISC_CELLS = 20.0, 100.0, 1.0, 80


def disc(cells: int = DISC_CELLS, order: int = 2):
    """The half disc above its mid-plane: (BlockSection, FeModel)."""
    s = BlockSection().add_block("disc", np.linspace(DISC_A, DISC_B, cells + 1), np.linspace(0.0, DISC_T / 2, 2))
    # the mid-plane support removes the axial rigid motion and nothing else: the load has no axial
    # part and the symmetric half of a free disc has u_z = 0 there
    mid_plane = SpringSupport("disc_bottom", axial_stiffness=None, radial_stiffness=0.0)
    return s, s.model([E], [NU], [False], supports=[mid_plane], element_order=order)


def timoshenko_disc(r, a, b, omega, rho=RHO, nu=NU, E=E):
    """Rotating annular disc of uniform thickness, plane stress, both edges free:
    σ_r = (3+ν)/8 ρω² (b² + a² − a²b²/r² − r²),
    σ_θ = (3+ν)/8 ρω² (b² + a² + a²b²/r² − (1+3ν)/(3+ν) r²),
    u_r = r (σ_θ − ν σ_r) / E  (Timoshenko & Goodier, Theory of Elasticity, 3rd ed. 1970, §32 rotating
    disks; section number from memory, the formula is checked in tests/fem/test_centrifugal.py)."""
    k = (3 + nu) / 8 * rho * omega**2
    sr = k * (b**2 + a**2 - a**2 * b**2 / r**2 - r**2)
    st = k * (b**2 + a**2 + a**2 * b**2 / r**2 - (1 + 3 * nu) / (3 + nu) * r**2)
    return sr, st, r * (st - nu * sr) / E


def disc_bore_hoop(a=DISC_A, b=DISC_B, omega=OMEGA, rho=RHO, nu=NU) -> float:
    """σ_θ,max = (3+ν)/4 ρω² (b² + (1−ν)/(3+ν) a²), at the bore (the formula above at r = a)."""
    return (3 + nu) / 4 * rho * omega**2 * (b**2 + (1 - nu) / (3 + nu) * a**2)


def annulus_mean_hoop(a: float, b: float, omega=OMEGA, rho=RHO) -> float:
    """σ̄_θ = ∫ρω²r² dA / A = ρω² (a² + ab + b²)/3 over a rectangular section a <= r <= b."""
    return rho * omega**2 * (a * a + a * b + b * b) / 3


# thin ring: mean radius 100 mm, 1 × 1 mm section (w/R = 0.01), 4 × 4 cells; a free body (axially free,
# pinned at one node by the solver): no support at all
RING_R, RING_W, RING_CELLS = 100.0, 1.0, 4


def ring():
    """(BlockSection, FeModel) of the thin ring."""
    a, b = RING_R - RING_W / 2, RING_R + RING_W / 2
    s = BlockSection().add_block("ring", np.linspace(a, b, RING_CELLS + 1), np.linspace(0.0, RING_W, RING_CELLS + 1))
    return s, s.model([E], [NU], [True])


# ---------------------------------------------------------------- rotating disc

def rotating_disc(cells: int = DISC_CELLS, order: int = 2, density: float = RHO) -> list[Check]:
    """The thin disc at 10 000 rpm against the plane-stress closed form; ``density``: the ρ the model
    receives (the closed form always uses steel's)."""
    s, model = disc(cells, order)
    system, u = linear_solve_at_speed(model, [density], OMEGA)
    r = system.mesh.p[0]
    sr, st, ur = timoshenko_disc(r, DISC_A, DISC_B, OMEGA)
    sig = vertex_stress(system, u)
    bore = np.flatnonzero(np.isclose(r, DISC_A))
    peak = disc_bore_hoop()
    sr_peak = float(sr.max())                     # at r = √(ab); σ_r vanishes at both edges
    ib = bore[int(np.argmax(np.abs(sig["tt"][bore] / peak - 1)))]
    jb = bore[int(np.argmax(np.abs(sig["rr"][bore])))]
    # across the radius: the vertices off the bore (the bore has its own rows); σ_θ > 0 everywhere, so a
    # relative error is meaningful, σ_r vanishes at both edges, so its error is taken of its peak
    off = np.flatnonzero(r > DISC_A + 1e-9)
    i = off[int(np.argmax(np.abs(sig["tt"][off] / st[off] - 1)))]
    j = off[int(np.argmax(np.abs(sig["rr"][off] - sr[off])))]
    ur_fe = u[system.basis.nodal_dofs[0]]
    k = bore[int(np.argmax(np.abs(ur_fe[bore] / ur[bore] - 1)))]
    name = (f"rotating annular disc, plane stress, free edges (a = {DISC_A:g}, b = {DISC_B:g}, "
            f"t = {DISC_T:g} mm, steel at 10 000 rpm)")
    # measured (P2, 80 cells; docs/speed.md): σ_θ at the bore 0.070 % (worst vertex; the bore is where the
    # projected stresses are worst), off the bore 0.056 % (r = 21 mm); σ_r at the bore 0.22 % of its peak
    # (the projected vertex σ_r should reach 0 there), off the bore 0.17 %; bore growth 2.4e-6; σ_z 2.3e-5
    # of σ_θ,max.  The tolerances keep a margin of 2.7 to 4.3 over that (the mesh is fine enough for a
    # stress check of 0.2 %, not much finer than it needs); with 40 cells σ_θ (0.27 %) and σ_r (0.76 %) fail,
    # P1 fails every row (σ_r 9.6 %, σ_θ 1.2 %, bore growth 3.4e-4)
    return [
        relative(name, f"hoop stress σ_θ at the bore (r = {DISC_A:g} mm), worst vertex [MPa]", sig["tt"][ib], peak,
                 2e-3, DISC_SOURCE),
        absolute(name, f"radial stress σ_r at the bore, worst vertex, of σ_r's peak {sr_peak:.4g} MPa [-]",
                 sig["rr"][jb] / sr_peak, 0.0, 6e-3, DISC_SOURCE),
        relative(name, f"hoop stress σ_θ across the radius (a < r ≤ b), worst vertex (r = {r[i]:.1f} mm) [MPa]",
                 sig["tt"][i], st[i], 2e-3, DISC_SOURCE),
        absolute(name, f"radial stress σ_r across the radius (a < r ≤ b), worst vertex (r = {r[j]:.1f} mm), "
                 "of its peak [-]", sig["rr"][j] / sr_peak, sr[j] / sr_peak, 6e-3, DISC_SOURCE),
        relative(name, "radial growth of the bore, u_r = a σ_θ(a) / E [mm]", ur_fe[k], ur[k], 1e-5, DISC_SOURCE),
        # plane stress: σ_z stays ~0 in the thin disc (the closed form assumes it)
        absolute(name, "largest axial stress |σ_z|, of σ_θ at the bore [-]",
                 float(np.max(np.abs(sig["zz"]))) / peak, 0.0, 1e-4, DISC_SOURCE),
    ]


# ---------------------------------------------------------------- thin ring

def thin_ring(density: float = RHO) -> list[Check]:
    """The thin free ring at 10 000 rpm: σ_θ = ρω²R² within 1 %."""
    s, model = ring()
    system, u = linear_solve_at_speed(model, [density], OMEGA)
    thin = RHO * OMEGA**2 * RING_R**2
    mean, _ = mean_hoop_stress(system, u, 0)
    tt = vertex_stress(system, u)["tt"]
    on_mean = np.flatnonzero(np.isclose(system.mesh.p[0], RING_R))
    i = on_mean[int(np.argmax(np.abs(tt[on_mean] / thin - 1)))]
    name = f"thin rotating ring (R = {RING_R:g} mm, {RING_W:g} × {RING_W:g} mm section, steel at 10 000 rpm)"
    # 1 % is the tolerance for the thin-ring formula (common practice).  Measured: the mean
    # +8.3e-6 (the exact mean is ρω²(R² + w²/12), w²/12R² = 8.3e-6 above), vertices on the mean radius
    # 5e-6: a margin of 10³; any wrong factor in the load (ρ, ω², 2π r) is far outside it
    return [
        relative(name, "mean hoop stress σ̄_θ against ρ ω² R² [MPa]", mean, thin, 1e-2, RING_SOURCE),
        relative(name, "hoop stress σ_θ on the mean radius, worst vertex [MPa]", tt[i], thin, 1e-2, RING_SOURCE),
    ]


# ---------------------------------------------------------------- mean hoop stress and burst

# the balance is the FE's discrete equation of the test field v_r = 1 (in the P2 space, held by no
# support), so it holds on any mesh to round-off: measured 5e-13 (80 cells), 4e-12 (5 cells), 1e-10 on
# the ring against ρω²(R² + w²/12) (docs/speed.md).  1e-9 leaves a margin of 10 and more over that and
# is far below any wrong factor in the load or the stress
BALANCE_TOL = 1e-9


def mean_hoop_and_burst(density: float = RHO) -> list[Check]:
    """σ̄_θ of the free disc (80 and 5 radial cells) and of the ring against the half-ring balance, and the
    disc's burst speed at σ_uts = 500 MPa against the same from the balance."""
    _, fine = disc()
    _, coarse = disc(cells=5)
    _, hoop = ring()
    balance = annulus_mean_hoop(DISC_A, DISC_B)
    disc_mean = mean_hoop_stress(*linear_solve_at_speed(fine, [density], OMEGA), 0)[0]
    coarse_mean = mean_hoop_stress(*linear_solve_at_speed(coarse, [density], OMEGA), 0)[0]
    ring_mean = mean_hoop_stress(*linear_solve_at_speed(hoop, [density], OMEGA), 0)[0]
    # the same balance solved for the speed: ω_b = √(σ_uts / (ρ (a² + ab + b²)/3))
    burst_ref = math.sqrt(UTS / annulus_mean_hoop(DISC_A, DISC_B, omega=1.0))
    name = "mean hoop stress of a free spinning body and its burst speed (steel at 10 000 rpm)"
    a, b = RING_R - RING_W / 2, RING_R + RING_W / 2
    return [
        relative(name, f"disc ({DISC_CELLS} radial cells): σ̄_θ against ρω²(a² + ab + b²)/3 [MPa]", disc_mean,
                 balance, BALANCE_TOL, BALANCE_SOURCE),
        relative(name, "disc (5 radial cells): σ̄_θ, the same balance on any mesh [MPa]", coarse_mean, balance,
                 BALANCE_TOL, BALANCE_SOURCE),
        relative(name, "ring: σ̄_θ against ρω²(R² + w²/12) [MPa]", ring_mean, annulus_mean_hoop(a, b),
                 BALANCE_TOL, BALANCE_SOURCE),
        relative(name, f"disc: burst speed at σ_uts = {UTS:g} MPa [rad/s]", burst_speed(OMEGA, disc_mean, UTS),
                 burst_ref, BALANCE_TOL, BURST_SOURCE),
    ]


# ---------------------------------------------------------------- the ω² law

# the load is ρω² times a fixed vector and the solve is linear in it.  Doubling ω multiplies ω² by 4, a
# power of two, which scales every rounded product and sum exactly: measured bit-equal (error 0).
# Tripling it is round-off: measured ≤ 1e-15 of the largest stress (docs/speed.md: within 1e-12).  1e-12
# is round-off's bound with a margin of 10² and more; ω instead of ω² is 50 % off on the 2ω row
LINEAR_TOL = 1e-12


def omega_squared_law(cells: int = 20) -> list[Check]:
    """The disc (20 radial cells) at ω, 2ω and 3ω: every stress 4× and 9×, the burst speed unchanged."""
    _, model = disc(cells)
    fields, means = [], []
    for m in (1, 2, 3):
        system, u = linear_solve_at_speed(model, [RHO], m * OMEGA)
        fields.append(vertex_stress(system, u))
        means.append(mean_hoop_stress(system, u, 0)[0])
    keys = ("rr", "zz", "tt", "rz", "von_mises")
    scale = max(float(np.max(np.abs(fields[0][k]))) for k in ("rr", "tt"))     # σ_z ~ 0: relative to the largest

    def worst(m: int) -> float:
        return max(float(np.max(np.abs(fields[m - 1][k] - m * m * fields[0][k]))) for k in keys) / scale

    name = f"stresses ∝ ω² (the disc, {cells} radial cells, at 10 000, 20 000 and 30 000 rpm)"
    bore = fields[0]["tt"].argmax()
    return [
        relative(name, "hoop stress at the bore at 2ω over that at ω, against 4 [-]",
                 fields[1]["tt"][bore] / fields[0]["tt"][bore], 4.0, LINEAR_TOL, LINEAR_SOURCE),
        absolute(name, "every stress component and von Mises at 2ω minus 4× that at ω, worst vertex, "
                 "of the largest stress [-]", worst(2), 0.0, LINEAR_TOL, LINEAR_SOURCE),
        absolute(name, "every stress at 3ω minus 9× that at ω, worst vertex, of the largest stress [-]", worst(3),
                 0.0, LINEAR_TOL, LINEAR_SOURCE),
        relative(name, f"burst speed at σ_uts = {UTS:g} MPa from the solve at 3ω against that at ω [rad/s]",
                 burst_speed(3 * OMEGA, means[2], UTS), burst_speed(OMEGA, means[0], UTS), LINEAR_TOL,
                 LINEAR_SOURCE),
    ]
