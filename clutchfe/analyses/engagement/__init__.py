"""Hot engagement: slip heat, thermal distortion and the hot torque capacity, and its files."""
from .analysis import (THERMAL_CSV_COLUMNS, EngagementRun, conservative_methods, engagement_of_case,
                       engagement_summary, slip_phase, thermal_coning_mm, thermal_rows)
from .files import (FILES, engagement_table, history_picture, hot_pressure_picture, snapshot_steps,
                    slip_intervals, temperature_picture, write_engagement_files, write_series, write_thermal_csv)
from .model import FACE_GROUPS, THERMAL_KEYS, ThermalSetup, cooled_faces, thermal_setup, triangle_properties

__all__ = ["FACE_GROUPS", "FILES", "THERMAL_CSV_COLUMNS", "THERMAL_KEYS", "EngagementRun", "ThermalSetup",
           "conservative_methods", "cooled_faces", "engagement_of_case", "engagement_summary", "engagement_table",
           "history_picture", "hot_pressure_picture", "slip_intervals", "slip_phase", "snapshot_steps", "temperature_picture", "thermal_coning_mm",
           "thermal_rows", "thermal_setup", "triangle_properties", "write_engagement_files", "write_series",
           "write_thermal_csv"]
