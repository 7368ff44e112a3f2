"""The two classical hand methods of clutch capacity: uniform pressure and uniform wear.

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


def require(condition: bool, message: str) -> None:
    if not condition:
        raise ValueError(message)


def finite(name: str, value) -> float:
    try:
        x = float(value)
    except (TypeError, ValueError):
        raise ValueError(f"{name} must be a number, got {value!r}") from None
    require(math.isfinite(x), f"{name} must be finite, got {value!r}")
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
    r1 = finite("inner_radius_mm", inner_radius_mm)
    r2 = finite("outer_radius_mm", outer_radius_mm)
    alpha = finite("semi_cone_angle_deg", semi_cone_angle_deg)
    mu = finite("friction_coefficient", friction_coefficient)
    w = finite("axial_force_N", axial_force_N)
    require(r1 > 0.0, f"inner_radius_mm = {r1} must be > 0 (uniform-wear pressure is infinite on the axis)")
    require(r2 > r1, f"outer_radius_mm = {r2} must be greater than inner_radius_mm = {r1}")
    require(radius_gap_mm(r1, r2) > 0.0, f"annulus [{r1}, {r2}] mm is too narrow to tell the two methods apart")
    require(0.0 < alpha <= 90.0, f"semi_cone_angle_deg = {alpha} must be in (0, 90]; a plate is 90")
    require(mu > 0.0, f"friction_coefficient = {mu} must be > 0")
    require(w > 0.0, f"axial_force_N = {w} must be > 0")
    n_float = finite("friction_surfaces", friction_surfaces)
    require(n_float >= 1 and n_float == int(n_float),
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


def as_hand_capacity(hand) -> HandCapacity:
    if isinstance(hand, HandCapacity):
        return hand
    require(isinstance(hand, Mapping), "hand must be a HandCapacity or the mapping from HandCapacity.as_dict()")
    keys = ("inner_radius_mm", "outer_radius_mm", "semi_cone_angle_deg", "friction_coefficient",
            "friction_surfaces", "axial_force_N")
    missing = [k for k in keys if k not in hand]
    require(not missing, f"hand data lacks {missing}")
    return hand_capacity(*(hand[k] for k in keys))


__all__ = ["HandCapacity", "as_hand_capacity", "cot_deg", "engagement_force_N", "finite", "hand_capacity",
           "is_self_locking", "peak_pressure_uniform_wear_MPa", "radius_gap_mm", "radius_uniform_pressure_mm",
           "radius_uniform_wear_mm", "require", "uniform_pressure_MPa"]
