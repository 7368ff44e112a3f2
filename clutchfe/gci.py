"""Grid convergence index from three meshes: observed order, Richardson extrapolation, GCI.

The procedure of Celik et al., "Procedure for estimation and reporting of uncertainty due to
discretization in CFD applications", J. Fluids Eng. 130 (2008) 078001, which generalises
Roache (1998, Verification and Validation in Computational Science and Engineering) to a
refinement ratio that may differ between the two mesh pairs; ASME V&V 20-2009 adopts it.
Mesh 1 is the finest, mesh 3 the coarsest; every GCI here belongs to the finest mesh unless
its name says otherwise.
"""
from __future__ import annotations

import math
from dataclasses import asdict, dataclass

SAFETY_FACTOR = 1.25                # three meshes (Roache 1998; Celik et al. 2008)
ASYMPTOTIC_BAND = 0.1               # |GCI_32 / (r21^p GCI_21) - 1| below this: in the asymptotic range
ROUND_OFF = 1e-10                   # relative changes below this are solver round-off, not mesh error
# No observed order (the change does not shrink): Roache (1998) asks for the safety factor 3 of
# an unconfirmed order; order 1 is assumed because a contact edge can hold the rate down to it
# (an assumption made here, on the safe side of the formal order 2 of the elements).
UNCONFIRMED_SAFETY_FACTOR = 3.0
UNCONFIRMED_ORDER = 1.0


@dataclass(frozen=True)
class GridConvergence:
    """One quantity on three meshes (fine, medium, coarse) and what the refinement says about it."""

    fine: float
    medium: float
    coarse: float
    ratio_21: float                 # h2 / h1
    ratio_32: float                 # h3 / h2
    behaviour: str                  # "monotone", "oscillatory", "converged to round-off", "not converging"
    observed_order: float | None
    extrapolated: float | None      # Richardson extrapolation from meshes 1 and 2
    relative_change_21: float       # e_a21 = |(f1 - f2) / f1|
    relative_error_extrapolated: float | None    # e_ext21 = |(f_ext - f1) / f_ext|
    gci_fine: float | None          # GCI_fine^21, relative (0.01 = 1 %)
    gci_medium: float | None        # GCI^32 for the medium mesh, relative
    band_fine: float | None         # GCI_fine^21 as an absolute band around f1, units of f
    asymptotic_ratio: float | None  # GCI^32 / (r21^p GCI^21): 1 in the asymptotic range
    order_assumed: bool = False     # True: no observed order; GCI from the largest change, Fs = 3, p = 1
    band_coarse: float | None = None    # absolute band around the coarsest value f3, units of f
    order_used: float | None = None     # the order the extrapolation and the bands use
    order_capped: bool = False      # True: the observed order exceeded the formal order of the elements

    @property
    def in_asymptotic_range(self) -> bool:
        if self.behaviour == "converged to round-off":
            return True
        return self.asymptotic_ratio is not None and abs(self.asymptotic_ratio - 1.0) <= ASYMPTOTIC_BAND

    def as_dict(self) -> dict:
        out = asdict(self)
        out["in_asymptotic_range"] = self.in_asymptotic_range
        return out


def observed_order(e21: float, e32: float, r21: float, r32: float, iterations: int = 200) -> float:
    """Apparent order p from the two mesh differences (Celik et al. 2008, eqs. 3a-3c).

    With r21 == r32 the correction term q vanishes and this is ln|e32/e21| / ln r (Roache 1998).
    The fixed-point iteration of the paper diverges when r32 is much larger than r21; then the
    same equation is solved by bracketing.  NaN when it has no root for p in (0.05, 20].
    """
    s = math.copysign(1.0, e32 / e21)
    base = math.log(abs(e32 / e21))

    def update(p: float) -> float:
        return abs(base + math.log((r21 ** p - s) / (r32 ** p - s))) / math.log(r21)

    p = abs(base) / math.log(r21)
    try:
        for _ in range(iterations):
            p_next = update(p)
            if abs(p_next - p) <= 1e-12 * max(1.0, p):
                return p_next
            p = p_next
    except (ValueError, OverflowError, ZeroDivisionError):
        pass
    return _bracketed_order(update)


def _bracketed_order(update) -> float:
    from scipy.optimize import brentq

    def residual(p: float) -> float:
        return update(p) - p

    grid = [0.05 * 1.1 ** k for k in range(64)]          # 0.05 ... about 20
    values = []
    for p in grid:
        try:
            values.append(residual(p))
        except (ValueError, OverflowError, ZeroDivisionError):
            values.append(math.nan)
    for a, b, fa, fb in zip(grid, grid[1:], values, values[1:]):
        if math.isfinite(fa) and math.isfinite(fb) and fa * fb <= 0.0:
            return brentq(residual, a, b, xtol=1e-14, rtol=1e-14)
    return math.nan


def grid_convergence(fine: float, medium: float, coarse: float, ratio_21: float,
                     ratio_32: float | None = None, safety_factor: float = SAFETY_FACTOR,
                     formal_order: float | None = None) -> GridConvergence:
    """Observed order, extrapolated value and GCI of one quantity computed on three meshes.

    ``formal_order``: the order the discretisation can reach.  An observed order above it is
    not credible (the meshes are not in the asymptotic range, or errors cancel): the formal
    order is used instead and the safety factor becomes 3 (Roache 1998, for an order that
    the data do not confirm).  ``band_coarse`` is the band of the coarsest mesh's value:
    the safety factor times its distance from the extrapolated value.
    """
    r21 = float(ratio_21)
    r32 = float(ratio_32 if ratio_32 is not None else ratio_21)
    if r21 <= 1.0 or r32 <= 1.0:
        raise ValueError(f"refinement ratios must exceed 1 (got r21 = {r21:g}, r32 = {r32:g})")
    f1, f2, f3 = float(fine), float(medium), float(coarse)
    e21, e32 = f2 - f1, f3 - f2
    scale = max(abs(f1), abs(f2), abs(f3), 1e-300)
    ea21 = abs(e21 / f1) if f1 else math.inf
    if abs(e21) <= ROUND_OFF * scale and abs(e32) <= ROUND_OFF * scale:
        return GridConvergence(f1, f2, f3, r21, r32, "converged to round-off", None, f1, ea21, 0.0, 0.0, 0.0,
                               0.0, None, band_coarse=abs(f3 - f1))
    if abs(e21) <= ROUND_OFF * scale:
        # the two finest agree while the coarse one differs: no order can be read, the band is e32 on mesh 2
        return GridConvergence(f1, f2, f3, r21, r32, "converged to round-off", None, f1, ea21, 0.0, 0.0, None,
                               0.0, None, band_coarse=abs(f3 - f1))
    p = observed_order(e21, e32, r21, r32)
    behaviour = "oscillatory" if e32 / e21 < 0 else "monotone"
    if not math.isfinite(p) or p <= 0.0 or abs(e21) >= abs(e32):
        # the change does not shrink as the mesh is refined: Richardson extrapolation does not apply
        return _unconfirmed(f1, f2, f3, r21, r32)
    observed, capped = p, formal_order is not None and p > formal_order
    if capped:
        p, safety_factor = float(formal_order), UNCONFIRMED_SAFETY_FACTOR
    f_ext = (r21 ** p * f1 - f2) / (r21 ** p - 1.0)
    e_ext = abs((f_ext - f1) / f_ext) if f_ext else math.inf
    gci21 = safety_factor * ea21 / (r21 ** p - 1.0)
    ea32 = abs(e32 / f2) if f2 else math.inf
    gci32 = safety_factor * ea32 / (r32 ** p - 1.0)
    band = safety_factor * abs(e21) / (r21 ** p - 1.0)
    # Roache (1998): GCI_23 = r^p GCI_12 in the asymptotic range (relative GCIs; f1 ~ f2 there)
    asymptotic = gci32 / (r21 ** p * gci21) if gci21 > 0 else None
    return GridConvergence(f1, f2, f3, r21, r32, behaviour, observed, f_ext, ea21, e_ext, gci21, gci32, band,
                           asymptotic, band_coarse=safety_factor * abs(f3 - f_ext), order_used=p,
                           order_capped=capped)


def _unconfirmed(f1: float, f2: float, f3: float, r21: float, r32: float) -> GridConvergence:
    """No observed order: a conservative index from the larger of the two changes (Roache 1998)."""
    change = max(abs(f2 - f1), abs(f3 - f2))
    denominator = r21 ** UNCONFIRMED_ORDER - 1.0
    band = UNCONFIRMED_SAFETY_FACTOR * change / denominator
    gci = band / abs(f1) if f1 else math.inf
    ea21 = abs((f2 - f1) / f1) if f1 else math.inf
    # the coarsest value's band: its distance from the finest, plus the finest's own band
    return GridConvergence(f1, f2, f3, r21, r32, "not converging", None, None, ea21, None, gci, None, band, None,
                           order_assumed=True, band_coarse=abs(f3 - f1) + band, order_used=UNCONFIRMED_ORDER)
