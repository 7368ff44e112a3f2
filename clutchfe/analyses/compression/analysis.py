"""The operating point on the measured compression curves ([lining_curve], [cushion]).

With a compression curve the case's own solve already carries it (the compliant layer of fem/compliant_layer.py
between the condensed bodies, built by solve.model.layer_curves_of).  This analysis reads where on the curve
each friction face works: the nominal point W/A, the spread of pressure and deflection over the face, the
tangent stiffness there, and whether any of the face runs past the last measured point.  For comparison it
solves the same model once more with the straight layer through the nominal point (the linear lining an
analyst would choose to match the curve at W/A: the secant stiffness), which shows what the curve's shape
itself does to the pressure and the torque, and with a cushion once more without it (what the cushion
springs do): each one more small contact problem, the factor untouched.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ...comparison import HandCapacity, capacity_position
from ...errors import PhysicsError
from ...fem import CompressionCurve, ContactError, FeResult


@dataclass(frozen=True)
class FacePoint:
    """Where one friction face works on its layer's curve (MPa, mm)."""

    interface: str
    mean_pressure_MPa: float        # normal force over the face's area
    least_pressure_MPa: float       # over the closed part of the face
    peak_pressure_MPa: float
    mean_deflection_mm: float       # area-weighted over the closed part
    peak_deflection_mm: float
    tangent_stiffness_MPa_per_mm: float     # of the layer's curve at the mean deflection
    closed_share: float


@dataclass(frozen=True)
class CompressionResult:
    layer: CompressionCurve         # the layer of each face: the lining's curve in series with half the cushion
    lining: CompressionCurve | None     # the lining's curve as scaled (per face)
    cushion: CompressionCurve | None    # the cushion's curve as pressure on the facing and its whole deflection
    faces: list[FacePoint]
    fe_interfaces: list             # the case's own interfaces on the curve
    face_deflections: list          # per interface, every node's compression on the curve (the layer's and the
                                    # meshed carrier's, solve.model.LayerCurves), mm
    nominal_pressure_MPa: float     # the normal force over the face area: W / A on a plate
    nominal_deflection_mm: float    # the layer's D at it
    last_measured_pressure_MPa: float | None    # of the lining's curve (a cushion past its last point is flat)
    secant: FeResult                # the same model with the straight layer through the nominal point
    torque_Nm: float
    torque_secant_Nm: float
    capacity_position: float
    capacity_position_secant: float
    peak_pressure_secant_MPa: float
    # the same case without its cushion (the lining's curve alone, or the linear lining): None without [cushion]
    without_cushion: FeResult | None = None
    torque_without_cushion_Nm: float | None = None
    capacity_position_without_cushion: float | None = None

    @property
    def beyond_curve(self) -> bool:
        last = self.last_measured_pressure_MPa
        return last is not None and max(f.peak_pressure_MPa for f in self.faces) > last

    @property
    def cushion_flat_share(self) -> float:
        """Share of the faces' area where the cushion is pressed flat (past its last point)."""
        if self.cushion is None:
            return 0.0
        last = self.cushion.last_measured_pressure_MPa
        flat = sum(float(np.sum(i.tributary_area[i.pressure >= last])) for i in self.fe_interfaces)
        return flat / sum(float(np.sum(i.tributary_area)) for i in self.fe_interfaces)


def face_point(itf, layer: CompressionCurve, d: np.ndarray) -> FacePoint:
    """Where a face works on ``layer`` (as measured), ``d`` its nodes' compression (mm)."""
    closed = itf.in_contact & (itf.tributary_area > 0)
    area = itf.tributary_area
    mean_p = float(np.sum(itf.normal_force) / np.sum(area))
    mean_d = float(np.sum(d[closed] * area[closed]) / np.sum(area[closed]))
    return FacePoint(itf.name, mean_p, float(itf.pressure[closed].min()), float(itf.pressure.max()), mean_d,
                     float(d.max()), float(layer.stiffness(mean_d)), float(np.sum(area[closed]) / np.sum(area)))


def compression_of_case(solved, hand: HandCapacity, torque_fe_Nm: float) -> CompressionResult:
    """The solved case (``solve.SolvedCase`` with its layer curves) on its compression curves."""
    fe = solved.fe
    curves = solved.layer_curves
    # reported on the curve as measured; the solve's layer is that less the carrier's share (solve.model)
    layer, lining, cushion = curves.face_measured, curves.lining, curves.cushion
    total_area = sum(float(np.sum(i.tributary_area)) for i in fe.interfaces)
    nominal = sum(float(np.sum(i.normal_force)) for i in fe.interfaces) / total_area
    d_nominal = float(layer.deflection(nominal))
    straight = curves.without_carrier(CompressionCurve.straight(nominal / d_nominal, up_to_MPa=nominal))
    secant = _solve(solved, [straight] * len(fe.interfaces), "with the straight layer through the nominal point")
    moment = sum(float(np.sum(i.normal_force * i.r)) for i in fe.interfaces)

    def torque_of(other):               # same μ, force and faces: the ratio of the moments Σ λ r
        return torque_fe_Nm * sum(float(np.sum(i.normal_force * i.r)) for i in other.interfaces) / moment

    bare = t_bare = xi_bare = None
    if cushion is not None:
        layers = None if lining is None else [curves.without_carrier(lining)] * len(fe.interfaces)
        bare = _solve(solved, layers, "without the cushion")
        t_bare = torque_of(bare)
        xi_bare = capacity_position(t_bare, hand)
    t_secant = torque_of(secant)
    last = lining.last_measured_pressure_MPa if lining is not None else None
    deflections = [i.layer_deflection + curves.carrier_deflection(i.pressure) * i.in_contact for i in fe.interfaces]
    return CompressionResult(layer, lining, cushion, [face_point(i, layer, d) for i, d in zip(fe.interfaces, deflections)],
                             list(fe.interfaces), deflections, nominal, d_nominal, last, secant, torque_fe_Nm, t_secant,
                             capacity_position(torque_fe_Nm, hand), capacity_position(t_secant, hand),
                             max(float(i.pressure.max()) for i in secant.interfaces), bare, t_bare, xi_bare)


def _solve(solved, layers, what: str) -> FeResult:
    try:
        return solved.solver.solve(list(solved.gaps), solved.load_scale, fields=False, layers=layers)
    except ContactError as exc:
        raise PhysicsError(f"{what}: {exc}") from None


def compression_summary(result: CompressionResult, case) -> dict:
    """Summary keys of the compression curves (units in the names); warnings and failed criteria."""
    lining_d = float(result.lining.deflection(result.nominal_pressure_MPa)) if result.lining is not None else None
    cushion_d = float(result.cushion.deflection(result.nominal_pressure_MPa)) if result.cushion is not None else None
    out = {
        "curve_nominal_pressure_MPa": result.nominal_pressure_MPa,
        "curve_nominal_deflection_mm": result.nominal_deflection_mm,
        "lining_deflection_at_nominal_mm": lining_d,
        "cushion_deflection_at_nominal_mm": cushion_d,
        "curve_tangent_stiffness_at_nominal_MPa_per_mm": float(result.layer.stiffness(result.nominal_deflection_mm)),
        "curve_secant_stiffness_at_nominal_MPa_per_mm": result.nominal_pressure_MPa / result.nominal_deflection_mm,
        "curve_last_measured_pressure_MPa": result.last_measured_pressure_MPa,
        "pressure_beyond_curve": result.beyond_curve,
        "cushion_flat_share": result.cushion_flat_share if result.cushion is not None else None,
        "torque_with_secant_layer_Nm": result.torque_secant_Nm,
        "capacity_position_with_secant_layer": result.capacity_position_secant,
        "peak_pressure_with_secant_layer_MPa": result.peak_pressure_secant_MPa,
        "torque_without_cushion_Nm": result.torque_without_cushion_Nm,
        "capacity_position_without_cushion": result.capacity_position_without_cushion,
        "peak_pressure_without_cushion_MPa": (max(float(i.pressure.max()) for i in result.without_cushion.interfaces)
                                              if result.without_cushion is not None else None),
        "curve_faces": [{"interface": f.interface, "mean_pressure_MPa": f.mean_pressure_MPa,
                         "least_pressure_MPa": f.least_pressure_MPa, "peak_pressure_MPa": f.peak_pressure_MPa,
                         "mean_deflection_mm": f.mean_deflection_mm, "peak_deflection_mm": f.peak_deflection_mm,
                         "tangent_stiffness_MPa_per_mm": f.tangent_stiffness_MPa_per_mm,
                         "closed_share": f.closed_share} for f in result.faces],
    }
    warnings, failed = [], []
    shift = result.torque_Nm / result.torque_secant_Nm - 1.0
    warnings.append(f"The faces work at {result.nominal_pressure_MPa:.3g} MPa and {1000 * result.nominal_deflection_mm:.3g} "
                    f"µm on the curve (tangent stiffness {out['curve_tangent_stiffness_at_nominal_MPa_per_mm']:.4g} "
                    f"MPa/mm); against a linear lining of the same compression at W/A the curve's shape moves the "
                    f"torque by {100 * shift:+.2g} % and ξ from {result.capacity_position_secant:.3g} to "
                    f"{result.capacity_position:.3g}.")
    if result.cushion_flat_share > 0.0:
        warnings.append(f"The cushion is pressed flat over {100 * result.cushion_flat_share:.3g} % of the faces (past its "
                        "last point): there it no longer spreads the pressure.")
    if result.without_cushion is not None:
        warnings.append(f"The cushion moves the torque by {100 * (result.torque_Nm / result.torque_without_cushion_Nm - 1):+.2g} "
                        f"% against the same faces without it ({result.torque_without_cushion_Nm:.4g} → "
                        f"{result.torque_Nm:.4g} N·m) and ξ from {result.capacity_position_without_cushion:.3g} to "
                        f"{result.capacity_position:.3g}.")
    if result.beyond_curve:
        peak = max(f.peak_pressure_MPa for f in result.faces)
        failed.append("pressure beyond the measured compression curve")
        warnings.append(f"WARNING: THE PRESSURE RUNS PAST THE MEASURED CURVE: {peak:.4g} MPa at the peak against the "
                        f"last measured point at {result.last_measured_pressure_MPa:.4g} MPa; past it the layer is "
                        "extrapolated with the last slope, which no measurement supports: extend the curve.")
    out["curve_warnings"], out["curve_failed"] = warnings, failed
    return out
