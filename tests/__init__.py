"""The test suite as a package, so tests and benchmarks import shared code from ``tests.helpers``
(``python3 -m pytest`` and ``python3 -m tests.benchmarks.<name>`` from the repository root)."""
