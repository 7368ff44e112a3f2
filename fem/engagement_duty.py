"""The slip duty and friction heating of a coupled engagement (fem/engagement.py), and its checks.

Plain data and their validation only: the loop itself is in fem/engagement.py.  Every bad value
is refused with a ValueError naming the field, the value and the allowed range.
"""
from __future__ import annotations

import math
from dataclasses import dataclass

SPEED_LAWS = ("constant", "linear", "inertia")


def _finite(name: str, value, low: float = 0.0, strict: bool = False, unit: str = "") -> None:
    ok = isinstance(value, (int, float)) and not isinstance(value, bool) and math.isfinite(value)
    if not ok or (value <= low if strict else value < low):
        bound = f"> {low:g}" if strict else f">= {low:g}"
        raise ValueError(f"{name} = {value!r}: must be a finite number {bound}{' ' + unit if unit else ''}")


def _count(name: str, value, low: int = 1) -> None:
    if not isinstance(value, int) or isinstance(value, bool) or value < low:
        raise ValueError(f"{name} = {value!r}: must be a whole number >= {low}")


@dataclass(frozen=True)
class SlipDuty:
    """The slip of one or more engagements (see fem/engagement.py for each law)."""

    slip_speed: float              # rad/s, relative speed of the friction faces at the start of each engagement
    slip_time: float               # s, slip duration ("constant", "linear"); "inertia": the longest slip allowed
    speed_law: str = "linear"      # "constant" | "linear" (falls linearly to 0 over slip_time) | "inertia"
    engagements: int = 1
    dwell_time: float = 0.0        # s of no slip (cooling only) after every engagement but the last
    inertia: float | None = None   # t·mm² (1 kg·m² = 1000 t·mm²), driven inertia for "inertia"
    drag_torque: float = 0.0       # N·mm, resisting torque on the driven side ("inertia")
    steps_per_engagement: int = 100   # time steps over one slip ("inertia": over the estimated slip time)
    dwell_steps: int = 20          # time steps over one dwell (and over the cool-down)
    cool_down_time: float = 0.0    # s of no slip after the last engagement
    initial_rise: float = 0.0      # K, uniform θ = T − T_ref of the whole section at t = 0

    def __post_init__(self):
        _finite("slip_speed", self.slip_speed, unit="rad/s")
        _finite("slip_time", self.slip_time, strict=True, unit="s")
        if self.speed_law not in SPEED_LAWS:
            raise ValueError(f"speed_law = {self.speed_law!r}: must be one of {', '.join(SPEED_LAWS)}")
        _count("engagements", self.engagements)
        _finite("dwell_time", self.dwell_time, unit="s")
        _finite("drag_torque", self.drag_torque, unit="N·mm")
        _count("steps_per_engagement", self.steps_per_engagement)
        _count("dwell_steps", self.dwell_steps)
        _finite("cool_down_time", self.cool_down_time, unit="s")
        if not (isinstance(self.initial_rise, (int, float)) and math.isfinite(self.initial_rise)):
            raise ValueError(f"initial_rise = {self.initial_rise!r}: must be a finite number of K")
        if self.speed_law == "inertia":
            if self.inertia is None:
                raise ValueError("inertia = None: speed_law 'inertia' needs the driven inertia "
                                 "(a finite number > 0 t·mm²)")
            _finite("inertia", self.inertia, strict=True, unit="t·mm²")
        elif self.inertia is not None:
            _finite("inertia", self.inertia, strict=True, unit="t·mm²")

    def speed(self, fraction: float) -> float:
        """ω (rad/s) after ``fraction`` (0 … 1) of a slip of law "constant" or "linear"."""
        if self.speed_law == "constant":
            return float(self.slip_speed)
        return float(self.slip_speed) * max(0.0, 1.0 - fraction)


@dataclass(frozen=True)
class FrictionHeating:
    """Heat μ p v generated on one slipping contact pair of the FE model."""

    pair: str                      # name of a contact pair of the FeModel that slips (a friction face)
    friction_coefficient: float
    conductance: float | None = None   # mW/(mm²·K) across closed nodes; None = one temperature (tie)
    partition: float | None = None     # None: shared by conduction across the interface; a number in
                                       # [0, 1]: the fraction put into face A's body, no heat crosses

    def __post_init__(self):
        _finite(f"friction_coefficient of {self.pair!r}", self.friction_coefficient)
        if self.conductance is not None:
            _finite(f"conductance of {self.pair!r}", self.conductance, unit="mW/(mm²·K)")
        if self.partition is not None:
            p = self.partition
            if not (isinstance(p, (int, float)) and math.isfinite(p) and 0.0 <= p <= 1.0):
                raise ValueError(f"partition of {self.pair!r} = {p!r}: must be None or a number in [0, 1]")
            if self.conductance is not None:
                raise ValueError(f"partition of {self.pair!r} = {p!r} with conductance = "
                                 f"{self.conductance!r}: a partition means no heat crosses the "
                                 "interface; give one of the two")

    @property
    def share_a(self) -> float:
        """Fraction of the generated heat put on face A.  With conduction across the interface
        (partition None) half goes on each face and the interface shares it out (with a tie the
        split makes no difference: docs/thermal.md)."""
        return 0.5 if self.partition is None else float(self.partition)
