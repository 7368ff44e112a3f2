"""Comparison stage: the FE contact pressure against the two classical hand methods.

Pure functions on plain data; no FE, no files.  Units inside: mm, N, MPa (so torque
comes out in N·mm and is reported in N·m).  The hand methods and their sources are in
hand.py.  FE torque: T = n mu sum(f_i r_i) over the interface nodes (f the normal nodal
force), R_eff = T sin(alpha) / (n mu W), and the capacity position
xi = (T_fe - T_uw) / (T_up - T_uw): 1 = uniform pressure, 0 = uniform wear.
"""
from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass, fields

import numpy as np

from .design_peak import band_width_mm, design_peak
from .hand import HandCapacity, as_hand_capacity, finite, radius_gap_mm, require

# A nodal force this far below zero (relative to the surface's total) is solver round-off,
# not tension; anything more negative means the FE result is not a contact solution.
_TENSION_ROUNDOFF = 1e-9
# Nodes may sit a hair outside [r1, r2] from mesh round-off.
_RADIUS_ROUNDOFF = 1e-9
# Torques closer than this to a hand torque are reported as matching it: the verdict prints
# percentages to two decimals, and a discretisation artefact should not flip its wording.
_MATCH = 5e-5
# Above this capacity-position uncertainty from the axial balance error, the verdict says so.
_POSITION_UNCERTAINTY_WARN = 0.05
# Below this share of the face in contact, contact is reported as partial (a chosen tolerance:
# a few nodes at a lining end opening by round-off must not trigger it).
_FULL_CONTACT = 0.995


# ---------------------------------------------------------------- FE surface data

def _field(surface, names: tuple[str, ...], required: bool = True):
    """Read one field from a mapping or an object; accepts the unit-suffixed names of this
    module and the plain names of the FE stage's interface result."""
    for name in names:
        if isinstance(surface, Mapping):
            if name in surface:
                return surface[name]
        elif hasattr(surface, name):
            return getattr(surface, name)
    require(not required, f"surface data lacks {names[0]!r}")
    return None


def tributary_areas_mm2(r_mm: np.ndarray, semi_cone_angle_deg: float) -> np.ndarray:
    """Ring area each node stands for (cells split half-way between nodes, along the slant):
    a fallback when the FE stage gives no areas."""
    order = np.argsort(r_mm)
    r = r_mm[order]
    edges = np.concatenate(([r[0]], 0.5 * (r[1:] + r[:-1]), [r[-1]]))
    ring = np.pi * (edges[1:] ** 2 - edges[:-1] ** 2) / math.sin(math.radians(semi_cone_angle_deg))
    areas = np.empty_like(ring)
    areas[order] = ring
    return areas


def surface_arrays(surface, index: int, hand: HandCapacity) -> dict:
    name = str(_field(surface, ("name",), required=False) or f"surface {index + 1}")
    r = np.asarray(_field(surface, ("r_mm", "r")), dtype=float).ravel()
    p = np.asarray(_field(surface, ("pressure_MPa", "pressure")), dtype=float).ravel()
    f = np.asarray(_field(surface, ("normal_force_N", "normal_force")), dtype=float).ravel()
    require(r.size > 0, f"{name}: no nodes")
    contact = _field(surface, ("in_contact",), required=False)
    area = _field(surface, ("tributary_area_mm2", "tributary_area"), required=False)
    contact = p > 0.0 if contact is None else np.asarray(contact, dtype=bool).ravel()
    area = tributary_areas_mm2(r, hand.semi_cone_angle_deg) if area is None else np.asarray(area, dtype=float).ravel()

    per_node = (("pressure_MPa", p), ("normal_force_N", f), ("in_contact", contact), ("tributary_area_mm2", area))
    for label, arr in per_node:
        require(arr.shape == r.shape, f"{name}: {label} has {arr.size} values for {r.size} radii")
    for label, arr in (("r_mm", r), ("pressure_MPa", p), ("normal_force_N", f), ("tributary_area_mm2", area)):
        require(bool(np.all(np.isfinite(arr))), f"{name}: {label} contains NaN or infinity")
    r1, r2 = hand.inner_radius_mm, hand.outer_radius_mm
    slack = _RADIUS_ROUNDOFF * r2
    require(bool(np.all((r >= r1 - slack) & (r <= r2 + slack))),
             f"{name}: node radii {r.min():.6g}..{r.max():.6g} mm leave the friction annulus [{r1}, {r2}] mm")
    total = float(np.sum(np.abs(f)))
    require(total > 0.0, f"{name}: no normal force: the surface carries no load")
    require(bool(np.all(f >= -_TENSION_ROUNDOFF * total)),
             f"{name}: tensile normal force {f.min():.6g} N: not a contact solution")
    require(bool(np.all(area >= 0.0)) and area.sum() > 0.0,
             f"{name}: tributary areas must be >= 0 with a positive total")
    return {"name": name, "r": np.clip(r, r1, r2), "p": p, "f": np.clip(f, 0.0, None), "contact": contact, "area": area}


def faces_per_modelled_surface(n_modelled: int, friction_surfaces: int) -> int:
    """All n faces modelled, or one face standing for each of n faces that carry the same clamp
    force (a plate pack with spline drag neglected, common practice)."""
    if n_modelled == friction_surfaces:
        return 1
    require(n_modelled == 1,
             f"{n_modelled} FE surfaces for friction_surfaces = {friction_surfaces}: "
             "give one per face or a single representative face")
    return friction_surfaces


# ---------------------------------------------------------------- comparison

def capacity_position(torque_fe_Nm: float, hand: HandCapacity) -> float:
    """xi = (T_fe - T_uw)/(T_up - T_uw), evaluated on radii with the exact radius gap so a
    narrow annulus cannot produce 0/0."""
    r_eff = effective_radius_mm(torque_fe_Nm, hand)
    return (r_eff - hand.radius_uniform_wear_mm) / radius_gap_mm(hand.inner_radius_mm, hand.outer_radius_mm)


def effective_radius_mm(torque_fe_Nm: float, hand: HandCapacity) -> float:
    n_mu_w = hand.friction_surfaces * hand.friction_coefficient * hand.axial_force_N
    return torque_fe_Nm * 1000.0 * hand.sin_alpha / n_mu_w


def position_on_annulus(radius_mm: float, hand: HandCapacity) -> float:
    return (radius_mm - hand.inner_radius_mm) / (hand.outer_radius_mm - hand.inner_radius_mm)


def capacity_margin(torque_Nm: float, required_torque_Nm: float, service_factor: float) -> float:
    return torque_Nm / (required_torque_Nm * service_factor) - 1.0


def _pct(fraction: float) -> str:
    return f"{100.0 * fraction:.2f} %"


def matches(torque_fe_Nm: float, torque_hand_Nm: float) -> bool:
    return abs(torque_fe_Nm / torque_hand_Nm - 1.0) < _MATCH


def _assumption_sentence(xi: float, t_fe: float, hand: HandCapacity) -> str:
    t_up, t_uw = hand.torque_uniform_pressure_Nm, hand.torque_uniform_wear_Nm
    within = f"{100.0 * _MATCH:.3g} %"
    if matches(t_fe, t_uw):
        return (f"The FE torque matches the uniform-wear formula (within {within}); the uniform-pressure "
                f"formula overestimates it by {_pct(t_up / t_fe - 1.0)} (xi = {xi:.3g}).")
    if matches(t_fe, t_up):
        return (f"The FE torque matches the uniform-pressure formula (within {within}); uniform wear is "
                f"conservative by {_pct(1.0 - t_uw / t_fe)} (xi = {xi:.3g}).")
    if xi < 0.0:
        return (f"WARNING: NEITHER DESIGN ASSUMPTION IS CONSERVATIVE FOR THIS CLUTCH. Even the uniform-wear "
                f"formula overestimates the capacity by {_pct(t_uw / t_fe - 1.0)} "
                f"(FE torque {t_fe:.4g} N·m vs T_uw {t_uw:.4g} N·m, xi = {xi:.3g}).")
    if xi > 1.0:
        return (f"Both design assumptions are conservative here: the FE torque is {_pct(t_fe / t_up - 1.0)} above "
                f"T_up, so even the uniform-pressure formula underestimates the capacity by {_pct(1.0 - t_up / t_fe)} "
                f"(xi = {xi:.3g}).")
    return (f"Uniform wear is conservative here: the FE torque is {_pct(t_fe / t_uw - 1.0)} above T_uw; "
            f"the uniform-pressure formula overestimates it by {_pct(t_up / t_fe - 1.0)} (xi = {xi:.3g}).")


def _radius_sentence(r_eff: float, hand: HandCapacity) -> str:
    r1, r2 = hand.inner_radius_mm, hand.outer_radius_mm
    return (f"R_eff = {r_eff:.2f} mm sits at {_pct(position_on_annulus(r_eff, hand))} of [{r1:.2f}, {r2:.2f}] mm; "
            f"uniform wear puts it at {_pct(position_on_annulus(hand.radius_uniform_wear_mm, hand))}, "
            f"uniform pressure at {_pct(position_on_annulus(hand.radius_uniform_pressure_mm, hand))}.")


def _margin_sentence(m: dict) -> str:
    return (f"Against {m['required_torque_Nm']:.4g} N·m x service factor {m['service_factor']:.3g}: capacity margin "
            f"FE {_pct(m['capacity_margin_fe'])}, uniform pressure {_pct(m['capacity_margin_uniform_pressure'])}, "
            f"uniform wear {_pct(m['capacity_margin_uniform_wear'])}.")


MARGIN_KEYS = ("required_torque_Nm", "service_factor", "capacity_margin_fe", "capacity_margin_uniform_pressure",
               "capacity_margin_uniform_wear")


def _capacity_margins(torque_fe_Nm: float, hand: HandCapacity, required_torque_Nm, service_factor) -> dict:
    required = finite("required_torque_Nm", required_torque_Nm)
    sf = finite("service_factor", service_factor)
    require(required > 0.0, f"required_torque_Nm = {required} must be > 0")
    require(sf > 0.0, f"service_factor = {sf} must be > 0")
    return {
        "required_torque_Nm": required,
        "service_factor": sf,
        "capacity_margin_fe": capacity_margin(torque_fe_Nm, required, sf),
        "capacity_margin_uniform_pressure": capacity_margin(hand.torque_uniform_pressure_Nm, required, sf),
        "capacity_margin_uniform_wear": capacity_margin(hand.torque_uniform_wear_Nm, required, sf),
    }


def _warnings(xi: float, xi_uncertainty: float, balance: float, torque_fe_Nm: float, hand: HandCapacity,
              assumption_sentence: str) -> list[str]:
    warnings = []
    if xi < 0.0 and not matches(torque_fe_Nm, hand.torque_uniform_wear_Nm):
        warnings.append(assumption_sentence)
    if xi_uncertainty > _POSITION_UNCERTAINTY_WARN:
        warnings.append(f"The FE axial force balance is off by {_pct(balance)}; that alone moves xi by about "
                        f"±{xi_uncertainty:.2g}: refine the contact solve before trusting xi.")
    if hand.self_locking:
        warnings.append(f"The cone self-locks (tan alpha = {math.tan(math.radians(hand.semi_cone_angle_deg)):.3g} "
                        f"< mu = {hand.friction_coefficient:.3g}): it needs a pull to disengage.")
    return warnings


def _surface_summary(s: dict, hand: HandCapacity, faces: int, total_torque: float) -> dict:
    """One modelled friction face.  The faces of a clutch act in series along the axis (each
    carries the whole clamp force W) and in parallel for the torque (the torques add): so the
    axial force is given over W, the torque as a share of the total."""
    axial = float(np.sum(s["f"])) * hand.sin_alpha
    torque = faces * hand.friction_coefficient * float(np.sum(s["f"] * s["r"])) / 1000.0
    peak, peak_r = design_peak(s["r"], s["p"], hand.inner_radius_mm, hand.outer_radius_mm, hand.semi_cone_angle_deg)
    return {
        "name": s["name"],
        "axial_force_N": axial,
        "axial_force_over_clamp_force": axial / hand.axial_force_N,
        "axial_force_balance_error": axial / hand.axial_force_N - 1.0,
        "torque_Nm": torque,
        "torque_share": torque / total_torque,
        # Force-weighted radius: in [r1, r2] whatever the balance error.
        "effective_radius_mm": float(np.sum(s["f"] * s["r"]) / np.sum(s["f"])),
        "peak_pressure_MPa": float(np.max(s["p"])),
        "design_peak_pressure_MPa": peak,
        "design_peak_radius_mm": peak_r,
        "contact_area_fraction": float(np.sum(s["area"][s["contact"]]) / np.sum(s["area"])),
    }


@dataclass(frozen=True)
class Comparison(Mapping):
    """The comparison stage's answer for one solved state (units in the names).

    A typed record whose fields are read as attributes (``c.torque_fe_Nm``); it is also a
    read-only mapping of every output key, the hand method's included (``c["torque_uniform_wear_Nm"]``),
    which is how the summary, the study table and the report take it over unchanged.
    """

    hand: HandCapacity
    torque_fe_Nm: float
    capacity_position: float
    capacity_position_uncertainty: float
    effective_radius_mm: float
    effective_radius_position: float
    radius_uniform_pressure_position: float
    radius_uniform_wear_position: float
    torque_fe_over_uniform_wear: float
    torque_fe_over_uniform_pressure: float
    peak_pressure_MPa: float
    peak_pressure_radius_mm: float
    peak_pressure_surface: str
    peak_pressure_over_uniform_wear_peak: float
    design_peak_pressure_MPa: float
    design_peak_radius_mm: float
    design_peak_surface: str
    design_peak_band_mm: float
    mean_pressure_MPa: float
    contact_area_fraction: float
    axial_force_balance_error: float
    faces_per_modelled_surface: int
    surfaces: tuple
    verdict: str
    warnings: tuple
    required_torque_Nm: float | None = None
    service_factor: float | None = None
    capacity_margin_fe: float | None = None
    capacity_margin_uniform_pressure: float | None = None
    capacity_margin_uniform_wear: float | None = None
    allowable_pressure_MPa: float | None = None
    design_peak_over_allowable: float | None = None
    failed_criteria: tuple = ()     # names of the criteria the design fails (said in the verdict too)

    def _keys(self) -> list[str]:
        own = [f.name for f in fields(self) if f.name != "hand"]
        return [k for k in self.hand.as_dict() if k not in own] + own

    def __getitem__(self, key: str):
        if key != "hand" and key in self.__dataclass_fields__:
            return getattr(self, key)
        if key in self.hand.__dataclass_fields__:
            return getattr(self.hand, key)
        raise KeyError(key)

    def __iter__(self):
        return iter(self._keys())

    def __len__(self) -> int:
        return len(self._keys())

    def as_dict(self) -> dict:
        """Every output key as a plain dict (lists for the per-surface and warning tuples)."""
        out = dict(self.items())
        out["surfaces"], out["warnings"] = list(self.surfaces), list(self.warnings)
        out["failed_criteria"] = list(self.failed_criteria)
        return out


def compare(surfaces, hand, required_torque_Nm=None, service_factor=1.0, peak=None,
            contact_area_fraction=None, allowable_pressure_MPa=None, design=None) -> Comparison:
    """Torque capacity from the FE contact forces against the two hand methods.

    ``peak`` = (pressure MPa, radius mm, surface name), ``design`` = the same for the design
    peak (band mean, see design_peak.py) and ``contact_area_fraction`` replace the values
    read from ``surfaces`` when the solve has a finer picture of them than the surfaces carry
    (the (r, θ) grid of a tilted solve, whose surfaces are θ-summed rings).
    ``allowable_pressure_MPa``: the lining's allowable, judged on the design peak.
    """
    hand = as_hand_capacity(hand)
    require(len(surfaces) > 0, "no FE surfaces given")
    data = [surface_arrays(s, i, hand) for i, s in enumerate(surfaces)]
    faces = faces_per_modelled_surface(len(data), hand.friction_surfaces)

    total_torque = faces * hand.friction_coefficient * sum(float(np.sum(s["f"] * s["r"])) for s in data) / 1000.0
    per_surface = [_surface_summary(s, hand, faces, total_torque) for s in data]
    balance = max((ps["axial_force_balance_error"] for ps in per_surface), key=abs)

    xi = capacity_position(total_torque, hand)
    r_eff = effective_radius_mm(total_torque, hand)
    # A uniform scale error eps in the FE forces moves R_eff by eps R_eff; xi magnifies it.
    xi_uncertainty = abs(balance) * r_eff / radius_gap_mm(hand.inner_radius_mm, hand.outer_radius_mm)

    if peak is None:
        peak_at = max(range(len(data)), key=lambda i: float(np.max(data[i]["p"])))
        peak_node = int(np.argmax(data[peak_at]["p"]))
        peak = (float(data[peak_at]["p"][peak_node]), float(data[peak_at]["r"][peak_node]), data[peak_at]["name"])
    if contact_area_fraction is None:
        area_total = sum(float(np.sum(s["area"])) for s in data)
        contact_area_fraction = sum(float(np.sum(s["area"][s["contact"]])) for s in data) / area_total
    if design is None:
        worst = max(per_surface, key=lambda x: x["design_peak_pressure_MPa"])
        design = (worst["design_peak_pressure_MPa"], worst["design_peak_radius_mm"], worst["name"])

    sentences = [_assumption_sentence(xi, total_torque, hand), _radius_sentence(r_eff, hand)]
    warnings = _warnings(xi, xi_uncertainty, balance, total_torque, hand, sentences[0])
    failed = []
    margins = {}
    if required_torque_Nm is not None:
        margins = _capacity_margins(total_torque, hand, required_torque_Nm, service_factor)
        sentences.append(_margin_sentence(margins))
        if margins["capacity_margin_fe"] < 0.0:
            failed.append("required torque")
            warnings.append("WARNING: BY THE FE PRESSURE THE CLUTCH SLIPS: its capacity is below the required "
                            "torque times the service factor.")
    band = band_width_mm(hand.inner_radius_mm, hand.outer_radius_mm, hand.semi_cone_angle_deg)
    allowable = {}
    if allowable_pressure_MPa is not None:
        ratio = design[0] / allowable_pressure_MPa
        allowable = {"allowable_pressure_MPa": float(allowable_pressure_MPa), "design_peak_over_allowable": ratio}
        if ratio > 1.0:
            failed.append("allowable pressure")
            warnings.append(f"WARNING: THE LINING'S ALLOWABLE PRESSURE IS EXCEEDED: the design peak pressure "
                            f"{design[0]:.4g} MPa (mean over the worst {band:.3g} mm band along the face, at "
                            f"r = {design[1]:.2f} mm) is {_pct(ratio - 1.0)} above the allowable "
                            f"{allowable_pressure_MPa:.4g} MPa.")
        elif peak[0] > allowable_pressure_MPa:
            sentences.append(f"The nodal peak {peak[0]:.4g} MPa at r = {peak[1]:.2f} mm is above the allowable "
                             f"{allowable_pressure_MPa:.4g} MPa, but it is an edge concentration that grows with mesh "
                             f"refinement; the design peak ({design[0]:.4g} MPa over a {band:.3g} mm band) is within.")
    if contact_area_fraction < _FULL_CONTACT:
        failed.append("partial contact")
        warnings.append(f"WARNING: CONTACT IS PARTIAL: {_pct(1.0 - contact_area_fraction)} of the friction face "
                        "is open, while both hand formulas assume the whole face carries load.")
    return Comparison(
        hand=hand, torque_fe_Nm=total_torque, capacity_position=xi, capacity_position_uncertainty=xi_uncertainty,
        effective_radius_mm=r_eff, effective_radius_position=position_on_annulus(r_eff, hand),
        radius_uniform_pressure_position=position_on_annulus(hand.radius_uniform_pressure_mm, hand),
        radius_uniform_wear_position=position_on_annulus(hand.radius_uniform_wear_mm, hand),
        torque_fe_over_uniform_wear=total_torque / hand.torque_uniform_wear_Nm - 1.0,
        torque_fe_over_uniform_pressure=total_torque / hand.torque_uniform_pressure_Nm - 1.0,
        peak_pressure_MPa=peak[0], peak_pressure_radius_mm=peak[1], peak_pressure_surface=peak[2],
        peak_pressure_over_uniform_wear_peak=peak[0] / hand.peak_pressure_uniform_wear_MPa,
        design_peak_pressure_MPa=design[0], design_peak_radius_mm=design[1], design_peak_surface=design[2],
        design_peak_band_mm=band,
        mean_pressure_MPa=hand.uniform_pressure_MPa, contact_area_fraction=contact_area_fraction,
        axial_force_balance_error=balance, faces_per_modelled_surface=faces, surfaces=tuple(per_surface),
        # xi < 0 is said once
        verdict=" ".join(sentences + [w for w in warnings if w not in sentences]), warnings=tuple(warnings),
        failed_criteria=tuple(failed), **margins, **allowable)


def conservative_methods(xi: float) -> str:
    """Which hand formula is conservative (predicts no more torque than the FE): ξ ≥ 1 both, 0 ≤ ξ < 1
    uniform wear only, ξ < 0 neither (ξ = (T − T_uw)/(T_up − T_uw), T_uw < T_up)."""
    if xi >= 1.0:
        return "both"
    return "uniform wear" if xi >= 0.0 else "neither"


CONSERVATIVE_WORDS = {"both": "both hand formulas are conservative",
                      "uniform wear": "only uniform wear is conservative",
                      "neither": "neither hand formula is conservative"}

