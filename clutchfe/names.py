"""Names that become folder names: a case's or a study's name is a plain label, never a path.

A case file someone sends you must not be able to write (or replace) results anywhere but
in a folder of its own name below the chosen results folder.
"""
from __future__ import annotations

import re

# a label becomes a folder name: letters, digits, '_', '-', '.', '+', single inner spaces;
# it must start with a letter or digit (so never '.', '..' or a hidden name) and stay short
LABEL_PATTERN = re.compile(r"[^\W_][\w.+-]*(?: [\w.+-]+)*")
LABEL_MAX = 80
LABEL_RULE = ("a plain file-name label of 1 to 80 letters, digits, '_', '-', '.', '+' or single spaces, "
              "starting with a letter or digit")


# names Windows reserves for devices, with or without an extension: never a folder there
RESERVED = re.compile(r"(con|prn|aux|nul|com[1-9]|lpt[1-9])(\..*)?", re.IGNORECASE)


def label_problem(key: str, value) -> str | None:
    """The problem with ``value`` as a results-folder label, or None when it is fine."""
    if isinstance(value, str) and len(value) <= LABEL_MAX and LABEL_PATTERN.fullmatch(value):
        if not RESERVED.fullmatch(value):
            return None
        return f"{key} = {value!r}: a device name on Windows, not usable as a folder; allowed: {LABEL_RULE}, " \
               "other than con, prn, aux, nul, com1–9, lpt1–9"
    shown = repr(value) if not isinstance(value, str) or len(value) <= 60 else repr(value[:57]) + "…"
    return f"{key} = {shown}: not usable as a results-folder name; allowed: {LABEL_RULE}"


def safe_label(text: str, fallback: str = "case") -> str:
    """``text`` made into a valid label (for defaults taken from a file name)."""
    cleaned = re.sub(r"[^\w.+-]+", "_", text).strip("._-+")[:LABEL_MAX].strip("._-+")
    if cleaned and RESERVED.fullmatch(cleaned):
        cleaned += "_"
    return cleaned if cleaned and LABEL_PATTERN.fullmatch(cleaned) else fallback
