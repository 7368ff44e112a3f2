"""Every top-level key summary.json can hold: unit, meaning, producing stage, always or not.

``clutchfe.plan.summary_of`` assembles summary.json from the stages; this table declares
what comes out, for the README ("What summary.json holds", rewritten by
``python3 -m clutchfe.summary_keys``) and for the test that runs real cases and checks
every key they write against it.  Standard library only, so anything may import it.

Units as in the outputs: mm, N, MPa, torque in N·m; an empty unit is a pure number
(fraction, ratio, count) or text.  Relative values are plain fractions (0.05 = 5 %)
unless the name says ``percent``.
"""
from __future__ import annotations

from dataclasses import dataclass

from .readme import write_between_markers

STAGES = ("case", "solve", "comparison", "tilt", "wear-in", "engagement", "speed", "spline drag",
          "compression curve", "evidence", "report", "provenance")

# the stages whose keys are there only when the case asks for that analysis (the README says so)
OPTIONAL_STAGES = {"tilt": "a case with an axis tilt or a radial offset", "wear-in": "a case with a [wear] table",
                   "engagement": "a case with an [engagement] table", "speed": "a case with a [speed] table",
                   "spline drag": "a case with a [splines] table",
                   "compression curve": "a case with a [lining_curve] or a [cushion] table"}

MARKERS = ("<!-- summary keys: start -->", "<!-- summary keys: end -->")


@dataclass(frozen=True)
class SummaryKey:
    key: str
    unit: str           # "" for a pure number or text
    meaning: str
    stage: str          # one of STAGES
    always: bool        # False: only when the stage's analysis runs (OPTIONAL_STAGES)


def _k(stage: str, always: bool, rows: tuple) -> tuple:
    return tuple(SummaryKey(key, unit, meaning, stage, always) for key, unit, meaning in rows)


_STEADY = "only when the wear-in reached its steady state: "

SUMMARY_KEYS: tuple[SummaryKey, ...] = (
    *_k("case", True, (
        ("case_name", "", "name of the case: its name key, else the case file's name"),
        ("kind", "", '"cone" or "plate"'),
        ("input_sha256", "", "SHA-256 of the case file as read (empty for a case built in code)"),
        ("section_file", "", "the drawing the section was read from, as the case file names it ([section_file] "
                             "path); null for a parametric section"),
        ("section_file_sha256", "", "SHA-256 of that drawing as read (empty for a parametric section)"),
        ("friction_coefficient", "", "friction coefficient μ of the case"),
        ("friction_surfaces", "", "number of friction faces n carrying the torque"),
        ("semi_cone_angle_deg", "deg", "semi-cone angle α of the friction face (90 for a plate)"),
        ("inner_radius_mm", "mm", "inner radius r1 of the friction face"),
        ("outer_radius_mm", "mm", "outer radius r2 of the friction face"),
        ("axial_force_N", "N", "axial clamp force W of the case"),
    )),
    *_k("comparison", True, (
        ("torque_fe_Nm", "N·m", "torque capacity from the FE contact pressure, n μ ∫ p r dA over all faces"),
        ("torque_uniform_pressure_Nm", "N·m", "torque capacity by the uniform-pressure hand formula"),
        ("torque_uniform_wear_Nm", "N·m", "torque capacity by the uniform-wear hand formula"),
        ("capacity_position", "", "ξ = (T_fe − T_uw)/(T_up − T_uw): 0 at uniform wear, 1 at uniform pressure; "
                                  "below 0 even the uniform-wear formula overestimates the capacity"),
        ("effective_radius_mm", "mm", "effective friction radius of the FE torque, T_fe sin α / (n μ W)"),
        ("radius_uniform_pressure_mm", "mm", "effective radius of the uniform-pressure method"),
        ("radius_uniform_wear_mm", "mm", "effective radius of the uniform-wear method, (r1 + r2)/2"),
        ("peak_pressure_MPa", "MPa", "highest nodal FE contact pressure on any face (on the (r, θ) grid when "
                                     "tilted); at a lining end an edge concentration that grows as the mesh is "
                                     "refined: shown, not judged"),
        ("design_peak_pressure_MPa", "MPa", "design peak: the highest mean pressure over a band of 10 % of the face "
                                            "width along the face (worst place, worst angle when tilted); "
                                            "mesh-converged, judged against the allowable"),
        ("design_peak_radius_mm", "mm", "radius of the middle of the design-peak band"),
        ("design_peak_surface", "", "friction face of the design peak"),
        ("design_peak_band_mm", "mm", "width of the design-peak band along the face"),
        ("mean_pressure_MPa", "MPa", "average normal pressure W over the face area: the uniform-pressure "
                                     "value, the same as uniform_pressure_MPa, not an FE result"),
        ("contact_area_fraction", "", "share of the friction area in contact (FE; on the (r, θ) grid when tilted)"),
        ("engagement_force_N", "N", "axial force to push a cone home while it slides, W (1 + μ cot α); "
                                    "W for a plate"),
        ("axial_force_balance_error", "", "relative error of the FE axial force balance, the larger of "
                                          "the comparison's and the solver's (size only)"),
        ("uniform_pressure_MPa", "MPa", "pressure of the uniform-pressure method, W / (π (r2² − r1²))"),
        ("peak_pressure_uniform_wear_MPa", "MPa", "peak pressure of the uniform-wear method, at r1"),
        ("self_locking", "", "true when the cone self-locks (tan α < μ) and needs a pull to disengage"),
        ("capacity_position_uncertainty", "", "how far ξ may move from the axial balance error alone"),
        ("effective_radius_position", "", "where the FE effective radius sits on [r1, r2] (0 at r1, 1 at r2)"),
        ("radius_uniform_pressure_position", "", "where the uniform-pressure radius sits on [r1, r2]"),
        ("radius_uniform_wear_position", "", "where the uniform-wear radius sits on [r1, r2] (0.5)"),
        ("torque_fe_over_uniform_wear", "", "T_fe / T_uw − 1: relative excess of the FE torque over uniform "
                                            "wear (a difference, not the ratio)"),
        ("torque_fe_over_uniform_pressure", "", "T_fe / T_up − 1: relative excess of the FE torque over "
                                                "uniform pressure (a difference, not the ratio)"),
        ("peak_pressure_radius_mm", "mm", "radius of the FE peak pressure"),
        ("peak_pressure_surface", "", "name of the friction face with the FE peak pressure"),
        ("peak_pressure_over_uniform_wear_peak", "", "FE peak pressure / uniform-wear peak pressure (the ratio)"),
        ("faces_per_modelled_surface", "", "friction faces each modelled face stands for (1: all modelled)"),
        ("verdict", "", "the run in plain words: which hand formula is conservative, where R_eff sits, the "
                        "margins, the worn-in state when worn in, and every failed criterion by name"),
        ("failed_criteria", "", "names of the failed criteria (required torque, allowable pressure, partial "
                                "contact, mesh convergence, and the same '(worn in)'); empty when none failed"),
        ("required_torque_Nm", "N·m", "required torque of the [requirement] table (null without one)"),
        ("service_factor", "", "service factor of the [requirement] table (null without one)"),
        ("capacity_margin_fe", "", "FE torque / (required torque × service factor) − 1, as a fraction "
                                   "(null without a requirement); below 0 the clutch slips"),
        ("capacity_margin_uniform_pressure", "", "the same margin for the uniform-pressure torque"),
        ("capacity_margin_uniform_wear", "", "the same margin for the uniform-wear torque"),
        ("surfaces", "", "one entry per modelled friction face. The faces act in series along the axis (each "
                         "carries the whole clamp force W) and in parallel for the torque: name, axial_force_N, "
                         "axial_force_over_clamp_force (1 for every face of an ideal pack), axial_force_balance_error, "
                         "torque_Nm, torque_share (of the total torque), effective_radius_mm, peak_pressure_MPa "
                         "(nodal), design_peak_pressure_MPa and design_peak_radius_mm (band mean), "
                         "contact_area_fraction; on a tilted face the peaks and contact are those of the (r, θ) grid, "
                         "as at the top level"),
        ("peak_pressure_over_allowable", "", "nodal (edge) peak pressure / the lining's allowable pressure, for "
                                             "information (null without lining.allowable_pressure)"),
        ("allowable_pressure_MPa", "MPa", "the lining's allowable pressure (null without one)"),
        ("design_peak_over_allowable", "", "design peak / allowable pressure: above 1 the allowable is exceeded "
                                           "(null without an allowable)"),
        ("warnings", "", "list of warnings in plain words: the case's, the comparison's and the wear-in's"),
    )),
    *_k("solve", True, (
        ("dofs", "", "number of unknowns (degrees of freedom) of the FE model"),
        ("solve_seconds", "s", "wall time of the FE solve"),
        ("rigid_approach_mm", "mm", "per free body (name → value): its rigid axial translation under load"),
        ("contact_iterations", "", "iterations the contact solver took (with a compression curve: its Newton steps, "
                                   "each an exact contact solve)"),
        ("mesh", "", "the mesh of the run: nodes, triangles, element_order (1 linear, 2 quadratic)"),
    )),
    *_k("tilt", False, (
        ("peak_pressure_theta_deg", "deg", "angle around the axis of the peak pressure on the (r, θ) grid"),
        ("peak_pressure_r_mm", "mm", "radius of the peak pressure on the (r, θ) grid "
                                     "(the same value as peak_pressure_radius_mm)"),
        ("tilt_moment_Nm", "N·m", "tilting moment the guidance of the pressed part carries (0 when "
                                  "self-aligning)"),
        ("harmonics", "", "highest Fourier harmonic N solved (harmonics 0 … N)"),
        ("angular_divisions", "", "angles of the contact grid around the axis, 2N"),
        ("axis_tilt_deg", "deg", "imposed axis tilt of the pressed part (misalignment.axis_tilt)"),
        ("radial_offset_mm", "mm", "imposed radial offset of the pressed part (misalignment.radial_offset)"),
        ("guidance", "", '"held" or "self_aligning": how the pressed part\'s tilt is guided'),
        ("residual_tilt_deg", "deg", "tilt of the pressed part under load (the imposed tilt when held)"),
        ("floating_tilt_deg", "deg", "per floating body that may tilt (name → value): its tilt under load"),
        ("open_area_fraction", "", "share of the friction area that is open (1 − contact_area_fraction)"),
        ("tilt_pivot_offset_mm", "mm", "axial distance of the tilt pivot from the middle of the friction face "
                                       "(misalignment.tilt_pivot_offset; > 0 towards the loaded back face)"),
        ("tilt_pivot_z_mm", "mm", "axial position z of the tilt pivot on the axis, in the section's "
                                  "coordinates (the z_mm of pressure.csv)"),
        ("guided_at", "", '"load_ring" or "bore": where the guidance holds the pressed part across the axis'),
        ("guidance_radial_force_N", "N", "force across the axis the guidance of the pressed part carries "
                                         "(the contact's net radial force on it)"),
    )),
    *_k("wear-in", False, (
        ("torque_worn_in_Nm", "N·m", "FE torque capacity at the end of the wear-in"),
        ("capacity_position_worn_in", "", "capacity position ξ at the end of the wear-in (0 = uniform wear)"),
        ("effective_radius_worn_in_mm", "mm", "FE effective radius at the end of the wear-in"),
        ("peak_pressure_worn_in_MPa", "MPa", "FE peak pressure at the end of the wear-in"),
        ("worn_in_converged", "", "true when a state of the wear-in met the steady test: its "
                                  "uniform_wear_departure (wear.csv) at or below wear.steady_tolerance"),
        ("wear_steps", "", "number of wear steps taken"),
        ("wear_stop_reason", "", 'why the wear-in stopped: "steady", "sliding" (duty done), "volume" '
                                 '(target volume), "depth limit" (lining limit) or "step limit"'),
        ("torque_change_worn_in_percent", "%", "change of the FE torque from new to the end of the wear-in"),
        ("contact_area_fraction_worn_in", "", "share of the friction area in contact at the end of the wear-in"),
        ("p_r_spread_worn_in", "", "(max − min)/mean of p·r over the contact at the end, largest over the "
                                   "faces; 0 is exact uniform wear"),
        ("uniform_wear_departure_worn_in", "", "departure of the pack's p·r (all faces' pressures summed at each "
                                               "radius, times r) from uniform wear at the end, rms, relative to "
                                               "that of uniform pressure: 1 new, 0 worn in; ξ is at most κ × it in size, κ = "
                                               "1.005 for r1/r2 = 2/3, 1.09 for 1/6"),
        ("wear_coefficient_mm3_per_N_m", "mm³/(N·m)", "Archard wear coefficient used (wear.wear_coefficient)"),
        ("wear_volume_mm3", "mm³", "volume worn off the lining, all friction faces"),
        ("wear_depth_max_mm", "mm", "deepest wear of the lining"),
        ("wear_sliding_rad", "rad", "relative rotation of the faces while slipping, summed over the wear-in"),
        ("wear_engagements", "", "engagements that sliding stands for (null without slip_speed and slip_time)"),
        ("capacity_margin_fe_worn_in", "", "FE capacity margin at the end of the wear-in, as a fraction "
                                           "(null without a requirement)"),
        ("wear_steady_step", "", _STEADY + "the first step (row of wear.csv) that met the steady test"),
        ("steady_wear_volume_mm3", "mm³", _STEADY + "the wear volume at which p·r first became steady"),
        ("steady_engagements", "", _STEADY + "engagements to the steady state (null without a duty)"),
    )),
    *_k("engagement", False, (
        ("engagement_peak_temperature_C", "°C", "highest temperature of the section during the engagement"),
        ("engagement_peak_temperature_radius_mm", "mm", "radius of that temperature"),
        ("engagement_peak_temperature_z_mm", "mm", "axial position of that temperature"),
        ("engagement_peak_temperature_time_s", "s", "time of that temperature from the start of the first slip"),
        ("engagement_peak_temperature_body", "", "body where that temperature is"),
        ("torque_hot_end_of_slip_Nm", "N·m", "FE torque capacity at the end of slip of the last engagement"),
        ("capacity_position_hot_end_of_slip", "", "capacity position ξ at the end of slip of the last engagement"),
        ("effective_radius_hot_end_of_slip_mm", "mm", "FE effective radius at the end of slip of the last engagement"),
        ("engagement_end_of_slip_time_s", "s", "time of that end of slip"),
        ("torque_hot_worst_Nm", "N·m", "least FE torque capacity while slipping (the worst instant)"),
        ("capacity_position_hot_worst", "", "capacity position ξ at the worst instant"),
        ("effective_radius_hot_worst_mm", "mm", "FE effective radius at the worst instant"),
        ("engagement_worst_time_s", "s", "time of the worst instant"),
        ("effective_radius_shift_end_of_slip_mm", "mm", "hot minus cold effective radius at the end of slip "
                                                        "(> 0: the pressure moved outwards)"),
        ("effective_radius_shift_worst_mm", "mm", "hot minus cold effective radius at the worst instant"),
        ("peak_pressure_hot_MPa", "MPa", "highest FE contact pressure during the engagement"),
        ("contact_area_fraction_hot_min", "", "least share of the friction area in contact during the engagement"),
        ("thermal_coning_mm", "mm", "per body and friction face: how much more the face's outer end than its "
                                    "inner end moved towards its mate, hot minus cold, at the end of slip "
                                    "(> 0: the pressure moves outwards)"),
        ("slip_energy_J", "J", "frictional heat generated over the engagement, ∫∫ μ p v dA dt (all modelled faces)"),
        ("engagement_energy_balance_error", "", "(heat in − heat stored − heat convected) / their sum: the heat "
                                                "account of the time steps (at most 0.01)"),
        ("engagement_steps", "", "time steps of the engagement (thermal.csv rows after the cold one)"),
        ("engagement_time_s", "s", "time at the end of the last step"),
        ("engagement_lock_up_time_s", "s", 'only with engagement.speed_law = "inertia": slip time of the last '
                                           "engagement until lock-up"),
        ("coupling_iterations_max", "", "most pressure–temperature iterations of a time step"),
        ("coupling_residual_max", "", "largest final residual of a time step: the last change of the interface "
                                         "pressures over their peak"),
        ("heat_factorisations", "", "distinct heat-step matrices factorised (each once)"),
        ("coupling_fallback_steps", "", "time steps whose contact front cycled (a node at the edge of the contact "
                                        "closing and opening again), solved by the staggered iteration"),
        ("peak_temperature_step_jump_K", "K", "largest departure of a slip step's peak temperature from the mean of "
                                              "its neighbours: step-to-step jumps at a cycling front"),
        ("conservative_hand_method_cold", "", '"both", "uniform wear" or "neither": which hand formula predicts '
                                              "no more torque than the cold FE"),
        ("conservative_hand_method_hot", "", "the same at the worst instant of the engagement"),
        ("conservative_hand_method_hot_end_of_slip", "", "the same at the end of slip of the last engagement"),
        ("engagement_warnings", "", "the warnings of the engagement (also in warnings)"),
        ("engagement_failed", "", "the failed criteria of the engagement (also in failed_criteria)"),
    )),
    *_k("speed", False, (
        ("running_speed_rpm", "rpm", "the running speed of the [speed] table"),
        ("torque_at_speed_Nm", "N·m", "FE torque capacity at the running speed"),
        ("capacity_position_at_speed", "", "capacity position ξ at the running speed"),
        ("effective_radius_at_speed_mm", "mm", "FE effective radius at the running speed"),
        ("effective_radius_shift_at_speed_mm", "mm", "at speed minus at rest (> 0: the pressure moved outwards)"),
        ("peak_pressure_at_speed_MPa", "MPa", "highest nodal contact pressure at the running speed"),
        ("design_peak_pressure_at_speed_MPa", "MPa", "design peak (band mean) at the running speed, judged against "
                                                     "the allowable"),
        ("contact_area_fraction_at_speed", "", "share of the friction area in contact at the running speed"),
        ("max_von_mises_at_speed_MPa", "MPa", "per body: largest von Mises stress, clamp and spin together"),
        ("max_hoop_stress_at_speed_MPa", "MPa", "per body: largest hoop stress, clamp and spin together"),
        ("yield_margin_at_speed", "", "per body: yield strength over that von Mises stress, less 1"),
        ("mean_hoop_stress_spin_MPa", "MPa", "per body: mean hoop stress over its section of the spin alone"),
        ("burst_speed_rpm", "rpm", "per body: speed at which that mean hoop stress reaches the tensile strength "
                                   "(null: not tensile)"),
        ("speed_burst_margin", "", "least burst speed over the running speed, less 1 (null: no body can burst by "
                                   "the criterion)"),
        ("conservative_hand_method_at_speed", "", '"both", "uniform wear" or "neither": which hand formula predicts '
                                                  "no more torque than the FE at the running speed"),
        ("speed_warnings", "", "the warnings of the speed analysis (also in warnings)"),
        ("speed_failed", "", "the failed criteria of the speed analysis (also in failed_criteria)"),
    )),
    *_k("spline drag", False, (
        ("torque_with_spline_drag_Nm", "N·m", "FE torque capacity of the pack with the friction of the plates' splines"),
        ("torque_without_spline_drag_Nm", "N·m", "the same pack without it (the case's own solve, torque_fe_Nm)"),
        ("pack_efficiency", "", "torque with spline drag over the pack without it (n μ W R_e at the FE effective "
                                "radius R_e)"),
        ("pack_efficiency_rigid_plates", "", "the same share for a pack of rigid plates by the closed form "
                                             "(Σ F_k / (n W) at the uniform-pressure radius)"),
        ("capacity_position_with_spline_drag", "", "capacity position ξ of the effective radius with spline drag "
                                                   "(where the pressure acts; the lost force is pack_efficiency)"),
        ("effective_radius_with_spline_drag_mm", "mm", "torque with spline drag over μ Σ F_k, the forces the surfaces "
                                                       "carry with it"),
        ("capacity_margin_with_spline_drag", "", "torque with spline drag over the required torque times the "
                                                 "service factor, less 1 (null without a required torque)"),
        ("last_surface_force_over_clamp_force", "", "axial force of the surface farthest from the pressure plate "
                                                    "over the clamp force W"),
        ("spline_drag_iterations", "", "fixed-point steps of pressure and spline drag until no drag changed by "
                                       "more than 1e-10 W"),
        ("pack_surfaces", "", "per friction surface, from the pressure plate: name, position_from_pressure_plate, "
                              "axial_force_N, axial_force_without_drag_N, axial_force_rigid_plates_N, torque_Nm, "
                              "torque_without_drag_Nm, effective_radius_mm, design_peak_pressure_MPa"),
        ("spline_plates", "", "per splined plate, from the pressure plate: body, spline (inner/outer), "
                              "pitch_radius_mm, spline_friction_coefficient, torque_Nm (through its spline), "
                              "spline_force_N (tangential, T / R_s), spline_drag_N (axial), gain (μ_s μ R_up / R_s)"),
        ("pack_warnings", "", "what the spline drag found (its WARNING lines also in warnings)"),
        ("pack_failed", "", "the failed criteria with spline drag (also in failed_criteria)"),
    )),
    *_k("compression curve", False, (
        ("curve_nominal_pressure_MPa", "MPa", "the faces' normal force over their area (W / A on a plate): the "
                                              "nominal point on the curve"),
        ("curve_nominal_deflection_mm", "mm", "the layer's deflection at the nominal pressure (the lining, and half "
                                              "the cushion, per face)"),
        ("lining_deflection_at_nominal_mm", "mm", "the lining's own deflection there (null without [lining_curve])"),
        ("cushion_deflection_at_nominal_mm", "mm", "the cushion's whole deflection between a disc's facings there "
                                                   "(null without [cushion])"),
        ("curve_tangent_stiffness_at_nominal_MPa_per_mm", "MPa/mm", "the layer curve's slope dp/dd at the nominal "
                                                                   "point"),
        ("curve_secant_stiffness_at_nominal_MPa_per_mm", "MPa/mm", "nominal pressure over nominal deflection (the "
                                                                  "straight layer compared with)"),
        ("curve_last_measured_pressure_MPa", "MPa", "the highest pressure the lining's curve was measured to (past it: "
                                                   "its last slope; null without [lining_curve])"),
        ("pressure_beyond_curve", "", "true when the peak pressure runs past the last measured point (a failed "
                                      "criterion)"),
        ("cushion_flat_share", "", "share of the faces' area where the cushion is pressed flat, past its last point "
                                   "(null without [cushion])"),
        ("torque_with_secant_layer_Nm", "N·m", "the same case with a straight layer through the nominal point (a "
                                               "linear lining of the same compression at W / A)"),
        ("capacity_position_with_secant_layer", "", "ξ with that straight layer"),
        ("peak_pressure_with_secant_layer_MPa", "MPa", "peak pressure with that straight layer"),
        ("torque_without_cushion_Nm", "N·m", "the same faces without the cushion springs (null without [cushion])"),
        ("capacity_position_without_cushion", "", "ξ without the cushion springs (null without [cushion])"),
        ("peak_pressure_without_cushion_MPa", "MPa", "peak pressure without the cushion springs (null without "
                                                    "[cushion])"),
        ("curve_faces", "", "per friction face: interface, mean_pressure_MPa, least_pressure_MPa, peak_pressure_MPa, "
                            "mean_deflection_mm, peak_deflection_mm, tangent_stiffness_MPa_per_mm, closed_share"),
        ("curve_warnings", "", "what the compression curves found (its WARNING lines also in warnings)"),
        ("curve_failed", "", "the failed criteria of the compression curves (also in failed_criteria)"),
    )),
    *_k("provenance", True, (
        ("version", "", "clutchfe version that wrote the file"),
        ("versions", "", "Python and package versions of the run (name → version)"),
        ("caution", "", "the safety caution: results support, never replace, codes and a licensed engineer"),
    )),
    *_k("evidence", True, (
        ("mesh_study", "", "the mesh study: the three meshes (sizes, triangles, results), observed order, "
                           "Richardson value and GCI per quantity, converged, verdict; only skipped (the reason) "
                           "when switched off or a coarser mesh could not be solved"),
        ("verification", "", "the solver's verification table as `clutchfe verify` stored it: state (\"stored\", "
                             "or \"missing\" / \"stale\" with the reason and the command that makes it; then no "
                             "rows and all_passed null), all_passed, checks, failed, made (UTC), code_hash, table "
                             "(the stored file)"),
    )),
    *_k("report", True, (
        ("report_pdf", "", 'file name of the PDF report ("report.pdf"), or why it was not written'),
    )),
)

BY_KEY = {k.key: k for k in SUMMARY_KEYS}


def reference_markdown() -> str:
    """The summary.json reference as a Markdown table (used by the README)."""
    lines = ["| key | unit | stage | meaning |", "|---|---|---|---|"]
    lines += [f"| `{k.key}` | {k.unit} | {k.stage} | {k.meaning} |" for k in SUMMARY_KEYS]
    return "\n".join(lines)


if __name__ == "__main__":      # rewrite the README's table: python3 -m clutchfe.summary_keys
    write_between_markers("README.md", reference_markdown(), MARKERS)
