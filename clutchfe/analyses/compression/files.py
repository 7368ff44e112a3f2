"""Files of the compression curves: compression_points.csv (per face node), compression_curve.png (the operating
points on the curve, and p(r) against a linear lining of the same compression) and the terminal table."""
from __future__ import annotations

import csv
from pathlib import Path

import numpy as np
from rich.markup import escape
from rich.table import Table

from ...output.plots import hand_curves_over, new_figure
from .analysis import CompressionResult

FILES = ("compression_points.csv", "compression_curve.png")
POINT_COLUMNS = ("interface", "r_mm", "z_mm", "pressure_MPa", "compression_on_curve_mm", "pressure_secant_layer_MPa",
                 "pressure_without_cushion_MPa")


def write_points_csv(path: Path, result: CompressionResult, fe) -> None:
    secant = {i.name: i for i in result.secant.interfaces}
    bare = {i.name: i for i in result.without_cushion.interfaces} if result.without_cushion is not None else None
    with open(path, "w", newline="", encoding="utf-8") as fh:
        writer = csv.writer(fh)
        writer.writerow(POINT_COLUMNS)
        for itf, d in zip(fe.interfaces, result.face_deflections):
            for k in np.argsort(itf.r):
                writer.writerow([itf.name, itf.r[k], itf.z[k], itf.pressure[k], d[k],
                                 secant[itf.name].pressure[k], bare[itf.name].pressure[k] if bare else ""])


def compression_picture(path: Path, result: CompressionResult, fe, hand):
    """Left: the layer's curve with every face node and the nominal point on it; right: p(r) on the curve and on
    the straight layer through the nominal point, over the hand curves."""
    fig = new_figure(10.0, 4.2)
    ax, ax_r = fig.subplots(1, 2)
    layer = result.layer
    um = 1000.0
    # the range the faces work in (the operating points readable), the curves drawn by pressure
    p_end = 1.4 * max(float(np.max(i.pressure)) for i in fe.interfaces)
    p = np.linspace(0.0, p_end, 300)
    last = result.last_measured_pressure_MPa
    measured = p <= (last if last is not None else np.inf)
    ax.plot(um * layer.deflection(p[measured]), p[measured], "k-", linewidth=1.6, label="layer of a face")
    if not measured.all():
        ax.plot(um * layer.deflection(p[~measured]), p[~measured], "k:", linewidth=1.2,
                label="past the lining's last measured point (last slope)")
    if result.lining is not None and result.cushion is not None:
        ax.plot(um * result.lining.deflection(p), p, "--", color="tab:blue", linewidth=1.0, label="lining alone")
        ax.plot(um * 0.5 * result.cushion.deflection(p), p, "--", color="tab:green", linewidth=1.0,
                label="half the cushion (one face; flat past its last point)")
    for itf, d in zip(fe.interfaces, result.face_deflections):
        closed = itf.in_contact
        ax.plot(um * d[closed], itf.pressure[closed], ".", markersize=3, alpha=0.6,
                label=f"{itf.name}: every node")
    ax.plot([um * result.nominal_deflection_mm], [result.nominal_pressure_MPa], "r*", markersize=12,
            label="nominal point W/A")
    if last is not None and last <= p_end:
        ax.axhline(last, color="tab:gray", linewidth=0.6, linestyle="-.")
    d_end = float(layer.deflection(p_end))
    ax.set_xlabel("layer deflection [µm]")
    ax.set_ylabel("contact pressure [MPa]")
    ax.set_xlim(0.0, um * d_end)
    ax.set_ylim(bottom=0.0)
    ax.grid(True, linewidth=0.4, alpha=0.6)
    ax.legend(fontsize="x-small", loc="upper left")
    ax.set_title("operating points on the compression curve", fontsize="medium")
    secant = {i.name: i for i in result.secant.interfaces}
    bare = {i.name: i for i in result.without_cushion.interfaces} if result.without_cushion is not None else None
    for itf in fe.interfaces:
        order = np.argsort(itf.r)
        line, = ax_r.plot(itf.r[order], itf.pressure[order], linewidth=1.4, label=f"{itf.name}, curve [MPa]")
        ax_r.plot(itf.r[order], secant[itf.name].pressure[order], "--", color=line.get_color(), linewidth=1.0,
                  label=f"{itf.name}, linear lining of the same W/A compression [MPa]")
        if bare is not None:
            ax_r.plot(itf.r[order], bare[itf.name].pressure[order], "-.", color=line.get_color(), linewidth=1.0,
                      label=f"{itf.name}, without the cushion [MPa]")
    hand_curves_over(ax_r, hand, "contact pressure: curve against a straight layer")
    fig.savefig(path, dpi=130)
    return fig


def write_compression_files(result: CompressionResult, fe, hand, folder: Path) -> None:
    folder = Path(folder)
    write_points_csv(folder / "compression_points.csv", result, fe)
    compression_picture(folder / "compression_curve.png", result, fe, hand)


def compression_table(summary: dict):
    """The operating point of every face (a rich Table)."""
    s = summary
    table = Table(title=f"compression curve: nominal {s['curve_nominal_pressure_MPa']:.3g} MPa at "
                        f"{1000 * s['curve_nominal_deflection_mm']:.3g} µm")
    for col in ("face", "mean p [MPa]", "least p [MPa]", "peak p [MPa]", "mean deflection [µm]",
                "tangent stiffness [MPa/mm]"):
        table.add_column(escape(col), justify="left" if col == "face" else "right")
    for f in s["curve_faces"]:
        table.add_row(f["interface"], f"{f['mean_pressure_MPa']:.4g}", f"{f['least_pressure_MPa']:.4g}",
                      f"{f['peak_pressure_MPa']:.4g}", f"{1000 * f['mean_deflection_mm']:.4g}",
                      f"{f['tangent_stiffness_MPa_per_mm']:.4g}")
    table.caption = escape(f"torque on the curve {s['torque_fe_Nm']:.2f} N·m, with a linear lining of the same "
                           f"compression at W/A {s['torque_with_secant_layer_Nm']:.2f} N·m"
                           + ("" if s["curve_last_measured_pressure_MPa"] is None else
                              f"; lining curve measured to {s['curve_last_measured_pressure_MPa']:.3g} MPa"))
    return table
