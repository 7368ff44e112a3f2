"""The operating point on the measured lining and cushion compression curves."""
from .analysis import CompressionResult, FacePoint, compression_of_case, compression_summary, face_point
from .files import FILES, compression_table, write_compression_files

__all__ = ["FILES", "CompressionResult", "FacePoint", "compression_of_case", "compression_summary",
           "compression_table", "face_point", "write_compression_files"]
