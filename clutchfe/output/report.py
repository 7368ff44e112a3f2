"""report.html of a run: everything a design review needs to accept or reject the design assumption.

The run plan calls it last, inside the atomic results folder, with the finished summary (the
mesh study and the verification table included): one self-contained page, and report.pdf when
WeasyPrint is installed (it lays out HTML without a browser).
"""
from __future__ import annotations

from pathlib import Path

from ..schema import SCHEMA
from ..verification.table import format_error, format_tolerance
from .report_html import esc, num, page, picture, sig, table

# tables whose keys only matter when the case asks for that analysis
OPTIONAL_TABLES = ("wear",)

ASSUMPTIONS = (
    "Axisymmetric linear elasticity of every body in the (r, z) section, quadratic triangles; the friction "
    "lining is its own layer and material, bonded to its carrier.",
    "Unilateral, frictionless contact in the normal direction between matching nodes of each friction face "
    "(no penetration, no tension).",
    "No circumferential friction in the section: torque = n μ ∫ p r dA from the normal pressure (the usual "
    "clutch assumption).",
    "No thermal distortion and no centrifugal load in this solve.",
    "Hand formulas: uniform pressure and uniform wear (p·r = const) at the same axial force (Shigley's "
    "Mechanical Engineering Design, clutch chapter; Juvinall & Marshek).",
    "Material data, μ and the lining's allowable pressure are the user's inputs; μ scatters in service and "
    "scales every torque here in proportion.",
    "The allowable pressure is judged on the design peak: the highest mean pressure over a band of 10 % of the "
    "face width along the face. The nodal peak at a lining end is an edge concentration of the sharp-ended "
    "elastic layer and grows without bound under mesh refinement; it is shown, not judged.",
)
# what each analysis adds to the list when it ran, and what is said when it did not
ANALYSIS_ASSUMPTIONS = {
    "tilt": ("Axis tilt and radial offset by Fourier harmonics of the axisymmetric section (Zienkiewicz & Taylor, "
             "The Finite Element Method, axisymmetric solids under non-symmetric loads), contact on an (r, θ) grid.",
             "No axis tilt or radial offset in this solve."),
    "wear": ("Wear-in by Archard's law (wear depth rate ∝ p · sliding speed), backward-Euler steps on the "
             "condensed contact; the worn-in state does not depend on the wear coefficient.",
             "No wear-in in this solve: the results describe the new interface."),
}


def write_report(case, summary: dict, folder: Path, rows, passed: bool, sections: dict | None = None) -> str:
    """report.html (and report.pdf when WeasyPrint is usable) in ``folder``; returns what
    became of the PDF (its file name, or why it was not written).  ``sections``: the HTML
    section of each analysis that ran, by name ("tilt", "wear")."""
    folder = Path(folder)
    html_text = report_html(case, summary, folder, rows, passed, sections or {})
    (folder / "report.html").write_text(html_text, encoding="utf-8")
    return write_pdf(html_text, folder / "report.pdf")


def write_pdf(html_text: str, path: Path) -> str:
    """report.pdf through WeasyPrint when it is installed; otherwise say why there is none."""
    try:
        import weasyprint
    except (ImportError, OSError) as exc:     # OSError: the package is there but Pango is not
        return f"not written: WeasyPrint is not usable here ({type(exc).__name__})"
    weasyprint.HTML(string=html_text).write_pdf(str(path))
    return path.name


def report_html(case, summary: dict, folder: Path, rows, passed: bool, sections: dict | None = None) -> str:
    sections = sections or {}
    parts = [
        f"<h1>Torque capacity check: {esc(case.name)}</h1>",
        f'<p class="caution">Caution: {esc(summary["caution"])}</p>',
        _job(case, summary), _results(summary), _surfaces(summary), _margins(summary), _allowable(case, summary),
        _pictures(folder, summary), *sections.values(), _mesh_study(summary.get("mesh_study") or {}),
        _verification(rows, passed), _inputs(case), _assumptions(sections), _provenance(summary),
        f'<p class="caution">Caution: {esc(summary["caution"])}</p>',
    ]
    return page(f"clutchfe report: {case.name}", "\n".join(parts))


def _job(case, s: dict) -> str:
    kind = "cone clutch" if case.kind == "cone" else "plate clutch"
    statement = (f"Where does the torque capacity of the {kind} <b>{esc(case.name)}</b> sit between the "
                 f"uniform-pressure and uniform-wear hand predictions, once the elasticity of its bodies, lining "
                 f"and support is taken into account, at an axial force of {num('axial_force_N', s['axial_force_N'], 1)} N "
                 f"on {num('friction_surfaces', s['friction_surfaces'], 0)} friction surface(s)?")
    out = ["<h2>Job</h2>", f"<p>{statement}</p>"]
    if case.description:
        out.append(f"<p><i>{esc(case.description)}</i></p>")
    out.append(f'<p class="verdict">{esc(s["verdict"])}</p>')
    for warning in s.get("warnings", []):
        out.append(f'<p class="warn">Warning: {esc(warning)}</p>')
    return "\n".join(out)


def _results(s: dict) -> str:
    rows = [
        ["torque [N·m]", num("torque_fe_Nm", s["torque_fe_Nm"], 3),
         num("torque_uniform_pressure_Nm", s["torque_uniform_pressure_Nm"], 3),
         num("torque_uniform_wear_Nm", s["torque_uniform_wear_Nm"], 3)],
        ["effective radius [mm]", num("effective_radius_mm", s["effective_radius_mm"], 3),
         num("radius_uniform_pressure_mm", s["radius_uniform_pressure_mm"], 3),
         num("radius_uniform_wear_mm", s["radius_uniform_wear_mm"], 3)],
        ["position of the effective radius on [r1, r2] [%]",
         num("effective_radius_position", s.get("effective_radius_position"), 2, 100),
         num("radius_uniform_pressure_position", s.get("radius_uniform_pressure_position"), 2, 100),
         num("radius_uniform_wear_position", s.get("radius_uniform_wear_position"), 2, 100)],
        ["peak pressure [MPa]", num("peak_pressure_MPa", s["peak_pressure_MPa"], 4),
         num("uniform_pressure_MPa", s.get("uniform_pressure_MPa"), 4),
         num("peak_pressure_uniform_wear_MPa", s.get("peak_pressure_uniform_wear_MPa"), 4)],
    ]
    xi = s["capacity_position"]
    loud = ' class="bad"' if xi < 0 else ""
    return ("<h2>Capacity: FE contact against the hand formulas</h2>"
            + table(["quantity", "FE", "uniform pressure", "uniform wear"], rows)
            + f"<p{loud}>Capacity position ξ = {num('capacity_position', xi, 4)} [-] (1 = uniform pressure, "
              "0 = uniform wear"
            + ("; below 0: even the uniform-wear formula overestimates the capacity" if xi < 0 else "")
            + f"). R_eff = {num('effective_radius_mm', s['effective_radius_mm'], 3)} mm on "
              f"[{num('inner_radius_mm', s['inner_radius_mm'], 2)}, {num('outer_radius_mm', s['outer_radius_mm'], 2)}] mm. "
              "The two hand torques differ by little for usual radius ratios, so ξ magnifies small shifts: "
              "read it together with R_eff on the whole annulus.</p>"
            + f"<p>Mean pressure {num('mean_pressure_MPa', s['mean_pressure_MPa'], 4)} MPa; contact over "
              f"{num('contact_area_fraction', s['contact_area_fraction'], 2, 100)} % of the face; engagement force "
              f"{num('engagement_force_N', s['engagement_force_N'], 1)} N; axial balance error "
              f"{num('axial_force_balance_error', s['axial_force_balance_error'], 3, 100)} %.</p>")


def _margins(s: dict) -> str:
    if not s.get("required_torque_Nm"):
        return ("<h2>Capacity margins</h2><p>No required torque given (<code>[requirement] required_torque</code>),"
                " so no margins are computed.</p>")
    need = s["required_torque_Nm"] * s["service_factor"]
    rows = [[name, num(key, s[key], 2, 100, signed=True)] for name, key in (
        ("FE contact", "capacity_margin_fe"), ("uniform pressure", "capacity_margin_uniform_pressure"),
        ("uniform wear", "capacity_margin_uniform_wear"))]
    short = [name for (name, key) in (("FE contact", "capacity_margin_fe"),
                                      ("uniform pressure", "capacity_margin_uniform_pressure"),
                                      ("uniform wear", "capacity_margin_uniform_wear")) if s[key] < 0]
    note = (f'<p class="bad">Short of the requirement under: {esc(", ".join(short))}.</p>' if short else
            "<p>Every assumption meets the requirement.</p>")
    return ("<h2>Capacity margins</h2>"
            f"<p>Required torque {num('required_torque_Nm', s['required_torque_Nm'], 2)} N·m × service factor "
            f"{num('service_factor', s['service_factor'], 2)} = {esc(f'{need:.2f}')} N·m. "
            "Margin = capacity / (required × service factor) − 1.</p>"
            + table(["assumption", "capacity margin [%]"], rows) + note)


def _allowable(case, s: dict) -> str:
    allowable = case.lining.allowable_pressure
    design = (f"Design peak {num('design_peak_pressure_MPa', s.get('design_peak_pressure_MPa'), 4)} MPa: the "
              f"highest mean pressure over a {num('design_peak_band_mm', s.get('design_peak_band_mm'), 2)} mm band "
              f"along the face (10 % of its width), centred at r = "
              f"{num('design_peak_radius_mm', s.get('design_peak_radius_mm'), 2)} mm; it converges under mesh "
              "refinement (see the mesh study). ")
    nodal = (f"The nodal peak {num('peak_pressure_MPa', s['peak_pressure_MPa'], 4)} MPa at r = "
             f"{num('peak_pressure_radius_mm', s.get('peak_pressure_radius_mm'), 2)} mm is an edge concentration at "
             "the lining end: it grows with refinement and is shown, not judged.")
    if not allowable:
        return ("<h2>Pressure against the lining</h2><p>No allowable pressure given "
                f"(<code>[lining] allowable_pressure</code>). {design}{nodal}</p>")
    ratio = s.get("design_peak_over_allowable")
    verdict = ('<span class="bad">ABOVE the allowable pressure</span>' if ratio is not None and ratio > 1
               else "within the allowable pressure")
    return ("<h2>Pressure against the lining</h2>"
            f"<p>{design}Against the lining's allowable {num('allowable_pressure_MPa', allowable, 3)} MPa: ratio "
            f"{num('design_peak_over_allowable', ratio, 3)} [-], {verdict}. {nodal} Mean pressure "
            f"{num('mean_pressure_MPa', s['mean_pressure_MPa'], 4)} MPa.</p>")


def _surfaces(s: dict) -> str:
    """Load and torque split per friction surface (plate packs: the surfaces act in series for the
    clamp force, each carrying W, and in parallel for the torque)."""
    surfaces = s.get("surfaces") or []
    if len(surfaces) < 2:
        return ""
    rows = [[esc(x["name"]), num(f"surfaces.{k}.axial_force_N", x["axial_force_N"], 1),
             num(f"surfaces.{k}.axial_force_over_clamp_force", x["axial_force_over_clamp_force"], 4),
             num(f"surfaces.{k}.torque_Nm", x["torque_Nm"], 3), num(f"surfaces.{k}.torque_share", x["torque_share"], 2, 100),
             num(f"surfaces.{k}.effective_radius_mm", x["effective_radius_mm"], 3),
             num(f"surfaces.{k}.design_peak_pressure_MPa", x["design_peak_pressure_MPa"], 4),
             num(f"surfaces.{k}.contact_area_fraction", x["contact_area_fraction"], 2, 100)]
            for k, x in enumerate(surfaces)]
    return ("<h2>Load and torque per friction surface</h2><p>The surfaces of a pack act in series along the axis "
            "(each carries the whole clamp force W) and in parallel for the torque (the torques add).</p>"
            + table(["surface", "axial force [N]", "axial force / W [-]", "torque [N·m]", "torque share [%]",
                     "R_eff [mm]", "design peak [MPa]", "contact [%]"], rows))


def _pictures(folder: Path, s: dict) -> str:
    mesh = s.get("mesh", {})
    return "\n".join([
        "<h2>Section, mesh and pressure</h2>",
        picture(folder / "section.png", "meshed section with named faces",
                f"Meshed (r, z) section with every named face: {num('mesh.triangles', mesh.get('triangles'), 0)} "
                f"triangles, {num('mesh.nodes', mesh.get('nodes'), 0)} nodes, element order "
                f"{num('mesh.element_order', mesh.get('element_order'), 0)}. Dimensions in mm."),
        picture(folder / "pressure.png", "contact pressure against both hand curves",
                ("FE contact pressure [MPa] against radius [mm]" + (", averaged around the circumference (the "
                 "tilt section shows p(r, θ))" if "tilt_moment_Nm" in s else "") + ", with the uniform-pressure "
                 "and uniform-wear pressures at the same axial force.")),
        picture(folder / "effective_radius.png", "effective radius on the friction annulus",
                f"FE effective radius {num('effective_radius_mm', s['effective_radius_mm'], 3)} mm and both hand "
                f"radii on the bar [r1, r2]; ξ = {num('capacity_position', s['capacity_position'], 4)}."),
        # a tilted solve has no (r, z) displacement field: no deformed section to show
        *([picture(folder / "deformed.png", "deformed section coloured by von Mises stress",
                   "Deformed section (displacements magnified), coloured by von Mises stress [MPa].")]
          if "tilt_moment_Nm" not in s else []),
    ])


def _mesh_study(study: dict) -> str:
    head = "<h2>Solution verification: mesh convergence</h2>"
    if not study or "skipped" in study:
        return head + f'<p class="warn">Mesh study not run: {esc(study.get("skipped", "not requested"))}.</p>'
    mesh_rows = [[esc(m["name"]), num(f"mesh_study.meshes.{k}.refinement", m["refinement"], 3),
                  num(f"mesh_study.meshes.{k}.face_spacing_mm", m["face_spacing_mm"], 4),
                  num(f"mesh_study.meshes.{k}.interface_element_size_mm", m["interface_element_size_mm"], 4),
                  num(f"mesh_study.meshes.{k}.lining_layers", m["lining_layers"], 0),
                  num(f"mesh_study.meshes.{k}.triangles", m["triangles"], 0)] for k, m in enumerate(study["meshes"])]
    rows = []
    for key, q in study["quantities"].items():
        p = f"mesh_study.quantities.{key}"
        order = num(f"{p}.observed_order", q["observed_order"], 2)
        if q["order_assumed"]:
            order += " (none; 1 assumed)"
        elif q.get("order_capped"):
            order += f" (capped: {q['order_used']:g} used)"
        extrapolated = (num(f"{p}.extrapolated", q["extrapolated"], 5) if not q.get("extrapolation_refused")
                        else f'<span class="bad">refused: {esc(q["extrapolation_refused"])}</span>')
        rows.append([esc(q["label"]) + ("" if q["judged"] else " (shown, not judged)"),
                     num(f"{p}.coarse", q["coarse"], 5), num(f"{p}.medium", q["medium"], 5),
                     num(f"{p}.fine", q["fine"], 5), esc(q["behaviour"]), order, extrapolated,
                     num(f"{p}.band_coarse", q.get("band_coarse"), 5), num(f"{p}.band_fine", q["band_fine"], 5),
                     num(f"{p}.asymptotic_ratio", q["asymptotic_ratio"], 3)])
    verdict_class = "verdict" if study["converged"] else "warn"
    similar = ("geometrically similar" if study["geometrically_similar"]
               else '<span class="bad">NOT geometrically similar</span>')
    return (head
            + f"<p>This run's mesh and two finer ones: every element size divided by "
              f"{num('mesh_study.refinement_ratio_nominal', study['refinement_ratio_nominal'], 2)} and its square, "
              "every count (lining layers, thin-part elements) multiplied, the graded zones kept. Achieved ratios of "
              f"the mean node spacing along the friction faces: "
              f"{num('mesh_study.refinement_ratio_32', study['refinement_ratio_32'], 3)} and "
              f"{num('mesh_study.refinement_ratio_21', study['refinement_ratio_21'], 3)}; from the element counts: "
              f"{num('mesh_study.element_count_ratio_32', study['element_count_ratio_32'], 3)} and "
              f"{num('mesh_study.element_count_ratio_21', study['element_count_ratio_21'], 3)}: {similar}. "
              "Method: " + esc(study["source"]) + ".</p>"
            + table(["mesh", "refinement", "face node spacing [mm]", "interface element size [mm]", "lining layers",
                     "triangles"], mesh_rows)
            + table(["quantity", "this run", "refined once", "refined twice", "convergence", "observed order p",
                     "Richardson extrapolation", "band of this run's value ±", "band of the finest ±",
                     "asymptotic ratio (1 expected)"], rows)
            + f'<p class="{verdict_class}">{esc(study["verdict"])}</p>'
            + f"<p>{esc(study['peak_pressure_note'])}</p>"
            + '<p class="small">Band of this run\'s value = Fs |f_run − f_ext|, f_ext the Richardson extrapolation '
              "from the two finest meshes with the observed order p (at most the formal order of the elements; "
              "above it the formal order and Fs = 3 are used), Fs = 1.25 (Roache 1998; Celik et al. 2008). The band "
              "of the finest is its fine-grid GCI. Where no order can be read, Roache's safety factor 3 with an "
              "assumed order 1 is used. An extrapolation that is physically impossible is refused.</p>")


def _verification(rows, passed: bool) -> str:
    # rows from the stored table carry their origin (clutchfe.verification.store): stored, missing, stale
    head = "<h2>Verification of the solver against closed forms</h2>"
    origin = getattr(rows, "origin", None)
    state = origin.state if origin is not None else "fresh"
    if state in ("missing", "stale"):
        return (head + f'<p class="bad">The verification table is {esc(state)}: {esc(origin.reason)}. This report '
                "carries no verification of the solver against its closed forms; do not rely on it until "
                f"<code>{esc(origin.command)}</code> has been run on this installation (it runs the suite once and "
                "stores its table for every later run of this code and these versions) and the case run again.</p>")
    body = [[esc(r.case), esc(r.quantity), sig(r.computed, 6), sig(r.reference, 6), esc(format_error(r)),
             esc(format_tolerance(r)), esc(r.source), "pass" if r.passed else '<span class="bad">FAIL</span>']
            for r in rows]
    failed = sum(not r.passed for r in rows)
    status = (f"<p>All {len(rows)} checks pass.</p>" if passed else
              f'<p class="bad">{failed} of {len(rows)} checks FAIL: the solver does not meet its references '
              "on this installation; do not rely on this report.</p>")
    where = ("run on this installation" if state == "fresh" else
             f"as <code>{esc(origin.command)}</code> stored it on this installation on {esc(origin.made or 'an unknown date')} (UTC) for "
             f"this clutchfe, these package versions and this code (SHA-256 of its source "
             f"<code>{esc(origin.code_hash[:16])}…</code>)")
    return (head + f"<p>The same suite as <code>clutchfe verify</code>, {where}.</p>"
            + status + table(["case", "quantity", "computed", "reference", "error", "tolerance", "source", "result"],
                             body, numeric_from=2))


def _inputs(case) -> str:
    rows = []
    for key, value in case.flat().items():
        table_name, _, leaf = key.rpartition(".")
        if table_name in OPTIONAL_TABLES and table_name not in case.tables_given:
            continue                # an analysis the case did not ask for: its defaults were not used
        spec = SCHEMA.get(table_name, {}).get(leaf)
        unit = spec.unit if spec is not None else ""
        rows.append([f"<code>{esc(key)}</code>", esc(f"{value:g}" if isinstance(value, float) else value), esc(unit)])
    return ("<h2>Inputs (defaults filled in)</h2>"
            + table(["key", "value", "unit"], rows, numeric_from=1))


def _assumptions(sections: dict) -> str:
    said = list(ASSUMPTIONS) + [ran if name in sections else absent
                                for name, (ran, absent) in ANALYSIS_ASSUMPTIONS.items()]
    items = "".join(f"<li>{esc(a)}</li>" for a in said)
    return f"<h2>Assumptions and limits of the model</h2><ul>{items}</ul>"


def _provenance(s: dict) -> str:
    versions = ", ".join(f"{esc(k)} {esc(v)}" for k, v in s.get("versions", {}).items())
    return ("<h2>Provenance</h2>"
            f"<p>Input SHA-256: <code>{esc(s['input_sha256'])}</code><br>clutchfe {esc(s['version'])}; "
            f"{versions}.<br>Degrees of freedom {num('dofs', s['dofs'], 0)}; solve "
            f"{num('solve_seconds', s['solve_seconds'], 3)} s.</p>")
