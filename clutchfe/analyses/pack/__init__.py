"""Spline drag in a plate pack: load and torque per surface, drag per plate, pack efficiency."""
from .analysis import PackResult, PackSurface, PlateDrag, faces_of_bodies, pack_of_case, pack_summary
from .drag import (DRAG_TOLERANCE, DragSolve, SplinedPlate, plate_torques_Nmm, rigid_pack_forces,
                   solve_with_spline_drag, splined_plates)
from .files import FILES, pack_table, write_pack_files

__all__ = ["DRAG_TOLERANCE", "FILES", "DragSolve", "PackResult", "PackSurface", "PlateDrag", "SplinedPlate",
           "faces_of_bodies", "pack_of_case", "pack_summary", "pack_table", "plate_torques_Nmm", "rigid_pack_forces",
           "solve_with_spline_drag", "splined_plates", "write_pack_files"]
