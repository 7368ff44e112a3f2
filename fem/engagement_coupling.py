"""What stays fixed over a coupled engagement run (fem/engagement.py): the heat system with its face
matrices, the maps between the contact solver's interface nodes and the heat nodes, the friction
power map and Z = Giᵀ K⁻¹ B; and the direct coupled contact problem of a step.

Split from fem/engagement.py, which keeps the time loop, the speed laws and the result types.
"""
from __future__ import annotations

from dataclasses import fields, replace
from typing import Sequence

import numpy as np
import scipy.sparse as sp
from skfem import asm

from .engagement_duty import FrictionHeating
from .heat import HeatModel, HeatSystem, ThermalContact, assemble_heat, film, values_at_nodes
from .lcp import primal_dual
from .model import FeResult
from .solve import ContactSolver, _nearest_with_area
from .thermal_strain import thermal_load_matrix


class _FaceMatrixSystem(HeatSystem):
    """The heat system with a face flux given per heat dof applied as one product with the face's
    matrix M_f = ∮ φ_i φ_j 2π r ds (the same quadrature as ``flux_load``'s assembly, so the same
    load to round-off): the loop gives new nodal fluxes every iteration, and assembling them was
    a third of its time (measured on the plate demo)."""

    @classmethod
    def of(cls, system: HeatSystem) -> "_FaceMatrixSystem":
        out = cls(**{f.name: getattr(system, f.name) for f in fields(HeatSystem)})
        out._face_matrices = {}
        return out

    def face_matrix(self, face: str):
        if face not in self._face_matrices:
            self._face_matrices[face] = asm(film, self.face_basis(face), h=1.0).tocsr()
        return self._face_matrices[face]

    def flux_load(self, face: str, q) -> np.ndarray:
        if not callable(q) and np.ndim(q) == 1 and np.shape(q) == (self.N,):
            return self.face_matrix(face) @ np.asarray(q, dtype=float)
        return super().flux_load(face, q)


class _Coupling:
    """What stays fixed over the run: the heat system, the maps between the contact solver's
    interface nodes and the heat nodes, and Z = Giᵀ K⁻¹ B."""

    def __init__(self, solver: ContactSolver, heat: HeatModel, expansion, heating: Sequence[FrictionHeating],
                 gaps, load_scale: float):
        model = solver.system.model
        if heat.model is not model and not (np.array_equal(heat.model.points, model.points)
                                             and np.array_equal(heat.model.triangles, model.triangles)):
            raise ValueError("heat.model must be the FeModel the contact solver was built from")
        pairs = [p.name for p in model.contacts]
        heated = {}
        for h in heating:
            if not isinstance(h, FrictionHeating):
                raise ValueError(f"heating: FrictionHeating entries expected, got {type(h).__name__}")
            if h.pair not in pairs:
                raise ValueError(f"heating pair = {h.pair!r}: not a contact pair of the model "
                                 f"(pairs: {', '.join(pairs) or 'none'})")
            if h.pair in heated:
                raise ValueError(f"heating pair = {h.pair!r} given twice")
            face = solver.faces[pairs.index(h.pair)]
            if not face.matching:
                raise ValueError(f"heating pair = {h.pair!r}: its faces' nodes do not match (paired by "
                                 "projection); the heat interface needs coincident nodes on both faces")
            heated[h.pair] = h
        if not heated:
            raise ValueError("heating: at least one slipping contact pair is needed")
        for c in heat.contacts:
            if c.pair in heated:
                raise ValueError(f"heat.contacts has {c.pair!r}, which heating defines too; give it once")
        # the slipping pairs' heat interfaces: the conductance (None: a tie) or, with a partition,
        # none at all (conductance 0 at every node)
        own = [ThermalContact(h.pair, h.conductance if h.partition is None else 0.0, 0.0)
               for h in heated.values()]
        self.system = system = _FaceMatrixSystem.of(
            assemble_heat(replace(heat, contacts=list(heat.contacts) + own)))
        self.heating = list(heated.values())
        self.solver, self.load_scale = solver, float(load_scale)
        self.g_base = solver.g0.copy() if gaps is None else np.concatenate(
            [np.asarray(g, float) for g in gaps])
        self.sizes = np.cumsum([f.gap0.size for f in solver.faces])[:-1]
        # contact interface index and the contact node of every heat interface node (by position)
        self.picks = []
        for iface in system.interfaces:
            k = pairs.index(iface.name)
            xy = solver.faces[k].xy
            self.picks.append((iface, k, values_at_nodes(iface, xy[0], xy[1], np.arange(xy.shape[1]))))
        self.power = {h.pair: self._power_map(h) for h in self.heating}
        self.B = thermal_load_matrix(solver.system, expansion, order=heat.order)
        self.Z = solver.gap_response(self.B)
        self.L, self.R = self._load_map()
        # the pressure of a force vector as fem/solve.py's interface results read it
        self.area, self.near, start = [], [], 0
        for face in solver.faces:
            has_area = face.area > 1e-12 * max(face.area.max(initial=0.0), 1e-300)
            self.area.append(np.where(has_area, face.area, np.inf))
            self.near.append(start + _nearest_with_area(has_area))
            start += face.area.size
        self.area, self.near = np.concatenate(self.area), np.concatenate(self.near)
        self.g_cold = self.g_base + self.load_scale * solver.g_load
        self.e = self.load_scale * solver.e

    def gaps(self, rise: np.ndarray) -> list[np.ndarray]:
        return np.split(self.g_base + self.Z @ rise, self.sizes)

    def closed(self, fe: FeResult) -> dict[str, np.ndarray]:
        return {iface.name: fe.interfaces[k].in_contact[pick] for iface, k, pick in self.picks}

    def closed_of(self, lam: np.ndarray) -> dict[str, np.ndarray]:
        """``closed`` of the contact state with forces λ (its in_contact flags, fem/solve.py)."""
        flags = np.split((lam > 0)[self.near], self.sizes)
        return {iface.name: flags[k][pick] for iface, k, pick in self.picks}

    def _power_map(self, h: FrictionHeating):
        """The map from the contact forces λ (N) of the pair's nodes to the flux (mW/mm²) at its
        heat nodes at ω = 1 rad/s: node j of the contact dissipates μ λ_j ω r_j (mW); a node
        that is no heat node (a P2 midpoint under a P1 temperature) gives half to each
        neighbour along the face; dividing by the heat node's ring area A_i (∮ φ_i 2π r ds, the
        row sum of the face's heat matrix) makes a flux whose assembled heat flow is exactly
        the friction power Σ μ λ ω r (1ᵀ M_f (P/A) = Σ P), the work of torque_of's torque."""
        iface, k, pick = next(p for p in self.picks if p[0].name == h.pair)
        face = self.solver.faces[k]
        n = face.xy.shape[1]
        order = np.argsort(pick)
        W = np.zeros((pick.size, n))
        W[np.arange(pick.size), pick] = 1.0
        for j in np.setdiff1d(np.arange(n), pick):
            i = int(np.searchsorted(pick[order], j))
            if i == 0 or i == pick.size:
                raise ValueError(f"heating pair {h.pair!r}: a contact node beyond the heat nodes")
            W[order[i - 1], j] = W[order[i], j] = 0.5
        pair = self.solver.system.model.contacts[k]
        area = self.system.flux_load(pair.face_a, 1.0)[iface.dofs_a]
        if np.any(area <= 0):       # a vertex on the axis has no ring area: no heat flux there
            area = np.where(area > 0, area, np.inf)
        return W * (h.friction_coefficient * face.xy[0])[None, :] / area[:, None]

    def _load_map(self):
        """(L, R): the heat load (mW per dof) of the contact forces at ω = 1 rad/s is L R λ =
        flux_vector(fluxes(λ, 1)) (the same face matrices); L (heat dofs × heated interface
        nodes, sparse) puts a unit flux on a heat interface node's two faces by their shares, R
        (heated interface nodes × contact nodes) is the power maps.  The heat response is then
        back-substituted for L's columns only, half as many as the contact nodes with P2."""
        model, offsets = self.solver.system.model, np.concatenate([[0], self.sizes])
        by_name = {iface.name: (iface, k) for iface, k, _ in self.picks}
        L, R = [], []
        for h in self.heating:
            iface, k = by_name[h.pair]
            pair = model.contacts[k]
            P = self.power[h.pair]
            block = sp.csr_matrix((self.system.N, P.shape[0]))
            for face, dofs, share in ((pair.face_a, iface.dofs_a, h.share_a),
                                      (pair.face_b, iface.dofs_b, 1.0 - h.share_a)):
                if share > 0.0:
                    block = block + share * self.system.face_matrix(face)[:, dofs]
            L.append(block)
            r = np.zeros((P.shape[0], self.g_base.size))
            r[:, offsets[k]:offsets[k] + P.shape[1]] = P
            R.append(r)
        return sp.hstack(L).tocsc(), np.vstack(R)

    def pressure_of(self, lam: np.ndarray) -> np.ndarray:
        """The interface pressures (MPa, every node) of contact forces λ, as ``_pressures`` of the
        contact state with these forces."""
        return np.maximum(lam / self.area, 0.0)[self.near]

    def coupled(self, ZH: np.ndarray, omega: float, base: tuple, start: np.ndarray):
        """The forces λ of a step's coupled contact problem, or None if the active set fails.

        ``base`` = (θ_b, x_b): a heat step of this step size and closed set, taken with the friction
        load x_b = ω_b λ_b (Z H its response to x = ω λ); then θ(λ) = θ_b + H (ω λ − x_b) and

            gap = g + Z θ_b − Z H x_b + (C + ω Z H) λ + B δ."""
        rise_b, x_b = base
        M = self.solver.C + omega * ZH
        g = self.g_cold + self.Z @ rise_b - ZH @ x_b
        try:
            sol = primal_dual(M, g, self.solver.B, self.e, start=start)
            if sol is None:
                sol = primal_dual(M, g, self.solver.B, self.e)
        except np.linalg.LinAlgError:
            sol = None
        return None if sol is None or not np.all(np.isfinite(sol.lam)) else sol.lam

    def fluxes(self, forces: list[np.ndarray], omega: float) -> dict[str, np.ndarray]:
        """Per face, the flux (mW/mm², one value per heat dof) of the friction power at ω."""
        out: dict[str, np.ndarray] = {}
        if omega == 0.0:
            return out
        by_name = {iface.name: (iface, k) for iface, k, _ in self.picks}
        model = self.solver.system.model
        for h in self.heating:
            iface, k = by_name[h.pair]
            pair = model.contacts[k]
            q = omega * (self.power[h.pair] @ forces[k])
            for face, dofs, share in ((pair.face_a, iface.dofs_a, h.share_a),
                                      (pair.face_b, iface.dofs_b, 1.0 - h.share_a)):
                if share > 0.0:
                    a = out.setdefault(face, np.zeros(self.system.N))
                    a[dofs] += share * q
        return out


def _pressures(fe: FeResult) -> np.ndarray:
    return np.concatenate([i.pressure for i in fe.interfaces])


def _forces(fe: FeResult) -> list[np.ndarray]:
    return [i.normal_force for i in fe.interfaces]


def _key(closed: dict[str, np.ndarray]) -> bytes:
    return b"".join(np.packbits(v).tobytes() for v in closed.values())
