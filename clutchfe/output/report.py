"""report.html of a run: everything a design review needs to accept or reject the design assumption.

The run plan calls it last, inside the atomic results folder, with the finished summary (the
mesh study and the verification table included): one self-contained page, and report.pdf when
WeasyPrint is installed (it lays out HTML without a browser).
"""
from __future__ import annotations

from pathlib import Path

from ..schema import SCHEMA
from ..verification.table import format_error, format_tolerance
from .report_html import data_uri, render

# tables whose keys only matter when the case asks for that analysis
OPTIONAL_TABLES = ("wear", "engagement", "cooling", "speed", "splines", "lining_curve", "cushion")
# keys of every material that only the hot engagement uses
THERMAL_LEAVES = ("thermal_conductivity", "density", "specific_heat", "expansion_coefficient")
# keys of every material that only the speed analysis uses (with the density)
STRENGTH_LEAVES = ("yield_strength", "tensile_strength")
# the three capacity margins: the assumption and its summary key
MARGINS = (("FE contact", "capacity_margin_fe"), ("uniform pressure", "capacity_margin_uniform_pressure"),
           ("uniform wear", "capacity_margin_uniform_wear"))
PICTURES = ("section.png", "pressure.png", "effective_radius.png", "deformed.png")

ASSUMPTIONS = (
    "Axisymmetric linear elasticity of every body in the (r, z) section, quadratic triangles; the friction "
    "lining is its own layer and material, bonded to its carrier.",
    "Unilateral, frictionless contact in the normal direction between matching nodes of each friction face "
    "(no penetration, no tension).",
    "No circumferential friction in the section: torque = n μ ∫ p r dA from the normal pressure (the usual "
    "clutch assumption).",
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
    "engagement": ("Hot engagement: transient axisymmetric heat conduction (linear triangles, BDF2 in time) in the "
                   "same section with the frictional heat μ p ω r at the friction faces, shared across the "
                   "interface by conduction (or by the stated partition factor), convection on the free faces; "
                   "the thermal strain α ΔT loads the elastic contact, staggered to convergence in every step; "
                   "properties independent of temperature, no wear during the engagement.",
                   "No hot engagement in this solve: the results are at the stress-free (ambient) temperature."),
    "speed": ("Running speed: the centrifugal body force ρ ω² r in every body (each region's density) as an extra "
              "load on the condensed contact; stresses of clamp and spin together against the yield strength, and "
              "the rim-burst estimate from the mean hoop stress of the spin alone against the tensile strength "
              "(linear elasticity; no plasticity, no temperature).",
              "No centrifugal load in this solve: the results are at rest."),
    "pack": ("Spline drag: friction μ_s T / R_s on the splines of every sliding plate, opposing the closing motion "
             "(the apply stroke), as an axial load on the splined edge, iterated with the contact pressure to a "
             "fixed point; compared with the closed form of a pack of rigid plates.",
             "No spline friction in this solve: every surface of a pack carries the whole clamp force."),
    "compression": ("Lining and cushion by their measured compression curves: a layer of independent springs "
                    "(Winkler foundation) between the bodies following the curve point by point, the meshed lining a "
                    "carrier ten times stiffer than the curve's steepest part (its share taken off the curve); past the "
                    "lining curve's last point it goes on with its last slope, a cushion past its last point is flat "
                    "(10³ times stiffer).",
                    "Linear elastic lining (Young's modulus and Poisson's ratio), no cushion springs."),
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
    """The page (templates/report.html): every section in order, each from its own template."""
    sections = sections or {}
    parts = [
        _job(case, summary), _results(summary), _surfaces(summary), _margins(summary), _allowable(case, summary),
        _pictures(folder, summary), *sections.values(), _mesh_study(summary.get("mesh_study") or {}),
        _verification(rows, passed), _inputs(case), _assumptions(sections), _provenance(summary),
    ]
    return render("report.html", title=f"clutchfe report: {case.name}", case=case, caution=summary["caution"],
                  sections=parts)


def _job(case, s: dict) -> str:
    return render("job.html", case=case, s=s, kind="cone clutch" if case.kind == "cone" else "plate clutch")


def _results(s: dict) -> str:
    return render("results.html", s=s)


def _margins(s: dict) -> str:
    if not s.get("required_torque_Nm"):
        return render("margins.html", s=s)
    return render("margins.html", s=s, margins=MARGINS, need=s["required_torque_Nm"] * s["service_factor"],
                  short=[name for name, key in MARGINS if s[key] < 0])


def _allowable(case, s: dict) -> str:
    return render("allowable.html", s=s, allowable=case.lining.allowable_pressure)


def _surfaces(s: dict) -> str:
    """Load and torque split per friction surface (plate packs: the surfaces act in series for the
    clamp force, each carrying W, and in parallel for the torque); nothing for one surface."""
    return render("surfaces.html", surfaces=s.get("surfaces") or [])


def _pictures(folder: Path, s: dict) -> str:
    return render("pictures.html", s=s, mesh=s.get("mesh", {}), tilted="tilt_moment_Nm" in s,
                  images={name: data_uri(Path(folder) / name) for name in PICTURES})


def _mesh_study(study: dict) -> str:
    return render("mesh_study.html", study=study)


def _verification(rows, passed: bool) -> str:
    # rows from the stored table carry their origin (clutchfe.verification.store): stored, missing, stale
    origin = getattr(rows, "origin", None)
    return render("verification.html", rows=rows, passed=passed, origin=origin,
                  state=origin.state if origin is not None else "fresh", failed=sum(not r.passed for r in rows),
                  format_error=format_error, format_tolerance=format_tolerance)


def _inputs(case) -> str:
    rows = []
    for key, value in case.flat().items():
        table_name, _, leaf = key.rpartition(".")
        if table_name in OPTIONAL_TABLES and table_name not in case.tables_given:
            continue                # an analysis the case did not ask for: its defaults were not used
        if leaf in THERMAL_LEAVES and "engagement" not in case.tables_given \
                and not (leaf == "density" and "speed" in case.tables_given):
            continue
        if leaf in STRENGTH_LEAVES and "speed" not in case.tables_given:
            continue
        spec = SCHEMA.get(table_name, {}).get(leaf)
        unit = spec.unit if spec is not None else ""
        rows.append((key, f"{value:g}" if isinstance(value, float) else value, unit))
    return render("inputs.html", inputs=rows)


def _assumptions(sections: dict) -> str:
    said = list(ASSUMPTIONS) + [ran if name in sections else absent
                                for name, (ran, absent) in ANALYSIS_ASSUMPTIONS.items()]
    return render("assumptions.html", said=said)


def _provenance(s: dict) -> str:
    return render("provenance.html", s=s)
