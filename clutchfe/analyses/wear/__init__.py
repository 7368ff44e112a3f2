"""Wear-in (Archard): from the new interface to the worn-in one, and its files."""
from .analysis import (PROFILE_CSV_COLUMNS, STAGE_FRACTIONS, WEAR_CSV_COLUMNS, WearRun, sliding_per_engagement_rad,
                       wear_in_case, wear_rows, wear_summary)
from .files import (FILES, chosen_stages, stage_pressure_plot, wear_path_plot, wear_table, worn_profile_plot,
                    write_profile_csv, write_wear_csv, write_wear_files)

__all__ = ["FILES", "PROFILE_CSV_COLUMNS", "STAGE_FRACTIONS", "WEAR_CSV_COLUMNS", "WearRun", "chosen_stages",
           "sliding_per_engagement_rad", "stage_pressure_plot", "wear_in_case", "wear_path_plot", "wear_rows",
           "wear_summary", "wear_table", "worn_profile_plot", "write_profile_csv", "write_wear_csv",
           "write_wear_files"]
