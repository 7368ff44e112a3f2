"""Pictures of a run: files are written, labelled with units, and draw the right curves and fields.

The clutch is a scenario invented for these tests.
"""
import math

import numpy as np
import pytest

from clutchfe.comparison import compare, hand_capacity
from clutchfe.output.files import deformed_picture
from clutchfe.output.plots import effective_radius_bar, pressure_plot

PNG_SIGNATURE = b"\x89PNG\r\n\x1a\n"


def _cone_faces():
    # Invented cone r1 = 60, r2 = 75 mm, alpha = 12.5 deg, W = 2500 N, one face, with a
    # pressure that falls off towards r2; nodal forces from lumped ring areas.
    r = np.linspace(60.0, 75.0, 21)
    edges = np.concatenate(([r[0]], 0.5 * (r[1:] + r[:-1]), [r[-1]]))
    areas = np.pi * np.diff(edges**2) / math.sin(math.radians(12.5))
    p = 1.2 - 0.01 * (r - 60.0)
    p *= 2500.0 / (np.sum(p * areas) * math.sin(math.radians(12.5)))
    return [{"name": "cone face", "r_mm": r, "pressure_MPa": p, "normal_force_N": p * areas,
             "in_contact": p > 0, "tributary_area_mm2": areas}]


def _line(ax, label_start):
    matches = [ln for ln in ax.get_lines() if ln.get_label().startswith(label_start)]
    assert len(matches) == 1, [ln.get_label() for ln in ax.get_lines()]
    return matches[0]


def test_pressure_plot_is_written_with_units_and_hand_curves(tmp_path):
    hand = hand_capacity(60.0, 75.0, 12.5, 0.3, 1, 2500.0)
    faces = _cone_faces()
    out = compare(faces, hand)
    path = tmp_path / "pressure.png"
    fig = pressure_plot(path, faces, hand, out["capacity_position"], out["effective_radius_mm"], "demo cone")

    data = path.read_bytes()
    assert data.startswith(PNG_SIGNATURE) and len(data) > 5000
    ax = fig.axes[0]
    assert ax.get_xlabel() == "radius r [mm]"
    assert ax.get_ylabel() == "contact pressure [MPa]"
    title = ax.get_title()
    assert title.startswith("demo cone")
    assert f"xi = {out['capacity_position']:.3f}" in title
    assert f"R_eff = {out['effective_radius_mm']:.2f} mm" in title

    # Same-W hand curves (normal pressure on the slant): uniform W / (pi (r2^2 - r1^2)),
    # uniform wear W / (2 pi r (r2 - r1)); both give int p 2 pi r dr = W (Shigley's clutch chapter; docs/physics.md).
    r_up, p_up = _line(ax, "uniform pressure").get_data()
    assert np.allclose(p_up, 2500.0 / (math.pi * (75.0**2 - 60.0**2)), rtol=1e-12)
    r_uw, p_uw = _line(ax, "uniform wear").get_data()
    assert np.allclose(p_uw, 2500.0 / (2 * math.pi * np.asarray(r_uw) * 15.0), rtol=1e-12)
    # FE curve: markers and line, points sorted by radius.
    r_fe, p_fe = _line(ax, "FE: cone face").get_data()
    assert np.all(np.diff(r_fe) > 0) and np.allclose(p_fe, faces[0]["pressure_MPa"])
    assert _line(ax, "FE: cone face").get_marker() not in (None, "None", "")
    # The friction annulus is shaded exactly over [r1, r2].
    spans = [p for p in ax.patches if p.get_label().startswith("friction annulus")]
    assert len(spans) == 1
    # axvspan gives a Rectangle on newer matplotlib, a Polygon on older: read its corner points.
    span = spans[0]
    corners = span.get_patch_transform().transform(span.get_path().vertices)
    xs = corners[:, 0]
    assert xs.min() == pytest.approx(60.0) and xs.max() == pytest.approx(75.0)


def test_pressure_plot_draws_one_fe_curve_per_face(tmp_path):
    hand = hand_capacity(60.0, 75.0, 12.5, 0.3, 2, 2500.0)
    a = _cone_faces()[0]
    b = {**a, "name": "second face"}
    fig = pressure_plot(tmp_path / "two.png", [a, b], hand, 0.4, 67.6, "twin")
    fe_lines = [ln for ln in fig.axes[0].get_lines() if ln.get_label().startswith("FE:")]
    assert [ln.get_label() for ln in fe_lines] == ["FE: cone face [MPa]", "FE: second face [MPa]"]
    assert (tmp_path / "two.png").stat().st_size > 5000


def test_effective_radius_bar_is_written_and_marks_three_radii(tmp_path):
    path = tmp_path / "bar.png"
    fig = effective_radius_bar(path, 60.0, 75.0, 67.78, 67.5, 66.9)
    data = path.read_bytes()
    assert data.startswith(PNG_SIGNATURE) and len(data) > 2000
    ax = fig.axes[0]
    assert ax.get_xlabel() == "radius r [mm]"
    marks = {c.get_label(): c.get_segments()[0][0][0] for c in ax.collections}
    assert marks == {"uniform wear 67.50 mm": 67.5, "uniform pressure 67.78 mm": 67.78, "FE 66.90 mm": 66.9}
    bar = ax.patches[0]
    assert bar.get_x() == pytest.approx(60.0) and bar.get_width() == pytest.approx(15.0)


@pytest.mark.parametrize("radii", [(75.0, 60.0, 67.0, 67.0, 67.0), (60.0, 75.0, float("nan"), 67.5, 67.0)])
def test_effective_radius_bar_refuses_impossible_radii(tmp_path, radii):
    with pytest.raises(ValueError):
        effective_radius_bar(tmp_path / "bad.png", *radii)
    assert not (tmp_path / "bad.png").exists()


def test_deformed_picture_draws_the_magnified_section_coloured_by_von_mises(tmp_path):
    # an invented 10 mm square cut into four triangles at its centre node; P2-like extra node 5 is
    # carried (a field value, no corner of any triangle); largest displacement 0.02 mm
    points = np.array([[50.0, 0.0], [60.0, 0.0], [60.0, 10.0], [50.0, 10.0], [55.0, 5.0], [55.0, 0.0]])
    triangles = np.array([[0, 1, 4, 5], [1, 2, 4, 5], [2, 3, 4, 5], [3, 0, 4, 5]])
    u = np.array([[0.0, 0.0], [0.01, 0.0], [0.01, -0.02], [0.0, -0.02], [0.005, -0.01], [0.005, 0.0]])
    von_mises = np.array([0.5, 1.0, 4.0, 2.0, 3.0, 0.7])
    mesh = type("Mesh", (), {"points": points, "triangles": triangles})()
    fe = type("Fe", (), {"displacement": u.T, "stress": {"von_mises": von_mises}})()
    path = tmp_path / "deformed.png"
    fig = deformed_picture(path, mesh, fe, "demo plate")

    data = path.read_bytes()
    assert data.startswith(PNG_SIGNATURE) and len(data) > 5000
    assert fig.get_size_inches() * fig.dpi == pytest.approx([1200, 900])      # the picture's size since pyvista
    ax, bar = fig.axes
    scale = 0.04 * 10.0 / 0.02          # the largest displacement drawn as 4 % of the section's size
    assert [t.get_text() for t in fig.texts] == [f"demo plate: deformed section, displacements x {scale:.0f} "
                                                 "(grey: unloaded)"]
    assert bar.get_xlabel() == "von Mises [MPa]"
    # the coloured field: each triangle's corners moved by scale · u, coloured by von Mises at the nodes
    (field,) = ax.collections
    assert np.array_equal(field.get_array(), von_mises)
    assert (field.norm.vmin, field.norm.vmax) == (0.5, 4.0)
    moved = points + scale * u
    drawn = [p.vertices[:3] for p in field.get_paths()]
    assert np.allclose(drawn, moved[triangles[:, :3]])
    # the unloaded section as grey edges at the original coordinates
    edges = ax.get_lines()[0]
    xy = np.column_stack([edges.get_xdata(), edges.get_ydata()])
    xy = xy[~np.isnan(xy).any(axis=1)]
    assert {tuple(p) for p in xy} == {tuple(p) for p in points[:5]}
