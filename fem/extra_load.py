"""One linear solve of a model's loads plus a load the model does not describe (spin, heat).

The same steps as :func:`fem.solve.linear_solve`: supports, free bodies pinned at one axial
dof with their translation left at zero, which a load without axial resultant (centrifugal,
thermal) does not need.  With a zero extra load the result is linear_solve's to the last bit.
"""
from __future__ import annotations

from typing import Callable

import numpy as np

from skfem import asm

from ._threads import one_blas_thread
from .assembly import System, assemble, face_basis, face_ring_area
from .forms import axial_traction
from .model import FeModel
from .solve import Prepared


def linear_solve_with(model: FeModel, extra_load: Callable[[System], np.ndarray]) -> tuple[System, np.ndarray]:
    """Assemble ``model``, add ``extra_load(system)`` (N, every dof) to its loads and solve (contacts
    ignored).  Returns the assembled system and all dofs' u (mm)."""
    with one_blas_thread():
        system = assemble(model)
        f = system.f + extra_load(system)
        prep = Prepared(system, {})
        u = prep.expand(prep.lu.solve(f[prep.inner]), np.zeros(len(prep.free_bodies)))
    return system, u


def axial_face_load(system: System, face: str, axial_force: float) -> np.ndarray:
    """The nodal load (N, every dof) of a total axial force (N, + along +z) spread uniformly over a
    named face, as a :class:`fem.model.FaceLoad` is assembled (e.g. a plate's spline friction on
    its toothed edge, for ``ContactSolver.solve(body_load=…)``)."""
    if face not in system.facets:
        raise ValueError(f"axial face load: unknown face {face!r}")
    fac = system.facets[face]
    fb = face_basis(system.mesh, system.basis.elem, fac)
    return asm(axial_traction, fb, t=axial_force / face_ring_area(system.mesh, fac))
