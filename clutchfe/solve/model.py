"""The FE stage's plain input built from a case's section and mesh."""
from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from ..case import Case
from ..fem import CompressionCurve, ContactPair, FaceLoad, FeModel, RingLoad, SpringSupport

# With a measured compression curve the curve is the lining's whole compression (fem/compliant_layer.py).  The
# meshed lining keeps its place as a carrier of modulus CARRIER_STIFFENING times the curve's steepest stiffness
# times the thickness, with ν = 0, so that under a pressure p it compresses by p t / E_c, which is taken off the
# curve (the layer carries the rest: the two in series are the curve).  Stiff enough that its share of the
# compression is at most a tenth, soft enough not to stiffen a thin disc in bending the way steel would
# (docs/compression-curves.md: steel there moved the peak pressure by 20 %, this carrier by ~2 %).
CARRIER_STIFFENING = 10.0


def has_compression_curve(case: Case) -> bool:
    return case.lining_curve_points is not None or case.cushion_points is not None


@dataclass(frozen=True)
class LayerCurves:
    """The measured curves of a case as the solve uses them (MPa against mm).

    ``lining``: the lining's curve scaled by its deflection_scale and pressure_scale; ``cushion``: the cushion's
    force F on the whole disc (× force_scale) as the pressure F / A on its facing (A the friction face's area)
    against the cushion's whole deflection, flat past its last point; ``carrier_modulus_MPa``: the meshed
    lining's modulus with a lining curve (None: the [lining] table's linear lining)."""

    lining: CompressionCurve | None
    cushion: CompressionCurve | None
    carrier_modulus_MPa: float | None = None
    lining_thickness_mm: float = 0.0

    @property
    def face_measured(self) -> CompressionCurve:
        """The compression of one friction face as measured: the lining in series with half the cushion (the
        cushion sits between the disc's two facings, in series with both)."""
        if self.cushion is None:
            return self.lining
        half = self.cushion.scaled(0.5)
        return half if self.lining is None else self.lining.in_series(half)

    def carrier_deflection(self, pressure_MPa):
        """What the meshed carrier compresses under a pressure (mm): p t / E_c, 0 without a lining curve."""
        if self.carrier_modulus_MPa is None:
            return np.zeros_like(np.asarray(pressure_MPa, float))
        return np.asarray(pressure_MPa, float) * self.lining_thickness_mm / self.carrier_modulus_MPa

    def without_carrier(self, curve: CompressionCurve) -> CompressionCurve:
        """The layer that, in series with the carrier, is ``curve``: its deflections less p t / E_c."""
        if self.carrier_modulus_MPa is None:
            return curve
        p = curve.pressure_MPa[1:]
        return CompressionCurve(curve.deflection_mm[1:] - self.carrier_deflection(p), p)

    @property
    def face(self) -> CompressionCurve:
        """The layer of one friction face the solve carries (face_measured less the carrier's share)."""
        return self.without_carrier(self.face_measured)


def layer_curves_of(case: Case) -> LayerCurves | None:
    """The case's compression curves, or None without one."""
    if not has_compression_curve(case):
        return None
    lining = cushion = carrier = None
    if case.lining_curve_points is not None:
        pts = case.lining_curve_points
        lining = CompressionCurve(np.array(pts.deflection_mm) * case.lining_curve.deflection_scale,
                                  np.array(pts.values) * case.lining_curve.pressure_scale)
        # to 4 figures: curves whose steepest segments differ by round-off share a stiffness group
        carrier = float(f"{CARRIER_STIFFENING * lining.largest_stiffness_MPa_per_mm * case.lining.thickness:.4g}")
    if case.cushion_points is not None:
        pts = case.cushion_points
        area = math.pi * (case.interface.outer_radius ** 2 - case.interface.inner_radius ** 2)
        cushion = CompressionCurve(np.array(pts.deflection_mm) * case.cushion.deflection_scale,
                                   np.array(pts.values) * case.cushion.force_scale / area, solid_past_last=True)
    return LayerCurves(lining, cushion, carrier, float(case.lining.thickness or 0.0))


def carrier_modulus_of(case: Case) -> float | None:
    """The meshed lining's modulus with a lining curve (part of the stiffness group), None without one."""
    curves = layer_curves_of(case)
    return None if curves is None else curves.carrier_modulus_MPa


def fe_model_of(case: Case, section, mesh, axial_force_N: float | None = None, gaps: bool = True) -> FeModel:
    """Bodies, materials, supports, load and friction interfaces of a meshed section.

    ``axial_force_N`` replaces the section's force (the solve service builds one model at a
    reference force and scales it); ``gaps=False`` leaves the interfaces closed (the service
    passes each case's initial gaps to the solve instead).
    """
    regions = {reg.name: reg for reg in section.regions}
    body_index = {b.name: k for k, b in enumerate(section.bodies)}
    by_region = np.array([body_index[regions[n].body] for n in mesh.region_names])
    carrier = carrier_modulus_of(case)
    as_carrier = [bool(regions[n].lining_layers) and carrier is not None for n in mesh.region_names]
    modulus = np.array([carrier if c else regions[n].youngs_modulus for n, c in zip(mesh.region_names, as_carrier)])
    poisson = np.array([0.0 if c else regions[n].poissons_ratio for n, c in zip(mesh.region_names, as_carrier)])
    sup = case.support
    springs = sup.type == "springs"
    supports = [SpringSupport(section.support_axial_face, axial_stiffness=sup.axial_stiffness if springs else None,
                              radial_stiffness=0.0),
                SpringSupport(section.support_radial_face, axial_stiffness=0.0,
                              radial_stiffness=sup.radial_stiffness if springs else None)]
    force = -(section.axial_force if axial_force_N is None else axial_force_N)   # the pressed body moves along -z
    load = (RingLoad(section.load_face, section.ring_radius, force) if section.ring_radius is not None
            else FaceLoad(section.load_face, force))
    contacts = []
    for itf in section.interfaces:
        pairs = mesh.interface_pairs[itf.name]
        gap = itf.initial_gap(mesh.points[pairs[:, 0]]) if gaps else np.zeros(len(pairs))
        contacts.append(ContactPair(itf.name, itf.face_a, itf.face_b, itf.normal_a, pairs.T.copy(), gap))
    return FeModel(
        points=mesh.points.T.copy(), triangles=mesh.triangles[:, :3].T.copy(),
        element_body=by_region[mesh.triangle_region], element_youngs_modulus=modulus[mesh.triangle_region],
        element_poissons_ratio=poisson[mesh.triangle_region], body_names=[b.name for b in section.bodies],
        body_axially_free=[b.role != "supported" for b in section.bodies],
        faces={k: v[:, :2].T.copy() for k, v in mesh.faces.items()}, supports=supports, loads=[load],
        contacts=contacts, element_order=case.mesh.element_order)
