"""One linear solve of a model's loads plus a load the model does not describe (spin, heat).

The same steps as :func:`fem.solve.linear_solve`: supports, free bodies pinned at one axial
dof with their translation left at zero, which a load without axial resultant (centrifugal,
thermal) does not need.  With a zero extra load the result is linear_solve's to the last bit.
"""
from __future__ import annotations

from typing import Callable

import numpy as np

from ._threads import one_blas_thread
from .assembly import System, assemble
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
