"""Shared test data and model builders (demo data only, invented).

``tests.helpers.data``: the small valid cases, the demo case files and a TOML writer (standard
library only); ``tests.helpers.models``: FE models built in code for the solver tests and the
benchmarks.  Fixtures stay in ``tests/conftest.py``.
"""
