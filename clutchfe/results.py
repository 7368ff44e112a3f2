"""Writing a results folder all at once: a failed run leaves no half-written folder."""
from __future__ import annotations

import contextlib
import json
import math
import os
import platform
import shutil
import tempfile
from pathlib import Path


@contextlib.contextmanager
def atomic_folder(final: str | Path):
    """Yield a scratch folder beside ``final``; on success it replaces ``final`` in one rename.

    On any exception the scratch folder is removed and ``final`` is left as it was.
    """
    final = Path(final)
    final.parent.mkdir(parents=True, exist_ok=True)
    scratch = Path(tempfile.mkdtemp(prefix=f".{final.name}.writing-", dir=final.parent))
    try:
        yield scratch
    except BaseException:
        shutil.rmtree(scratch, ignore_errors=True)
        raise
    old = None
    if final.exists():
        old = final.parent / f".{final.name}.old-{os.getpid()}"
        os.replace(final, old)
    os.replace(scratch, final)
    os.chmod(final, 0o755)
    if old is not None:
        shutil.rmtree(old, ignore_errors=True)


def clean_json(value):
    """Plain JSON: numpy scalars and arrays become numbers and lists; no NaN may pass."""
    if isinstance(value, dict):
        return {str(k): clean_json(v) for k, v in value.items()}
    if isinstance(value, (list, tuple)):
        return [clean_json(v) for v in value]
    if hasattr(value, "tolist"):
        return clean_json(value.tolist())
    if isinstance(value, float) and not math.isfinite(value):
        raise ValueError(f"refusing to write a non-finite number ({value}) into a result")
    return value


def write_json(path: Path, data: dict) -> None:
    path.write_text(json.dumps(clean_json(data), indent=2, sort_keys=False) + "\n", encoding="utf-8")


def versions() -> dict[str, str]:
    from importlib import metadata

    out = {"python": platform.python_version()}
    for pkg in ("clutchfe", "numpy", "scipy", "scikit-fem", "meshio", "gmsh", "matplotlib", "pyvista"):
        try:
            out[pkg] = metadata.version(pkg)
        except metadata.PackageNotFoundError:
            out[pkg] = "not installed"
    return out
