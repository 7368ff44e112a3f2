"""What the key tests share: the problems of a refused case, the command line's answer to a case file, a value
just outside a key's range, and the drawn cone demo's tables."""
import tomllib

import pytest

from clutchfe._cli import main
from clutchfe.case import CaseError, case_from_dict

from tests.helpers.data import ROOT, write_toml


def problems_of(data: dict) -> list[str]:
    """The problem lines of a case that must be refused."""
    with pytest.raises(CaseError) as exc:
        case_from_dict(data)
    return exc.value.problems


def check_answer(tmp_path, capsys, data) -> tuple[int, str]:
    """(exit status, stderr) of `clutchfe check` on the case written to a file."""
    path = write_toml(tmp_path / "case.toml", data)
    code = main(["check", str(path)])
    return code, capsys.readouterr().err


def outside(spec):
    """A value just outside the key's range (below its lowest, else above its highest)."""
    if spec.low is not None:
        return spec.low - (1 if spec.kind is int else max(abs(spec.low) * 0.5, 1e-3))
    return spec.high * 2 + 1


def drawn_cone() -> dict:
    """The drawn cone demo's tables, its drawing named by absolute path."""
    cases = ROOT / "cases"
    data = tomllib.loads((cases / "cone_cup_drawn.toml").read_text(encoding="utf-8"))
    data["section_file"]["path"] = str(cases / data["section_file"]["path"])
    return data
