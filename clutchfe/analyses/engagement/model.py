"""The thermal data of a solved case: materials per triangle, cooled faces, friction heating, duty.

What the FE stage's engagement loop (fem/engagement.py) needs, taken from the case's tables and its
section: conductivity, heat capacity and expansion of every triangle (a lining region has the
[lining] values, every other region its body's table, or a drawn region its own keys), the free
faces of the section sorted by the direction of their outward normal into rims (+r), bores (−r)
and sides (±z) with their film coefficients, and the frictional heating of every friction face.
Units at the case are the trade's (W/(m·K), kg/m³, J/(kg·K), W/(m²·K), rpm, kg·m², N·m); here they
become the FE stage's (mm, N, s, mJ, mW: fem.heat's converters).
"""
from __future__ import annotations

import math
from dataclasses import dataclass, replace

import numpy as np
from skfem import MeshTri

from ...comparison import faces_per_modelled_surface
from ..materials import region_values
from ...errors import CaseError
from ...fem import FeModel
from ...fem.engagement import FrictionHeating, SlipDuty
from ...fem.heat import (Convection, HeatModel, conductivity_from_si, film_coefficient_from_si,
                         heat_capacity_from_si)

THERMAL_KEYS = ("thermal_conductivity", "density", "specific_heat", "expansion_coefficient")
# free faces by the direction of their outward normal (the [cooling] keys film_coefficient_<group>)
FACE_GROUPS = ("rims", "bores", "sides")
FACE_NAMES = {group: f"cooled_{group}" for group in FACE_GROUPS}
RPM = 2.0 * math.pi / 60.0              # rad/s per rpm
KG_M2 = 1000.0                          # t·mm² per kg·m²
AXIS = 1e-9                             # mm: faces on the axis carry no heat (the ring weight 2π r is 0)


@dataclass(frozen=True)
class ThermalSetup:
    """Everything the engagement loop takes, for one solved case."""

    heat: HeatModel
    expansion: np.ndarray               # (triangles,) 1/K
    heating: list[FrictionHeating]
    duty: SlipDuty
    faces: int                          # friction faces each modelled interface stands for
    cooled_segments: dict               # group -> number of boundary segments cooled


def region_thermal(case, region) -> tuple[float, float, float, float]:
    """(k W/(m·K), ρ kg/m³, c J/(kg·K), α 1/K) of one region of the case's section."""
    values = region_values(case, region, THERMAL_KEYS)
    if any(v is None for v in values):       # the case checks refuse this before a solve
        raise CaseError([f"section_file.regions.{region.name}: thermal properties missing "
                         f"({', '.join(k for k, v in zip(THERMAL_KEYS, values) if v is None)})"])
    return tuple(float(v) for v in values)


def triangle_properties(case, section, mesh) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Conductivity mW/(mm·K), heat capacity ρc mJ/(mm³·K) and expansion 1/K of every triangle."""
    regions = {reg.name: reg for reg in section.regions}
    per_region = np.array([region_thermal(case, regions[name]) for name in mesh.region_names], dtype=float)
    k, rho, c, alpha = per_region[np.asarray(mesh.triangle_region)].T
    return conductivity_from_si(1.0) * k, np.array([heat_capacity_from_si(a, b) for a, b in zip(rho, c)]), alpha


def cooled_faces(model: FeModel) -> dict[str, np.ndarray]:
    """The free boundary of the section (every boundary segment that is not a friction face and not on
    the axis) in the three groups of FACE_GROUPS, as (2, n) vertex pairs like FeModel.faces."""
    mesh = MeshTri(np.asarray(model.points, float), np.asarray(model.triangles, np.int64))
    boundary = mesh.boundary_facets()
    pairs = np.sort(mesh.facets[:, boundary], axis=0)
    friction = set()
    for pair in model.contacts:
        for face in (pair.face_a, pair.face_b):
            friction |= {tuple(p) for p in np.sort(np.asarray(model.faces[face]), axis=0).T}
    keep = np.array([tuple(p) not in friction for p in pairs.T], dtype=bool)
    boundary, pairs = boundary[keep], pairs[:, keep]
    p = mesh.p
    a, b = p[:, pairs[0]], p[:, pairs[1]]
    on_axis = (a[0] < AXIS) & (b[0] < AXIS)
    tangent = b - a
    normal = np.vstack([tangent[1], -tangent[0]])
    # outward: away from the third vertex of the triangle the segment bounds
    tri = mesh.t[:, mesh.f2t[0, boundary]]
    centre = p[:, tri].mean(axis=1)
    outward = np.sign(np.sum(normal * (0.5 * (a + b) - centre), axis=0))
    normal = normal * outward
    group = np.where(np.abs(normal[0]) >= np.abs(normal[1]), np.where(normal[0] > 0, 0, 1), 2)
    out = {}
    for g, name in enumerate(FACE_GROUPS):
        chosen = (group == g) & ~on_axis
        if chosen.any():
            out[name] = pairs[:, chosen]
    return out


def thermal_setup(solved, case) -> ThermalSetup:
    """The heat model, expansion, heating and duty of a solved case (``solve.SolvedCase``)."""
    model, section, mesh = solved.prepared.model, solved.section, solved.mesh
    conductivity, capacity, expansion = triangle_properties(case, section, mesh)
    cool, eng = case.cooling, case.engagement
    groups = cooled_faces(model)
    film = {"rims": cool.film_coefficient_rims, "bores": cool.film_coefficient_bores,
            "sides": cool.film_coefficient_sides}
    faces = dict(model.faces)
    convection = []
    for group, segments in groups.items():
        faces[FACE_NAMES[group]] = segments
        h = film[group] if film[group] is not None else cool.film_coefficient
        if h > 0:
            convection.append(Convection(FACE_NAMES[group], film_coefficient_from_si(h), cool.ambient_temperature))
    conductance = (film_coefficient_from_si(eng.contact_conductance) if eng.contact_conductance is not None
                   else None)
    partition = eng.heat_partition
    heating = []
    for itf in section.interfaces:
        # the heat interface of a friction face is the loop's (fem.engagement): one temperature or the
        # contact conductance across its closed nodes, or, with a partition, no heat across it
        into_a = None
        if partition is not None:       # the fraction into the metal mate, the body the lining rubs on
            into_a = partition if itf.body_a != itf.lining_body else 1.0 - partition
        heating.append(FrictionHeating(itf.name, case.interface.friction_coefficient,
                                       conductance=conductance if into_a is None else None, partition=into_a))
    heat = HeatModel(replace(model, faces=faces), conductivity, capacity,
                     reference_temperature=cool.ambient_temperature, convection=convection)
    duty = SlipDuty(
        slip_speed=eng.slip_speed * RPM, slip_time=eng.slip_time, speed_law=eng.speed_law,
        engagements=eng.engagements, dwell_time=eng.dwell_time,
        inertia=eng.driven_inertia * KG_M2 if eng.driven_inertia is not None else None,
        drag_torque=1000.0 * (eng.drag_torque or 0.0), steps_per_engagement=eng.steps_per_engagement,
        dwell_steps=eng.dwell_steps, cool_down_time=eng.cool_down_time,
        initial_rise=(eng.initial_temperature - cool.ambient_temperature
                      if eng.initial_temperature is not None else 0.0))
    n_faces = faces_per_modelled_surface(len(section.interfaces), case.interface.friction_surfaces)
    return ThermalSetup(heat, expansion, heating, duty, n_faces, {g: s.shape[1] for g, s in groups.items()})
