"""The design peak pressure: the highest mean pressure over a band of stated width along the face.

At a lining end the elastic contact pressure is singular (a stiff body pressing on a thin
layer that ends: the pressure grows like a negative power of the distance to the end), so
the nodal peak grows without bound as the mesh is refined and no allowable can be judged on
it.  The mean over a band of fixed physical width converges (the singularity is integrable),
so it is the figure checked against the lining's allowable pressure; the nodal value is
still reported, labelled as an edge concentration.

Band: DESIGN_BAND_FRACTION of the friction face width measured along the face (a choice of
this project, stated in every report); the band slides over the whole face and the worst
place is reported.  The mean is area-weighted on the ring (dA = 2 π r ds).
"""
from __future__ import annotations

import math

import numpy as np

DESIGN_BAND_FRACTION = 0.10     # of the friction face width along the face
_SAMPLES = 2001                 # resampling of p(s) along the face for the sliding band


def band_width_mm(inner_radius_mm: float, outer_radius_mm: float, semi_cone_angle_deg: float) -> float:
    """Width of the band along the face (mm)."""
    slant = (outer_radius_mm - inner_radius_mm) / math.sin(math.radians(semi_cone_angle_deg))
    return DESIGN_BAND_FRACTION * slant


def design_peak(r_mm, pressure_MPa, inner_radius_mm: float, outer_radius_mm: float,
                semi_cone_angle_deg: float) -> tuple[float, float]:
    """(highest band-mean pressure MPa, radius of the band's middle mm) of one face.

    ``r_mm``, ``pressure_MPa``: the nodal radii and pressures of the face (any order);
    the pressure is taken as linear between nodes.
    """
    r = np.asarray(r_mm, float)
    p = np.asarray(pressure_MPa, float)
    order = np.argsort(r)
    r, p = r[order], p[order]
    sin_a = math.sin(math.radians(semi_cone_angle_deg))
    length = (outer_radius_mm - inner_radius_mm) / sin_a
    width = DESIGN_BAND_FRACTION * length
    s = np.linspace(0.0, length, _SAMPLES)
    radius = inner_radius_mm + s * sin_a
    ps = np.interp(radius, r, p)
    # running integrals of p r ds and r ds (trapezoid): band means from differences
    ds = np.diff(s)
    load = np.concatenate(([0.0], np.cumsum(0.5 * ds * (ps[1:] * radius[1:] + ps[:-1] * radius[:-1]))))
    ring = np.concatenate(([0.0], np.cumsum(0.5 * ds * (radius[1:] + radius[:-1]))))
    starts = s[s <= length - width + 1e-12 * length]
    ends = starts + width
    mean = (np.interp(ends, s, load) - np.interp(starts, s, load)) / (np.interp(ends, s, ring)
                                                                        - np.interp(starts, s, ring))
    k = int(np.argmax(mean))
    return float(mean[k]), float(inner_radius_mm + (starts[k] + 0.5 * width) * sin_a)
