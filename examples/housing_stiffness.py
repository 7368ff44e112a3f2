"""How the housing's axial stiffness moves the torque capacity of a single-plate clutch.

A notebook-style script on the public API (invented scenario: a small dry plate clutch
on a spring-mounted housing).  Run it from the repository root:

    python3 examples/housing_stiffness.py

It prints one line per housing stiffness and returns the results, so a notebook can
import it and draw its own picture.  Results support, and never replace, the applicable
codes, the manufacturer's data and a licensed engineer's judgement.
"""
import clutchfe

BASE = {
    "kind": "plate", "name": "housing_example",
    "interface": {"inner_radius": 50.0, "outer_radius": 75.0, "friction_coefficient": 0.3,
                  "friction_surfaces": 2},
    "load": {"axial_force": 3000.0, "application": "ring", "ring_radius": 66.0},
    "lining": {"thickness": 1.2},
    "mesh": {"interface_element_size": 2.0, "element_size": 8.0, "edge_element_size": 0.8},
}
STIFFNESS_N_PER_MM = (2.0e4, 2.0e5, 2.0e6)


def housing_study(stiffnesses=STIFFNESS_N_PER_MM):
    """(axial stiffness N/mm, FE torque N·m, capacity position ξ, R_eff mm) per housing."""
    service = clutchfe.SolveService()       # one service: each stiffness is one prepared model
    rows = []
    for k in stiffnesses:
        case = clutchfe.case_from_dict({**BASE, "support": {"type": "springs", "axial_stiffness": k,
                                                            "radial_stiffness": k}})
        result = clutchfe.analyse(case, service, fields=False)
        c = result.comparison
        rows.append((k, c.torque_fe_Nm, c.capacity_position, c.effective_radius_mm))
    return rows


if __name__ == "__main__":
    hand = clutchfe.hand_of(clutchfe.case_from_dict(BASE))
    print(f"hand formulas: uniform pressure {hand.torque_uniform_pressure_Nm:.3f} N·m, "
          f"uniform wear {hand.torque_uniform_wear_Nm:.3f} N·m")
    for k, torque, xi, r_eff in housing_study():
        print(f"housing {k:9.3g} N/mm: FE torque {torque:.4f} N·m, xi = {xi:+.4f}, R_eff = {r_eff:.4f} mm")
    print(f"caution: {clutchfe.CAUTION}")
