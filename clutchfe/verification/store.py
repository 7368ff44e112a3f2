"""The verification table stored once per installation and read by every run.

``clutchfe verify`` runs the suite afresh and stores its table here; ``clutchfe run`` only
reads it, so a run never pays for the suite (the 3D reference included).  The table is
valid for exactly the code and packages that made it: it records the clutchfe and package
versions (:func:`clutchfe.provenance.versions`) and a code hash, the SHA-256 over every
.py file of the package (the linked fem/ and geometry/ included) in sorted order.  A run
whose versions or code hash differ gets no rows: the table is *stale*, and the run says
which value differs and the command that makes a new one.

Where: ``$CLUTCHFE_CACHE_DIR`` if set, else ``$XDG_CACHE_HOME/clutchfe``, else
``~/.cache/clutchfe``; one file, written atomically (a temporary file, then ``os.replace``).
"""
from __future__ import annotations

import datetime
import functools
import hashlib
import json
import math
import os
import tempfile
from dataclasses import dataclass
from pathlib import Path

from ..provenance import versions
from .checks import Check

CACHE_ENV = "CLUTCHFE_CACHE_DIR"
FILE_NAME = "verification-table.json"
COMMAND = "clutchfe verify"
FORMAT = 1                      # layout of the stored file; a different one reads as stale
STATES = ("fresh", "stored", "missing", "stale")
PACKAGE = Path(__file__).resolve().parent.parent


def cache_dir() -> Path:
    """The per-user folder of the stored table (read from the environment on every call)."""
    given = os.environ.get(CACHE_ENV)
    if given:
        return Path(given).expanduser()
    xdg = os.environ.get("XDG_CACHE_HOME")
    return (Path(xdg).expanduser() if xdg else Path.home() / ".cache") / "clutchfe"


def table_path() -> Path:
    return cache_dir() / FILE_NAME


def code_hash(package: Path | None = None) -> str:
    """SHA-256 over the package's .py files (relative path and bytes of each), in sorted order."""
    return _code_hash(str(Path(package or PACKAGE).resolve()))


@functools.lru_cache(maxsize=4)
def _code_hash(package: str) -> str:
    # the source does not change under a running process; hashed once (about 100 files, milliseconds)
    root = Path(package)
    files = []
    for folder, dirs, names in os.walk(root, followlinks=True):     # fem/ and geometry/ are links
        dirs[:] = [d for d in dirs if d != "__pycache__"]
        files += [Path(folder) / n for n in names if n.endswith(".py")]
    digest = hashlib.sha256()
    for path in sorted(files, key=lambda p: p.relative_to(root).as_posix()):
        digest.update(path.relative_to(root).as_posix().encode() + b"\0")
        digest.update(path.read_bytes() + b"\0")
    return digest.hexdigest()


@dataclass(frozen=True)
class TableOrigin:
    """Where a run's verification rows come from, and why there are none when there are none."""

    state: str                  # one of STATES: "fresh" (run in this process), "stored", "missing", "stale"
    reason: str = ""            # missing or stale: why, in words
    made: str | None = None     # when the table was made (UTC, ISO 8601)
    code_hash: str = ""         # the code the table was made for (none when missing)
    path: str = ""              # the stored file
    command: str = COMMAND      # what makes the table

    @property
    def usable(self) -> bool:
        return self.state in ("fresh", "stored")

    def warning(self) -> str | None:
        """The run's warning when it carries no verification table (None when it carries one)."""
        if self.usable:
            return None
        return (f"the solver's verification table is {self.state} ({self.reason}), so this run carries no "
                f"verification evidence; run `{self.command}` once to make it, then run the case again")

    def as_dict(self) -> dict:
        out = {"state": self.state, "made": self.made, "code_hash": self.code_hash or None, "table": self.path or None}
        if not self.usable:
            out.update(reason=self.reason, command=self.command)
        return out


class VerificationRows(list):
    """A list of :class:`Check` rows that also says where they came from (``origin``) and, after
    ``clutchfe verify``, the file the table was stored in (``stored_at``)."""

    stored_at: Path | None = None

    def __init__(self, rows=(), origin: TableOrigin | None = None):
        super().__init__(rows)
        self.origin = origin if origin is not None else TableOrigin("fresh", code_hash=code_hash())


def verification_summary(rows: list[Check], passed: bool) -> dict:
    """summary.json's "verification": the state, all_passed / checks / failed of the rows carried
    (all_passed null when none are), when and for which code the table was made, and for a
    missing or stale table the reason and the command that makes it."""
    origin = getattr(rows, "origin", None) or TableOrigin("fresh")
    return {"state": origin.state, "all_passed": bool(passed) if origin.usable else None, "checks": len(rows),
            "failed": sum(not r.passed for r in rows), **{k: v for k, v in origin.as_dict().items() if k != "state"}}


def json_row(r: Check) -> dict:
    # JSON has no NaN or infinity: a case that did not run carries nulls
    return {k: (v if not isinstance(v, float) or math.isfinite(v) else None) for k, v in r.as_dict().items()}


def _check_of(row: dict) -> Check:
    def num(key, missing):
        value = row.get(key)
        return missing if value is None else float(value)

    return Check(str(row["case"]), str(row["quantity"]), num("computed", math.nan), num("reference", math.nan),
                 num("error", math.nan), str(row["error_kind"]), num("tolerance", math.inf), str(row["source"]))


def table_data(rows: list[Check], passed: bool, seconds: float | None = None) -> dict:
    """The stored table: its rows, the versions and code hash it is valid for, and when it was made."""
    made = datetime.datetime.now(datetime.timezone.utc).replace(microsecond=0).isoformat()
    return {"format": FORMAT, "made": made, "command": COMMAND, "versions": versions(), "code_hash": code_hash(),
            "all_passed": bool(passed), "seconds": None if seconds is None else round(seconds, 2),
            "rows": [json_row(r) for r in rows]}


def store_table(rows: list[Check], passed: bool, seconds: float | None = None) -> Path:
    """Write the table for this code and these versions (atomically) and return its path."""
    path = table_path()
    path.parent.mkdir(parents=True, exist_ok=True)
    text = json.dumps(table_data(rows, passed, seconds), indent=1, ensure_ascii=False) + "\n"
    fd, tmp = tempfile.mkstemp(prefix=f".{FILE_NAME}.", suffix=".tmp", dir=path.parent)
    try:
        with os.fdopen(fd, "w", encoding="utf-8") as fh:
            fh.write(text)
        os.replace(tmp, path)
    except BaseException:
        Path(tmp).unlink(missing_ok=True)
        raise
    return path


def stale_reason(data: dict) -> str:
    """Why a stored table does not belong to this code and these versions ("" when it does)."""
    if data.get("format") != FORMAT:
        return f"stored in layout {data.get('format')!r}, this clutchfe reads layout {FORMAT}"
    here, there = versions(), data.get("versions") or {}
    differ = [f"{name} {there.get(name, 'absent')} (installed: {here.get(name, 'absent')})"
              for name in sorted(set(here) | set(there)) if here.get(name) != there.get(name)]
    if differ:
        return "made with other versions: " + ", ".join(differ)
    if data.get("code_hash") != code_hash():
        return (f"made for other code: code hash {str(data.get('code_hash'))[:12]}…, "
                f"this code {code_hash()[:12]}…")
    return ""


def load_table() -> tuple[VerificationRows, bool]:
    """The stored table as a run uses it: its rows and all-passed when it is current; no rows and
    False, with the origin saying "missing" or "stale" and why, when it is not.  Never runs the suite."""
    path = table_path()
    if not path.is_file():
        return VerificationRows([], TableOrigin("missing", f"no stored table at {path}", path=str(path))), False
    try:
        data = json.loads(path.read_text(encoding="utf-8"))
        rows = [_check_of(r) for r in data["rows"]]
        passed = bool(data["all_passed"])
    except (OSError, ValueError, KeyError, TypeError) as exc:
        return VerificationRows([], TableOrigin("missing", f"the stored table {path} cannot be read "
                                                           f"({type(exc).__name__})", path=str(path))), False
    made, hashed = data.get("made"), str(data.get("code_hash", ""))
    reason = stale_reason(data)
    if reason:
        return VerificationRows([], TableOrigin("stale", reason, made, hashed, str(path))), False
    return VerificationRows(rows, TableOrigin("stored", "", made, hashed, str(path))), passed and bool(rows)
