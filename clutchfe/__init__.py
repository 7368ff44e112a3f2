"""clutchfe: FE contact verification of friction clutch torque capacity."""
__version__ = "0.1.0"
