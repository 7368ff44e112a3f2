"""Speed: the centrifugal body force of a body spinning about the z axis, and its stresses.

A body turning at angular speed ω about the axis carries, in its rotating frame, the
body force (per unit volume)

    f_r = ρ ω² r,   f_z = 0,

with ρ the density and r the radius.  Its virtual work over the ring of the (r, z)
section is ∫ ρ ω² r v_r 2π r dA, the weak form below; like every form of
fem/forms.py it carries the ring weight 2π r, so the load vector holds forces of the
full revolution (N).  The load has no axial resultant, so it changes neither a
body's axial force balance nor ``System.body_load``.

Units are the FE stage's: mm, N, MPa, s.  A force N = t·mm/s², so the density is in
**tonnes per cubic millimetre** (t/mm³) and ω in rad/s: ρ ω² r is then in N/mm³.
Steel, 7850 kg/m³, is 7.85e-9 t/mm³ (:func:`tonne_per_mm3`); 3000 rpm is
314.16 rad/s (:func:`rad_per_s`).

What the stress check of a spinning part reports, per body, from a displacement
field (:func:`body_stresses`): the hoop stress σ_θ and the von Mises stress as vertex
fields (fem/stress.py's projection), their maxima and where they are, and the mean
hoop stress σ̄_θ = ∫ σ_θ dA / A over the body's section (dA = dr dz, not the ring
weight: this is the stress of the half ring cut through the axis, whose balance is
∫ σ_θ dA = ∫ ρ ω² r² dA for a free body).

**Burst estimate** (:func:`burst_speed`).  The rim-burst criterion says a disc or ring
bursts when its mean hoop stress reaches the tensile strength σ_uts of the material
(common practice for rotating discs; from memory, the "average tangential stress"
criterion going back to the spin tests of turbine discs, Robinson, Trans. ASME 1944 —
cite it as from memory, not checked here).  In the linear model every stress of the
spinning-only problem is ∝ ω², so from one solve at ω

    ω_burst = ω √(σ_uts / σ̄_θ).

The estimate needs the stress of the spin alone (a body free of clamping loads): a
clamp adds stresses that do not grow with ω², and the formula does not hold for them.
"""
from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Sequence

import numpy as np
from skfem import LinearForm, asm

from .assembly import System
from .extra_load import linear_solve_with
from .model import FeModel
from .stress import quadrature_stress, vertex_stress

STEEL_DENSITY = 7.85e-9      # t/mm³ (7850 kg/m³), for examples and tests


def rad_per_s(rpm: float) -> float:
    """Angular speed in rad/s from revolutions per minute: ω = 2π n / 60."""
    return 2.0 * math.pi * float(rpm) / 60.0


def tonne_per_mm3(kg_per_m3: float) -> float:
    """Density in t/mm³ (the FE stage's unit) from kg/m³: 1 kg/m³ = 1e-3 t / 1e9 mm³."""
    return float(kg_per_m3) * 1e-12


@LinearForm
def centrifugal_force(v, w):
    """∫ ρ ω² r v_r 2π r dA: the body force f_r = ρ ω² r on the ring."""
    r = w.x[0]
    return w.rho * w.omega**2 * r * v[0] * 2.0 * np.pi * r


def element_density(system: System, density: Sequence[float]) -> np.ndarray:
    """One density per triangle (t/mm³) from one per body, in ``model.body_names`` order."""
    rho = np.asarray(density, dtype=float)
    names = system.model.body_names
    if rho.shape != (len(names),):
        raise ValueError(f"one density per body expected ({len(names)}: {', '.join(names)}), "
                         f"got shape {rho.shape}")
    if not np.all(np.isfinite(rho)) or np.any(rho < 0):
        raise ValueError("densities must be finite and >= 0 (t/mm³; steel 7.85e-9)")
    return rho[np.asarray(system.model.element_body, dtype=np.int64)]


def centrifugal_load(system: System, density: Sequence[float], omega: float) -> np.ndarray:
    """Load vector (N, all dofs of ``system``) of every body spinning at ``omega`` rad/s.

    ``density``: one value per body in t/mm³ (steel 7.85e-9), in ``model.body_names``
    order; a body that does not turn (a housing) gets 0.
    """
    omega = float(omega)
    if not math.isfinite(omega):
        raise ValueError(f"angular speed must be finite (rad/s), got {omega}")
    rho = element_density(system, density)
    nqp = system.basis.X.shape[1]
    return asm(centrifugal_force, system.basis, rho=np.repeat(rho[:, None], nqp, 1), omega=omega)


def linear_solve_at_speed(model: FeModel, density: Sequence[float],
                          omega: float) -> tuple[System, np.ndarray]:
    """One linear solve of the model's loads plus the centrifugal load (contacts ignored).

    The same steps as :func:`fem.solve.linear_solve` (which takes no extra load):
    supports, free bodies pinned at one axial dof (their translation left at zero,
    which a load without axial resultant does not need).  At ``omega = 0`` the result is
    linear_solve's to the last bit.  Returns the assembled system and all dofs' u (mm).
    """
    return linear_solve_with(model, lambda system: centrifugal_load(system, density, omega))


def hoop_and_von_mises(system: System, u: np.ndarray) -> dict[str, np.ndarray]:
    """Vertex fields (MPa) 'tt' (hoop σ_θ) and 'von_mises' from fem/stress.py."""
    s = vertex_stress(system, u)
    return {"tt": s["tt"], "von_mises": s["von_mises"]}


def _body_elements(system: System, j: int) -> np.ndarray:
    eb = np.asarray(system.model.element_body, dtype=np.int64)
    if not 0 <= j < len(system.model.body_names):
        raise ValueError(f"no body {j}")
    return eb == j


def mean_hoop_stress(system: System, u: np.ndarray, j: int,
                     hoop_at_quadrature: np.ndarray | None = None) -> tuple[float, float]:
    """(σ̄_θ MPa, A mm²) of body j: ∫ σ_θ dA / A over its section, dA = dr dz.

    σ_θ is taken at the quadrature points (fem/stress.py), so the integral is the
    FE field's own, not that of a projection; ``hoop_at_quadrature`` (elements ×
    points) reuses one evaluation for several bodies.
    """
    tt = quadrature_stress(system, u)[2] if hoop_at_quadrature is None else hoop_at_quadrature
    on = _body_elements(system, j)
    dx = system.basis.dx                      # quadrature weights × |J|: plain section area
    area = float(np.sum(dx[on]))
    return float(np.sum(tt[on] * dx[on]) / area), area


@dataclass(frozen=True)
class BodySpeedStress:
    """Stresses of one body (MPa; locations (r, z) in mm)."""

    body: str
    max_hoop: float                      # most tensile vertex σ_θ
    max_hoop_at: tuple[float, float]
    max_von_mises: float
    max_von_mises_at: tuple[float, float]
    mean_hoop: float                     # ∫ σ_θ dA / A over the section
    section_area: float                  # A, mm² (r, z) area, not ring area


def body_stresses(system: System, u: np.ndarray,
                  fields: dict[str, np.ndarray] | None = None) -> list[BodySpeedStress]:
    """Per body: maximum hoop and von Mises stress at the vertices and where, mean hoop stress.

    ``fields``: vertex fields already computed (e.g. ``FeResult.stress``) with keys 'tt'
    and 'von_mises'; computed from ``u`` otherwise.
    """
    fields = hoop_and_von_mises(system, u) if fields is None else fields
    mesh = system.mesh
    eb = np.asarray(system.model.element_body, dtype=np.int64)
    tt_q = quadrature_stress(system, u)[2]
    out = []
    for j, name in enumerate(system.model.body_names):
        verts = np.unique(mesh.t[:, eb == j])
        if verts.size == 0:
            raise ValueError(f"body {name!r} has no elements")
        ih = verts[int(np.argmax(fields["tt"][verts]))]
        iv = verts[int(np.argmax(fields["von_mises"][verts]))]
        mean, area = mean_hoop_stress(system, u, j, tt_q)
        out.append(BodySpeedStress(
            body=name,
            max_hoop=float(fields["tt"][ih]), max_hoop_at=(float(mesh.p[0, ih]), float(mesh.p[1, ih])),
            max_von_mises=float(fields["von_mises"][iv]),
            max_von_mises_at=(float(mesh.p[0, iv]), float(mesh.p[1, iv])),
            mean_hoop=mean, section_area=area))
    return out


def burst_speed(omega: float, mean_hoop: float, tensile_strength: float) -> float:
    """Speed (same unit as ``omega``) at which the mean hoop stress reaches the tensile strength.

    ω_burst = ω √(σ_uts / σ̄_θ), valid because the spin-only stresses are ∝ ω² (see the
    module docstring for the criterion and its source).  ``mean_hoop`` (MPa) must come
    from the spin alone at ``omega`` ≠ 0; a body whose mean hoop stress is not tensile
    does not burst by this criterion (inf).
    """
    omega, mean_hoop, uts = float(omega), float(mean_hoop), float(tensile_strength)
    if not (math.isfinite(omega) and omega != 0.0):
        raise ValueError(f"the burst estimate needs a solve at a finite speed != 0, got {omega}")
    if not (math.isfinite(uts) and uts > 0):
        raise ValueError(f"tensile strength must be > 0 MPa, got {uts}")
    if not math.isfinite(mean_hoop):
        raise ValueError(f"mean hoop stress must be finite, got {mean_hoop}")
    if mean_hoop <= 0.0:
        return math.inf
    return abs(omega) * math.sqrt(uts / mean_hoop)
