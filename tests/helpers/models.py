"""FE models built in code for the solver tests and the benchmarks.

The rectangular (r, z) blocks and the lined annulus are the verify suite's own builders
(clutchfe/verification/meshes.py, tilted.py), re-exported here under the tests' names.
"""
import copy

from clutchfe.verification.meshes import BlockSection as Section
from clutchfe.verification.meshes import graded
from clutchfe.verification.tilted import lined_annulus

from .data import CONE

__all__ = ["Section", "graded", "lined_blocks", "coarse_stiff_cone"]


def lined_blocks(E_steel=2e8, order=2, nu_lining=0.0, E_top=None, elements=15):
    """Base block (rigid-ish steel) with a bonded lining on top; pressed steel block above
    (the verify suite's annulus, clutchfe/verification/tilted.py)."""
    return lined_annulus(E_steel, E_top or E_steel, nu_lining, elements, order)


def coarse_stiff_cone():
    """The test cone, P1 with 2.5 mm elements, its inner cone made numerically rigid: (FeModel, section)."""
    from clutchfe.case import case_from_dict
    from clutchfe.geometry import mesh_section
    from clutchfe.plan import section_of
    from clutchfe.solve import fe_model_of

    data = copy.deepcopy(CONE)
    data["cone"] = {"youngs_modulus": 2e8}
    data["mesh"] = {"element_order": 1, "interface_element_size": 2.5, "edge_element_size": 1.25,
                    "element_size": 7.5, "lining_layers": 1}
    case = case_from_dict(data, limit_case=True)
    section = section_of(case)
    return fe_model_of(case, section, mesh_section(section, order=1)), section
