"""Vertex stresses from the displacement field.

Stresses are evaluated at the quadrature points, where the hoop strain u_r / r
is well defined even for elements touching the axis, then L2-projected onto
continuous linear functions whose vertex values are reported.
"""
import numpy as np
from scipy.sparse.linalg import splu
from skfem import BilinearForm, LinearForm, asm

from .assembly import System
from .forms import strain, stress

NAMES = ("rr", "zz", "tt", "rz")


@BilinearForm
def _mass(u, v, w):
    return u * v


@LinearForm
def _load(v, w):
    return w.s * v


def quadrature_stress(system: System, u: np.ndarray):
    basis = system.basis
    field = basis.interpolate(u)
    r = np.asarray(basis.global_coordinates())[0]
    nqp = r.shape[1]
    E = np.repeat(np.asarray(system.model.element_youngs_modulus, float)[:, None], nqp, 1)
    nu = np.repeat(np.asarray(system.model.element_poissons_ratio, float)[:, None], nqp, 1)
    return stress(strain(field, r), E, nu)


def von_mises(rr, zz, tt, rz):
    """Von Mises equivalent stress of the axisymmetric components (σ_rr, σ_zz, σ_θθ, σ_rz), any shape."""
    return np.sqrt(0.5 * ((rr - zz) ** 2 + (zz - tt) ** 2 + (tt - rr) ** 2) + 3.0 * rz ** 2)


def vertex_stress(system: System, u: np.ndarray) -> dict[str, np.ndarray]:
    from skfem import ElementTriP1
    p1 = system.basis.with_element(ElementTriP1())
    sig = quadrature_stress(system, u)
    lu = splu(asm(_mass, p1).tocsc())
    out = {name: lu.solve(asm(_load, p1, s=s)) for name, s in zip(NAMES, sig)}
    out["von_mises"] = von_mises(*(out[k] for k in NAMES))
    return out
