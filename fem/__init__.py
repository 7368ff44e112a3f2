"""Axisymmetric elastic contact solve (scikit-fem)."""
