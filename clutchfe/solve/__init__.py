"""The one solve service (mesh, condense once per stiffness group, solve each case) and the FE model."""
from .model import fe_model_of
from .service import (REFERENCE_FORCE, PreparedCase, SolvedCase, SolveService, is_tilted, reference_case,
                      stiffness_key)

__all__ = ["REFERENCE_FORCE", "PreparedCase", "SolveService", "SolvedCase", "fe_model_of", "is_tilted",
           "reference_case", "stiffness_key"]
