"""Solver verification: the FE stage against closed forms."""
