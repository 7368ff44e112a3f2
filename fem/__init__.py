"""Axisymmetric elastic contact solve (scikit-fem)."""
from .assembly import System, assemble
from .compliant_layer import CompressionCurve
from .engagement import (CouplingError, EngagementHistory, EngagementStep, FrictionHeating, SlipDuty,
                         run_engagement)
from .lcp import ContactError, solve_lcp
from .model import (ContactPair, FaceLoad, FacePressure, FeModel, FeResult, InterfaceResult,
                    RingLoad, SpringSupport)
from .solve import ContactSolver, linear_solve, solve
from .stress import vertex_stress

__all__ = [
    "CompressionCurve", "ContactError", "ContactPair", "ContactSolver", "CouplingError", "EngagementHistory",
    "EngagementStep", "FaceLoad", "FacePressure", "FeModel", "FeResult",
    "FrictionHeating", "InterfaceResult", "RingLoad", "SlipDuty", "SpringSupport", "System", "assemble",
    "linear_solve", "run_engagement", "solve", "solve_lcp", "vertex_stress",
]
