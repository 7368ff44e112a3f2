"""Comparison stage: FE contact pressure against the two classical hand methods.

Pure functions on plain data; no FE, no files.  Units inside: mm, N, MPa (so torque
comes out in N·mm and is reported in N·m).

Hand methods (source: Shigley's Mechanical Engineering Design, clutch chapter, uniform-
pressure and uniform-wear methods for disk and cone clutches; Juvinall & Marshek,
Fundamentals of Machine Component Design, clutch chapter):
  uniform pressure  p = W / (pi (r2^2 - r1^2)),   R_up = (2/3)(r2^3 - r1^3)/(r2^2 - r1^2)
  uniform wear      p r = const, p_max = W / (2 pi r1 (r2 - r1)),   R_uw = (r1 + r2)/2
  torque            T = n mu W R / sin(alpha)       (alpha = 90 deg for a plate)
On a cone the pressure is normal to the slant; with dA = 2 pi r ds and ds = dr / sin(alpha)
the axial resultant of a normal pressure p is  int p sin(alpha) dA = int p 2 pi r dr, so the
normal pressure of each method has the same value as on a plate of the same r1, r2, W.
"""
from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import asdict, dataclass

import numpy as np

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


@dataclass(frozen=True)
class HandCapacity:
    inner_radius_mm: float
    outer_radius_mm: float
    semi_cone_angle_deg: float
    friction_coefficient: float
    friction_surfaces: int
    axial_force_N: float
    uniform_pressure_MPa: float
    radius_uniform_pressure_mm: float
    torque_uniform_pressure_Nm: float
    peak_pressure_uniform_wear_MPa: float
    radius_uniform_wear_mm: float
    torque_uniform_wear_Nm: float
    engagement_force_N: float
    self_locking: bool

    def as_dict(self) -> dict:
        return asdict(self)

    @property
    def sin_alpha(self) -> float:
        return math.sin(math.radians(self.semi_cone_angle_deg))

    def _inside(self, r_mm) -> np.ndarray:
        r = np.asarray(r_mm, dtype=float)
        return (r >= self.inner_radius_mm) & (r <= self.outer_radius_mm)

    def pressure_uniform_pressure_MPa(self, r_mm) -> np.ndarray:
        """Normal pressure of the uniform-pressure method at r (zero off the annulus)."""
        return np.where(self._inside(r_mm), self.uniform_pressure_MPa, 0.0)

    def pressure_uniform_wear_MPa(self, r_mm) -> np.ndarray:
        """Normal pressure of the uniform-wear method, p = p_max r1 / r (zero off the annulus)."""
        r = np.asarray(r_mm, dtype=float)
        inside = self._inside(r)
        safe_r = np.where(inside, r, self.inner_radius_mm)
        p = self.peak_pressure_uniform_wear_MPa * self.inner_radius_mm / safe_r
        return np.where(inside, p, 0.0)

    def pressure_curves(self, samples: int = 201) -> dict:
        r = np.linspace(self.inner_radius_mm, self.outer_radius_mm, samples)
        return {
            "r_mm": r,
            "uniform_pressure_MPa": self.pressure_uniform_pressure_MPa(r),
            "uniform_wear_MPa": self.pressure_uniform_wear_MPa(r),
        }


def _require(condition: bool, message: str) -> None:
    if not condition:
        raise ValueError(message)


def _finite(name: str, value) -> float:
    try:
        x = float(value)
    except (TypeError, ValueError):
        raise ValueError(f"{name} must be a number, got {value!r}") from None
    _require(math.isfinite(x), f"{name} must be finite, got {value!r}")
    return x


def uniform_pressure_MPa(inner_radius_mm: float, outer_radius_mm: float, axial_force_N: float) -> float:
    return axial_force_N / (math.pi * (outer_radius_mm**2 - inner_radius_mm**2))


def radius_uniform_pressure_mm(inner_radius_mm: float, outer_radius_mm: float) -> float:
    # Factored form (2/3)(r1^2 + r1 r2 + r2^2)/(r1 + r2): no cancellation for narrow annuli.
    r1, r2 = inner_radius_mm, outer_radius_mm
    return 2.0 / 3.0 * (r1 * r1 + r1 * r2 + r2 * r2) / (r1 + r2)


def radius_uniform_wear_mm(inner_radius_mm: float, outer_radius_mm: float) -> float:
    return 0.5 * (inner_radius_mm + outer_radius_mm)


def radius_gap_mm(inner_radius_mm: float, outer_radius_mm: float) -> float:
    """R_up - R_uw = (r2 - r1)^2 / (6 (r1 + r2)), exact; the difference of the two radii
    computed separately would lose most digits for a narrow annulus."""
    r1, r2 = inner_radius_mm, outer_radius_mm
    return (r2 - r1) ** 2 / (6.0 * (r1 + r2))


def peak_pressure_uniform_wear_MPa(inner_radius_mm: float, outer_radius_mm: float, axial_force_N: float) -> float:
    return axial_force_N / (2.0 * math.pi * inner_radius_mm * (outer_radius_mm - inner_radius_mm))


def cot_deg(angle_deg: float) -> float:
    # tan(90 - a) gives exactly 0 for a plate; cos/sin would leave 6e-17.
    return math.tan(math.radians(90.0 - angle_deg))


def engagement_force_N(axial_force_N: float, semi_cone_angle_deg: float, friction_coefficient: float) -> float:
    """Axial force to push the cone home while it still slides axially: friction on the slant
    opposes the approach, W_e = W (1 + mu cot alpha); a plate needs just W."""
    return axial_force_N * (1.0 + friction_coefficient * cot_deg(semi_cone_angle_deg))


def is_self_locking(semi_cone_angle_deg: float, friction_coefficient: float) -> bool:
    """tan(alpha) < mu: friction holds the cone in after the force is removed (common practice)."""
    return semi_cone_angle_deg < math.degrees(math.atan(friction_coefficient))


def hand_capacity(inner_radius_mm, outer_radius_mm, semi_cone_angle_deg, friction_coefficient,
                  friction_surfaces, axial_force_N) -> HandCapacity:
    r1 = _finite("inner_radius_mm", inner_radius_mm)
    r2 = _finite("outer_radius_mm", outer_radius_mm)
    alpha = _finite("semi_cone_angle_deg", semi_cone_angle_deg)
    mu = _finite("friction_coefficient", friction_coefficient)
    w = _finite("axial_force_N", axial_force_N)
    _require(r1 > 0.0, f"inner_radius_mm = {r1} must be > 0 (uniform-wear pressure is infinite on the axis)")
    _require(r2 > r1, f"outer_radius_mm = {r2} must be greater than inner_radius_mm = {r1}")
    _require(radius_gap_mm(r1, r2) > 0.0, f"annulus [{r1}, {r2}] mm is too narrow to tell the two methods apart")
    _require(0.0 < alpha <= 90.0, f"semi_cone_angle_deg = {alpha} must be in (0, 90]; a plate is 90")
    _require(mu > 0.0, f"friction_coefficient = {mu} must be > 0")
    _require(w > 0.0, f"axial_force_N = {w} must be > 0")
    n_float = _finite("friction_surfaces", friction_surfaces)
    _require(n_float >= 1 and n_float == int(n_float),
             f"friction_surfaces = {friction_surfaces!r} must be a whole number >= 1")
    n = int(n_float)

    sin_a = math.sin(math.radians(alpha))
    r_up = radius_uniform_pressure_mm(r1, r2)
    r_uw = radius_uniform_wear_mm(r1, r2)
    return HandCapacity(
        inner_radius_mm=r1, outer_radius_mm=r2, semi_cone_angle_deg=alpha,
        friction_coefficient=mu, friction_surfaces=n, axial_force_N=w,
        uniform_pressure_MPa=uniform_pressure_MPa(r1, r2, w),
        radius_uniform_pressure_mm=r_up,
        torque_uniform_pressure_Nm=n * mu * w * r_up / sin_a / 1000.0,
        peak_pressure_uniform_wear_MPa=peak_pressure_uniform_wear_MPa(r1, r2, w),
        radius_uniform_wear_mm=r_uw,
        torque_uniform_wear_Nm=n * mu * w * r_uw / sin_a / 1000.0,
        engagement_force_N=engagement_force_N(w, alpha, mu),
        self_locking=is_self_locking(alpha, mu),
    )


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
    _require(not required, f"surface data lacks {names[0]!r}")
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
    _require(r.size > 0, f"{name}: no nodes")
    contact = _field(surface, ("in_contact",), required=False)
    area = _field(surface, ("tributary_area_mm2", "tributary_area"), required=False)
    contact = p > 0.0 if contact is None else np.asarray(contact, dtype=bool).ravel()
    area = tributary_areas_mm2(r, hand.semi_cone_angle_deg) if area is None else np.asarray(area, dtype=float).ravel()

    per_node = (("pressure_MPa", p), ("normal_force_N", f), ("in_contact", contact), ("tributary_area_mm2", area))
    for label, arr in per_node:
        _require(arr.shape == r.shape, f"{name}: {label} has {arr.size} values for {r.size} radii")
    for label, arr in (("r_mm", r), ("pressure_MPa", p), ("normal_force_N", f), ("tributary_area_mm2", area)):
        _require(bool(np.all(np.isfinite(arr))), f"{name}: {label} contains NaN or infinity")
    r1, r2 = hand.inner_radius_mm, hand.outer_radius_mm
    slack = _RADIUS_ROUNDOFF * r2
    _require(bool(np.all((r >= r1 - slack) & (r <= r2 + slack))),
             f"{name}: node radii {r.min():.6g}..{r.max():.6g} mm leave the friction annulus [{r1}, {r2}] mm")
    total = float(np.sum(np.abs(f)))
    _require(total > 0.0, f"{name}: no normal force: the surface carries no load")
    _require(bool(np.all(f >= -_TENSION_ROUNDOFF * total)),
             f"{name}: tensile normal force {f.min():.6g} N: not a contact solution")
    _require(bool(np.all(area >= 0.0)) and area.sum() > 0.0,
             f"{name}: tributary areas must be >= 0 with a positive total")
    return {"name": name, "r": np.clip(r, r1, r2), "p": p, "f": np.clip(f, 0.0, None), "contact": contact, "area": area}


def faces_per_modelled_surface(n_modelled: int, friction_surfaces: int) -> int:
    """All n faces modelled, or one face standing for each of n faces that carry the same clamp
    force (a plate pack with spline drag neglected, common practice)."""
    if n_modelled == friction_surfaces:
        return 1
    _require(n_modelled == 1,
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
    required = _finite("required_torque_Nm", required_torque_Nm)
    sf = _finite("service_factor", service_factor)
    _require(required > 0.0, f"required_torque_Nm = {required} must be > 0")
    _require(sf > 0.0, f"service_factor = {sf} must be > 0")
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


def as_hand_capacity(hand) -> HandCapacity:
    if isinstance(hand, HandCapacity):
        return hand
    _require(isinstance(hand, Mapping), "hand must be a HandCapacity or the mapping from HandCapacity.as_dict()")
    keys = ("inner_radius_mm", "outer_radius_mm", "semi_cone_angle_deg", "friction_coefficient",
            "friction_surfaces", "axial_force_N")
    missing = [k for k in keys if k not in hand]
    _require(not missing, f"hand data lacks {missing}")
    return hand_capacity(*(hand[k] for k in keys))


def _surface_summary(s: dict, hand: HandCapacity, faces: int, totals: tuple[float, float]) -> dict:
    axial = float(np.sum(s["f"])) * hand.sin_alpha
    torque = faces * hand.friction_coefficient * float(np.sum(s["f"] * s["r"])) / 1000.0
    total_axial, total_torque = totals
    return {
        "name": s["name"],
        "axial_force_N": axial,
        "axial_force_share": axial / total_axial,
        "axial_force_balance_error": axial / hand.axial_force_N - 1.0,
        "torque_Nm": torque,
        "torque_share": torque / total_torque,
        # Force-weighted radius: in [r1, r2] whatever the balance error.
        "effective_radius_mm": float(np.sum(s["f"] * s["r"]) / np.sum(s["f"])),
        "peak_pressure_MPa": float(np.max(s["p"])),
        "contact_area_fraction": float(np.sum(s["area"][s["contact"]]) / np.sum(s["area"])),
    }


def compare(surfaces, hand, required_torque_Nm=None, service_factor=1.0) -> dict:
    """Torque capacity from the FE contact forces against the two hand methods."""
    hand = as_hand_capacity(hand)
    _require(len(surfaces) > 0, "no FE surfaces given")
    data = [surface_arrays(s, i, hand) for i, s in enumerate(surfaces)]
    faces = faces_per_modelled_surface(len(data), hand.friction_surfaces)

    total_torque = faces * hand.friction_coefficient * sum(float(np.sum(s["f"] * s["r"])) for s in data) / 1000.0
    total_axial = sum(float(np.sum(s["f"])) for s in data) * hand.sin_alpha
    per_surface = [_surface_summary(s, hand, faces, (total_axial, total_torque)) for s in data]
    balance = max((ps["axial_force_balance_error"] for ps in per_surface), key=abs)

    xi = capacity_position(total_torque, hand)
    r_eff = effective_radius_mm(total_torque, hand)
    # A uniform scale error eps in the FE forces moves R_eff by eps R_eff; xi magnifies it.
    xi_uncertainty = abs(balance) * r_eff / radius_gap_mm(hand.inner_radius_mm, hand.outer_radius_mm)

    peak_at = max(range(len(data)), key=lambda i: float(np.max(data[i]["p"])))
    peak_node = int(np.argmax(data[peak_at]["p"]))
    peak = float(data[peak_at]["p"][peak_node])
    area_total = sum(float(np.sum(s["area"])) for s in data)
    area_contact = sum(float(np.sum(s["area"][s["contact"]])) for s in data)

    out = {
        **hand.as_dict(),
        "torque_fe_Nm": total_torque,
        "capacity_position": xi,
        "capacity_position_uncertainty": xi_uncertainty,
        "effective_radius_mm": r_eff,
        "effective_radius_position": position_on_annulus(r_eff, hand),
        "radius_uniform_pressure_position": position_on_annulus(hand.radius_uniform_pressure_mm, hand),
        "radius_uniform_wear_position": position_on_annulus(hand.radius_uniform_wear_mm, hand),
        "torque_fe_over_uniform_wear": total_torque / hand.torque_uniform_wear_Nm - 1.0,
        "torque_fe_over_uniform_pressure": total_torque / hand.torque_uniform_pressure_Nm - 1.0,
        "peak_pressure_MPa": peak,
        "peak_pressure_radius_mm": float(data[peak_at]["r"][peak_node]),
        "peak_pressure_surface": data[peak_at]["name"],
        "peak_pressure_over_uniform_wear_peak": peak / hand.peak_pressure_uniform_wear_MPa,
        "mean_pressure_MPa": hand.uniform_pressure_MPa,
        "contact_area_fraction": area_contact / area_total,
        "axial_force_balance_error": balance,
        "faces_per_modelled_surface": faces,
        "surfaces": per_surface,
        **dict.fromkeys(MARGIN_KEYS),  # stable key set: filled only with a required torque
    }

    sentences = [_assumption_sentence(xi, total_torque, hand), _radius_sentence(r_eff, hand)]
    warnings = _warnings(xi, xi_uncertainty, balance, total_torque, hand, sentences[0])
    if required_torque_Nm is not None:
        margins = _capacity_margins(total_torque, hand, required_torque_Nm, service_factor)
        out.update(margins)
        sentences.append(_margin_sentence(margins))
        if margins["capacity_margin_fe"] < 0.0:
            warnings.append("WARNING: BY THE FE PRESSURE THE CLUTCH SLIPS: its capacity is below the required "
                            "torque times the service factor.")

    out["verdict"] = " ".join(sentences + [w for w in warnings if w not in sentences])  # xi < 0 is said once
    out["warnings"] = warnings
    return out
