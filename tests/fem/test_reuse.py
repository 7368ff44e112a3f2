"""One condensation, many contact states: the reused solver equals fresh solves."""
import copy
import math

import numpy as np
import pytest

from clutchfe.case import case_from_dict
from clutchfe.fem import ContactSolver, solve

from tests.helpers.solving import CONDENSE_CONE as CONE, model_of


def _model(data):
    return model_of(case_from_dict(data))


def test_reused_solver_matches_fresh_solves():
    solver = ContactSolver(_model(CONE))
    base = solver.solve()
    fresh = solve(_model(CONE))
    assert np.allclose(base.interfaces[0].normal_force, fresh.interfaces[0].normal_force, rtol=1e-10, atol=1e-12)
    # linear elasticity, zero initial gap: twice the load, twice every force (positively homogeneous)
    doubled = solver.solve(load_scale=2.0, fields=False)
    assert np.allclose(doubled.interfaces[0].normal_force, 2 * base.interfaces[0].normal_force, rtol=1e-9,
                       atol=1e-9)
    # a new initial gap (cone-angle mismatch) through the reused compliance equals a fresh model with it
    mismatched = copy.deepcopy(CONE)
    mismatched["misalignment"] = {"cone_angle_mismatch": 0.01}
    alpha = math.radians(20.0)
    r, z = solver.interface_nodes[0]
    slant = (r - 40.0) / math.sin(alpha)
    gap = slant * math.sin(math.radians(0.01))
    reused = solver.solve(gaps=[gap], fields=False)
    direct = solve(_model(mismatched))
    assert np.allclose(reused.interfaces[0].pressure, direct.interfaces[0].pressure, rtol=1e-8, atol=1e-10)


def test_gap_shape_is_checked():
    solver = ContactSolver(_model(CONE))
    with pytest.raises(ValueError):
        solver.solve(gaps=[np.zeros(3)])
