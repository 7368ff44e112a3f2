"""The README stays current: every case key documented, CI runs its test command, demo numbers real."""
import json
import re

import pytest

from clutchfe.schema import SCHEMA

from tests.helpers.data import ROOT


def test_readme_documents_every_case_key():
    readme = (ROOT / "README.md").read_text(encoding="utf-8")
    for table, keys in SCHEMA.items():
        for name in keys:
            full = f"{table}.{name}" if table else name
            assert f"`{full}`" in readme, full


def test_ci_runs_exactly_the_readme_test_command():
    readme = (ROOT / "README.md").read_text(encoding="utf-8")
    ci = (ROOT / ".ci" / "run").read_text(encoding="utf-8")
    blocks = re.findall(r"```bash\n(.*?)\n```", readme, flags=re.S)
    test_command = [b for b in blocks if "pytest" in b][0].strip()
    assert test_command in ci


@pytest.mark.slow
def test_readme_worked_example_matches_a_fresh_run(tmp_path, capsys):
    from clutchfe._cli import main
    readme = (ROOT / "README.md").read_text(encoding="utf-8")
    assert main(["run", str(ROOT / "cases" / "cone_capstan.toml"), "--out", str(tmp_path / "r")]) == 0
    summary = json.loads((tmp_path / "r" / "summary.json").read_text())
    assert f"{summary['torque_fe_Nm']:.2f}" in readme
    assert f"{summary['capacity_position']:.3f}" in readme
    assert "licensed engineer" in readme
