"""What every result carries: the safety caution and the versions that produced it."""
from __future__ import annotations

import functools
import platform
from importlib import metadata

__version__ = "0.1.0"       # the one place; pyproject.toml reads it

CAUTION = ("Clutches can hurt people when they slip or burst. These results support, and never replace, "
           "the applicable codes, the manufacturer's data and the judgement of a licensed engineer.")


def versions() -> dict[str, str]:
    """Python and the package versions behind a result."""
    return dict(_versions())


@functools.lru_cache(maxsize=1)
def _versions() -> dict[str, str]:
    # looked up once per process: a study records them for every sample
    out = {"python": platform.python_version()}
    for pkg in ("clutchfe", "numpy", "scipy", "scikit-fem", "meshio", "gmsh", "matplotlib", "pyvista"):
        try:
            out[pkg] = metadata.version(pkg)
        except metadata.PackageNotFoundError:
            out[pkg] = "not installed"
    return out
