"""The sample plan: grid points times draws from the distributions, fixed by the seed.

Every grid point gets the same draws (common random numbers), so differences
between grid points are not blurred by sampling noise.  Sample ids are
``grid_index * draws + draw_index``: stable across runs and worker counts.
"""
from __future__ import annotations

import itertools

import numpy as np
from scipy import stats
from scipy.stats import qmc

from .spec import Distribution, Study

# Keeps the inverse CDF of unbounded distributions finite at a unit draw of exactly 0.
_EDGE = 1e-12


def unit_draws(n: int, dims: int, method: str, seed: int) -> np.ndarray:
    """(n, dims) numbers in (0, 1): plain Monte Carlo or Latin hypercube (one draw per stratum,
    uniform within it: scipy.stats.qmc.LatinHypercube with scramble=True)."""
    rng = np.random.Generator(np.random.PCG64(seed))
    if method == "monte_carlo":
        u = rng.random((n, dims))
    else:
        # `seed=` (not `rng=`, SciPy >= 1.15 only): the keyword every SciPy this package allows knows
        u = qmc.LatinHypercube(d=dims, scramble=True, seed=rng).random(n)
    return np.clip(u, _EDGE, 1.0 - _EDGE)


def frozen(dist: Distribution):
    """The scipy.stats distribution of a study input."""
    p = dist.params
    if dist.kind == "uniform":
        return stats.uniform(loc=p["low"], scale=p["high"] - p["low"])
    if dist.kind == "normal":
        return stats.norm(loc=p["mean"], scale=p["std_dev"])
    if dist.kind == "truncated_normal":
        a, b = (p["low"] - p["mean"]) / p["std_dev"], (p["high"] - p["mean"]) / p["std_dev"]
        return stats.truncnorm(a, b, loc=p["mean"], scale=p["std_dev"])
    # lognormal given by the mean and standard deviation of the quantity itself (how tolerances
    # are quoted): sigma^2 = ln(1 + (s/m)^2), median = m / sqrt(1 + (s/m)^2)
    cv2 = (p["std_dev"] / p["mean"]) ** 2
    return stats.lognorm(s=np.sqrt(np.log1p(cv2)), scale=p["mean"] / np.sqrt(1.0 + cv2))


def draws(study: Study) -> np.ndarray:
    """(samples, distributions) input values."""
    if not study.distributions:
        return np.zeros((1, 0))
    u = unit_draws(study.samples, len(study.distributions), study.method, study.seed)
    return np.column_stack([frozen(d).ppf(u[:, k]) for k, d in enumerate(study.distributions)])


def plan(study: Study) -> list[tuple[int, dict]]:
    """(sample id, {case key: value}) for every sample of the study."""
    values = draws(study)
    grid_keys = [g.key for g in study.grids]
    dist_keys = [d.key for d in study.distributions]
    out = []
    for gi, point in enumerate(itertools.product(*(g.values for g in study.grids))):
        for di, row in enumerate(values):
            inputs = dict(zip(grid_keys, point))
            inputs.update(zip(dist_keys, (float(v) for v in row)))
            out.append((gi * len(values) + di, inputs))
    return out
