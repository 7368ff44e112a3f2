"""The README's generated tables: the text between two marker lines, read and rewritten."""
from __future__ import annotations

from pathlib import Path


def readme_section(text: str, markers: tuple[str, str]) -> str:
    """The text between two marker lines (without the newlines next to them)."""
    start, end = markers
    return text.split(start, 1)[1].split(end, 1)[0].strip("\n")


def write_between_markers(path, body: str, markers: tuple[str, str]) -> None:
    """Replace what stands between two marker lines of a text file with ``body``."""
    file = Path(path)
    head, rest = file.read_text(encoding="utf-8").split(markers[0], 1)
    _, tail = rest.split(markers[1], 1)
    file.write_text(f"{head}{markers[0]}\n{body}\n{markers[1]}{tail}", encoding="utf-8")
