"""Read an input file (a case or a study, TOML) with limits, so that any file gets a clear answer.

A case file is a few kilobytes of two-level tables.  Anything far outside that (a device
that never ends, a pipe that blocks, a file of megabytes, arrays nested thousands deep,
hundreds of thousands of keys) is refused as input (exit 2) before it can exhaust memory,
time or the parser's recursion.  A UTF-8 byte-order mark, as some Windows editors write,
is accepted.
"""
from __future__ import annotations

import os
import re
import stat
import tomllib
from pathlib import Path

from .errors import CaseError

MAX_FILE_BYTES = 1 << 20       # 1 MiB: a case file is a few kB, a commented one ~10 kB
MAX_KEYS = 2000                # every case key, each in every table, is ~150
MAX_DEPTH = 4                  # case: table.key (2); study: [[vary]] tables with value lists (3)


def read_toml(path: str | Path, what: str = "case file") -> tuple[dict, bytes]:
    """The parsed TOML of ``path`` and its bytes, or :class:`CaseError` naming the file's problem."""
    path = Path(path)
    try:
        info = os.stat(path)
    except OSError as exc:
        raise CaseError([f"{path}: cannot read the {what} ({exc.strerror})"]) from None
    if not stat.S_ISREG(info.st_mode):
        # a FIFO would block forever and /dev/zero never ends: only regular files are read
        raise CaseError([f"{path}: not a regular file; allowed: a {what} (TOML text) on disk"])
    if info.st_size > MAX_FILE_BYTES:
        raise CaseError([f"{path}: the {what} is {info.st_size} bytes; allowed: at most {MAX_FILE_BYTES} "
                         f"bytes (1 MiB)"])
    try:
        with open(path, "rb") as fh:
            raw = fh.read(MAX_FILE_BYTES + 1)      # bounded even if the file grows meanwhile
    except OSError as exc:
        raise CaseError([f"{path}: cannot read the {what} ({exc.strerror})"]) from None
    if len(raw) > MAX_FILE_BYTES:
        raise CaseError([f"{path}: the {what} is larger than {MAX_FILE_BYTES} bytes; allowed: at most 1 MiB"])
    try:
        text = raw.decode("utf-8-sig")
    except UnicodeDecodeError as exc:
        raise CaseError([f"{path}: not UTF-8 text (byte {exc.start}); allowed: a {what} saved as UTF-8"]) from None
    depth = _bracket_depth(text)
    if depth > MAX_DEPTH + 2:
        raise CaseError([f"{path}: values nested {depth} deep; allowed: at most {MAX_DEPTH} levels "
                         f"(tables of numbers and text)"])
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise CaseError([f"{path}: malformed TOML: {exc}"]) from None
    except RecursionError:
        raise CaseError([f"{path}: values nested too deep; allowed: at most {MAX_DEPTH} levels"]) from None
    count = key_count(data)
    if count > MAX_KEYS:
        raise CaseError([f"{path}: holds {count} keys; allowed: at most {MAX_KEYS} (a case has ~150 keys in "
                         f"all: clutchfe keys)"])
    return data, raw


def _bracket_depth(text: str) -> int:
    """An upper bound of the nesting of arrays and inline tables: brackets outside strings and comments.

    Counting before parsing keeps a file of 5000 nested brackets from reaching the parser's recursion.
    Table headers ``[a]`` and ``[[a]]`` count 1–2, which the allowance above the limit covers.
    """
    depth = deepest = 0
    k, n = 0, len(text)
    while k < n:
        ch = text[k]
        if ch in "\"'":
            quote = text[k:k + 3] if text[k:k + 3] in ('"""', "'''") else ch
            k += len(quote)
            while k < n and not text.startswith(quote, k):
                k += 2 if (text[k] == "\\" and quote[0] == '"') else 1
            k += len(quote)
            continue
        if ch == "#":
            end = text.find("\n", k)
            k = n if end < 0 else end
            continue
        if ch in "[{":
            depth += 1
            deepest = max(deepest, depth)
        elif ch in "]}":
            depth = max(depth - 1, 0)
        k += 1
    return deepest


def key_count(data, limit: int = MAX_KEYS + 1) -> int:
    """The keys of nested tables and arrays of tables, counted up to ``limit`` (no recursion)."""
    count, stack = 0, [data]
    while stack and count < limit:
        item = stack.pop()
        if isinstance(item, dict):
            count += len(item)
            stack.extend(v for v in item.values() if isinstance(v, (dict, list)))
        elif isinstance(item, list):
            stack.extend(v for v in item if isinstance(v, (dict, list)))
    return count


def shown(value, width: int = 60) -> str:
    """``repr(value)`` cut to ``width`` characters, for messages (a value may be a megabyte of text)."""
    text = repr(value)
    return text if len(text) <= width else text[: width - 1] + "…"


def key_text(key: str) -> str:
    """A key as the file spells it: bare when it may be (``colour``), quoted otherwise (``""``, ``"a b"``)."""
    if re.fullmatch(r"[A-Za-z0-9_-]{1,60}", key):
        return key
    cut = key if len(key) <= 40 else key[:39]
    text = "".join(ch if ch.isprintable() and ch not in '"\\' else _toml_escape(ch) for ch in cut)
    return f'"{text}…"' if len(key) > 40 else f'"{text}"'



def _toml_escape(ch: str) -> str:
    """A character as a TOML basic string writes it escaped (so a key with an escape sequence or an
    unprintable character is shown as it is typed, never sent raw to the terminal)."""
    if ch in '"\\':
        return "\\" + ch
    code = ord(ch)
    return f"\\u{code:04x}" if code <= 0xFFFF else f"\\U{code:08x}"
