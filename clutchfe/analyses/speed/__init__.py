"""The clutch at its running speed: centrifugal load, pressure and capacity at speed, stresses, burst margin."""
from .analysis import BodyAtSpeed, SpeedResult, centrifugal_load_of_case, speed_of_case, speed_summary
from .files import FILES, STRESS_COLUMNS, pressure_at_speed_picture, speed_table, write_speed_files, write_stress_csv

__all__ = ["FILES", "STRESS_COLUMNS", "BodyAtSpeed", "SpeedResult", "centrifugal_load_of_case",
           "pressure_at_speed_picture", "speed_of_case", "speed_summary", "speed_table", "write_speed_files",
           "write_stress_csv"]
