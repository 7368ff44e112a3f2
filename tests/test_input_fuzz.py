"""Case files from a fuzzer: every file, valid or not, gets a clear answer from `clutchfe check`.

The demo cases (CONE, PLATE, SMALL_PLATE of tests/helpers/data.py and cases/*.toml) are mutated
by Hypothesis, structurally (other numbers, wrong types, deep nesting, dropped keys, unknown keys
and tables, odd names and descriptions, another kind) and byte by byte (BOM, truncation, random
or invalid UTF-8 bytes, other line ends and encodings), written as TOML and checked in-process with
``clutchfe._cli.main(["check", FILE])``.  For every input (``judge``):

- the exit status is 0, 2 or 3 (errors.py): never 1, never an exception out of ``main``;
- nothing says "Traceback" or "internal error";
- standard error holds only ``clutchfe: …`` lines (one line per problem, nothing split across lines);
- with exit 2 there is at least one error line, and every one names a key (``names_a_key``);
- an accepted case prints no NaN or infinity as a number;
- no control character from the file reaches the terminal (an escape sequence, a NUL).

Then explicit tests of the input limits (file size, FIFO, nesting depth, the number of problems
shown, a UTF-8 byte-order mark), a few cases through the console script in a subprocess, and one
slow test that runs accepted generated cases end to end.  tests/benchmarks/bench_fuzz.py draws
many more inputs from the same generators (``case_inputs``) and counts the answers.

Hypothesis runs derandomised under the "ci" profile (tests/conftest.py): every run of the test
command checks the same slice; CLUTCHFE_EXPLORE=1 searches new examples.  A failing example
found belongs in ``REGRESSIONS`` below, as a plain test.
"""
from __future__ import annotations

import contextlib
import copy
import csv
import datetime
import io
import json
import math
import os
import re
import subprocess
import sys
import threading
import tomllib
import unicodedata
from dataclasses import dataclass, replace
from pathlib import Path

import pytest
from hypothesis import HealthCheck, Phase, find, given, settings
from hypothesis import strategies as st

from clutchfe._cli import main
from clutchfe.curve_case import CURVE_TABLES
from clutchfe.schema import SCHEMA
from clutchfe.section_case import TABLE as SECTION_TABLE, TOP_KEYS as SECTION_KEYS

from tests.helpers.data import CASES, CONE, PLATE, ROOT, SMALL_PLATE

MiB = 1 << 20
ERROR = "clutchfe: error: "

# --------------------------------------------------------------------------- writing TOML
# Our own writer (not tomli_w): it must write what no parser hands back (inf and nan in the file,
# 1.8e308, keys with control characters, arrays nested hundreds deep) exactly as we mean them.

BARE_KEY = re.compile(r"[A-Za-z0-9_-]+")


class Raw(str):
    """A TOML value written as it is: a literal Python has no value for (1.8e308, 0x7f, -nan, a date)."""


def toml_string(text: str) -> str:
    """A TOML basic string (TOML 1.0: quote, backslash and control characters but tab escaped)."""
    out = ['"']
    for ch in text:
        code = ord(ch)
        if ch in '"\\':
            out.append("\\" + ch)
        elif code < 0x20 or code == 0x7F:
            out.append(f"\\u{code:04x}")
        else:
            out.append(ch)
    out.append('"')
    return "".join(out)


def toml_escaped(text: str) -> str:
    """A TOML basic string with every unprintable character escaped (\\uXXXX, \\UXXXXXXXX): how a key is
    typed in the file, and how clutchfe shows one that a terminal cannot."""
    out = []
    for ch in text:
        if ch in '"\\':
            out.append("\\" + ch)
        elif ch.isprintable():
            out.append(ch)
        else:
            out.append(f"\\u{ord(ch):04x}" if ord(ch) <= 0xFFFF else f"\\U{ord(ch):08x}")
    return '"' + "".join(out) + '"'


def toml_key(key: str) -> str:
    return key if BARE_KEY.fullmatch(key) else toml_string(key)


def toml_value(value) -> str:
    if isinstance(value, Raw):
        return str(value)
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, int):
        return str(value)
    if isinstance(value, float):
        if math.isnan(value):
            return "nan"
        if math.isinf(value):
            return "inf" if value > 0 else "-inf"
        return repr(value)
    if isinstance(value, str):
        return toml_string(value)
    if isinstance(value, (datetime.date, datetime.time)):
        return value.isoformat()
    if isinstance(value, list):
        return "[" + ", ".join(toml_value(v) for v in value) + "]"
    if isinstance(value, dict):
        return "{" + ", ".join(f"{toml_key(k)} = {toml_value(v)}" for k, v in value.items()) + "}"
    raise TypeError(f"no TOML for {type(value).__name__}")


def to_toml(doc: dict) -> str:
    """A case document as a TOML file: top-level values first, then one ``[table]`` per table."""
    lines = [f"{toml_key(k)} = {toml_value(v)}" for k, v in doc.items() if not isinstance(v, dict)]
    for key, table in doc.items():
        if isinstance(table, dict):
            lines.append(f"\n[{toml_key(key)}]")
            lines.extend(f"{toml_key(k)} = {toml_value(v)}" for k, v in table.items())
    return "\n".join(lines) + "\n"


# --------------------------------------------------------------------------- the demo cases mutated

def _demo(path: Path) -> dict:
    """A demo case file's tables, its drawing (if any) named by absolute path: the mutants live elsewhere."""
    data = tomllib.loads(path.read_text(encoding="utf-8"))
    if "section_file" in data:
        data["section_file"]["path"] = str((path.parent / data["section_file"]["path"]).resolve())
    return data


BASES: dict[str, dict] = {"CONE": CONE, "PLATE": PLATE, "SMALL_PLATE": SMALL_PLATE,
                          **{p.stem: _demo(p) for p in CASES}}
TABLES = sorted(t for t in SCHEMA if t)
SCHEMA_PATHS = sorted((t, k) for t, keys in SCHEMA.items() for k in keys)      # ("", "kind"), ("cone", …)
# the [section_file] table is read by clutchfe.section_case, the curves' point lists by clutchfe.curve_case, not
# the flat schema: their keys name lines too
CURVE_KEYS = [f"{t}.{k}" for t, lists in CURVE_TABLES.items() for k in lists[:2]]
DOTTED_KEYS = sorted([f"{t}.{k}" for t, k in SCHEMA_PATHS if t] + [f"{SECTION_TABLE}.{k}" for k in SECTION_KEYS]
                     + CURVE_KEYS)
TOP_KEYS = sorted(k for t, k in SCHEMA_PATHS if not t)
CHOICES = sorted({c for keys in SCHEMA.values() for spec in keys.values()
                  for c in getattr(spec, "choices", ()) if isinstance(c, str)})

FLOAT_EDGES = (0.0, -0.0, 1.0, -1.0, 0.5, 2.0, 90.0, 5e-324, -5e-324, 2.2250738585072014e-308, 1e-300, 1e-12,
               1e-6, 1e6, 1e12, 1e300, 1.7976931348623157e308, -1.7976931348623157e308, math.inf, -math.inf,
               math.nan)
INT_EDGES = (0, 1, -1, 2, 3, 7, 8, 39, 40, 41, 255, 256, 257, 2**31, 2**53 + 1, 2**63 - 1, -2**63)
# literals tomllib reads into values of their own: 1.8e308 is inf, 1e-400 is 0, 0x… an int
RAW_NUMBERS = tuple(Raw(t) for t in (
    "1.8e308", "-1.8e308", "1e400", "4.9e-324", "1e-400", "+inf", "-nan", "+nan", "-0.0", "0e0",
    "0x7fffffffffffffff", "0o17", "0b11", "1_000", "6.022e+23", "-9223372036854775808",
    "9223372036854775808", "99999999999999999999999999", "1" + "0" * 400))
DATES = tuple(Raw(t) for t in ("1979-05-27T07:32:00Z", "1979-05-27", "07:32:00", "1979-05-27 07:32:00.999999",
                               "1979-05-27T00:32:00-07:00"))
ODD_TEXTS = (
    "", " ", "[/x]", "[bold]x[/bold]", "[link=file:///etc/passwd]x[/link]", "$\\frac{$", "$x$", "$", "\\", "..",
    ".", "/abs", "/etc/passwd", "../../x", "a/b", "C:\\x", "con", "NUL", "\x00", "a\x00b", "\n", "a\nb", "\r\n",
    "\t", "\x1b[31mred\x1b[0m", "\x1b[2J", "\u202e", "\ufeff", "\u2028", "x" * 300, "x" * 80, "x" * 81, "é",
    "名前", "😀", "{}", "%s", "{0}", "nan", "inf", "-inf", "None", "null", "true", "<script>x</script>",
    "&amp;", "'", '"', "'''", '"""', "#", "a b", "a  b", " a", "a ", "-a", ".a", "a.", "a..b", "0", "x+y",
)
LABEL_CHARS = st.sampled_from("abcXYZ019_-.+ é")


def _texts():
    return st.one_of(st.sampled_from(ODD_TEXTS), st.sampled_from(CHOICES), st.text(max_size=30))


def _names():
    return st.one_of(st.sampled_from(ODD_TEXTS), st.text(LABEL_CHARS, min_size=1, max_size=100),
                     st.text(max_size=90))


def _descriptions():
    return st.one_of(st.sampled_from(ODD_TEXTS), st.text(max_size=200),
                     st.sampled_from(("x" * 100_000, "[/x] $\\frac{$ " * 2000, "\n" * 1000)))


@st.composite
def _typo(draw):
    word = list(draw(st.sampled_from(sorted({k for _, k in SCHEMA_PATHS} | set(TABLES)))))
    at = draw(st.integers(0, len(word) - 1))
    how = draw(st.sampled_from(("drop", "double", "swap", "upper", "space", "dash")))
    if how == "drop":
        del word[at]
    elif how == "double":
        word.insert(at, word[at])
    elif how == "swap" and at + 1 < len(word):
        word[at], word[at + 1] = word[at + 1], word[at]
    elif how == "upper":
        word[at] = word[at].upper()
    elif how == "space":
        word.append(" ")
    else:
        word = list("".join(word).replace("_", "-"))
    return "".join(word)


def _odd_keys():
    return st.one_of(st.sampled_from(ODD_TEXTS), st.sampled_from([k for _, k in SCHEMA_PATHS] + TABLES + DOTTED_KEYS),
                     _typo(), st.text(max_size=12), st.sampled_from(("KIND", "kind ", "__proto__", "-", "_")))


def _numbers():
    return st.one_of(st.sampled_from(FLOAT_EDGES), st.sampled_from(INT_EDGES), st.sampled_from(RAW_NUMBERS),
                     st.floats(), st.integers(-10**6, 10**6), st.floats(1e-3, 1e4))


@st.composite
def _nested(draw):
    """An array or inline table nested 2 … 60 deep around a number or a text."""
    depth = draw(st.integers(2, 60))
    value = draw(st.one_of(_numbers(), _texts()))
    as_table = draw(st.booleans())
    for _ in range(depth):
        value = {"a": value} if as_table else [value]
    return value


def _scalars():
    return st.one_of(_numbers(), _texts(), st.booleans(), st.sampled_from(DATES))


def _wrong_types():
    return st.one_of(
        st.booleans(), st.just([]), st.just({}), st.sampled_from(DATES), _nested(),
        st.lists(_scalars(), max_size=4),
        st.dictionaries(_odd_keys(), _scalars(), max_size=3),
        st.recursive(_scalars(), lambda inner: st.lists(inner, max_size=3)
                     | st.dictionaries(_odd_keys(), inner, max_size=3), max_leaves=8))


def _near(value):
    """Numbers near a valid one: in metres instead of mm, a thousand times bigger, the sign turned,
    one ulp off, whole, as text."""
    v = float(value)
    near = [v * 1e-3, v * 1e3, v * 1e-6, -v, v / 2, v * 2, v + 0.5, v * (1 + 1e-15), math.nextafter(v, math.inf),
            math.nextafter(v, -math.inf), float(round(v)), int(v), str(value), Raw(repr(v) + "0" * 3)]
    return st.sampled_from(near)


def _edges(spec):
    return st.sampled_from(_edge_list(spec))


def _edge_list(spec) -> list:
    """The ends of a key's range and one step on either side of each, its choices a little off."""
    out = [1.0]
    for end in (getattr(spec, "low", None), getattr(spec, "high", None)):
        if isinstance(end, (int, float)) and math.isfinite(end):
            out += [end, float(end), math.nextafter(end, math.inf), math.nextafter(end, -math.inf)]
            if getattr(spec, "kind", float) is int:
                out += [int(end) - 1, int(end) + 1]
    out += [c for c in getattr(spec, "choices", ())]
    out += [c.upper() for c in getattr(spec, "choices", ()) if isinstance(c, str)]
    out += [f" {c}" for c in getattr(spec, "choices", ()) if isinstance(c, str)]
    return out


def values_for(table: str, key: str, current):
    """Values for one key: near its value, at its range's ends, other numbers, other types."""
    spec = SCHEMA.get(table, {}).get(key)
    options = [_numbers(), _wrong_types(), _texts()]
    if isinstance(current, (int, float)) and not isinstance(current, bool) and math.isfinite(current):
        options += [_near(current)] * 3
    if spec is not None:
        options += [_edges(spec)] * 2
    return st.one_of(options)


def _any_value():
    return st.one_of(_scalars(), _wrong_types())


def _paths(doc: dict) -> list[tuple[str, ...]]:
    """Every key of a document: ("kind",), ("interface", "inner_radius"), …"""
    out = []
    for key, value in doc.items():
        out.append((key,))
        if isinstance(value, dict):
            out += [(key, sub) for sub in value]
    return out


def _put(doc: dict, path: tuple[str, ...], value) -> None:
    if len(path) == 1:
        doc[path[0]] = value
        return
    if not isinstance(doc.get(path[0]), dict):
        doc[path[0]] = {}
    doc[path[0]][path[1]] = value


def _show(value, width: int = 40) -> str:
    text = repr(value)
    return text if len(text) <= width else text[:width - 1] + "…"


# each step changes the document in place and says what it did


def _step_set(draw, doc):
    paths = sorted(set(_paths(doc)) | {(k,) if not t else (t, k) for t, k in SCHEMA_PATHS})
    path = draw(st.sampled_from(paths))
    if len(path) == 1:
        table, key, current = "", path[0], doc.get(path[0])
    else:
        table, key = path
        current = doc[table].get(key) if isinstance(doc.get(table), dict) else None
    value = draw(values_for(table, key, current))
    _put(doc, path, value)
    return f"set {'.'.join(path)} = {_show(value)}"


def _step_drop(draw, doc):
    paths = _paths(doc)
    if not paths:
        return "drop nothing"
    path = draw(st.sampled_from(paths))
    if len(path) == 1:
        del doc[path[0]]
    else:
        del doc[path[0]][path[1]]
    return f"drop {'.'.join(path)}"


def _step_unknown_key(draw, doc):
    tables = [k for k, v in doc.items() if isinstance(v, dict)] + TABLES
    where = draw(st.sampled_from([""] + sorted(set(tables))))
    key, value = draw(_odd_keys()), draw(_any_value())
    _put(doc, (where, key) if where else (key,), value)
    return f"add {where + '.' if where else ''}{key!r} = {_show(value)}"


def _step_unknown_table(draw, doc):
    name = draw(_odd_keys())
    doc[name] = draw(st.dictionaries(_odd_keys(), _scalars(), max_size=3))
    return f"add table [{name!r}]"


def _step_many_unknown(draw, doc):
    table = draw(st.sampled_from(TABLES))
    count = draw(st.integers(20, 80))
    for k in range(count):
        _put(doc, (table, f"unknown_{k}"), k)
    return f"add {count} unknown keys to [{table}]"


def _step_name(draw, doc):
    doc["name"] = draw(st.one_of(_names(), _wrong_types()))
    return f"name = {_show(doc['name'])}"


def _step_description(draw, doc):
    doc["description"] = draw(st.one_of(_descriptions(), _wrong_types()))
    return f"description = {_show(doc['description'])}"


def _step_table_shape(draw, doc):
    table = draw(st.sampled_from(TABLES))
    inside = doc.get(table) if isinstance(doc.get(table), dict) else {"a": 1}
    doc[table] = draw(st.sampled_from([3, "text", [], [inside], [inside, inside], True, Raw("1979-05-27")]))
    return f"[{table}] = {_show(doc[table])}"


def _step_kind(draw, doc):
    doc["kind"] = draw(st.sampled_from(["cone", "plate", "Cone", "PLATE", " cone", "drum", "", "cone\x00"]))
    return f"kind = {doc['kind']!r}"


def _step_nudge(draw, doc):
    """A number the file gives moved near its own value (often still valid: the accepted cases)."""
    numeric = [p for p in _paths(doc) if len(p) == 2 and isinstance(doc[p[0]][p[1]], (int, float))
               and not isinstance(doc[p[0]][p[1]], bool)]
    if not numeric:
        return "nudge nothing"
    table, key = draw(st.sampled_from(numeric))
    v = doc[table][key]
    gentle = st.sampled_from([math.nextafter(float(v), math.inf), math.nextafter(float(v), -math.inf), float(v),
                              v * 1.01, v * 0.99]) | st.floats(0.8, 1.25).map(lambda f: v * f)
    value = draw(gentle if isinstance(v, float) else st.just(v) | st.just(float(v)))
    doc[table][key] = value
    return f"set {table}.{key} = {_show(value)}"


def _inside_ends(spec) -> list:
    """The most extreme values a key's own range allows (its ends, or one step inside an open end)."""
    out = list(getattr(spec, "choices", ()))
    whole = getattr(spec, "kind", float) is int
    for end, inclusive, inward in ((getattr(spec, "low", None), getattr(spec, "low_inclusive", False), 1),
                                   (getattr(spec, "high", None), getattr(spec, "high_inclusive", False), -1)):
        if isinstance(end, (int, float)) and math.isfinite(end):
            if whole:
                out.append(int(end) if inclusive else int(end) + inward)
            else:
                out.append(float(end) if inclusive else math.nextafter(float(end), inward * math.inf))
    return out


def _step_extreme(draw, doc):
    """A key of the case's kind at an end of its own range: valid alone, extreme with the others."""
    kind = doc.get("kind")
    paths = [(t, k) for t, k in SCHEMA_PATHS if t and kind in getattr(SCHEMA[t][k], "kinds", (kind,))
             and _inside_ends(SCHEMA[t][k]) and isinstance(doc.get(t, {}), dict)]
    if not paths:
        return "extreme nothing"
    table, key = draw(st.sampled_from(paths))
    value = draw(st.sampled_from(_inside_ends(SCHEMA[table][key])))
    _put(doc, (table, key), value)
    return f"set {table}.{key} = {value!r}"


def _step_label(draw, doc):
    doc["name"] = draw(st.text(LABEL_CHARS, min_size=1, max_size=90))
    return f"name = {doc['name']!r}"


def _step_text(draw, doc):
    doc["description"] = draw(_descriptions())
    return f"description = {_show(doc['description'])}"


STEPS = (_step_set, _step_set, _step_set, _step_drop, _step_unknown_key, _step_unknown_table,
         _step_many_unknown, _step_name, _step_description, _step_table_shape, _step_kind)
MILD_STEPS = (_step_nudge, _step_nudge, _step_nudge, _step_extreme, _step_label, _step_text)


@dataclass(frozen=True)
class FuzzInput:
    """One generated case file: its bytes and what was done to which demo case."""

    data: bytes
    label: str

    def __repr__(self) -> str:
        shown = self.data if len(self.data) <= 1500 else self.data[:1500] + b"..."
        return f"FuzzInput({self.label!r}, {len(self.data)} bytes: {shown!r})"


@st.composite
def structured_inputs(draw, most_steps: int = 6, steps=STEPS):
    """A demo case with 0 … ``most_steps`` changes (``steps``: structural, or MILD_STEPS), as TOML."""
    base = draw(st.sampled_from(sorted(BASES)))
    doc = copy.deepcopy(BASES[base])
    done = [draw(st.sampled_from(steps))(draw, doc) for _ in range(draw(st.integers(0, most_steps)))]
    return FuzzInput(to_toml(doc).encode("utf-8"), "; ".join([base, *done]))


SPECIAL_BYTES = (b"\x00", b"\xff", b"\xfe", b"\xc3(", b"\xc0\xaf", b"\xed\xa0\x80", b"\xef\xbb\xbf", b"\r", b"\n",
                 b"[", b"]", b"{", b"}", b'"', b"'''", b'"""', b"=", b"#", b"\\", b"\t", b"\x1b[2J", b"\xe2\x80\xae",
                 b"[[interface]]\n", b"[interface]\n", b"kind = 'plate'\n", b"\n[interface\n")


def _bytes_bom(draw, data):
    return b"\xef\xbb\xbf" + data, "BOM"


def _bytes_truncate(draw, data):
    at = draw(st.integers(0, len(data)))
    return data[:at], f"cut at {at}"


def _bytes_insert(draw, data):
    at = draw(st.integers(0, len(data)))
    new = draw(st.one_of(st.binary(min_size=1, max_size=8), st.sampled_from(SPECIAL_BYTES)))
    return data[:at] + new + data[at:], f"insert {new!r} at {at}"


def _bytes_replace(draw, data):
    if not data:
        return data, "replace nothing"
    at = draw(st.integers(0, len(data) - 1))
    byte = draw(st.integers(0, 255))
    return data[:at] + bytes([byte]) + data[at + 1:], f"byte {at} = {byte:#04x}"


def _bytes_delete(draw, data):
    at = draw(st.integers(0, len(data)))
    n = draw(st.integers(1, 40))
    return data[:at] + data[at + n:], f"delete {n} at {at}"


def _bytes_line(draw, data):
    lines = data.split(b"\n")
    k = draw(st.integers(0, len(lines) - 1))
    how = draw(st.sampled_from(("duplicate", "swap", "drop")))
    if how == "duplicate":
        lines.insert(k, lines[k])
    elif how == "swap" and k + 1 < len(lines):
        lines[k], lines[k + 1] = lines[k + 1], lines[k]
    else:
        del lines[k]
    return b"\n".join(lines), f"{how} line {k}"


def _bytes_line_ends(draw, data):
    end = draw(st.sampled_from((b"\r\n", b"\r", b"\n\n")))
    return data.replace(b"\n", end), f"line ends {end!r}"


def _bytes_encoding(draw, data):
    codec = draw(st.sampled_from(("utf-16", "utf-16-le", "utf-32", "latin-1", "cp1252")))
    return data.decode("utf-8", "replace").encode(codec, "replace"), codec


def _bytes_random(draw, data):
    return draw(st.binary(max_size=300)), "random bytes"


BYTE_STEPS = (_bytes_bom, _bytes_truncate, _bytes_insert, _bytes_insert, _bytes_replace, _bytes_delete,
              _bytes_line, _bytes_line_ends, _bytes_encoding, _bytes_random)


@st.composite
def byte_inputs(draw):
    """A demo case (lightly changed or not) whose TOML text is then changed byte by byte."""
    start = draw(structured_inputs(most_steps=2))
    data, done = start.data, []
    for _ in range(draw(st.integers(1, 3))):
        data, what = draw(st.sampled_from(BYTE_STEPS))(draw, data)
        done.append(what)
    return FuzzInput(data, "; ".join([start.label, *done]))


def mild_inputs():
    """A demo case with numbers near its own, a new name or description: mostly accepted."""
    return structured_inputs(most_steps=3, steps=MILD_STEPS)


def case_inputs():
    """Every kind of generated case file (what the benchmark draws)."""
    return st.one_of(structured_inputs(), structured_inputs(), mild_inputs(), byte_inputs())


# --------------------------------------------------------------------------- running and judging


@dataclass(frozen=True)
class Outcome:
    status: int | None
    out: str
    err: str
    escaped: str = ""          # an exception that came out of main (a bug)


def check_file(path: Path) -> Outcome:
    """``clutchfe check PATH`` in this process, its standard output and error captured (the command's
    rich consoles write to whatever sys.stdout / sys.stderr are when they print)."""
    out, err = io.StringIO(), io.StringIO()
    try:
        with contextlib.redirect_stdout(out), contextlib.redirect_stderr(err):
            status = main(["check", str(path)])
    except (Exception, SystemExit) as exc:      # noqa: BLE001 - what escapes main is the finding
        return Outcome(None, out.getvalue(), err.getvalue(), f"{type(exc).__name__}: {exc}")
    return Outcome(status, out.getvalue(), err.getvalue())


def parsed(data: bytes):
    """The document a file holds, or None (not UTF-8, not TOML, nested past the parser)."""
    try:
        return tomllib.loads(data.decode("utf-8-sig"))
    except Exception:                           # noqa: BLE001 - RecursionError included
        return None


def input_keys(doc) -> set[tuple[str, ...]]:
    """The keys a file gives: ("name",), ("interface", "inner_radius"), ("[[t]] item key",) …"""
    keys: set[tuple[str, ...]] = set()
    for key, value in (doc or {}).items():
        keys.add((key,))
        items = value if isinstance(value, list) else [value]
        for item in items:
            if isinstance(item, dict):
                keys |= {(key, sub) for sub in item}
    return keys


SCHEMA_KEY_TOKEN = re.compile(r"(?<![\w.])(?:" + "|".join(map(re.escape, sorted(DOTTED_KEYS, key=len, reverse=True)))
                              + r")(?!\w)")
SUMMARY = re.compile(r"^(?:…|\.\.\.) and (\d+) more\b")
ANSI = re.compile(r"\x1b\[[0-9;?]*[A-Za-z]")
NONFINITE = re.compile(r"(?<![\w.])[-+]?(?:nan|inf(?:inity)?)(?!\w)", re.IGNORECASE)
SEPARATORS = (" =", ":", ",", ";", " (")          # what follows a key a message starts with
SGR = re.compile(r"\x1b\[[0-9;]*m")                   # rich's own styles on a terminal


def _readable(part: str) -> bool:
    """A key a terminal shows as it is: not empty, no control or format characters, no padding."""
    return bool(part) and part.isprintable() and part == part.strip()


def _forms(parts: tuple[str, ...]) -> set[str]:
    """The ways a message may write a key: as it is (when readable), each part quoted or escaped."""
    variants = []
    for part in parts:
        v = {repr(part), repr(part)[1:-1], json.dumps(part), json.dumps(part, ensure_ascii=False), toml_key(part),
             toml_escaped(part)}
        if _readable(part):
            v.add(part)
        v.discard("")
        variants.append(v)
    forms = set(variants[0])
    for v in variants[1:]:
        forms = {f"{a}.{b}" for a in forms for b in v}
    whole = ".".join(parts)
    forms |= {repr(whole), json.dumps(whole)}
    return forms | {f"[{f}]" for f in forms}


def _starts_with(problem: str, form: str) -> bool:
    """``problem`` starts with ``form`` then a separator, or with its first 20+ characters cut by "…"."""
    if problem.startswith(form):
        rest = problem[len(form):]
        return any(rest.startswith(s) for s in SEPARATORS) or not rest
    head = re.split(r"…|\.\.\.", problem, maxsplit=1)[0].rstrip("'\"")
    return len(head) >= 20 and "…" in problem[:len(head) + 3] and form.lstrip("[").startswith(head.lstrip("["))


def names_a_key(problem: str, keys: set[tuple[str, ...]], path: str) -> bool:
    """Whether one error line (the text after ``clutchfe: error: ``) names what it is about.

    It does when it holds the file's path (a problem of the whole file), or a schema key such as
    ``interface.inner_radius`` anywhere, or when it starts with a top-level key or ``[table]`` of the
    schema, or with a key the file gives, written as it is when a terminal shows it as it is, else
    quoted or escaped (an empty key, a NUL or an escape sequence written raw names nothing).
    """
    if path and path in problem:
        return True
    if SCHEMA_KEY_TOKEN.search(problem):
        return True
    if any(_starts_with(problem, s) for s in TOP_KEYS + [f"[{t}]" for t in TABLES + [SECTION_TABLE]]):
        return True
    return any(_starts_with(problem, form) for parts in keys for form in _forms(parts))


def nonfinite_numbers(text: str, user_text=()) -> list[str]:
    """NaN or infinity written as a number in ``text`` (the user's own strings left out)."""
    text = ANSI.sub("", text)
    ignore = set()
    for s in user_text:
        if isinstance(s, str) and s:
            text = text.replace(s, " ").replace(repr(s), " ")
            ignore |= {m.group().lstrip("+-").lower() for m in NONFINITE.finditer(s)}
    return [m.group() for m in NONFINITE.finditer(text) if m.group().lstrip("+-").lower() not in ignore]


CATEGORIES = ("internal", "unnamed", "nonfinite", "stray line", "silent", "control")


def judge(data: bytes, path: Path, outcome: Outcome) -> list[tuple[str, str]]:
    """Everything wrong with the answer to one file, as (category, detail); [] when it is right."""
    found = []
    text = outcome.out + outcome.err
    if outcome.escaped:
        found.append(("internal", f"exception out of main: {outcome.escaped}"))
    elif outcome.status not in (0, 2, 3):
        found.append(("internal", f"exit status {outcome.status}"))
    for word in ("Traceback", "internal error"):
        if word in text:
            line = next(l for l in text.split("\n") if word in l)
            found.append(("internal", line[:300]))
    lines = [line for line in outcome.err.split("\n") if line.strip()]
    found += [("stray line", repr(line[:200])) for line in lines if not line.startswith("clutchfe: ")]
    # a case file must not be able to put control characters (escape sequences, NUL …) on the terminal
    found += [("control", f"{ch!r} in: {line[:200]!r}") for line in (SGR.sub("", outcome.out) + outcome.err).split("\n")
              for ch in sorted(set(line)) if unicodedata.category(ch) == "Cc" and ch != "\t"][:5]
    doc = parsed(data)
    if outcome.status == 2:
        problems = [line[len(ERROR):] for line in lines if line.startswith(ERROR)]
        if not problems:
            found.append(("silent", "exit 2 without an error line"))
        keys = input_keys(doc)
        found += [("unnamed", line[:300]) for line in problems
                  if not SUMMARY.match(line) and not names_a_key(line, keys, str(path))]
    if outcome.status == 0:
        user = [str(path)] + [doc.get(k) for k in ("name", "description") if isinstance(doc, dict)]
        found += [("nonfinite", f"{n!r} in the output") for n in nonfinite_numbers(text, user)]
    return found


def check_bytes(data: bytes, folder: Path, name: str = "case.toml") -> tuple[Path, Outcome, list]:
    path = folder / name
    path.write_bytes(data)
    outcome = check_file(path)
    return path, outcome, judge(data, path, outcome)


# --------------------------------------------------------------------------- the properties

# checks take ~10 ms (a small case) to ~0.2 s (a pack of 40 faces); derandomize comes from the profile
FUZZ = dict(deadline=None, suppress_health_check=[HealthCheck.too_slow, HealthCheck.data_too_large,
                                                   HealthCheck.filter_too_much, HealthCheck.large_base_example])


@pytest.fixture(scope="module")
def fuzz_dir(tmp_path_factory):
    return tmp_path_factory.mktemp("fuzz")


def _every_answer_is_clear(inputs, examples: int, folder: Path) -> None:
    @settings(max_examples=examples, **FUZZ)
    @given(inp=inputs)
    def every_input_gets_a_clear_answer(inp):
        path, outcome, found = check_bytes(inp.data, folder)
        assert found == [], (outcome.status, outcome.err[-3000:])

    every_input_gets_a_clear_answer()


def _slices(quick: int, more: int):
    """A quick slice for the quick loop (-m "not slow"), a larger one for CI (all tests)."""
    return pytest.mark.parametrize("examples", [pytest.param(quick, id=f"{quick}"),
                                                pytest.param(more, id=f"{more}", marks=pytest.mark.slow)])


@_slices(60, 240)
def test_structurally_mutated_cases_get_a_clear_answer(examples, fuzz_dir):
    _every_answer_is_clear(structured_inputs(), examples, fuzz_dir)


@_slices(30, 80)
def test_cases_near_the_demo_cases_get_a_clear_answer(examples, fuzz_dir):
    _every_answer_is_clear(mild_inputs(), examples, fuzz_dir)


@_slices(80, 200)
def test_byte_mutated_files_get_a_clear_answer(examples, fuzz_dir):
    _every_answer_is_clear(byte_inputs(), examples, fuzz_dir)


def test_the_generators_reach_an_accepted_case_with_a_changed_value(fuzz_dir):
    # the NaN property is not vacuous: changed values are accepted too, not only refused
    def accepted(inp):
        return "set " in inp.label and check_file(_write(fuzz_dir / "probe.toml", inp.data)).status == 0

    found = find(mild_inputs(), accepted, settings=settings(max_examples=100, database=None, derandomize=True,
                                                            phases=[Phase.generate], **FUZZ))
    assert check_file(_write(fuzz_dir / "probe.toml", found.data)).status == 0


def _write(path: Path, data: bytes) -> Path:
    path.write_bytes(data)
    return path


# the judge itself: it must be able to say no


@pytest.mark.parametrize("line,keys,named", [
    ("interface.inner_radius = 80: must be less than interface.outer_radius", set(), True),
    ("kind: missing; allowed: 'cone' or 'plate'", set(), True),
    ("[wear]: needs engagements", set(), True),
    ("[colour]: unknown table; allowed tables: interface, load", {("colour",)}, True),
    ("cup.colour: unknown key; allowed in [cup]: youngs_modulus", {("cup", "colour")}, True),
    ("the cone rim section crosses itself or is empty; check cone.rim_thickness", set(), True),
    ("/tmp/x/case.toml: malformed TOML: Invalid value (at line 3, column 1)", set(), True),
    ("'a\\x00b': unknown top-level key", {("a\x00b",)}, True),
    ("a\\x00b: unknown top-level key", {("a\x00b",)}, True),
    ("a\x00b: unknown top-level key", {("a\x00b",)}, False),          # a raw NUL on the terminal
    (": unknown top-level key; allowed at top level: kind, name", {("",)}, False),
    ("'': unknown top-level key", {("",)}, True),
    ("the cone rim section crosses itself or is empty; check its dimensions", set(), False),
    ("malformed TOML: Invalid value (at line 3, column 1)", set(), False),
    ("must be a number; allowed: value > 0 N", {("load", "axial_force")}, False),
    ("interface.inner_radiusx = 3: unknown", set(), False),
    ("cone rim is too thin; check its dimensions", set(), False),
    ("name is not usable", set(), False),
    ("load.: unknown key", {("load", "")}, False),
    ("load.'': unknown key", {("load", "")}, True),
    ("x" * 25 + "…: unknown top-level key", {("x" * 300,)}, True),
])
def test_names_a_key_tells_a_named_line_from_an_unnamed_one(line, keys, named):
    assert names_a_key(line, keys, "/tmp/x/case.toml") is named


@pytest.mark.parametrize("text,user,found", [
    ("r1 = 60 mm, E = 400 MPa", (), []),
    ("axial force nan N", (), ["nan"]),
    ("peak -inf MPa, info: inference", (), ["-inf"]),
    ("│ torque │ \x1b[1mInfinity\x1b[0m │", (), ["Infinity"]),
    ("case 'nan' (plate) is valid", ("nan",), []),
    ("case 'x' (plate) is valid, r1 = NaN", ("x",), ["NaN"]),
])
def test_nonfinite_numbers_finds_nan_and_inf_written_as_numbers(text, user, found):
    assert nonfinite_numbers(text, user) == found


@pytest.mark.parametrize("base", sorted(BASES))
def test_the_writer_writes_what_the_toml_parser_reads(tmp_path, base):
    doc = copy.deepcopy(BASES[base])
    assert check_file(_write(tmp_path / "case.toml", to_toml(doc).encode())).status == 0
    doc["description"] = "a\x00b \"q\" \\ \t é \u2028 😀 [/x]"
    doc["interface"]["ü key"] = [[1.5, -0.0], {"a": {"b": True}}]
    assert tomllib.loads(to_toml(doc)) == doc           # tomllib: the standard library's TOML 1.0 reader


# --------------------------------------------------------------------------- explicit limits
# (the behaviour of clutchfe/toml_input.py and case.py: a file is refused as input, exit 2, with one
# line naming it, before it can exhaust memory, time or the parser's recursion)


def _only_problems(outcome: Outcome) -> list[str]:
    return [line[len(ERROR):] for line in outcome.err.split("\n") if line.startswith(ERROR)]


def _case_text(doc=CONE) -> bytes:
    return to_toml(doc).encode("utf-8")


def _rchar() -> int:
    """Bytes this process has read through read(2) and the like (Linux /proc/self/io)."""
    with open("/proc/self/io", encoding="ascii") as fh:
        return int(next(line for line in fh if line.startswith("rchar:")).split()[1])


def _padded(size: int) -> bytes:
    """A valid case filled up to ``size`` bytes with one long comment line."""
    text = _case_text()
    return text + b"#" + b"x" * (size - len(text) - 2) + b"\n"


@pytest.mark.parametrize("size,status", [(MiB, 0), (MiB + 1, 2)], ids=["1 MiB", "1 MiB + 1 byte"])
def test_a_case_file_over_1_mib_is_refused(tmp_path, size, status):
    data = _padded(size)
    assert len(data) == size
    path, outcome, found = check_bytes(data, tmp_path)
    assert found == []
    assert outcome.status == status, outcome.err
    if status == 2:
        assert len(_only_problems(outcome)) == 1 and str(path) in _only_problems(outcome)[0]


@pytest.mark.skipif(not os.path.exists("/proc/self/io"), reason="needs Linux /proc/self/io to count bytes read")
def test_a_large_case_file_is_refused_without_reading_it_all(tmp_path):
    path = tmp_path / "large.toml"
    path.write_bytes(_padded(8 * MiB))
    check_file(_write(tmp_path / "warm.toml", _case_text()))      # first call: lazy imports read files too
    before = _rchar()
    outcome = check_file(path)
    read = _rchar() - before
    assert outcome.status == 2, outcome.err
    assert str(path) in "".join(_only_problems(outcome))
    assert read < 2 * MiB, f"read {read} bytes of an 8 MiB file"


@pytest.mark.skipif(not hasattr(os, "mkfifo"), reason="no os.mkfifo on this platform")
def test_a_fifo_is_refused_without_reading_it(tmp_path):
    fifo = tmp_path / "case.toml"
    os.mkfifo(fifo)
    text = _case_text()

    def writer():           # if check opens the FIFO, it gets a valid case and the end of the file
        with open(fifo, "wb") as fh:    # blocks until a reader opens the FIFO
            fh.write(text)

    thread = threading.Thread(target=writer, daemon=True)
    thread.start()
    outcome = check_file(fifo)
    # release the writer if check never opened the FIFO: our own reader, which never blocks
    fd = os.open(fifo, os.O_RDONLY | os.O_NONBLOCK)
    thread.join()
    os.close(fd)
    assert outcome.status == 2, outcome.out + outcome.err
    problems = _only_problems(outcome)
    assert len(problems) == 1 and str(fifo) in problems[0], problems


@pytest.mark.parametrize("value", [Raw("[" * 5000 + "60.0" + "]" * 5000), Raw("{a = " * 3000 + "1" + "}" * 3000)],
                         ids=["array nested 5000 deep", "inline table nested 3000 deep"])
def test_values_nested_thousands_deep_are_refused(tmp_path, value):
    doc = copy.deepcopy(CONE)
    doc["interface"]["inner_radius"] = value
    path, outcome, found = check_bytes(to_toml(doc).encode(), tmp_path)
    assert found == []
    assert outcome.status == 2, outcome.err[-2000:]


def _unknown_keys(count: int) -> bytes:
    doc = copy.deepcopy(CONE)
    doc["interface"].update({f"zz_unknown_{k}": 1 for k in range(count)})
    return to_toml(doc).encode()


def test_200000_unknown_keys_give_a_short_answer(tmp_path):
    # 200 000 keys take more than 1 MiB to write, so the file may also be refused as a whole
    path, outcome, found = check_bytes(_unknown_keys(200_000), tmp_path)
    assert found == []
    assert outcome.status == 2
    problems = _only_problems(outcome)
    assert 0 < len(problems) <= 60
    if len(problems) > 1:       # per key: the first ones, then how many more
        more = SUMMARY.match(problems[-1])
        assert more, problems[-1]
        assert int(more.group(1)) + len(problems) - 1 >= 200_000
    else:
        assert str(path) in problems[0]


def test_many_unknown_keys_are_shown_in_part_with_the_count_of_the_rest(tmp_path):
    count = 1500                # a ~40 kB file: each unknown key is one problem
    path, outcome, found = check_bytes(_unknown_keys(count), tmp_path)
    assert found == []
    assert outcome.status == 2
    problems = _only_problems(outcome)
    assert len(problems) <= 60
    more = SUMMARY.match(problems[-1])
    assert more, problems[-1]
    assert len(problems) - 1 + int(more.group(1)) == count


def _without_sha(text: str) -> str:
    return re.sub(r"\b[0-9a-f]{16,64}…?", "<sha256>", text)


@pytest.mark.parametrize("base", sorted(BASES))
def test_a_utf8_bom_is_read_like_the_same_file_without(tmp_path, base):
    from clutchfe.case import load_case
    data = _case_text(BASES[base])
    plain = _write(tmp_path / "case.toml", data)
    (tmp_path / "bom").mkdir()
    bom = _write(tmp_path / "bom" / "case.toml", b"\xef\xbb\xbf" + data)
    a, b = check_file(plain), check_file(bom)
    assert a.status == 0, a.err
    assert (b.status, _without_sha(b.out), b.err) == (a.status, _without_sha(a.out), a.err)
    case_a, case_b = load_case(plain), load_case(bom)
    assert replace(case_b, input_sha256="", source="") == replace(case_a, input_sha256="", source="")


# --------------------------------------------------------------------------- found by the fuzzer
# plain regression tests of the minimal inputs the properties found (each once a bug)

def _cone_with(top: dict | None = None, **tables) -> bytes:
    """CONE (valid) with keys added at the top level and in tables."""
    doc = copy.deepcopy(CONE)
    doc.update(top or {})
    for table, keys in tables.items():
        doc.setdefault(table, {}).update(keys)
    return to_toml(doc).encode()


REGRESSIONS: list[tuple[str, bytes]] = [
    # an empty key or table name written as it is names nothing: "[]: unknown table", ": unknown …"
    ("empty table name", _cone_with({"": {}})),
    ("empty top-level key", _cone_with({"": 0.0})),
    ("empty key in a table", _cone_with(load={"": 1})),
    # a long key cut to 38 characters without "…" (shown()[1:-1] drops it): another key than the file's
    ("long top-level key", _cone_with({"x" * 300: 1})),
    ("long key in a table", _cone_with(interface={"x" * 300: 1})),
    # … and the cut can fall inside an escape: "\x1b[2J…\x1"
    ("long key of escapes", _cone_with(interface={"\x1b[2J" * 8: 1})),
    # the mesh budget: edge / face size underflows to 0, and 0.0 ** -0.27 raises ZeroDivisionError (exit 1)
    ("denormal edge element size", _cone_with(mesh={"edge_element_size": 5e-324})),
    ("denormal interface element size", _cone_with(mesh={"interface_element_size": 5e-324})),
    # bench_fuzz, 10 000 inputs: a denormal length made a nearly level polygon edge in the mesh estimate,
    # and numpy's overflow warning reached stderr
    ("denormal face overrun", _cone_with(cup={"face_overrun": 5e-324})),
]


@pytest.mark.parametrize("data", [d for _, d in REGRESSIONS], ids=[i for i, _ in REGRESSIONS])
def test_inputs_the_fuzzer_found(tmp_path, data):
    path, outcome, found = check_bytes(data, tmp_path)
    assert found == [], (outcome.status, outcome.err[-2000:])


# --------------------------------------------------------------------------- the console script

CONSOLE_INPUTS = {
    "bom": b"\xef\xbb\xbf" + _case_text(PLATE),
    "nested": _case_text({**CONE, "interface": {**CONE["interface"], "inner_radius": Raw("[" * 5000 + "]" * 5000)}}),
    "escape key": _case_text({**CONE, "\x1b[2J\x00": 1, "name": "[/x]"}),
    "not utf-8": b"kind = \"cone\"\n\xff\xfe\n",
}


def test_the_console_script_answers_odd_files_without_traceback(tmp_path):
    paths = {k: _write(tmp_path / f"{k.replace(' ', '_')}.toml", v) for k, v in CONSOLE_INPUTS.items()}
    procs = {k: subprocess.Popen([sys.executable, "-m", "clutchfe._cli", "check", str(p)], cwd=ROOT,
                                 stdout=subprocess.PIPE, stderr=subprocess.PIPE)
             for k, p in paths.items()}
    for k, proc in procs.items():
        out, err = proc.communicate()
        outcome = Outcome(proc.returncode, out.decode("utf-8", "replace"), err.decode("utf-8", "replace"))
        assert judge(CONSOLE_INPUTS[k], paths[k], outcome) == [], (k, outcome)


# --------------------------------------------------------------------------- whole runs (slow)

SMALL_CONE = {**copy.deepcopy(CONE),
              "mesh": {"interface_element_size": 2.0, "element_size": 8.0, "edge_element_size": 0.75},
              "verification": {"mesh_study": False}}
RUN_NAMES = ("fuzz", "a.b", "x+y", "A b", "0")
RUN_DESCRIPTIONS = ("[/x]", "$\\frac{$", "[bold]x", "<b>&amp;</b>", "a\nb", "\x00", "名前 😀", "$x_1$ % {0}")


@st.composite
def runnable_cases(draw):
    """A small demo case, every value near its own and the text odd: valid, quick to solve."""
    doc = copy.deepcopy(draw(st.sampled_from([SMALL_PLATE, SMALL_CONE])))
    doc["load"]["axial_force"] *= draw(st.floats(0.5, 2.0))
    doc["interface"]["friction_coefficient"] = draw(st.floats(0.1, 0.45))
    doc.setdefault("lining", {})["youngs_modulus"] = draw(st.floats(200.0, 800.0))
    doc["name"] = draw(st.sampled_from(RUN_NAMES))
    doc["description"] = draw(st.sampled_from(RUN_DESCRIPTIONS))
    doc["verification"] = {"mesh_study": False}
    return doc


def _nonfinite_in_json(text: str, user: set[str]) -> list[str]:
    bad = []
    data = json.loads(text, parse_constant=lambda c: bad.append(c))

    def walk(x):
        if isinstance(x, dict):
            for v in x.values():
                walk(v)
        elif isinstance(x, list):
            for v in x:
                walk(v)
        elif isinstance(x, float) and not math.isfinite(x):
            bad.append(repr(x))
        elif isinstance(x, str) and x not in user:
            bad.extend(nonfinite_numbers(x, user))
    walk(data)
    return bad


def _nonfinite_in_csv(path: Path, user: set[str]) -> list[str]:
    with open(path, newline="", encoding="utf-8") as fh:
        return [f"{path.name}: {cell!r}" for row in csv.reader(fh) for cell in row
                if cell not in user and nonfinite_numbers(cell, user)]


@pytest.mark.slow
@settings(max_examples=4, phases=[Phase.generate], database=None, **FUZZ)
@given(doc=runnable_cases())
def test_accepted_generated_cases_run_without_nan(doc, tmp_path_factory):
    folder = tmp_path_factory.mktemp("run")
    case = _write(folder / "case.toml", to_toml(doc).encode())
    checked = check_file(case)
    assert checked.status == 0, checked.err
    out, err = io.StringIO(), io.StringIO()
    with contextlib.redirect_stdout(out), contextlib.redirect_stderr(err):
        status = main(["run", str(case), "--out", str(folder / "out")])
    assert status in (0, 3), err.getvalue()[-3000:]
    assert "Traceback" not in out.getvalue() + err.getvalue()
    if status == 3:
        return
    user = {doc["name"], doc["description"], str(folder)}
    summary = folder / "out" / "summary.json"
    assert _nonfinite_in_json(summary.read_text(encoding="utf-8"), user) == []
    tables = sorted((folder / "out").rglob("*.csv"))
    assert tables, "no CSV output"
    assert [bad for t in tables for bad in _nonfinite_in_csv(t, user)] == []
