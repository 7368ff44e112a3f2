"""Solution verification of one run: the same case on two finer, geometrically similar meshes.

The run's own mesh is the coarsest of three; the two others refine *every* size and count by
the refinement ratio r and r² (``mesh.refinement``: element sizes, the graded zones' element
sizes, the thin-part element counts and the lining layers alike), so the element-count ratio
matches the spacing ratio and the observed order means something.  Refining from the run's
mesh rather than coarsening it keeps the three meshes out of the range where the geometry,
not the size, sets the element count.  From the three: the observed order (capped at the
formal order of the elements), the Richardson extrapolation (refused when it is physically
impossible) and the band of *this run's* value (Celik et al., J. Fluids Eng. 130 (2008)
078001; Roache 1998; ASME V&V 20-2009), which is the error band of the numbers the run reports.
"""
from __future__ import annotations

import dataclasses
import math

from ..comparison import compare_solved
from ..gci import grid_convergence

# (summary key, label with unit, judged: counts for the verdict, relative band limit or None)
QUANTITIES = (
    ("torque_fe_Nm", "FE torque [N·m]", True),
    ("effective_radius_mm", "effective radius R_eff [mm]", True),
    ("capacity_position", "capacity position ξ [-]", True),
    ("design_peak_pressure_MPa", "design peak pressure (band mean) [MPa]", True),
    ("peak_pressure_MPa", "nodal peak pressure (edge concentration) [MPa]", False),
)
TORQUE_BAND_LIMIT = 0.01        # band of the torque / torque accepted as mesh-converged (chosen here)
XI_BAND_LIMIT = 0.05            # absolute band on ξ accepted (ξ magnifies torque errors; chosen here)
DESIGN_PEAK_BAND_LIMIT = 0.05   # band of the design peak / design peak accepted (chosen here)
SIMILARITY_TOLERANCE = 0.05     # element-count ratio within 5 % of the spacing ratio: similar meshes
PEAK_NOTE = ("The nodal peak pressure sits at a lining end, where the elastic solution of a sharp-ended layer "
             "is singular: it does not converge and keeps growing as the mesh is refined, so it is shown, not "
             "judged. The design peak (the highest mean pressure over a band of 10 % of the face width) "
             "converges and is the figure checked against the allowable.")
SOURCE = "Celik et al., J. Fluids Eng. 130 (2008) 078001; Roache 1998; ASME V&V 20-2009"


def refined_case(case, factor: float):
    """The case with ``mesh.refinement`` multiplied by ``factor`` (> 1: finer, every size and count)."""
    return dataclasses.replace(case, mesh=dataclasses.replace(case.mesh, refinement=case.mesh.refinement * factor))


def face_spacing_mm(section, mesh) -> float:
    """Mean node spacing along all friction faces (the representative size of the study)."""
    length = sum(itf.slant_length for itf in section.interfaces)
    intervals = sum(len(mesh.interface_pairs[itf.name]) - 1 for itf in section.interfaces)
    return length / intervals


def _mesh_row(solved, comparison, level: int, ratio: float) -> dict:
    m = solved.case.mesh
    k = m.refinement
    names = ("this run", f"refined ×{ratio:g}", f"refined ×{ratio * ratio:g}")
    return {"level": level, "name": names[level], "refinement": k,
            "interface_element_size_mm": m.interface_element_size / k, "edge_element_size_mm": m.edge_element_size / k,
            "element_size_mm": m.element_size / k, "lining_layers": max(1, round(m.lining_layers * k)),
            "triangles": int(len(solved.mesh.triangles)), "nodes": int(len(solved.mesh.points)),
            "face_spacing_mm": face_spacing_mm(solved.section, solved.mesh),
            **{key: float(comparison[key]) for key, _, _ in QUANTITIES}}


def _plausible(key: str, value: float, comparison) -> str | None:
    """Why an extrapolated value is physically impossible, or None."""
    hand = comparison.hand
    if key == "effective_radius_mm" and not hand.inner_radius_mm <= value <= hand.outer_radius_mm:
        return f"R_eff {value:.4g} mm would leave the friction annulus"
    if key == "torque_fe_Nm":
        low = hand.friction_surfaces * hand.friction_coefficient * hand.axial_force_N * hand.inner_radius_mm
        high = low * hand.outer_radius_mm / hand.inner_radius_mm
        if not low / 1000.0 / hand.sin_alpha <= value <= high / 1000.0 / hand.sin_alpha:
            return f"torque {value:.6g} N·m would need R_eff outside [r1, r2]"
    if key == "capacity_position":
        r = hand.radius_uniform_wear_mm + value * (hand.radius_uniform_pressure_mm - hand.radius_uniform_wear_mm)
        if not hand.inner_radius_mm <= r <= hand.outer_radius_mm:
            return f"ξ = {value:.4g} would put R_eff outside [r1, r2]"
    if key in ("design_peak_pressure_MPa", "peak_pressure_MPa") and value < hand.uniform_pressure_MPa:
        return f"a peak of {value:.4g} MPa would lie below the mean pressure {hand.uniform_pressure_MPa:.4g} MPa"
    return None


def mesh_study(solved, comparison, service, ratio: float | None = None) -> dict:
    """The run's mesh and two finer ones (solved by the same ``service``): observed order,
    extrapolation and the band of this run's value per quantity."""
    r = float(ratio or solved.case.verification.refinement_ratio)
    runs = [(solved, comparison)]
    for k in (1, 2):
        finer = service.solve(refined_case(solved.case, r ** k), fields=False)
        runs.append((finer, compare_solved(finer)))
    meshes = [_mesh_row(s, c, k, r) for k, (s, c) in enumerate(runs)]
    h = [m["face_spacing_mm"] for m in meshes]
    n = [m["triangles"] for m in meshes]
    # Celik's numbering: 1 the finest, 3 the coarsest (this run)
    r21, r32 = h[1] / h[2], h[0] / h[1]
    count_21, count_32 = math.sqrt(n[2] / n[1]), math.sqrt(n[1] / n[0])
    formal = 2.0 if solved.case.mesh.element_order == 2 else 1.0
    quantities = {}
    for key, label, judged in QUANTITIES:
        conv = grid_convergence(meshes[2][key], meshes[1][key], meshes[0][key], r21, r32, formal_order=formal)
        entry = {"label": label, "judged": judged, **conv.as_dict(), "this_run": meshes[0][key]}
        impossible = _plausible(key, conv.extrapolated, comparison) if conv.extrapolated is not None else None
        if impossible:
            entry["extrapolated"], entry["band_coarse"] = None, None
            entry["extrapolation_refused"] = impossible
        quantities[key] = entry
    similar = all(abs(c / s - 1.0) <= SIMILARITY_TOLERANCE for c, s in ((count_21, r21), (count_32, r32)))
    study = {
        "refinement_ratio_nominal": r, "refinement_ratio_21": r21, "refinement_ratio_32": r32,
        "element_count_ratio_21": count_21, "element_count_ratio_32": count_32,
        "geometrically_similar": similar, "formal_order": formal,
        "meshes": meshes, "quantities": quantities, "peak_pressure_note": PEAK_NOTE, "source": SOURCE,
    }
    study["converged"], study["verdict"] = mesh_verdict(study)
    return study


def _relative_band(q: dict) -> float | None:
    band = q.get("band_coarse")
    return None if band is None else band / max(abs(q["this_run"]), 1e-300)


def mesh_verdict(study: dict) -> tuple[bool, str]:
    """Plain words on the judged quantities: the bands of this run's values against stated limits."""
    q = study["quantities"]
    torque, xi, design = q["torque_fe_Nm"], q["capacity_position"], q["design_peak_pressure_MPa"]
    t_band, d_band, xi_band = _relative_band(torque), _relative_band(design), xi.get("band_coarse")
    checks = [("torque", t_band, TORQUE_BAND_LIMIT, "%"), ("design peak", d_band, DESIGN_PEAK_BAND_LIMIT, "%"),
              ("ξ", xi_band, XI_BAND_LIMIT, "")]
    ok = all(v is not None and v <= limit for _, v, limit, _ in checks) and study["geometrically_similar"]
    said = []
    for name, value, limit, unit in checks:
        if value is None:
            said.append(f"{name}: no band (extrapolation refused or no convergence)")
        elif unit == "%":
            said.append(f"{name} ±{100 * value:.3g} % (limit {100 * limit:g} %)")
        else:
            said.append(f"{name} ±{value:.3g} (limit {limit:g})")
    words = "Error bands of this run's values from the three meshes: " + "; ".join(said) + "."
    capped = [v["label"] for v in q.values() if v.get("order_capped")]
    if capped:
        words += (f" The observed order exceeded the elements' formal order {study['formal_order']:g} for "
                  f"{', '.join(capped)}: the formal order and the safety factor 3 were used.")
    if not study["geometrically_similar"]:
        words += (f" The meshes are NOT geometrically similar (element-count ratios "
                  f"{study['element_count_ratio_32']:.3g}, {study['element_count_ratio_21']:.3g} against spacing "
                  f"ratios {study['refinement_ratio_32']:.3g}, {study['refinement_ratio_21']:.3g}; give "
                  "mesh.lining_layers divisible by the square of the refinement ratio), so the bands are estimates.")
    if not ok:
        words = "Mesh convergence NOT sufficient for the design quantities. " + words
    return ok, words
