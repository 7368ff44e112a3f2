"""Parametric (r, z) clutch sections meshed with gmsh."""
