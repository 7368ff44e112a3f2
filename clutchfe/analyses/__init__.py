"""Analyses of a solved case beyond the new, aligned interface: one subpackage each.

``tilt`` reads the (r, θ) solve of a case with an axis tilt or a radial offset; ``wear``
wears the interface in (Archard).  Each gives a typed result, summary keys and its files;
the run plan (``clutchfe.plan``) calls them in order.
"""
from . import tilt, wear

__all__ = ["tilt", "wear"]
