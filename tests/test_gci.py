"""Grid convergence index against a published worked example and manufactured mesh sequences."""
import math

import pytest

from clutchfe.gci import UNCONFIRMED_SAFETY_FACTOR, grid_convergence, observed_order


def test_published_three_mesh_example():
    # f = 0.97050 (fine), 0.96854, 0.96178 (coarse) at r = 2 gives p = 1.786, f_ext = 0.971300 and
    # GCI = 0.103 % (worked example cited for Celik et al., J. Fluids Eng. 2008 in our issue; from memory
    # it is the NPARC Alliance (NASA Glenn) tutorial "Examining Spatial (Grid) Convergence" after
    # Roache 1998).  The 0.103 % is the FINE-mesh index GCI_21 = 1.25 |e21/f1| / (r^p - 1).
    c = grid_convergence(0.97050, 0.96854, 0.96178, 2.0)
    assert c.behaviour == "monotone"
    assert round(c.observed_order, 3) == 1.786
    assert c.extrapolated == pytest.approx(0.971300, abs=5e-7)
    assert round(100 * c.gci_fine, 3) == 0.103
    # the same tutorial finds the three meshes in the asymptotic range, GCI_32 / (r^p GCI_21) ~ 1 (from memory)
    assert c.asymptotic_ratio == pytest.approx(1.0, abs=0.01) and c.in_asymptotic_range
    assert c.band_fine == pytest.approx(c.gci_fine * 0.97050, rel=1e-12)


@pytest.mark.parametrize("order, r21, r32", [(2.0, 1.5, 1.5), (1.5, 1.5, 1.3), (3.0, 1.3, 2.0)])
def test_exact_power_law_is_recovered(order, r21, r32):
    # f(h) = f0 + C h^p exactly: Richardson extrapolation returns f0 and the iteration of Celik et al.
    # (2008, eq. 3) returns p, also for unequal ratios (manufactured data, so the answer is known)
    f0, C, h1 = 2.0, 0.3, 0.1
    h = [h1, h1 * r21, h1 * r21 * r32]
    f = [f0 + C * x ** order for x in h]
    c = grid_convergence(*f, r21, r32)
    assert c.observed_order == pytest.approx(order, rel=1e-8)
    assert c.extrapolated == pytest.approx(f0, rel=1e-10)
    assert c.relative_error_extrapolated == pytest.approx(abs(f[0] - f0) / f0, rel=1e-6)
    # GCI is 1.25 x the true relative error of the fine mesh when the data are exactly asymptotic
    assert c.gci_fine == pytest.approx(1.25 * abs(f[0] - f0) / f[0], rel=1e-6)
    assert c.in_asymptotic_range


def test_equal_ratios_need_no_iteration():
    # r21 = r32: p = ln|e32/e21| / ln r (Roache 1998)
    assert observed_order(-0.01, -0.04, 2.0, 2.0) == pytest.approx(2.0, rel=1e-12)


def test_oscillating_sequence_is_flagged():
    c = grid_convergence(1.000, 1.004, 0.992, 1.5)
    assert c.behaviour == "oscillatory" and c.observed_order > 0


def test_growing_changes_are_not_extrapolated():
    c = grid_convergence(1.10, 1.05, 1.04, 1.5)        # the change grows as the mesh is refined
    assert c.behaviour == "not converging" and c.extrapolated is None and c.order_assumed
    # conservative index: Roache's safety factor 3, order 1, the larger change
    assert c.gci_fine == pytest.approx(UNCONFIRMED_SAFETY_FACTOR * 0.05 / 0.5 / 1.10)
    assert not c.in_asymptotic_range


def test_identical_results_are_round_off():
    c = grid_convergence(5.0, 5.0, 5.0, 1.5)
    assert c.behaviour == "converged to round-off" and c.gci_fine == 0.0 and c.in_asymptotic_range


def test_refinement_ratio_must_exceed_one():
    with pytest.raises(ValueError, match="exceed 1"):
        grid_convergence(1.0, 1.1, 1.3, 1.0)
    assert math.isfinite(grid_convergence(1.0, 1.1, 1.3, 1.3).gci_fine)
