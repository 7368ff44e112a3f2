"""The whole job on cases: limits with known answers, invariants on the demos, files written."""
import csv
import json
import math

import meshio
import numpy as np
import pytest

from clutchfe.case import case_from_dict, load_case
from clutchfe._cli import main
from tests.helpers.solving import solve_case

from tests.helpers.data import CASES, CONE, PLATE, with_tables, write_toml

SUMMARY_KEYS = """case_name kind input_sha256 version friction_coefficient friction_surfaces
semi_cone_angle_deg inner_radius_mm outer_radius_mm axial_force_N torque_fe_Nm
torque_uniform_pressure_Nm torque_uniform_wear_Nm capacity_position effective_radius_mm
radius_uniform_pressure_mm radius_uniform_wear_mm peak_pressure_MPa mean_pressure_MPa
contact_area_fraction axial_force_balance_error engagement_force_N dofs solve_seconds""".split()


@pytest.fixture(scope="module")
def demo_results():
    out = {}
    for path in CASES:
        case = load_case(path)
        out[path.stem] = (case, *solve_case(case))
    return out


# ---------------------------------------------------------------- limits with a known answer

def _rigid_bodies(data, lining_modulus=400.0):
    """Bodies 1e5 x stiffer than the lining: the elastic-foundation (Winkler) limit."""
    stiff = {"youngs_modulus": 1e5 * lining_modulus}
    tables = {"cone": stiff, "cup": stiff} if data["kind"] == "cone" else \
        {"pressure_plate": stiff, "disc": stiff, "counter_plate": stiff}
    return with_tables(data, lining={"youngs_modulus": lining_modulus}, **tables)


@pytest.mark.parametrize("base", [CONE, PLATE], ids=["cone", "plate"])
def test_thin_lining_on_rigid_bodies_tends_to_uniform_pressure(base):
    # Elastic-foundation limit (Johnson, Contact Mechanics 1985, §5.8): a thin compliant layer
    # between rigid bodies carries a pressure proportional to the local approach, uniform for a
    # conforming face, so xi -> 1 as the layer thins (edge zones shrink with the thickness).
    data = _rigid_bodies(base)
    t0 = case_from_dict(data, limit_case=True).lining.thickness
    xis = []
    for k in range(4):
        case = case_from_dict(with_tables(data, lining={"thickness": t0 / 2 ** k}), limit_case=True)
        _, _, result = solve_case(case)
        xis.append(result["capacity_position"])
    assert all(b > a for a, b in zip(xis, xis[1:])), xis
    assert xis[-1] >= 0.98, xis


def test_rigid_backed_lining_with_angle_mismatch_gives_a_linear_pressure():
    # Winkler layer under a linear gap g(s): p = k (delta - g(s)), linear along the slant where
    # closed (elastic-foundation model, Johnson 1985, §5.8), with k = E (1 - nu) / ((1 + nu)(1 - 2 nu) h)
    # for a thin layer whose lateral strain is held by the bonded faces (oedometric modulus).
    data = with_tables(_rigid_bodies(CONE), lining={"thickness": 1.0}, misalignment={"cone_angle_mismatch": 0.02})
    case = case_from_dict(data, limit_case=True)
    mesh, fe, result = solve_case(case)
    itf = fe.interfaces[0]
    t = case.lining.thickness
    alpha = math.radians(case.interface.semi_cone_angle)
    s = (itf.r - case.interface.inner_radius) / math.sin(alpha)
    closed = itf.in_contact & (s > 2 * t)
    last_closed = s[itf.in_contact].max()
    window = closed & (s < last_closed - 2 * t)
    assert window.sum() > 20
    slope, intercept = np.polyfit(s[window], itf.pressure[window], 1)
    fit = slope * s[window] + intercept
    assert np.abs(itf.pressure[window] - fit).max() <= 0.01 * itf.pressure.max()
    E, nu = case.lining.youngs_modulus, case.lining.poissons_ratio
    k = E * (1 - nu) / ((1 + nu) * (1 - 2 * nu) * t)
    gap_slope = math.sin(math.radians(0.02))          # normal gap per mm of slant
    assert slope == pytest.approx(-k * gap_slope, rel=0.05)


# ---------------------------------------------------------------- invariants on every demo

@pytest.mark.slow
def test_demo_invariants(demo_results):
    for name, (case, mesh, fe, result) in demo_results.items():
        # axial balance (measured on the demos, HEAD 0f9d85f: at most 4.4e-16, round-off)
        assert abs(result["axial_force_balance_error"]) <= 2e-14, name
        for itf in fe.interfaces:
            assert (itf.pressure >= 0).all() and np.isfinite(itf.pressure).all(), name
        r1, r2 = case.interface.inner_radius, case.interface.outer_radius
        assert r1 <= result["effective_radius_mm"] <= r2, name
        assert len(result["surfaces"]) == case.interface.friction_surfaces
        # in series: every surface of a pack carries the whole clamp force (measured: 1 to 1e-14)
        for surface in result["surfaces"]:
            assert surface["axial_force_over_clamp_force"] == pytest.approx(1.0, abs=1e-12)
        assert sum(s["torque_share"] for s in result["surfaces"]) == pytest.approx(1.0, abs=1e-12)


@pytest.mark.parametrize("base", [CONE, PLATE], ids=["cone", "plate"])
def test_force_and_friction_scale_linearly(base):
    # Frictionless contact with zero initial gap is positively homogeneous in the load
    # (linear elasticity): doubling W doubles every contact force; T_fe is linear in mu.
    case = case_from_dict(base)
    _, _, ref = solve_case(case)
    doubled = case_from_dict(with_tables(base, load={"axial_force": 2 * base["load"]["axial_force"]}))
    _, _, two_w = solve_case(doubled)
    # measured (HEAD 0f9d85f): equal bit for bit (doubling is exact in binary floating point), so the
    # bounds only leave room for a solver whose iterations are not scale-free
    assert two_w["torque_fe_Nm"] == pytest.approx(2 * ref["torque_fe_Nm"], rel=1e-12)
    assert two_w["capacity_position"] == pytest.approx(ref["capacity_position"], abs=1e-12)
    mu = base["interface"]["friction_coefficient"]
    twice_mu = case_from_dict(with_tables(base, interface={"friction_coefficient": 2 * mu}))
    _, _, two_mu = solve_case(twice_mu)
    assert two_mu["torque_fe_Nm"] == pytest.approx(2 * ref["torque_fe_Nm"], rel=1e-12)


def test_cone_demo_mesh_convergence():
    # Solution verification by refinement: xi between the two finest of three meshes
    # (refinement ratio 1.5) must change by less than 0.02.
    import tomllib
    path = [p for p in CASES if p.stem == "cone_capstan"][0]
    data = tomllib.loads(path.read_text())
    case0 = load_case(path)
    base = {"interface_element_size": case0.mesh.interface_element_size,
            "edge_element_size": case0.mesh.edge_element_size, "element_size": case0.mesh.element_size}
    xis = []
    for level in range(3):
        f = 1.5 ** level
        mesh = {k: v / f for k, v in base.items()}
        mesh["lining_layers"] = 2 + level
        _, _, result = solve_case(case_from_dict(with_tables(data, mesh=mesh)))
        xis.append(result["capacity_position"])
    assert abs(xis[2] - xis[1]) < 0.02, xis


# ---------------------------------------------------------------- the command and its files

def test_run_writes_every_file_and_key(tmp_path, capsys):
    path = write_toml(tmp_path / "small_cone.toml", CONE)
    out = tmp_path / "res"
    assert main(["run", str(path), "--out", str(out)]) == 0
    summary = json.loads((out / "summary.json").read_text())
    for key in SUMMARY_KEYS:
        assert key in summary, key
    text = (out / "summary.json").read_text()
    assert "NaN" not in text and "Infinity" not in text
    assert "licensed engineer" in summary["caution"]
    assert summary["case_name"] == "small_cone" and len(summary["input_sha256"]) == 64
    with open(out / "pressure.csv", newline="") as fh:
        rows = list(csv.DictReader(fh))
    assert {"surface", "r_mm", "pressure_MPa"} <= set(rows[0])
    force = sum(float(r["normal_force_N"]) for r in rows) * math.sin(math.radians(14.0))
    assert force == pytest.approx(CONE["load"]["axial_force"], rel=5e-3)
    sol = meshio.read(out / "solution.vtu")
    for field in ("displacement_mm", "von_mises_MPa", "contact_pressure_MPa"):
        assert field in sol.point_data and np.isfinite(sol.point_data[field]).all()
    for picture in ("pressure.png", "deformed.png", "section.png", "effective_radius.png"):
        assert (out / picture).stat().st_size > 10_000, picture
    # no scratch folders left behind (the empty lock file that keeps two runs apart stays)
    assert [p.name for p in tmp_path.glob(".res.*")] == [".res.lock"]
    printed = capsys.readouterr().out
    assert "torque" in printed and "licensed engineer" in printed


def test_same_input_same_output(tmp_path, capsys):
    path = write_toml(tmp_path / "c.toml", PLATE)
    a, b = tmp_path / "a", tmp_path / "b"
    assert main(["run", str(path), "--out", str(a)]) == 0
    assert main(["run", str(path), "--out", str(b)]) == 0
    sa, sb = (json.loads((d / "summary.json").read_text()) for d in (a, b))
    for s in (sa, sb):
        s.pop("solve_seconds")
    assert sa == sb
    assert (a / "pressure.csv").read_text() == (b / "pressure.csv").read_text()


def test_failed_run_leaves_nothing_half_written(tmp_path, capsys, monkeypatch):
    path = write_toml(tmp_path / "c.toml", CONE)
    out = tmp_path / "res"
    assert main(["run", str(path), "--out", str(out)]) == 0
    before = (out / "summary.json").read_text()

    from clutchfe.output import files

    def broken(*args, **kwargs):
        raise RuntimeError("disk trouble while drawing")
    monkeypatch.setattr(files, "deformed_picture", broken)
    assert main(["run", str(path), "--out", str(out)]) == 1
    assert (out / "summary.json").read_text() == before      # the earlier result is intact
    assert [p.name for p in tmp_path.glob(".res.*")] == [".res.lock"]      # no scratch left
    assert main(["run", str(path), "--out", str(tmp_path / "fresh")]) == 1
    assert not (tmp_path / "fresh").exists()


def test_contact_failure_exits_3_with_the_reason(tmp_path, capsys, monkeypatch):
    import clutchfe.fem as fem
    from clutchfe.solve import service

    def cannot_carry(model):
        raise fem.ContactError("interface s1 opens everywhere: it cannot carry the axial force")
    monkeypatch.setattr(service, "ContactSolver", cannot_carry)       # the one place a case is condensed
    path = write_toml(tmp_path / "c.toml", CONE)
    assert main(["run", str(path), "--out", str(tmp_path / "r")]) == 3
    assert "cannot carry" in capsys.readouterr().err
    assert not (tmp_path / "r").exists()


@pytest.mark.slow
def test_tilted_run_writes_the_circumferential_pressure(tmp_path, capsys):
    data = with_tables(CONE, misalignment={"axis_tilt": 0.02}, verification={"mesh_study": False})
    path = write_toml(tmp_path / "c.toml", data)
    out = tmp_path / "r"
    assert main(["run", str(path), "--out", str(out)]) == 0
    summary = json.loads((out / "summary.json").read_text())
    for key in SUMMARY_KEYS + ["peak_pressure_theta_deg", "peak_pressure_r_mm", "tilt_moment_Nm", "harmonics"]:
        assert key in summary, key
    with open(out / "pressure.csv", newline="") as fh:
        rows = list(csv.DictReader(fh))
    assert "theta_deg" in rows[0]
    thetas = {float(r["theta_deg"]) for r in rows}
    assert len(thetas) == 48                     # default angular divisions
    # the tilt loads one side more than the other
    assert summary["tilt_moment_Nm"] > 0
    assert (out / "pressure_polar.png").exists() and (out / "pressure_3d.png").exists()
    assert not (out / "deformed.png").exists()  # no (r, z) displacement field for a tilted solve


def test_wear_with_tilt_is_refused(tmp_path, capsys):
    data = with_tables(CONE, misalignment={"axis_tilt": 0.02}, wear={"target_wear_volume": 10.0})
    path = write_toml(tmp_path / "c.toml", data)
    assert main(["check", str(path)]) == 2
    assert "misalignment.axis_tilt" in capsys.readouterr().err
