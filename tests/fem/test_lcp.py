"""The condensed contact problem on random data, against independent solvers."""
import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy.optimize import nnls

from clutchfe.fem.lcp import ContactError, primal_active_set, primal_dual, solve_lcp


def problem(seed, n, nb):
    rng = np.random.default_rng(seed)
    M = rng.normal(size=(n, n))
    C = M @ M.T / n + 0.1 * np.eye(n)
    g = rng.normal(size=n)
    B = np.zeros((n, nb))
    for j in range(nb):                      # each free body sees some nodes
        B[rng.choice(n, size=max(2, n // 3), replace=False), j] = rng.choice([-1.0, 1.0])
    lam0 = rng.uniform(0, 1, n) * (rng.uniform(size=n) < 0.5)
    return C, g, B, -B.T @ lam0              # feasible by construction


def check_kkt(C, g, B, e, sol):
    gap = g + C @ sol.lam + B @ sol.delta
    scale = np.abs(g).max() + np.abs(C).max() * np.abs(sol.lam).max()
    assert np.all(sol.lam >= 0)
    assert np.all(gap >= -1e-9 * scale)
    assert np.abs(sol.lam @ gap) <= 1e-9 * scale * max(1.0, np.abs(sol.lam).sum())
    assert np.allclose(B.T @ sol.lam, -e, atol=1e-9 * max(1.0, np.abs(e).max()))


@settings(max_examples=40, deadline=None)
@given(st.integers(0, 10**6), st.integers(2, 30))
def test_no_free_body_matches_nnls(seed, n):
    # min 1/2 x C x + g x, x >= 0 equals NNLS of ||R x + R^-T g|| with C = R^T R
    # (Lawson & Hanson, Solving Least Squares Problems 1974, ch. 23)
    C, g, _, _ = problem(seed, n, 0)
    R = np.linalg.cholesky(C).T
    ref, _ = nnls(R, -np.linalg.solve(R.T, g))
    sol = solve_lcp(C, g, np.zeros((n, 0)), np.zeros(0))
    assert np.allclose(sol.lam, ref, atol=1e-8 * max(1.0, ref.max()))


@settings(max_examples=40, deadline=None)
@given(st.integers(0, 10**6), st.integers(3, 30), st.integers(1, 3))
def test_free_bodies_two_methods_agree(seed, n, nb):
    C, g, B, e = problem(seed, n, nb)
    if np.linalg.matrix_rank(B) < nb:       # body positions undetermined
        with pytest.raises(ContactError):
            primal_active_set(C, g, B, e)
        return
    fallback = primal_active_set(C, g, B, e)
    check_kkt(C, g, B, e, fallback)
    fast = primal_dual(C, g, B, e)
    if fast is not None:        # it may give up; solve_lcp then uses the fallback
        check_kkt(C, g, B, e, fast)
        # strictly convex: the forces are unique
        assert np.allclose(fast.lam, fallback.lam, atol=1e-7 * max(1.0, fallback.lam.max()))


def test_unbalanceable_load_raises():
    C = np.eye(3)
    B = np.array([[1.0], [1.0], [1.0]])      # every contact pushes the body the same way
    with pytest.raises(ContactError):
        solve_lcp(C, np.zeros(3), B, np.array([1.0]))


@pytest.mark.parametrize("seed,n,nb", [(240, 3, 2), (14, 4, 3), (55, 8, 2), (85, 8, 2), (93, 5, 3)])
def test_degenerate_problems_that_made_the_active_set_cycle(seed, n, nb):
    # dependent balance and bound constraints (found by a sweep over random problems); the
    # fallback must still meet the KKT conditions (Nocedal & Wright 2006, §16.1)
    C, g, B, e = problem(seed, n, nb)
    sol = primal_active_set(C, g, B, e)
    check_kkt(C, g, B, e, sol)
