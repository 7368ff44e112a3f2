"""A commented starting case file for ``clutchfe init KIND [PATH]``.

Every required key of the kind and the most used optional ones, each with a comment taken from
:data:`clutchfe.schema.SCHEMA` (unit, meaning, what is allowed, the default), so the comments
cannot drift from what ``clutchfe check`` accepts.  The values are invented starting values that
pass ``clutchfe check``: replace them with the clutch's own.
"""
from __future__ import annotations

import textwrap
from pathlib import Path

from .errors import CaseError
from .output.compare_runs import replace_file
from .provenance import CAUTION
from .schema import SCHEMA, Key, describe_range

KINDS = ("cone", "plate")

# (table, key, value); a value of None is written commented out with the schema's default.
# Invented starting values (demo data): a small cone clutch and a single-disc plate clutch.
_ENTRIES = {
    "cone": (
        ("", "kind", "cone"), ("", "name", None), ("", "description", "my cone clutch"),
        ("interface", "inner_radius", 60.0), ("interface", "outer_radius", 75.0),
        ("interface", "semi_cone_angle", 14.0), ("interface", "friction_coefficient", 0.22),
        ("interface", "friction_surfaces", 1),
        ("load", "axial_force", 2500.0), ("load", "application", "uniform"), ("load", "ring_radius", None),
        ("lining", "thickness", 3.0), ("lining", "youngs_modulus", None), ("lining", "bonded_to", "cone"),
        ("lining", "allowable_pressure", 1.5),
        ("cup", "youngs_modulus", None),
        ("support", "type", "rigid"),
        ("misalignment", "cone_angle_mismatch", 0.0),
        ("requirement", "required_torque", 90.0), ("requirement", "service_factor", 1.25),
        ("mesh", "refinement", None),
        ("verification", "mesh_study", None),
    ),
    "plate": (
        ("", "kind", "plate"), ("", "name", None), ("", "description", "my plate clutch"),
        ("interface", "inner_radius", 80.0), ("interface", "outer_radius", 120.0),
        ("interface", "friction_coefficient", 0.3), ("interface", "friction_surfaces", 2),
        ("load", "axial_force", 4000.0), ("load", "application", "uniform"), ("load", "ring_radius", None),
        ("lining", "thickness", 2.4), ("lining", "youngs_modulus", None), ("lining", "bonded_to", "disc"),
        ("lining", "allowable_pressure", 1.5),
        ("pressure_plate", "thickness", None), ("counter_plate", "thickness", None),
        ("support", "type", "rigid"),
        ("misalignment", "coning", 0.0),
        ("requirement", "required_torque", 150.0), ("requirement", "service_factor", 1.25),
        ("mesh", "refinement", None),
        ("verification", "mesh_study", None),
    ),
}
WIDTH = 100


def _toml(value) -> str:
    if isinstance(value, bool):
        return str(value).lower()
    if isinstance(value, str):
        return '"' + value.replace("\\", "\\\\").replace('"', '\\"') + '"'
    return repr(value)


def _default_text(key: Key) -> str:
    if key.required:
        return "required"
    if callable(key.default):
        return "default: derived from the other keys"
    if key.default is None:
        return "optional"
    return f"default {_toml(key.default)}"


def key_comment(table: str, name: str) -> str:
    """The comment of one key: full name, unit, meaning, what is allowed and the default."""
    key = SCHEMA[table][name]
    full = f"{table}.{name}" if table else name
    unit = f" [{key.unit}]" if key.unit else ""
    text = f"{full}{unit}: {key.meaning}. Allowed: {describe_range(key)}; {_default_text(key)}."
    return "\n".join(textwrap.wrap(text, WIDTH - 2, initial_indent="# ", subsequent_indent="#   ",
                                   break_on_hyphens=False))


def starting_case_text(kind: str) -> str:
    """The commented starting case file of ``kind`` ("cone" or "plate")."""
    if kind not in KINDS:
        raise CaseError([f"KIND = {kind!r}: not a case kind; allowed: {', '.join(KINDS)}"])
    lines = [f"# clutchfe starting case: a {kind} clutch.",
             "# The values are invented starting values: replace them with your clutch's. Every key's",
             "# comment gives its unit and meaning; `clutchfe keys` lists every key, `clutchfe check`",
             "# validates this file, `clutchfe run` solves it. Lines starting with '# key =' are",
             "# optional keys left at their defaults: remove the '# ' to set them.",
             *textwrap.wrap(f"Caution: {CAUTION}", WIDTH - 2, initial_indent="# ", subsequent_indent="# "),
             ""]
    current = ""
    for table, name, value in _ENTRIES[kind]:
        key = SCHEMA[table][name]
        if table != current:
            lines += ["", f"[{table}]"]
            current = table
        lines.append(key_comment(table, name))
        if value is not None:
            lines.append(f"{name} = {_toml(value)}")
        elif key.default is not None and not callable(key.default):
            lines.append(f"# {name} = {_toml(key.default)}")
        else:
            lines.append(f"# {name} = …")
    return "\n".join(lines) + "\n"


def write_starting_case(kind: str, path: str | Path, replace: bool = False) -> Path:
    """Write the starting case of ``kind`` to ``path`` in one rename; an existing file is refused
    (CaseError, exit 2) unless ``replace``; a folder or a link is always refused."""
    path = Path(path)
    text = starting_case_text(kind)
    where = f"PATH = {str(path)!r}"
    if path.is_symlink() or path.is_dir():
        raise CaseError([f"{where}: is a {'symbolic link' if path.is_symlink() else 'folder'}; allowed: "
                         "the name of a new case file, e.g. my_clutch.toml"])
    if path.exists() and not replace:
        raise CaseError([f"{where}: the file exists and clutchfe does not replace it; allowed: a new file "
                         "name, or --replace to write over it"])
    if path.suffix != ".toml":
        raise CaseError([f"{where}: a case file ends in .toml; allowed: a name such as "
                         f"{path.with_suffix('.toml').name}"])
    if not path.parent.is_dir():
        raise CaseError([f"{where}: the folder {str(path.parent)!r} does not exist; allowed: a file in an "
                         "existing folder"])
    replace_file(path, text)
    return path


__all__ = ["KINDS", "key_comment", "starting_case_text", "write_starting_case"]
