"""Design studies: parameter sweeps and tolerance Monte Carlo over case keys, on a Dask cluster.

``run_study(path, workers=None, scheduler=None, console=None, out=None) -> dict`` runs (or
continues) a study file and returns the summary written to ``results/<study>/study.json``.
"""
from .evaluate import evaluate, group_key, sample_case
from .limits import find_limit
from .report import wilson_interval
from .runner import run_study
from .sampling import plan, unit_draws
from .spec import Study, load_study
from .store import read_store

__all__ = ["Study", "evaluate", "find_limit", "group_key", "load_study", "plan",
           "read_store", "run_study", "sample_case", "unit_draws", "wilson_interval"]
