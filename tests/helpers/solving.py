"""Cases solved for the tests: through the solve service, or on a solver of the case's own model.

``solved_case`` keeps the shape the tests read (``.result`` the comparison, ``.solver`` a
ContactSolver at the case's own force and initial gaps, for tests that drive fem.wear or
re-solve directly); its numbers come from the same model the solve service builds.
"""
import io
from dataclasses import dataclass

import numpy as np
import pytest
from rich.console import Console
from scipy.sparse.linalg import spsolve

from clutchfe import fem
from clutchfe.comparison import Comparison, HandCapacity, compare, hand_of
from clutchfe.geometry import build_section, mesh_section
from clutchfe.plan import run_case
from clutchfe.solve import fe_model_of

__all__ = ["CONDENSE_CONE", "Solved", "condensation_problem", "model_of", "solve_case", "solved_case"]


@dataclass
class Solved:
    case: object
    section: object
    mesh: object
    solver: fem.ContactSolver
    fe: fem.FeResult
    hand: HandCapacity
    result: Comparison


def solved_case(case, mesh=None) -> Solved:
    """Mesh, build the case's model at its own force and gaps, solve and compare (axisymmetric)."""
    section = build_section(case)
    mesh = mesh if mesh is not None else mesh_section(section, order=1)
    solver = fem.ContactSolver(fe_model_of(case, section, mesh))
    fe = solver.solve()
    hand = hand_of(case)
    req = case.requirement
    return Solved(case, section, mesh, solver, fe, hand, compare(fe.interfaces, hand, req.required_torque,
                                                                 req.service_factor))


def solve_case(case):
    """(mesh, FeResult, Comparison) of a case."""
    s = solved_case(case)
    return s.mesh, s.fe, s.result


@dataclass
class Tilted:
    """A tilted solve as the tilt tests read it: the tilt analysis plus ``.result``."""

    tilt: object        # analyses.tilt.TiltResult
    result: Comparison

    def __getattr__(self, name):
        return getattr(self.tilt, name)


def solve_tilted(case, tilt_deg: float, offset_mm: float = 0.0, divisions: int | None = None) -> Tilted:
    """The case at ``tilt_deg`` / ``offset_mm`` on the (r, θ) grid (even at zero tilt)."""
    from dataclasses import replace

    from clutchfe.analyses.tilt import tilt_result
    from clutchfe.comparison import compare_solved
    from clutchfe.solve import SolveService

    mesh = replace(case.mesh, angular_divisions=divisions or case.mesh.angular_divisions)
    case = replace(case, mesh=mesh, misalignment=replace(case.misalignment, axis_tilt=tilt_deg,
                                                         radial_offset=offset_mm))
    solved = SolveService().solve(case, fields=False, on_grid=True)
    return Tilted(tilt_result(solved), compare_solved(solved))


# a small cone for the condensation and reuse tests (demo data, invented)
CONDENSE_CONE = {"kind": "cone",
                 "interface": {"inner_radius": 40.0, "outer_radius": 50.0, "semi_cone_angle": 20.0,
                               "friction_coefficient": 0.2, "friction_surfaces": 1},
                 "load": {"axial_force": 1000.0}}


def model_of(case):
    """The FE model the solve service builds for ``case`` (on its own mesh)."""
    from clutchfe.plan import section_of
    section = section_of(case)
    return fe_model_of(case, section, mesh_section(section))


def condensation_problem(model):
    """What a condensation test needs of a model: the unfactorised prepared system, the paired faces,
    the gap operator on the free dofs and the reference compliance Gᵀ K⁻¹ G by one sparse solve per
    contact force (scipy's spsolve, independent of any ordering)."""
    from scipy.sparse.linalg import spsolve
    from clutchfe.fem.pairing import gap_operator, pair_face
    from clutchfe.fem.solve import Prepared

    system = fem.assemble(model)
    faces = [pair_face(system, p) for p in model.contacts]
    G, _ = gap_operator(system, faces)
    prep = Prepared(system, {}, factor=False)
    Gi = G[prep.inner]
    return prep, faces, Gi, Gi.T @ spsolve(prep.K.tocsc(), Gi.toarray())


def assert_hertz_pressure(interface, P: float, Es: float, R: float, spacing: float) -> tuple[float, float]:
    """The FE pressure of a sphere on a flat against Hertz: a³ = 3PR/(4E*), p0 = 3P/(2πa²) (Johnson,
    Contact Mechanics 1985, §4.2), to 1 % in p0 and a; the contact ends within one node spacing of a.
    p² is linear in r² inside the contact, so the fit gives p0 and a without depending on where the
    last node happens to fall.  Returns (a, p0)."""
    a = (3 * P * R / (4 * Es)) ** (1 / 3)
    p0 = 3 * P / (2 * np.pi * a**2)
    assert np.max(interface.pressure) == pytest.approx(p0, rel=1e-2)
    inner = interface.r < 0.8 * a
    slope, icpt = np.polyfit(interface.r[inner] ** 2, interface.pressure[inner] ** 2, 1)
    assert np.sqrt(icpt) == pytest.approx(p0, rel=1e-2)
    assert np.sqrt(-icpt / slope) == pytest.approx(a, rel=1e-2)
    assert abs(interface.r[interface.in_contact].max() - a) <= spacing
    return a, p0


def harmonic_compliance_by_spsolve(hs, G3, pins, n):
    """The contact compliance of harmonic n the plain way: one sparse solve (scipy's spsolve) per contact
    force on the harmonic's own matrix, its axis tie applied and the held and pinned dofs removed: the
    reference the shared elimination is checked against."""
    T = hs.axis_tie(n)
    K = (T.T @ hs.matrix(n) @ T).tocsr()
    keep = np.ones(hs.basis.N, dtype=bool)
    keep[hs.held(n)] = False
    keep[pins] = False
    inner = np.flatnonzero(keep)
    Gi = (T.T @ G3).tocsc()[inner]
    return Gi.T @ spsolve(K[inner][:, inner].tocsc(), Gi.toarray())



def run_quietly(case, folder):
    """(folder, summary.json as returned, the terminal text) of a whole `run_case` into ``folder``."""
    out = io.StringIO()
    summary = run_case(case, folder, Console(file=out, width=120))
    return folder, summary, out.getvalue()
