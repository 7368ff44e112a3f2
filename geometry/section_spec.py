"""What a case says about a section file: plain frozen data, and its own consistency checks.

The spec names the file, its units and where the axis is; which outline is which region (a DXF
layer; a STEP/IGES/BREP face by its name or number), each region's body, material and whether it
is a lining; and the curves later stages need (friction faces, load face, supports, free faces),
each chosen by a :class:`Select`.  Coordinates in a selection are section coordinates (r, z) in
mm, the ones the mesh picture shows, whatever the file's units and axis.
"""
from __future__ import annotations

import math
from dataclasses import dataclass
from pathlib import Path

import numpy as np

UNITS = {"mm": 1.0, "m": 1000.0, "inch": 25.4}      # mm per drawing unit (1 inch = 25.4 mm exactly)
ROLES = ("supported", "pressed", "floating")
DXF_SUFFIXES = (".dxf",)
CAD_SUFFIXES = (".step", ".stp", ".iges", ".igs", ".brep", ".brp")
COORDINATES = ("x", "y", "z", "-x", "-y", "-z")


@dataclass(frozen=True)
class Axis:
    """Where the axis of revolution is in the drawing.

    ``r`` and ``z`` name the drawing coordinates that give r and z ("x", "y", for STEP/IGES/BREP
    also "z"; a leading "-" when r or z grows the other way).  ``axis_at`` is the drawing coordinate
    of the axis (r = 0) along r's coordinate and ``z_at`` that of z = 0 along z's, both in drawing
    units: r = ±(u − axis_at) · scale, z = ±(v − z_at) · scale.
    """

    r: str = "x"
    z: str = "y"
    axis_at: float = 0.0
    z_at: float = 0.0


@dataclass(frozen=True)
class Select:
    """Which curves of the drawing a named face is: exactly one of

    * ``layer``: DXF: the edges that lie on the curves drawn on this layer (a face layer holds
      lines or arcs drawn over the outline edges they name);
    * ``name``: DXF: the edges on the curves of the DXF group of this name; STEP/IGES/BREP: the
      curves with this entity or physical name;
    * ``index``: STEP/IGES/BREP: the curve with this number (gmsh's tag after the import);
    * ``box``: (r_min, z_min, r_max, z_max) mm: the edges lying wholly in the box;
    * ``through``: (r, z) mm: the one curve nearest the point (within the spec's pick distance).

    ``body`` keeps only that body's edges (friction, load and support faces set it for you).
    """

    layer: str | None = None
    name: str | None = None
    index: int | None = None
    box: tuple[float, float, float, float] | None = None
    through: tuple[float, float] | None = None
    body: str | None = None

    def __post_init__(self):
        for key in ("box", "through"):
            if getattr(self, key) is not None:
                object.__setattr__(self, key, tuple(float(v) for v in getattr(self, key)))

    def kinds(self) -> list[str]:
        return [k for k in ("layer", "name", "index", "box", "through") if getattr(self, k) is not None]

    def describe(self) -> str:
        if self.layer is not None:
            text = f"layer {self.layer!r}"
        elif self.name is not None:
            text = f"the curves named {self.name!r}"
        elif self.index is not None:
            text = f"curve {self.index}"
        elif self.box is not None:
            r0, z0, r1, z1 = self.box
            text = f"the box r = {r0:g} … {r1:g}, z = {z0:g} … {z1:g} mm"
        elif self.through is not None:
            text = f"the curve through (r, z) = ({self.through[0]:g}, {self.through[1]:g}) mm"
        else:
            text = "no selection"
        return text + (f" on body {self.body}" if self.body else "")


@dataclass(frozen=True)
class BodySpec:
    name: str
    role: str                      # "supported" (held by the housing), "pressed" (carries W) or "floating"
    label: str = ""                # plain words for pictures and reports (default: the name)


@dataclass(frozen=True)
class RegionSpec:
    """One outline of the file: a DXF ``layer`` (with ``inside`` when the layer holds several), or a
    STEP/IGES/BREP face by ``label`` (its name, or one '/'-part of it), ``index`` (its number) or
    ``inside`` (the face around this (r, z) point, mm)."""

    name: str
    body: str
    youngs_modulus: float          # MPa
    poissons_ratio: float
    layer: str | None = None
    label: str | None = None
    index: int | None = None
    inside: tuple[float, float] | None = None
    lining_layers: int = 0         # > 0: a lining, meshed as a structured strip this many elements thick
    # the hot engagement's material data (the case's units: W/(m·K), kg/m³, J/(kg·K), 1/K); None when not
    # given (a case without [engagement] needs none); a lining region has the [lining] table's
    thermal_conductivity: float | None = None
    density: float | None = None
    specific_heat: float | None = None
    expansion_coefficient: float | None = None
    # the speed analysis's strengths (MPa); None when not given (a case without [speed] needs none); a lining
    # region has the [lining] table's tensile_strength and no yield_strength
    yield_strength: float | None = None
    tensile_strength: float | None = None

    def __post_init__(self):
        if self.inside is not None:
            object.__setattr__(self, "inside", tuple(float(v) for v in self.inside))


@dataclass(frozen=True)
class FaceSpec:
    name: str                      # the edge name later stages use (a 1-D physical group)
    select: Select


@dataclass(frozen=True)
class FrictionSpec:
    """A friction face pair: the curve on ``body_a`` and its mate on ``body_b`` (``select_b``, or
    the same selection), which must coincide at zero load in this version."""

    name: str                      # "s1", "s2", …
    body_a: str
    body_b: str
    select: Select
    select_b: Select | None = None
    lining_body: str | None = None   # default: the side whose region on the face is a lining
    face_a: str | None = None        # edge names, default "<name>_<body>_face"
    face_b: str | None = None

    @property
    def face_names(self) -> tuple[str, str]:
        return (self.face_a or f"{self.name}_{self.body_a}_face", self.face_b or f"{self.name}_{self.body_b}_face")


@dataclass(frozen=True)
class SectionFileSpec:
    path: Path
    units: str                     # "mm", "m" or "inch": what one drawing unit is
    axis: Axis
    bodies: tuple[BodySpec, ...]
    regions: tuple[RegionSpec, ...]
    friction: tuple[FrictionSpec, ...]
    load: FaceSpec                 # on the pressed body
    support_axial: FaceSpec        # on the supported body
    support_radial: FaceSpec
    faces: tuple[FaceSpec, ...] = ()     # further named faces (free faces for later cooling), any body
    tolerance: float = 1e-3        # mm: ends this close join, points merge, friction faces must coincide
    chord_tolerance: float = 1e-2  # mm: the largest distance between a curve and its polygon
    pick_distance: float = 0.1     # mm: how near a ``through`` point must be to its curve

    def __post_init__(self):
        object.__setattr__(self, "path", Path(self.path))
        for key in ("bodies", "regions", "friction", "faces"):
            object.__setattr__(self, key, tuple(getattr(self, key)))

    @property
    def file_kind(self) -> str:
        suffix = self.path.suffix.lower()
        return "dxf" if suffix in DXF_SUFFIXES else "cad" if suffix in CAD_SUFFIXES else ""

    @property
    def scale(self) -> float:
        return UNITS[self.units]

    def to_section(self, xyz) -> np.ndarray:
        """Drawing coordinates (k, 2 or 3), drawing units -> section (r, z) in mm (see :class:`Axis`)."""
        xyz = np.asarray(xyz, float)
        out = np.empty((len(xyz), 2))
        for col, (key, at) in enumerate(((self.axis.r, self.axis.axis_at), (self.axis.z, self.axis.z_at))):
            sign = -1.0 if key.startswith("-") else 1.0
            out[:, col] = sign * (xyz[:, "xyz".index(key.lstrip("-"))] - at) * self.scale
        return out


def spec_problems(spec: SectionFileSpec) -> list[str]:
    """One message per inconsistency of the spec itself (nothing read from the file yet)."""
    out = []
    kind = spec.file_kind
    if not kind:
        out.append(f"section file {spec.path.name}: unknown file type {spec.path.suffix!r}; allowed: "
                   f"{', '.join(DXF_SUFFIXES + CAD_SUFFIXES)}")
    elif not spec.path.is_file():
        out.append(f"section file {spec.path}: not found")
    if spec.units not in UNITS:
        out.append(f"section units = {spec.units!r}: allowed: {', '.join(map(repr, UNITS))} (say what one "
                   f"drawing unit is; nothing is guessed)")
    allowed = COORDINATES if kind == "cad" else COORDINATES[:2] + COORDINATES[3:5]
    for key in ("r", "z"):
        value = getattr(spec.axis, key)
        if value not in allowed:
            out.append(f"section axis {key} = {value!r}: allowed: {', '.join(map(repr, allowed))}")
    if spec.axis.r.lstrip("-") == spec.axis.z.lstrip("-"):
        out.append(f"section axis: r = {spec.axis.r!r} and z = {spec.axis.z!r} are the same drawing coordinate")
    for key in ("axis_at", "z_at"):
        if not math.isfinite(getattr(spec.axis, key)):
            out.append(f"section axis {key} = {getattr(spec.axis, key)}: must be a finite number")
    for key in ("tolerance", "chord_tolerance", "pick_distance"):
        value = getattr(spec, key)
        if not (math.isfinite(value) and value > 0.0):
            out.append(f"section {key} = {value}: must be > 0 mm")
    bodies = [b.name for b in spec.bodies]
    for name in sorted({b for b in bodies if bodies.count(b) > 1}):
        out.append(f"section body {name!r}: declared {bodies.count(name)} times")
    for body in spec.bodies:
        if body.role not in ROLES:
            out.append(f"section body {body.name!r}: role = {body.role!r}; allowed: {', '.join(map(repr, ROLES))}")
    for role in ("supported", "pressed"):
        count = sum(b.role == role for b in spec.bodies)
        if count != 1:
            out.append(f"section bodies: {count} {role} bodies; a section has exactly one {role} body "
                       f"({'held by the housing' if role == 'supported' else 'carrying the axial force'})")
    names = [r.name for r in spec.regions]
    for name in sorted({n for n in names if names.count(n) > 1}):
        out.append(f"section region {name!r}: declared {names.count(name)} times")
    for reg in spec.regions:
        out += _region_problems(reg, bodies, kind)
    for body in bodies:
        if not any(r.body == body for r in spec.regions):
            out.append(f"section body {body!r}: no region belongs to it")
    if not spec.friction:
        out.append("section friction: none given; a section has at least one friction face pair")
    for fr in spec.friction:
        where = f"section friction face {fr.name!r}"
        for key in ("body_a", "body_b"):
            if getattr(fr, key) not in bodies:
                out.append(f"{where}: {key} = {getattr(fr, key)!r} is not a declared body ({', '.join(bodies)})")
        if fr.body_a == fr.body_b:
            out.append(f"{where}: body_a and body_b are both {fr.body_a!r}; a friction face is between two bodies")
        if fr.lining_body is not None and fr.lining_body not in (fr.body_a, fr.body_b):
            out.append(f"{where}: lining_body = {fr.lining_body!r} is neither {fr.body_a!r} nor {fr.body_b!r}")
        for sel in (fr.select, fr.select_b):
            if sel is not None:
                out += _select_problems(sel, where, bodies, kind)
    for label, face in (("load face", spec.load), ("axial support face", spec.support_axial),
                        ("radial support face", spec.support_radial)):
        out += _select_problems(face.select, f"section {label} {face.name!r}", bodies, kind)
    for face in spec.faces:
        out += _select_problems(face.select, f"section face {face.name!r}", bodies, kind)
    every = [n for fr in spec.friction for n in fr.face_names] + \
        [f.name for f in (spec.load, spec.support_axial, spec.support_radial, *spec.faces)]
    for name in sorted({n for n in every if every.count(n) > 1}):
        out.append(f"section face name {name!r}: given to {every.count(name)} faces; each named face is one group")
    for name in sorted({n for n in every if not n}):
        out.append("section face name: empty")
    return out


def _region_problems(reg: RegionSpec, bodies, kind) -> list[str]:
    out, where = [], f"section region {reg.name!r}"
    if reg.body not in bodies:
        out.append(f"{where}: body = {reg.body!r} is not a declared body ({', '.join(bodies)})")
    if not (math.isfinite(reg.youngs_modulus) and reg.youngs_modulus > 0.0):
        out.append(f"{where}: youngs_modulus = {reg.youngs_modulus} MPa; allowed: value > 0")
    if not (math.isfinite(reg.poissons_ratio) and -1.0 < reg.poissons_ratio < 0.5):
        out.append(f"{where}: poissons_ratio = {reg.poissons_ratio}; allowed: -1 < value < 0.5")
    if not isinstance(reg.lining_layers, int) or reg.lining_layers < 0:
        out.append(f"{where}: lining_layers = {reg.lining_layers!r}; allowed: 0 (not a lining) or a whole number > 0")
    if kind == "dxf":
        if reg.layer is None:
            out.append(f"{where}: no layer; a DXF region is the closed outline on its layer")
        if reg.label is not None or reg.index is not None:
            out.append(f"{where}: label and index choose faces of a STEP/IGES/BREP file; a DXF region is chosen "
                       f"by its layer (and inside, when the layer holds several outlines)")
    elif kind == "cad":
        if reg.layer is not None:
            out.append(f"{where}: layer = {reg.layer!r}: STEP/IGES/BREP files have no layers; choose the face by "
                       f"label, index or inside")
        if reg.label is None and reg.index is None and reg.inside is None:
            out.append(f"{where}: no face chosen; give label (its name), index (its number) or inside (a point in it)")
    return out


def _select_problems(sel: Select, where, bodies, kind) -> list[str]:
    out = []
    kinds = sel.kinds()
    if len(kinds) != 1:
        out.append(f"{where}: {'no selection' if not kinds else 'both ' + ' and '.join(kinds)}; choose the curves by "
                   f"exactly one of layer, name, index, box or through")
    if sel.layer is not None and kind == "cad":
        out.append(f"{where}: layer = {sel.layer!r}: STEP/IGES/BREP files have no layers; use name, index, box or through")
    if sel.index is not None and kind == "dxf":
        out.append(f"{where}: index = {sel.index}: a DXF curve has no number; use layer, name (a DXF group), box or "
                   f"through")
    if sel.box is not None and (len(sel.box) != 4 or not all(map(math.isfinite, sel.box))
                                or sel.box[0] >= sel.box[2] or sel.box[1] >= sel.box[3]):
        out.append(f"{where}: box = {sel.box}: must be (r_min, z_min, r_max, z_max) mm with r_min < r_max and "
                   f"z_min < z_max")
    if sel.through is not None and (len(sel.through) != 2 or not all(map(math.isfinite, sel.through))):
        out.append(f"{where}: through = {sel.through}: must be a point (r, z) mm")
    if sel.body is not None and sel.body not in bodies:
        out.append(f"{where}: body = {sel.body!r} is not a declared body ({', '.join(bodies)})")
    return out

