"""Thermal strain as a load on the axisymmetric elasticity of fem/forms.py, and its stresses.

A temperature rise ΔT above the stress-free state expands the material by the strain

    ε_th = α ΔT (1, 1, 1, 0)        (ε_r, ε_z, ε_θ, γ_rz)

(linear thermoelasticity, the Duhamel–Neumann law: Timoshenko & Goodier, Theory of
Elasticity, 3rd ed. 1970, ch. 13 thermal stress).  The stress is σ = C (ε − ε_th), so the
elastic problem K u = f + f_th carries the equivalent nodal forces

    f_th = ∫ σ(ε_th) : ε(v) 2π r dA,   σ(ε_th) = C ε_th = E α ΔT / (1 − 2ν) (1, 1, 1, 0),

computed with fem/forms.py's own strain and stress (so C is the stiffness matrix's C) at
the displacement basis' quadrature points.  The load is self-equilibrated body by body
(a rigid axial translation has ε = 0), so it changes neither a body's axial force balance
nor ``System.body_load``.

The temperature rise is given as one value per scalar P1 node (the mesh vertices, e.g. a P1
field of fem/heat.py), one per scalar P2 node (vertices then facet midpoints), or as a
function ΔT(r, z); α (1/K) per body or per triangle (a lining region).  ``thermal_load_matrix``
gives the same load as a sparse operator on the nodal temperatures, f_th = B θ.
"""
from __future__ import annotations

from typing import Callable, Sequence, Union

import numpy as np
from scipy.sparse.linalg import splu
from skfem import BilinearForm, ElementTriP1, ElementTriP2, LinearForm, asm

from .assembly import System
from .extra_load import linear_solve_with
from .forms import strain, stress
from .heat import element_values
from .model import FeModel
from .stress import _load, _mass, quadrature_stress, vertex_stress, von_mises   # its projection's own forms

Rise = Union[np.ndarray, Callable[[np.ndarray, np.ndarray], np.ndarray]]

STEEL_EXPANSION = 12e-6      # 1/K, for examples and tests (common practice for carbon steel)


def _work(e, v, w):
    """C (e (1, 1, 1, 0)) : ε(v) 2π r, the virtual work of the thermal stress of strain e."""
    r = w.x[0]
    s = stress((e, e, e, 0.0 * e), w.E, w.nu)
    ev = strain(v, r)
    return 2.0 * np.pi * r * (s[0] * ev[0] + s[1] * ev[1] + s[2] * ev[2])


@LinearForm
def thermal_force(v, w):
    """∫ C ε_th : ε(v) 2π r dA with ε_th = w.eth (1, 1, 1, 0)."""
    return _work(w.eth, v, w)


def rise_at_quadrature(system: System, temperature_rise: Rise) -> np.ndarray:
    """ΔT (K) at the quadrature points of the displacement basis, (elements, points)."""
    basis = system.basis
    if callable(temperature_rise):
        x = np.asarray(basis.global_coordinates())
        out = np.broadcast_to(np.asarray(temperature_rise(x[0], x[1]), dtype=float), x[0].shape)
    else:
        t = np.asarray(temperature_rise, dtype=float).reshape(-1)
        mesh = system.mesh
        if t.size == mesh.nvertices:
            elem = ElementTriP1()
        elif t.size == mesh.nvertices + mesh.nfacets:
            elem = ElementTriP2()
        else:
            raise ValueError(f"temperature rise: one value per vertex ({mesh.nvertices}, P1) or per "
                             f"P2 node ({mesh.nvertices + mesh.nfacets}) expected, got {t.size}")
        out = np.asarray(basis.with_element(elem).interpolate(t))
    if not np.all(np.isfinite(out)):
        raise ValueError("temperature rise must be finite")
    return np.asarray(out, dtype=float)


def thermal_strain_at_quadrature(system: System, temperature_rise: Rise,
                                 expansion: Sequence[float]) -> np.ndarray:
    """α ΔT at the quadrature points; ``expansion`` α in 1/K per body or per triangle."""
    alpha = element_values(system.model, expansion, "expansion coefficient", positive=False)
    return alpha[:, None] * rise_at_quadrature(system, temperature_rise)


def _material(system: System, nqp: int):
    E = np.repeat(np.asarray(system.model.element_youngs_modulus, float)[:, None], nqp, 1)
    nu = np.repeat(np.asarray(system.model.element_poissons_ratio, float)[:, None], nqp, 1)
    return E, nu


def thermal_load(system: System, temperature_rise: Rise, expansion: Sequence[float]) -> np.ndarray:
    """Equivalent nodal forces (N, all dofs of ``system``) of the thermal strain α ΔT."""
    eth = thermal_strain_at_quadrature(system, temperature_rise, expansion)
    E, nu = _material(system, eth.shape[1])
    return asm(thermal_force, system.basis, eth=eth, E=E, nu=nu)


@BilinearForm
def thermal_coupling(t, v, w):
    """∫ C (α t (1, 1, 1, 0)) : ε(v) 2π r dA for a scalar temperature trial function t."""
    return _work(w.alpha * t, v, w)


def thermal_load_matrix(system: System, expansion: Sequence[float], order: int = 1):
    """The sparse operator B (displacement dofs × scalar P1 or P2 nodes) with
    ``thermal_load(system, rise, expansion) == B @ rise``: the load of any temperature field at
    the cost of a product, e.g. to map the thermal load onto the contact gaps once,
    Gᵀ K⁻¹ B, instead of one back-substitution per temperature."""
    if order not in (1, 2):
        raise ValueError(f"temperature element order must be 1 or 2, got {order}")
    alpha = element_values(system.model, expansion, "expansion coefficient", positive=False)
    scalar = system.basis.with_element(ElementTriP1() if order == 1 else ElementTriP2())
    nqp = system.basis.X.shape[1]
    E, nu = _material(system, nqp)
    return asm(thermal_coupling, scalar, system.basis,
               alpha=np.repeat(alpha[:, None], nqp, 1), E=E, nu=nu).tocsr()


def quadrature_thermal_stress(system: System, u: np.ndarray, temperature_rise: Rise,
                              expansion: Sequence[float]):
    """σ = C (ε(u) − ε_th) at the quadrature points: (σ_r, σ_z, σ_θ, τ_rz), MPa."""
    eth = thermal_strain_at_quadrature(system, temperature_rise, expansion)
    total = quadrature_stress(system, u)
    E, nu = _material(system, eth.shape[1])
    s_th = stress((eth, eth, eth, 0.0 * eth), E, nu)
    return tuple(a - b for a, b in zip(total, s_th))


def vertex_thermal_stress(system: System, u: np.ndarray, temperature_rise: Rise,
                          expansion: Sequence[float]) -> dict[str, np.ndarray]:
    """Vertex stresses 'rr', 'zz', 'tt', 'rz', 'von_mises' (MPa) of σ = C (ε − ε_th).

    fem/stress.py's projection of C ε(u) minus the same projection of C ε_th (the projection
    is linear), so with ΔT = 0 the result is ``vertex_stress`` itself."""
    out = vertex_stress(system, u)
    eth = thermal_strain_at_quadrature(system, temperature_rise, expansion)
    E, nu = _material(system, eth.shape[1])
    s_th = stress((eth, eth, eth, 0.0 * eth), E, nu)[0]      # the same on rr, zz and tt
    p1 = system.basis.with_element(ElementTriP1())
    correction = splu(asm(_mass, p1).tocsc()).solve(asm(_load, p1, s=s_th))
    for key in ("rr", "zz", "tt"):
        out[key] = out[key] - correction
    out["von_mises"] = von_mises(*(out[k] for k in ("rr", "zz", "tt", "rz")))
    return out


def linear_solve_with_temperature(model: FeModel, temperature_rise: Rise,
                                  expansion: Sequence[float]) -> tuple[System, np.ndarray]:
    """One linear solve of the model's loads plus the thermal load (contacts ignored).

    The same steps as fem/centrifugal.py's ``linear_solve_at_speed``: supports, free bodies
    pinned at one axial dof with their translation left at zero (the thermal load has no axial
    resultant).  Returns the assembled system and all dofs' u (mm)."""
    return linear_solve_with(model, lambda system: thermal_load(system, temperature_rise, expansion))
