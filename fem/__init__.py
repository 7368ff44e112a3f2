"""Axisymmetric elastic contact solve (scikit-fem)."""
from .assembly import System, assemble
from .lcp import ContactError, solve_lcp
from .model import (ContactPair, FaceLoad, FacePressure, FeModel, FeResult, InterfaceResult,
                    RingLoad, SpringSupport)
from .solve import ContactSolver, linear_solve, solve
from .stress import vertex_stress

__all__ = [
    "ContactError", "ContactPair", "ContactSolver", "FaceLoad", "FacePressure", "FeModel", "FeResult",
    "InterfaceResult", "RingLoad", "SpringSupport", "System", "assemble", "linear_solve",
    "solve", "solve_lcp", "vertex_stress",
]
