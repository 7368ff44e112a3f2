"""A tiny helper to draw regions point by point; points are shared within a body only."""
from __future__ import annotations

from .section import Region


class Sketch:
    def __init__(self):
        self.points: list[tuple[float, float]] = []
        self.regions: list[Region] = []
        self._index: dict[tuple[str, float, float], int] = {}

    def point(self, body: str, r: float, z: float) -> int:
        # rounding to 1e-9 mm lets two regions of one body meet at computed corners
        key = (body, round(r, 9), round(z, 9))
        if key not in self._index:
            self._index[key] = len(self.points)
            self.points.append((float(r), float(z)))
        return self._index[key]

    def region(self, name, body, material, corners, edge_names=None, lining_layers=0, keys=()):
        """corners: (r, z) counter-clockwise; edge_names[i] names the edge corners[i] -> corners[i+1]."""
        loop = [self.point(body, r, z) for r, z in corners]
        names = list(edge_names) if edge_names else [None] * len(loop)
        # drop zero-length edges (a dimension that makes two corners coincide)
        kept = [(p, n) for k, (p, n) in enumerate(zip(loop, names)) if p != loop[(k + 1) % len(loop)]]
        self.regions.append(Region(name=name, body=body, youngs_modulus=material[0],
                                   poissons_ratio=material[1], loop=[p for p, _ in kept],
                                   edge_names=[n for _, n in kept], lining_layers=lining_layers,
                                   keys=tuple(keys)))
        return self.regions[-1]
