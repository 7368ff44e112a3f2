"""Sources a reviewer can read: the package and the tests cite no file the project does not ship,
and every row of the verification table names a published reference (no project file but docs/).

The verification sources are read from the suite's code (every Check, relative() and absolute()
call in clutchfe/verification/), so the check needs no solve; two cheap cases are also run and
their rows must carry exactly the sources read from the code (the reader reads what runs)."""
import ast
import os
import re
from pathlib import Path

import pytest

import clutchfe
from clutchfe.verification.contact import hertz_sphere_on_flat
from clutchfe.verification.solids import lame_cylinder

from tests.helpers.data import ROOT

PACKAGE = Path(clutchfe.__file__).resolve().parent
VERIFICATION = PACKAGE / "verification"
# written in two parts so that this file does not match itself
UNSHIPPED = ("design" + ".md", ".." + "/shared")
# a file named by a source: a path or a file name with a file ending, or one of the project's folders
FILE_LIKE = re.compile(r"[\w./-]*\.(?:py|md|toml|json|csv|txt|cfg|ini|ya?ml|vtu|png|html)\b"
                       r"|\b(?:fem|geometry|clutchfe|tests|cases|examples|results)/")
DOCS_FILE = re.compile(r"^docs/[\w-]+\.md$")
# a published reference names its year, or is one of the textbooks cited by title without one
YEAR = re.compile(r"\b(?:1[89]|20)\d\d\b")
TEXTBOOKS = ("Shigley", "Juvinall", "Zienkiewicz")


def _text_files(*roots: Path):
    for root in roots:
        if root.is_file():
            yield root
            continue
        for folder, dirs, names in os.walk(root, followlinks=True):      # clutchfe/fem, clutchfe/geometry
            dirs[:] = [d for d in dirs if d != "__pycache__" and not d.startswith(".")]
            for name in names:
                if name.endswith((".py", ".md", ".toml", ".txt", ".cfg")):
                    yield Path(folder) / name


def test_nothing_cites_an_unshipped_file():
    roots = [PACKAGE, ROOT / "tests", ROOT / "examples", ROOT / "docs", ROOT / "README.md", ROOT / "DEVELOPERS.md",
             ROOT / "pyproject.toml"]
    files = list(_text_files(*[r for r in roots if r.exists()]))
    assert any(p.name == "condense.py" for p in files)                 # the walk went through the linked fem/
    hits = [f"{p.relative_to(ROOT) if p.is_relative_to(ROOT) else p}:{n}: {line.strip()}"
            for p in files for n, line in enumerate(p.read_text(encoding="utf-8").splitlines(), 1)
            if any(bad in line for bad in UNSHIPPED)]
    assert hits == []


def test_the_project_notes_cited_are_shipped():
    # every docs/*.md named anywhere in the package or the tests exists
    named = set()
    for p in _text_files(PACKAGE, ROOT / "tests"):
        named |= set(re.findall(r"docs/[\w-]+\.md", p.read_text(encoding="utf-8")))
    assert {"docs/physics.md", "docs/solver-notes.md"} <= named
    assert sorted(n for n in named if not (ROOT / n).is_file()) == []


def _constants(tree: ast.Module) -> dict[str, ast.expr]:
    out = {}
    for node in tree.body:
        if isinstance(node, ast.Assign):
            for target in node.targets:
                if isinstance(target, ast.Name):
                    out[target.id] = node.value
    return out


def _text(node: ast.expr, names: dict[str, ast.expr]) -> str:
    """The string an expression builds (f-string fields as "{}")."""
    if isinstance(node, ast.Constant) and isinstance(node.value, str):
        return node.value
    if isinstance(node, ast.Name) and node.id in names:
        return _text(names[node.id], names)
    if isinstance(node, ast.BinOp) and isinstance(node.op, ast.Add):
        return _text(node.left, names) + _text(node.right, names)
    if isinstance(node, ast.JoinedStr):
        return "".join(v.value if isinstance(v, ast.Constant) else "{}" for v in node.values)
    raise ValueError(f"cannot read the source expression {ast.dump(node)}")


def verification_sources(path: Path) -> set[str]:
    """The source argument of every Check / relative / absolute call in one suite module, and the
    "source" entry of a dict written out there (the mesh study's method)."""
    tree = ast.parse(path.read_text(encoding="utf-8"))
    names = _constants(tree)
    out = set()
    for node in ast.walk(tree):
        if isinstance(node, ast.Call) and isinstance(node.func, ast.Name) and \
                node.func.id in ("Check", "relative", "absolute"):
            source = next((k.value for k in node.keywords if k.arg == "source"), None)
            source = source if source is not None else node.args[-1]
            out.add(_text(source, names))
        if isinstance(node, ast.Dict):
            out |= {_text(v, names) for k, v in zip(node.keys, node.values)
                    if isinstance(k, ast.Constant) and k.value == "source"}
    return out


# table.py's only Check is the row of a case that raised: it compared nothing, so it cites nothing;
# checks.py defines the row and store.py reads stored rows back: neither writes a source
SUITE_MODULES = sorted(p for p in VERIFICATION.glob("*.py") if p.name not in ("table.py", "checks.py", "store.py"))


def test_the_reader_reads_what_the_cases_write():
    for case, module in ((lame_cylinder, "solids.py"), (hertz_sphere_on_flat, "contact.py")):
        written = {r.source for r in case()}
        read = verification_sources(VERIFICATION / module)
        assert written <= read, (module, written - read)


@pytest.mark.parametrize("module", SUITE_MODULES, ids=[p.name for p in SUITE_MODULES])
def test_every_verification_source_names_a_published_reference(module):
    sources = verification_sources(module)
    for source in sources:
        assert source.strip() and source.strip() != "—", (module.name, source)
        files = [f for f in FILE_LIKE.findall(source) if not DOCS_FILE.match(f)]
        assert files == [], (module.name, source)
        assert YEAR.search(source) or any(book in source for book in TEXTBOOKS), (module.name, source)


def test_the_suite_modules_all_carry_rows():
    # every module that defines cases was read (a renamed call would otherwise pass unread)
    with_rows = {p.name for p in SUITE_MODULES if verification_sources(p)}
    assert {"solids.py", "contact.py", "limits.py", "tilted.py", "wear_limit.py", "mesh_study.py"} <= with_rows


def test_the_checks_fail_on_bad_sources():
    # the same rules reject what they must: a project file, a placeholder, no reference at all
    for bad in ("independent solve (fem/solid3d.py)", "see " + UNSHIPPED[0] + " §5", "—", "common sense"):
        files = [f for f in FILE_LIKE.findall(bad) if not DOCS_FILE.match(f)]
        assert files or bad == "—" or not (YEAR.search(bad) or any(b in bad for b in TEXTBOOKS)), bad
    assert DOCS_FILE.match("docs/physics.md") and not FILE_LIKE.fullmatch("Johnson 1985, §4.2")
