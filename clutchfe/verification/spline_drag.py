"""The spline drag rows: a pack of numerically rigid plates against the closed-form load decay, the plates'
force balance, and the limit of no spline friction.

The pack is invented: four friction surfaces (two discs on an inner hub spline, one separator and the pressure
plate on outer basket splines), r1 = 50, r2 = 70 mm, μ = 0.3, W = 4000 N, spline μ_s = 0.15, a lining between
plates 10⁵ times stiffer than it (clutchfe.verification.limits' rigid-body limit).  The uniform pressure of
rigid plates on a thin lining gives every surface R = R_up, the radius of the closed form.

Which row catches what:

* force on the farthest surface and the pack efficiency against the closed form: the direction, the size
  (μ_s T / R_s) and the placement of the drag on every plate (a drag on the wrong body or with the
  wrong torque changes the decay by a whole gain a, 3–6 % here);
* the plates' balance: the FE's fixed point is the drag it applied (the iteration converged and the drag is
  μ_s times the plate's own torque over its pitch radius);
* μ_s = 0: the pack's own solve, to the last bit (no drag, no change).
"""
from __future__ import annotations

import numpy as np

from ..case import case_from_dict, with_tables
from ..comparison import hand_of
from ..solve import SolveService
from ..analyses.pack import pack_of_case, rigid_pack_forces
from .checks import Check, absolute, relative
from .limits import LINING_E, STIFF_BODIES

DECAY_SOURCE = ("\"The Consequences of Spline Friction in Multiple Disk Systems\", ASME J. Lubrication Technology "
                "90 (1968) 65; the closed form derived from the plates' force balance (clutchfe.analyses.pack.drag)")
BALANCE_SOURCE = ("axial force balance of each plate, F_j − F_(j+1) = μ_s T_j / R_s (the plates' balance of "
                  "ASME J. Lubrication Technology 90 (1968) 65)")
LIMIT_SOURCE = ("limit case: no spline friction is the pack without it, every F_k = W (the closed form of ASME "
                "J. Lubrication Technology 90 (1968) 65 at μ_s = 0)")
MU_SPLINE = 0.15

_STIFF = {"youngs_modulus": STIFF_BODIES * LINING_E}
TEST_PACK = with_tables({
    "kind": "plate", "name": "verification pack",
    "interface": {"inner_radius": 50.0, "outer_radius": 70.0, "friction_coefficient": 0.3, "friction_surfaces": 4},
    "load": {"axial_force": 4000.0},
    "mesh": {"interface_element_size": 1.0, "edge_element_size": 0.5, "element_size": 4.0},
    "verification": {"mesh_study": False},
}, lining={"youngs_modulus": LINING_E, "thickness": 1.0}, disc={**_STIFF, "core_thickness": 12.0},
    separator_plate={**_STIFF, "thickness": 12.0}, pressure_plate={**_STIFF, "thickness": 16.0}, counter_plate=_STIFF)


def _pack(mu_spline: float):
    case = case_from_dict(with_tables(TEST_PACK, splines={"friction_coefficient": mu_spline}), limit_case=True)
    solved = SolveService().solve(case)
    hand = hand_of(case)
    return case, solved, hand, pack_of_case(solved, hand)


def rigid_pack_decay(mu_spline: float = MU_SPLINE) -> list[Check]:
    """The FE pack of rigid plates against the closed form, and every plate's balance."""
    case, solved, hand, pack = _pack(mu_spline)
    W, mu = case.load.axial_force, case.interface.friction_coefficient
    name = f"pack of rigid plates, spline μ_s = {mu_spline:g}"
    rigid = rigid_pack_forces(W, [p.gain for p in pack.plates])
    forces = np.array([s.axial_force_N for s in pack.surfaces])
    # the balance of plate j (from the pressure plate down): what comes in minus what goes on is its drag
    incoming = np.concatenate([[W], forces[:-1]])
    drag = np.array([p.spline_drag_N for p in pack.plates])
    expected = np.array([p.friction_coefficient * 1000.0 * p.torque_Nm / p.pitch_radius_mm for p in pack.plates])
    return [
        # plates 12–16 mm thick and 1e5 times stiffer than the lining still bend a little under the drag on
        # their splined edges: R_k moves off R_up by ~5e-4 (measured: the torque row below), the decay by the
        # gain times that (1e-4 measured); 1e-3 covers both
        relative(name, "axial force on the farthest surface [N]", forces[-1], rigid[-1], 1e-3, DECAY_SOURCE),
        relative(name, "pack efficiency Σ F_k / (n W) [-]", forces.sum() / (len(forces) * W),
                 rigid.sum() / (len(rigid) * W), 1e-3, DECAY_SOURCE),
        # the fixed point stops at 1e-10 W per plate; the solve's own balance is at round-off
        absolute(name, "largest plate balance F_in − F_out − drag [N]", float(np.max(np.abs(incoming - forces - drag))),
                 0.0, 1e-8 * W, BALANCE_SOURCE),
        absolute(name, "largest drag − μ_s T / R_s [N]", float(np.max(np.abs(drag - expected))), 0.0, 1e-8 * W,
                 BALANCE_SOURCE),
        absolute(name, "torque through the pressure plate's spline / (μ F_1 R_up) − 1 [-]",
                 pack.plates[0].torque_Nm * 1000.0 / (mu * forces[0] * hand.radius_uniform_pressure_mm) - 1.0, 0.0,
                 1e-3, DECAY_SOURCE),
    ]


def no_spline_friction() -> list[Check]:
    """μ_s = 0 on every plate gives the pack's own solve exactly."""
    _, solved, _, pack = _pack(0.0)
    change = max(float(np.max(np.abs(a.normal_force - b.normal_force)))
                 for a, b in zip(pack.fe.interfaces, solved.fe.interfaces))
    name = "pack without spline friction (μ_s = 0)"
    return [absolute(name, "largest change of a nodal normal force [N]", change, 0.0, 0.0, LIMIT_SOURCE),
            absolute(name, "pack efficiency − 1 [-]", pack.efficiency - 1.0, 0.0, 0.0, LIMIT_SOURCE)]
