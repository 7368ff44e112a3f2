"""Rectangular (r, z) sections meshed directly in scikit-fem for the FE tests.

The same blocks serve `clutchfe verify`, so they live in the package.
"""
from clutchfe.verification.meshes import BlockSection as Section
from clutchfe.verification.meshes import graded

__all__ = ["Section", "graded"]
