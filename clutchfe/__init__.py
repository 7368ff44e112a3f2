"""clutchfe: finite-element contact verification of friction clutch torque capacity.

Where does the real torque capacity of a cone or plate clutch sit between the
uniform-pressure and the uniform-wear hand formulas, once the elasticity of its bodies,
lining and housing (and its misalignment and wear-in) are taken into account?

The stages, each a function on plain data (see DEVELOPERS.md, "Architecture"):

>>> import clutchfe
>>> case = clutchfe.case_from_dict({
...     "kind": "plate", "name": "api_demo",
...     "interface": {"inner_radius": 50.0, "outer_radius": 75.0, "friction_coefficient": 0.3,
...                   "friction_surfaces": 2},
...     "load": {"axial_force": 3000.0},
...     "mesh": {"interface_element_size": 2.0, "element_size": 8.0, "edge_element_size": 0.8}})
>>> result = clutchfe.analyse(case)              # mesh, solve, compare, analyses
>>> result.hand.torque_uniform_wear_Nm            # n μ W (r1 + r2)/2 = 2 · 0.3 · 3000 N · 62.5 mm
112.5
>>> c = result.comparison                           # the FE torque and where it sits
>>> 50.0 < c.effective_radius_mm < 75.0 and c.torque_fe_Nm > 0
True

Entry points: :func:`load_case` / :func:`case_from_dict` (the case stage),
:func:`build_section` and :func:`mesh_section` (geometry), :class:`SolveService` (the one
solve service: prepare once per stiffness group, solve each case), :func:`compare_solved`
(the comparison stage), :func:`analyse` (all of that plus the analyses the case asks for),
:func:`summary_of`, :func:`run_case` (the whole run, results folder written atomically) and
:func:`run_study`.  Errors: :class:`CaseError` (invalid input), :class:`PhysicsError` (cannot
be solved as asked).

Caution: clutches can hurt people when they slip or burst; results support, and never
replace, the applicable codes, the manufacturer's data and a licensed engineer's judgement.
"""
import importlib

from .provenance import CAUTION, __version__  # noqa: F401 (public, in __all__)

# The public API, loaded on first use (PEP 562): ``import clutchfe`` stays cheap, so a command
# that only checks a case file does not pay for the FE and plotting stack.
_API = {
    "Case": "case", "case_from_dict": "case", "load_case": "case",
    "Comparison": "comparison", "HandCapacity": "comparison", "compare": "comparison",
    "compare_solved": "comparison", "hand_of": "comparison",
    "CaseError": "errors", "ClutchfeError": "errors", "OutputFolderError": "errors", "PhysicsError": "errors",
    "Section": "geometry", "SectionMesh": "geometry", "build_section": "geometry", "mesh_section": "geometry",
    "CaseResult": "plan", "Evidence": "plan", "analyse": "plan", "gather_evidence": "plan", "run_case": "plan",
    "summary_of": "plan", "write_case_files": "plan",
    "SolvedCase": "solve", "SolveService": "solve",
    "run_study": "study",
}

__all__ = sorted(["CAUTION", "__version__", *_API])


def __getattr__(name: str):
    if name in _API:
        value = getattr(importlib.import_module(f".{_API[name]}", __name__), name)
        globals()[name] = value
        return value
    raise AttributeError(f"module 'clutchfe' has no attribute {name!r}")


def __dir__() -> list[str]:
    return sorted(set(globals()) | set(_API))
