"""Results of a run: the folder (replaced atomically, never over files clutchfe did not write),
the standard files and pictures and the terminal table.  ``output.report`` writes report.html
(imported on its own: it reads the verification suite, which itself writes through here)."""
from .files import print_table, write_all, write_pressure_csv, write_solution_vtu
from .folders import MARKER, atomic_folder, check_output_folder, clean_json, folder_lock, write_json, write_marker

__all__ = ["MARKER", "atomic_folder", "check_output_folder", "clean_json", "folder_lock", "print_table", "write_all", "write_json", "write_marker", "write_pressure_csv",
           "write_solution_vtu"]
