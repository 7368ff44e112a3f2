"""Verification of the FE stage against closed forms, and solution verification by mesh refinement.

``clutchfe verify`` runs :func:`run_verification` and prints :func:`print_verification`, and
stores the table for runs (:mod:`.store`, once per installed version and code hash); every
report carries that stored table (:func:`load_table`), or says that it is missing or stale.
Cases live in :data:`table.CASES` (one entry each).
"""
from .checks import Check
from .store import TableOrigin, VerificationRows, load_table, store_table
from .table import CASES, VerificationCase, print_verification, run_verification, verification_rows

__all__ = ["CASES", "Check", "TableOrigin", "VerificationCase", "VerificationRows", "load_table", "print_verification",
           "run_verification", "store_table", "verification_rows"]
