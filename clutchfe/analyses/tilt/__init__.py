"""Axis tilt and radial offset: what the (r, θ) solve of a misaligned case shows, and its files."""
from .analysis import TiltResult, tilt_result, tilt_summary_keys
from .files import FILES, face_picture, polar_picture, write_grid_csv, write_tilt_files

__all__ = ["FILES", "TiltResult", "face_picture", "polar_picture",
           "tilt_result", "tilt_summary_keys", "write_grid_csv", "write_tilt_files"]
