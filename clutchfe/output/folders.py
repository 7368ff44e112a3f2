"""Writing a results folder all at once, and never over somebody else's files.

A run writes into a scratch folder beside the results folder and replaces the results
folder in one rename at the end, so a failed or killed run leaves the previous complete
results (or none), never a half-written folder.  clutchfe only ever replaces a folder
that is new, empty, or one it wrote itself: every results folder carries a marker file
listing what clutchfe put there, and a folder holding anything else is refused (exit 2)
rather than deleted.  Two runs to one folder cannot interleave: the second is refused
while the first holds the folder's lock.  Scratch folders of killed runs are removed by
the next run that writes beside them.
"""
from __future__ import annotations

import contextlib
import fcntl
import fnmatch
import json
import math
import os
import re
import shutil
import tempfile
from pathlib import Path

from ..errors import OutputFolderError

MARKER = ".clutchfe-results.json"
_SCRATCH = re.compile(r"^\.(?P<name>.+)\.(?:writing|old)-(?P<pid>\d+)-[^/]*$")


def check_output_folder(folder: str | Path) -> None:
    """Refuse (OutputFolderError) a folder clutchfe may not replace.

    Allowed: a path that does not exist yet, an empty folder, or a folder clutchfe wrote
    (its marker lists every entry in it).  Refused: a file, a symbolic link, the current
    folder or one that contains it, and a folder holding anything clutchfe did not write.
    """
    folder = Path(folder)
    where = f"output folder {str(folder)!r}"
    if folder.is_symlink():
        raise OutputFolderError([f"{where}: is a symbolic link; give the folder it points to, or a new folder"])
    if not folder.exists():
        return
    if not folder.is_dir():
        raise OutputFolderError([f"{where}: is a file, not a folder; clutchfe will not replace it. "
                                 "Give a new folder name (or an empty folder)"])
    here = Path.cwd().resolve()
    real = folder.resolve()
    if real == here or real in here.parents:
        raise OutputFolderError([f"{where}: is the current folder or contains it; give a folder of its own "
                                 "for the results (e.g. results/<case name>)"])
    entries = sorted(p.name for p in folder.iterdir())
    if not entries:
        return
    written = _marked_entries(folder)
    if written is None:
        raise OutputFolderError([f"{where}: holds files clutchfe did not write ({_listing(entries)}); clutchfe "
                                 "replaces only new, empty or clutchfe results folders. Give another folder"])
    foreign = [e for e in entries if e != MARKER and not any(fnmatch.fnmatchcase(e, w) for w in written)]
    if foreign:
        raise OutputFolderError([f"{where}: is a clutchfe results folder, but somebody added "
                                 f"{_listing(foreign)}; move those out first or give another folder"])


def _listing(names: list[str], most: int = 4) -> str:
    shown = ", ".join(repr(n) for n in names[:most])
    return shown + (f" and {len(names) - most} more" if len(names) > most else "")


def _marked_entries(folder: Path) -> set[str] | None:
    try:
        data = json.loads((folder / MARKER).read_text(encoding="utf-8"))
    except (OSError, ValueError):
        return None
    if not isinstance(data, dict) or data.get("written_by") != "clutchfe" or not isinstance(data.get("entries"), list):
        return None
    return {str(e) for e in data["entries"]}


def write_marker(folder: Path, kind: str, extra: tuple[str, ...] = ()) -> None:
    """Mark ``folder`` as clutchfe's, listing every entry in it, plus ``extra`` names or
    shell patterns of files still to come (a study's database journal, say)."""
    entries = sorted({p.name for p in folder.iterdir() if p.name != MARKER} | set(extra))
    (folder / MARKER).write_text(json.dumps({"written_by": "clutchfe", "kind": kind, "entries": entries},
                                            indent=1) + "\n", encoding="utf-8")


@contextlib.contextmanager
def folder_lock(folder: Path):
    """Hold the lock of ``folder`` (a hidden lock file beside it); refuse when another run has it."""
    folder = Path(folder)
    folder.parent.mkdir(parents=True, exist_ok=True)
    path = folder.parent / f".{folder.name}.lock"
    with open(path, "a+") as fh:
        try:
            fcntl.flock(fh, fcntl.LOCK_EX | fcntl.LOCK_NB)
        except BlockingIOError:
            raise OutputFolderError([f"output folder {str(folder)!r}: another clutchfe run is writing it now; "
                                     "wait for that run to finish or give another folder"]) from None
        try:
            yield
        finally:
            fcntl.flock(fh, fcntl.LOCK_UN)


def _alive(pid: int) -> bool:
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return False
    except PermissionError:
        return True
    return True


def clean_stale_scratch(parent: Path, name: str) -> list[str]:
    """Remove scratch folders of killed runs beside ``parent/name`` (the caller holds its lock)."""
    removed = []
    if not parent.is_dir():
        return removed
    for entry in parent.iterdir():
        m = _SCRATCH.match(entry.name)
        if m is None or m["name"] != name or not entry.is_dir() or entry.is_symlink():
            continue
        if int(m["pid"]) == os.getpid() or _alive(int(m["pid"])):
            continue
        shutil.rmtree(entry, ignore_errors=True)
        removed.append(entry.name)
    return removed


@contextlib.contextmanager
def atomic_folder(final: str | Path, kind: str = "run"):
    """Yield a scratch folder beside ``final``; on success it replaces ``final`` in one rename.

    ``final`` must pass :func:`check_output_folder` (checked before and again just before the
    replacement, under the folder's lock).  On any exception the scratch folder is removed
    and ``final`` is left as it was.
    """
    final = Path(final)
    check_output_folder(final)
    with folder_lock(final):
        clean_stale_scratch(final.parent, final.name)
        scratch = Path(tempfile.mkdtemp(prefix=f".{final.name}.writing-{os.getpid()}-", dir=final.parent))
        try:
            yield scratch
            write_marker(scratch, kind)
            check_output_folder(final)
        except BaseException:
            shutil.rmtree(scratch, ignore_errors=True)
            raise
        old = None
        if final.exists():
            old = Path(tempfile.mkdtemp(prefix=f".{final.name}.old-{os.getpid()}-", dir=final.parent))
            os.replace(final, old / "previous")
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
