"""Pictures of a run: FE contact pressure against the two hand methods, the effective radii, and
the deformed section coloured by von Mises stress.

Figures are built on matplotlib's object interface with the Agg canvas, so nothing here
touches pyplot's global state or needs a display; each function returns the figure it saved
so a caller (or a test) can read its labels.
"""
from __future__ import annotations

import numpy as np
from matplotlib.backends.backend_agg import FigureCanvasAgg
from matplotlib.figure import Figure
from matplotlib.tri import Triangulation

from ..comparison import HandCapacity, as_hand_capacity, surface_arrays

RADIUS_LABEL = "radius r [mm]"
PRESSURE_LABEL = "contact pressure [MPa]"
STRESS_LABEL = "von Mises [MPa]"
_MARKERS = ("o", "s", "^", "v", "D", "P", "X")


def new_figure(width_in: float, height_in: float) -> Figure:
    fig = Figure(figsize=(width_in, height_in), layout="constrained")
    FigureCanvasAgg(fig)
    return fig


def _annulus_margin_mm(hand: HandCapacity) -> float:
    # A little room either side so markers on r1 and r2 are not clipped.
    return 0.06 * (hand.outer_radius_mm - hand.inner_radius_mm)


def pressure_figure(surfaces, hand, xi: float, r_eff_mm: float, title_prefix: str) -> Figure:
    hand = as_hand_capacity(hand)
    r1, r2 = hand.inner_radius_mm, hand.outer_radius_mm
    fig = new_figure(7.0, 4.2)
    ax = fig.add_subplot()
    ax.axvspan(r1, r2, color="0.92", zorder=0, label=f"friction annulus [{r1:g}, {r2:g}] mm")

    for i, s in enumerate(surfaces):
        data = surface_arrays(s, i, hand)
        order = np.argsort(data["r"])
        ax.plot(data["r"][order], data["p"][order], marker=_MARKERS[i % len(_MARKERS)], markersize=3,
                linewidth=1.2, label=f"FE: {data['name']} [MPa]")

    curves = hand.pressure_curves()
    ax.plot(curves["r_mm"], curves["uniform_pressure_MPa"], "k--", linewidth=1.2,
            label=f"uniform pressure, same W [MPa] (R = {hand.radius_uniform_pressure_mm:.2f} mm)")
    ax.plot(curves["r_mm"], curves["uniform_wear_MPa"], "k:", linewidth=1.5,
            label=f"uniform wear, same W [MPa] (R = {hand.radius_uniform_wear_mm:.2f} mm)")
    ax.axvline(r_eff_mm, color="tab:red", linewidth=1.0, label=f"FE effective radius {r_eff_mm:.2f} mm")

    pad = _annulus_margin_mm(hand)
    ax.set_xlim(r1 - pad, r2 + pad)
    ax.set_ylim(bottom=0.0)
    ax.set_xlabel(RADIUS_LABEL)
    ax.set_ylabel(PRESSURE_LABEL)
    ax.set_title(f"{title_prefix}: capacity position xi = {xi:.3f}, R_eff = {r_eff_mm:.2f} mm")
    ax.grid(True, linewidth=0.4, alpha=0.6)
    ax.legend(fontsize="small", loc="best")
    return fig


def pressure_plot(path, surfaces, hand, xi: float, r_eff_mm: float, title_prefix: str) -> Figure:
    """FE p(r) per surface with the uniform-pressure and uniform-wear curves at the same W."""
    fig = pressure_figure(surfaces, hand, xi, r_eff_mm, title_prefix)
    fig.savefig(path, dpi=130)
    return fig


def hand_curves_over(ax, hand, title: str, up_label: str = "uniform pressure",
                     uw_label: str = "uniform wear") -> None:
    """Both hand curves at the same force under FE curves already drawn on ``ax``, and the pressure axes:
    what the wear-in and the hot-engagement pictures share."""
    curves = as_hand_capacity(hand).pressure_curves()
    ax.plot(curves["r_mm"], curves["uniform_pressure_MPa"], "k--", linewidth=1.0, label=f"{up_label} [MPa]")
    ax.plot(curves["r_mm"], curves["uniform_wear_MPa"], "k:", linewidth=1.6, label=f"{uw_label} [MPa]")
    ax.set_xlabel(RADIUS_LABEL)
    ax.set_ylabel(PRESSURE_LABEL)
    ax.set_ylim(bottom=0.0)
    ax.grid(True, linewidth=0.4, alpha=0.6)
    ax.legend(fontsize="x-small", loc="best")
    ax.set_title(title, fontsize="medium")


def effective_radius_figure(r1: float, r2: float, r_up: float, r_uw: float, r_eff: float) -> Figure:
    if not (np.isfinite([r1, r2, r_up, r_uw, r_eff]).all() and r2 > r1):
        raise ValueError(f"need finite radii with r1 < r2, got r1 = {r1}, r2 = {r2}")
    fig = new_figure(6.5, 2.0)
    ax = fig.add_subplot()
    ax.barh(0.0, r2 - r1, left=r1, height=0.6, color="0.88", edgecolor="0.3")
    # The two hand radii are often under 1 % of r2 apart: full-height ticks in distinct styles
    # stay readable where side-by-side markers would overlap.
    marks = (("uniform wear", r_uw, "0.2", ":"), ("uniform pressure", r_up, "0.2", "--"),
             ("FE", r_eff, "tab:red", "-"))
    for name, radius, colour, style in marks:
        ax.vlines(radius, -0.45, 0.45, colors=colour, linestyles=style, linewidth=1.8,
                  label=f"{name} {radius:.2f} mm")
    pad = 0.06 * (r2 - r1)
    ax.set_xlim(min(r1, r_eff) - pad, max(r2, r_eff) + pad)
    ax.set_ylim(-0.6, 0.6)
    ax.set_yticks([])
    ax.set_xlabel(RADIUS_LABEL)
    ax.set_title(f"effective radius on the friction annulus [{r1:g}, {r2:g}] mm", fontsize="medium")
    fig.legend(fontsize="small", ncol=3, loc="outside lower center", frameon=False)
    return fig


def effective_radius_bar(path, r1: float, r2: float, r_up: float, r_uw: float, r_eff: float) -> Figure:
    """Small bar of the friction annulus with the three effective radii marked, for reports."""
    fig = effective_radius_figure(r1, r2, r_up, r_uw, r_eff)
    fig.savefig(path, dpi=130)
    return fig


def deformed_scale(points: np.ndarray, displacement: np.ndarray) -> float:
    """Magnification of the displacements: the largest one drawn as 4 % of the section's size."""
    size = float(np.ptp(points, axis=0).max())
    umax = float(np.abs(displacement).max())
    return 0.04 * size / umax if umax > 0 else 1.0


def deformed_figure(points: np.ndarray, triangles: np.ndarray, displacement: np.ndarray, von_mises: np.ndarray,
                    title: str) -> Figure:
    """The (r, z) section unloaded (grey edges) and deformed (displacements magnified), the deformed one
    coloured by the von Mises stress at the nodes; ``displacement`` is (nodes, 2), ``triangles`` the
    corner nodes first (P2 mid-nodes are carried along, not drawn as corners)."""
    points, displacement = np.asarray(points, float), np.asarray(displacement, float)
    corners = np.asarray(triangles)[:, :3]
    scale = deformed_scale(points, displacement)
    moved = points + scale * displacement
    # 1200 × 900 px at 100 dpi, as the picture always was; fixed places (no layout engine: it would
    # measure the hidden axes' ticks, a third of the picture's CPU), the colour bar below the section
    fig = Figure(figsize=(12.0, 9.0))
    FigureCanvasAgg(fig)
    ax = fig.add_axes((0.02, 0.13, 0.96, 0.82))
    ax.triplot(Triangulation(points[:, 0], points[:, 1], corners), color="0.6", linewidth=0.5,
               label="unloaded")
    field = ax.tripcolor(Triangulation(moved[:, 0], moved[:, 1], corners), np.asarray(von_mises, float),
                         shading="gouraud", cmap="viridis")
    ax.set_aspect("equal")
    ax.set_axis_off()
    fig.text(0.005, 0.995, f"{title}: deformed section, displacements x {scale:.0f} (grey: unloaded)",
             ha="left", va="top", fontsize=10)
    fig.colorbar(field, cax=fig.add_axes((0.25, 0.065, 0.5, 0.03)), orientation="horizontal", label=STRESS_LABEL)
    return fig
