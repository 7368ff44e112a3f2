"""Comparison stage: the FE torque capacity against the uniform-pressure and uniform-wear hand methods.

Pure functions on plain data; no FE, no files.  ``hand`` holds the two hand methods,
``compare`` reads the FE interface forces and returns a typed :class:`Comparison`.
"""
from .compare import (CONSERVATIVE_WORDS, MARGIN_KEYS, Comparison, capacity_margin, conservative_methods, capacity_position, compare, effective_radius_mm,
                      faces_per_modelled_surface, matches, position_on_annulus, surface_arrays,
                      tributary_areas_mm2)
from .of_case import compare_solved, grid_contact_fraction, grid_peak, hand_of
from .hand import (HandCapacity, as_hand_capacity, cot_deg, engagement_force_N, hand_capacity, is_self_locking,
                   peak_pressure_uniform_wear_MPa, radius_gap_mm, radius_uniform_pressure_mm,
                   radius_uniform_wear_mm, uniform_pressure_MPa)

__all__ = ["CONSERVATIVE_WORDS", "MARGIN_KEYS", "Comparison", "conservative_methods", "HandCapacity", "as_hand_capacity", "capacity_margin", "capacity_position",
           "compare", "compare_solved", "cot_deg", "effective_radius_mm", "engagement_force_N", "faces_per_modelled_surface",
           "grid_contact_fraction", "grid_peak", "hand_capacity", "hand_of", "is_self_locking", "matches", "peak_pressure_uniform_wear_MPa", "position_on_annulus",
           "radius_gap_mm", "radius_uniform_pressure_mm", "radius_uniform_wear_mm", "surface_arrays",
           "tributary_areas_mm2", "uniform_pressure_MPa"]
