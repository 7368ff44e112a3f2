"""Solution verification of one run: the same case on two coarser meshes, then the GCI.

The run's own mesh is the finest of the three, so the GCI (Celik et al. 2008, "fine-grid"
index) is the error band of the numbers the run reports.  Coarser meshes scale every mesh size
by the refinement ratio r and r²; the layer count through the lining is rounded, so the
refinement ratio actually used is measured: the mean node spacing along the friction faces,
which governs the integrated quantities.  Celik's total-element-count ratio is reported too.
"""
from __future__ import annotations

import dataclasses
import math

from ..comparison import compare_solved
from ..gci import grid_convergence

# (summary key, label with unit, integrated: counts for the verdict)
QUANTITIES = (
    ("torque_fe_Nm", "FE torque [N·m]", True),
    ("effective_radius_mm", "effective radius R_eff [mm]", True),
    ("capacity_position", "capacity position ξ [-]", True),
    ("peak_pressure_MPa", "peak contact pressure [MPa]", False),
)
TORQUE_GCI_LIMIT = 0.01         # GCI of the torque accepted as mesh-converged (a tolerance chosen here)
XI_BAND_LIMIT = 0.05            # absolute band on ξ accepted (ξ magnifies torque errors; chosen here)
PEAK_NOTE = ("The peak pressure usually sits at a lining end, where the elastic solution has an edge "
             "concentration: it need not converge and may keep growing as the mesh is refined. The verdict "
             "uses the integrated quantities (torque, R_eff, ξ).")


def coarser_case(case, factor: float):
    """The case with every mesh size multiplied by ``factor`` (> 1: coarser)."""
    m = case.mesh
    mesh = dataclasses.replace(m, interface_element_size=m.interface_element_size * factor,
                               edge_element_size=m.edge_element_size * factor,
                               element_size=m.element_size * factor,
                               lining_layers=max(1, round(m.lining_layers / factor)))
    return dataclasses.replace(case, mesh=mesh)


def face_spacing_mm(section, mesh) -> float:
    """Mean node spacing along all friction faces (the representative size of the study)."""
    length = sum(itf.slant_length for itf in section.interfaces)
    intervals = sum(len(mesh.interface_pairs[itf.name]) - 1 for itf in section.interfaces)
    return length / intervals


def _mesh_row(solved, comparison, level: int) -> dict:
    m = solved.case.mesh
    return {"level": level, "name": ("fine (this run)", "medium", "coarse")[level],
            "interface_element_size_mm": m.interface_element_size, "edge_element_size_mm": m.edge_element_size,
            "element_size_mm": m.element_size, "lining_layers": m.lining_layers,
            "triangles": int(len(solved.mesh.triangles)), "nodes": int(len(solved.mesh.points)),
            "face_spacing_mm": face_spacing_mm(solved.section, solved.mesh),
            **{key: float(comparison[key]) for key, _, _ in QUANTITIES}}


def mesh_study(solved, comparison, service, ratio: float | None = None) -> dict:
    """Three meshes (the run's and two coarser, solved by the same ``service``), observed order,
    extrapolation and GCI per quantity."""
    r = float(ratio or solved.case.verification.refinement_ratio)
    runs = [(solved, comparison)]
    for k in (1, 2):
        coarse = service.solve(coarser_case(solved.case, r ** k), fields=False)
        runs.append((coarse, compare_solved(coarse)))
    meshes = [_mesh_row(s, c, k) for k, (s, c) in enumerate(runs)]
    h = [m["face_spacing_mm"] for m in meshes]
    n = [m["triangles"] for m in meshes]
    r21, r32 = h[1] / h[0], h[2] / h[1]
    quantities = {}
    for key, label, integrated in QUANTITIES:
        conv = grid_convergence(*(m[key] for m in meshes), r21, r32)
        quantities[key] = {"label": label, "integrated": integrated, **conv.as_dict()}
    study = {
        "refinement_ratio_nominal": r, "refinement_ratio_21": r21, "refinement_ratio_32": r32,
        "element_count_ratio_21": math.sqrt(n[0] / n[1]), "element_count_ratio_32": math.sqrt(n[1] / n[2]),
        "meshes": meshes, "quantities": quantities, "peak_pressure_note": PEAK_NOTE,
        "source": "Roache 1998; Celik et al., J. Fluids Eng. 130 (2008) 078001; ASME V&V 20-2009",
    }
    study["converged"], study["verdict"] = mesh_verdict(study)
    return study


def mesh_verdict(study: dict) -> tuple[bool, str]:
    """Plain words on the integrated quantities; the peak pressure is described, not judged."""
    q = study["quantities"]
    torque, xi = q["torque_fe_Nm"], q["capacity_position"]
    band_xi = xi["band_fine"]
    ok = torque["gci_fine"] <= TORQUE_GCI_LIMIT and band_xi is not None and band_xi <= XI_BAND_LIMIT
    if torque["order_assumed"]:
        change = max(abs(torque["medium"] - torque["fine"]), abs(torque["coarse"] - torque["medium"]))
        words = (f"The FE torque changes by at most {100 * change / abs(torque['fine']):.2g} % between the meshes "
                 "but not steadily, so no order of convergence can be read; with Roache's safety factor 3 and "
                 f"an assumed order 1 its GCI is {100 * torque['gci_fine']:.3g} %")
    else:
        words = (f"The FE torque is mesh-converged to GCI = {100 * torque['gci_fine']:.3g} % "
                 f"({torque['behaviour']} convergence"
                 + (f", observed order {torque['observed_order']:.2f}" if torque["observed_order"] else "") + ")")
    words += (f"; ξ to ±{band_xi:.3g}." if band_xi is not None else "; ξ shows no convergence.")
    if not torque["in_asymptotic_range"] and not torque["order_assumed"] \
            and torque["behaviour"] != "converged to round-off":
        words += (" The three meshes are not yet in the asymptotic range (GCI ratio "
                  + (f"{torque['asymptotic_ratio']:.3g}" if torque["asymptotic_ratio"] else "undefined")
                  + ", 1 expected), so the index is an estimate, not a bound.")
    if not ok:
        words = ("Mesh convergence NOT sufficient for the design quantities (limits: torque GCI "
                 f"{100 * TORQUE_GCI_LIMIT:g} %, ξ band {XI_BAND_LIMIT:g}). " + words)
    return ok, words
