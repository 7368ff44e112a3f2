"""Printed speed ratios, not collected by pytest; run each from the repository root as
``python3 -m tests.benchmarks.<name>``."""
