"""Plain data handed to the FE stage and returned by it.

The FE stage never reads case files or gmsh output: the pipeline turns a meshed
section into a :class:`FeModel` and gets a :class:`FeResult` back.
Units: mm, N, MPa.  Coordinates are (r, z): r radius from the axis, z along it.
"""
from __future__ import annotations

from dataclasses import dataclass, field
from typing import Callable

import numpy as np


@dataclass
class SpringSupport:
    """Housing support on a named face.

    ``axial_stiffness`` / ``radial_stiffness`` are the *total* stiffness of the
    face in N/mm (spread over the face in proportion to its area as a Robin
    term); ``None`` means rigid in that direction, ``0.0`` means free.
    """

    face: str
    axial_stiffness: float | None = None
    radial_stiffness: float | None = None


@dataclass
class FaceLoad:
    """Total axial force (N, + along +z) spread uniformly over a named face."""

    face: str
    axial_force: float


@dataclass
class RingLoad:
    """Total axial force (N) applied on a circle of radius ``r`` on a named face."""

    face: str
    radius: float
    axial_force: float


@dataclass
class FacePressure:
    """Uniform normal pressure (MPa, > 0 pushes into the body) on a named face.

    Extension of the contract for radial loads such as a shrink fit or a test
    cylinder's bore pressure; may appear in ``FeModel.loads``.
    """

    face: str
    pressure: float


@dataclass
class ContactPair:
    """One friction interface: two faces on one straight line at zero load.

    ``normal_a`` is the unit outward normal (n_r, n_z) of body A's face; body B's
    outward normal is its negative.  ``vertex_pairs`` is (2, k): row 0 every mesh
    vertex of face A, row 1 the coincident vertex on face B, or −1 where face B has
    none (faces meshed independently): the FE stage then pairs face A with face B
    by projection (fem/projection.py) unless it finds a coincident vertex for every
    one; face A's nodes carry the forces and results either way.
    ``initial_gap`` is the normal gap (mm, >= 0 opens) at each vertex of face A
    before loading, e.g. from a cone-angle mismatch or plate coning; the FE stage
    interpolates it linearly to any higher-order nodes on the face.
    """

    name: str
    face_a: str
    face_b: str
    normal_a: tuple[float, float]
    vertex_pairs: np.ndarray
    initial_gap: np.ndarray
    # Optional gap(r, z) -> mm evaluated at every FE node of face A instead of
    # interpolating ``initial_gap``; for gaps curved between vertices (crowning).
    initial_gap_function: Callable[[np.ndarray, np.ndarray], np.ndarray] | None = None


@dataclass
class FeModel:
    points: np.ndarray              # (2, n_vertices) r, z in mm
    triangles: np.ndarray           # (3, n_triangles) vertex indices, counter-clockwise
    element_body: np.ndarray        # (n_triangles,) body index
    element_youngs_modulus: np.ndarray   # (n_triangles,) MPa
    element_poissons_ratio: np.ndarray   # (n_triangles,)
    body_names: list[str]
    body_axially_free: list[bool]   # rigid axial motion fixed by force balance, not a support
    faces: dict[str, np.ndarray]    # name -> (2, k) vertex index pairs of boundary facets
    supports: list[SpringSupport] = field(default_factory=list)
    loads: list[FaceLoad | RingLoad | FacePressure] = field(default_factory=list)
    contacts: list[ContactPair] = field(default_factory=list)
    element_order: int = 2          # 1 = P1, 2 = P2 triangles on the linear mesh


@dataclass
class InterfaceResult:
    name: str
    r: np.ndarray                   # (k,) radius of each interface node, mm, sorted by slant position
    z: np.ndarray                   # (k,) mm
    pressure: np.ndarray            # (k,) MPa, >= 0
    normal_force: np.ndarray        # (k,) N, nodal normal force
    tributary_area: np.ndarray      # (k,) mm^2, full ring (2 pi r weighted)
    gap: np.ndarray                 # (k,) mm after loading (0 where in contact)
    in_contact: np.ndarray          # (k,) bool
    # (2, q) r, z of face-A nodes beyond the ends of face B (faces paired by projection), left
    # out of the contact and of the arrays above
    left_out: np.ndarray = field(default_factory=lambda: np.zeros((2, 0)))
    # (k,) mm: compression of a compliant layer on the interface (fem/compliant_layer.py), zeros without one
    # (empty from the solvers that have no layer)
    layer_deflection: np.ndarray = field(default_factory=lambda: np.zeros(0))


@dataclass
class FeResult:
    displacement: np.ndarray        # (2, n_vertices) u_r, u_z mm
    stress: dict[str, np.ndarray]   # 'rr','zz','tt','rz','von_mises' at vertices, MPa
    interfaces: list[InterfaceResult]
    rigid_approach: dict[str, float]    # body name -> axial rigid translation, mm
    axial_force_balance_error: float    # max over free bodies of |resultant - applied| / applied
    dofs: int
    timings: dict[str, float]       # seconds: 'assembly', 'factorisation', 'contact', ...
    contact_iterations: int = 0
