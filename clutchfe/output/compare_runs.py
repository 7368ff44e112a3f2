"""Results of several runs side by side: the table of one ``clutchfe run`` over several cases
(runs.csv, runs.md) and the comparison of two results folders (``clutchfe compare A B``).

Plain data in, plain data or files out; the command line draws the terminal tables.  Every file is
written in one rename (a scratch file beside it, then ``os.replace``), and a results folder is read
only when its marker says clutchfe wrote it as a run.
"""
from __future__ import annotations

import csv
import io
import json
import math
import os
import tempfile
from dataclasses import dataclass
from pathlib import Path

from ..errors import CaseError
from ..provenance import CAUTION, __version__
from ..summary_keys import BY_KEY, SUMMARY_KEYS
from .folders import MARKER
from .report_html import esc, page, table

# one row of runs.csv / runs.md per case: column, unit, summary.json key (None: from the run itself)
RUN_COLUMNS = (
    ("case", "", None), ("case_file", "", None), ("exit_status", "", None),
    ("torque_fe_Nm", "N·m", "torque_fe_Nm"),
    ("torque_uniform_pressure_Nm", "N·m", "torque_uniform_pressure_Nm"),
    ("torque_uniform_wear_Nm", "N·m", "torque_uniform_wear_Nm"),
    ("capacity_position", "", "capacity_position"),
    ("effective_radius_mm", "mm", "effective_radius_mm"),
    ("design_peak_pressure_MPa", "MPa", "design_peak_pressure_MPa"),
    ("failed_criteria", "", None), ("folder", "", None), ("problem", "", None),
)
RUNS_FILES = ("runs.csv", "runs.md")
# summary.json keys compare shows no row for: long text, or the provenance of the file itself
_NOT_COMPARED = {"verdict", "warnings", "caution", "versions", "surfaces", "mesh_study", "verification"}
# the page compare writes says so in its head: only such a page is ever written over
_COMPARE_MARK = '<meta name="generator" content="clutchfe compare">'


@dataclass(frozen=True)
class RunRow:
    """What one case of a ``clutchfe run`` came to: its summary, or why there is none."""

    case: str
    case_file: str
    exit_status: int
    summary: dict | None = None
    folder: str = ""
    problem: str = ""

    @property
    def criteria(self) -> str:
        if self.summary is None:
            return ""
        failed = self.summary.get("failed_criteria") or []
        return ", ".join(failed) if failed else "ok"

    def cells(self) -> dict:
        row = {"case": self.case, "case_file": self.case_file, "exit_status": self.exit_status,
               "failed_criteria": self.criteria, "folder": self.folder, "problem": self.problem}
        for column, _, key in RUN_COLUMNS:
            if key is not None:
                row[column] = None if self.summary is None else self.summary.get(key)
        return row


def replace_file(path: Path, text: str) -> None:
    """Write ``text`` to ``path`` in one rename: a reader sees the old file or the new, never half."""
    path = Path(path)
    fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.writing-", dir=path.parent)
    try:
        with os.fdopen(fd, "w", encoding="utf-8", newline="") as fh:
            fh.write(text)
        os.chmod(tmp, 0o644)
        os.replace(tmp, path)
    except BaseException:
        Path(tmp).unlink(missing_ok=True)
        raise


def runs_csv(rows: list[RunRow]) -> str:
    buffer = io.StringIO()
    writer = csv.writer(buffer, lineterminator="\n")
    writer.writerow([c for c, _, _ in RUN_COLUMNS])
    for row in rows:
        cells = row.cells()
        writer.writerow(["" if cells[c] is None else cells[c] for c, _, _ in RUN_COLUMNS])
    return buffer.getvalue()


def _md(value) -> str:
    if value is None:
        return ""
    if isinstance(value, float):
        return f"{value:.6g}"
    return str(value).replace("|", "\\|").replace("\n", " ")


def runs_markdown(rows: list[RunRow]) -> str:
    head = [f"{c} [{u}]" if u else c for c, u, _ in RUN_COLUMNS]
    lines = [f"# clutchfe runs ({len(rows)} case{'s' if len(rows) != 1 else ''}, clutchfe {__version__})", "",
             "exit status: 0 ok, 2 invalid input, 3 cannot be solved as asked, 1 a bug; "
             "capacity_position is ξ (1 = uniform pressure, 0 = uniform wear).", "",
             "| " + " | ".join(head) + " |", "|" + "---|" * len(head)]
    for row in rows:
        cells = row.cells()
        lines.append("| " + " | ".join(_md(cells[c]) for c, _, _ in RUN_COLUMNS) + " |")
    lines += ["", f"**Caution:** {CAUTION}", ""]
    return "\n".join(lines)


def write_runs_table(rows: list[RunRow], folder: Path) -> list[Path]:
    """runs.csv and runs.md in ``folder`` (each in one rename)."""
    folder = Path(folder)
    replace_file(folder / "runs.csv", runs_csv(rows))
    replace_file(folder / "runs.md", runs_markdown(rows))
    return [folder / name for name in RUNS_FILES]


# --------------------------------------------------------------------------- comparing two runs

def read_run_folder(folder: str | Path, label: str) -> dict:
    """summary.json of a results folder ``clutchfe run`` wrote; anything else is refused (exit 2)."""
    folder = Path(folder)
    where = f"{label} = {str(folder)!r}"
    allowed = "allowed: a results folder written by `clutchfe run` (it holds summary.json)"
    if not folder.is_dir():
        raise CaseError([f"{where}: {'is a file' if folder.exists() else 'does not exist'}; {allowed}"])
    try:
        marker = json.loads((folder / MARKER).read_text(encoding="utf-8"))
    except (OSError, ValueError):
        marker = None
    if not isinstance(marker, dict) or marker.get("written_by") != "clutchfe":
        raise CaseError([f"{where}: not a clutchfe results folder (no {MARKER}); {allowed}"])
    if marker.get("kind") != "run":
        raise CaseError([f"{where}: a clutchfe {marker.get('kind')!s} folder, not a run; {allowed}"])
    try:
        summary = json.loads((folder / "summary.json").read_text(encoding="utf-8"))
    except OSError:
        raise CaseError([f"{where}: has no summary.json; {allowed}"]) from None
    except ValueError as exc:
        raise CaseError([f"{where}: summary.json is not valid JSON ({exc}); {allowed}"]) from None
    if not isinstance(summary, dict) or "torque_fe_Nm" not in summary:
        raise CaseError([f"{where}: summary.json is not a run's summary (no torque_fe_Nm); {allowed}"])
    return summary


@dataclass(frozen=True)
class CompareRow:
    key: str
    unit: str
    a: object
    b: object

    @property
    def numeric(self) -> bool:
        return all(isinstance(v, (int, float)) and not isinstance(v, bool) and math.isfinite(v)
                   for v in (self.a, self.b))

    @property
    def difference(self):
        """B − A for numbers; for text "same" or "differs"."""
        if self.numeric:
            return self.b - self.a
        return "same" if self.a == self.b else "differs"

    @property
    def relative(self) -> float | None:
        """(B − A) / |A|, a fraction; None when A is zero or not a number."""
        if not self.numeric or self.a == 0:
            return None
        return (self.b - self.a) / abs(self.a)


def _plain(value):
    if isinstance(value, list):
        return ", ".join(str(v) for v in value) if all(not isinstance(v, (dict, list)) for v in value) else None
    return None if isinstance(value, dict) else value


def compare_summaries(a: dict, b: dict) -> list[CompareRow]:
    """One row per scalar key of either summary, in the order of summary.json's declaration."""
    order = [k.key for k in SUMMARY_KEYS] + sorted((set(a) | set(b)) - set(BY_KEY))
    rows = []
    for key in order:
        if key in _NOT_COMPARED or (key not in a and key not in b):
            continue
        va, vb = _plain(a.get(key)), _plain(b.get(key))
        if (va is None and isinstance(a.get(key), (dict, list))) or (vb is None and isinstance(b.get(key), (dict, list))):
            continue
        unit = BY_KEY[key].unit if key in BY_KEY else ""
        rows.append(CompareRow(key, unit, va, vb))
    return rows


def shown(value, digits: int = 6) -> str:
    """A value as the comparison shows it, numbers in ``digits`` significant digits."""
    if value is None:
        return "—"
    if isinstance(value, bool):
        return str(value).lower()
    if isinstance(value, float):
        return f"{value:.{digits}g}"
    return str(value) if value != "" else "none"


def shown_difference(row: CompareRow, digits: int = 4) -> tuple[str, str]:
    """(B − A, relative difference in %) as text."""
    diff = row.difference
    rel = row.relative
    return (f"{diff:+.{digits}g}" if row.numeric else diff,
            "—" if rel is None else f"{100 * rel:+.{max(digits - 1, 1)}f}")


def compare_html(rows: list[CompareRow], a_label: str, b_label: str, a: dict, b: dict) -> str:
    """One self-contained page (no script, no network): the comparison table and the caution."""
    title = f"clutchfe compare: {a.get('case_name')} (A) and {b.get('case_name')} (B)"
    cells = []
    for row in rows:
        diff, rel = shown_difference(row)
        cells.append([f"<code>{esc(row.key)}</code>", esc(row.unit), esc(shown(row.a)), esc(shown(row.b)),
                      esc(diff), esc(rel)])
    body = (f"<h1>{esc(title)}</h1>"
            f"<p>A: <code>{esc(a_label)}</code> (clutchfe {esc(a.get('version', '?'))}); "
            f"B: <code>{esc(b_label)}</code> (clutchfe {esc(b.get('version', '?'))}). "
            "Difference B − A; relative difference (B − A)/|A|.</p>"
            # str(): the helpers may hand back markup, and markup + text would escape the text
            + str(table(["key", "unit", "A", "B", "B − A", "(B − A)/|A| [%]"], cells, numeric_from=2))
            + f'<p class="caution">{esc(CAUTION)}</p>'
            + f'<p class="small">written by clutchfe {esc(__version__)}</p>')
    text = str(page(title, body))
    return text.replace('<meta charset="utf-8">', '<meta charset="utf-8">' + _COMPARE_MARK, 1)


def write_compare_html(path: str | Path, text: str) -> Path:
    """Write the comparison page in one rename; a file clutchfe compare did not write is refused."""
    path = Path(path)
    where = f"--html = {str(path)!r}"
    if path.is_symlink() or path.is_dir():
        raise CaseError([f"{where}: is a {'symbolic link' if path.is_symlink() else 'folder'}; allowed: "
                         "the name of a new .html file"])
    if path.exists():
        try:
            ours = _COMPARE_MARK in path.read_text(encoding="utf-8", errors="replace")[:2000]
        except OSError:
            ours = False
        if not ours:
            raise CaseError([f"{where}: the file exists and clutchfe did not write it; allowed: a new file "
                             "name (clutchfe replaces only a page `clutchfe compare` wrote)"])
    if not path.parent.is_dir():
        raise CaseError([f"{where}: the folder {str(path.parent)!r} does not exist; allowed: a file in an "
                         "existing folder"])
    replace_file(path, text)
    return path


__all__ = ["RUNS_FILES", "RUN_COLUMNS", "CompareRow", "RunRow", "compare_html", "compare_summaries",
           "read_run_folder", "replace_file", "runs_csv", "runs_markdown", "shown", "shown_difference",
           "write_compare_html", "write_runs_table"]
