"""Verification of the FE stage against closed forms, and solution verification by mesh refinement.

``clutchfe verify`` runs :func:`run_verification` and prints :func:`print_verification`; every
report carries the same table.  Cases live in :data:`table.CASES` (one entry each).
"""
from .checks import Check
from .table import CASES, VerificationCase, print_verification, run_verification, verification_rows

__all__ = ["CASES", "Check", "VerificationCase", "print_verification", "run_verification", "verification_rows"]
