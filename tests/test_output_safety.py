"""Results never destroy anything clutchfe did not write (data-loss defects found by a user trial).

Every case below once deleted or moved user files: an existing folder given as --out, a file
given as --out, the current folder, and case or study names that are paths.
"""
import json
import os
import subprocess
import sys

import pytest

from clutchfe.case import case_from_dict
from clutchfe._cli import main
from clutchfe.errors import CaseError, OutputFolderError
from clutchfe.names import label_problem, safe_label
from clutchfe.output.folders import MARKER, atomic_folder, check_output_folder, folder_lock

from tests.helpers.data import CONE, PLATE, write_toml


def _user_folder(root):
    """A folder of somebody's work, as the trial had it."""
    folder = root / "thatfolder"
    (folder / "sub").mkdir(parents=True)
    (folder / "thesis.txt").write_text("three years of work", encoding="utf-8")
    (folder / "sub" / "data.csv").write_text("1,2,3\n", encoding="utf-8")
    return folder


def _snapshot(root):
    return sorted((str(p.relative_to(root)), p.read_bytes() if p.is_file() else None)
                  for p in root.rglob("*") if not p.name.endswith(".lock"))


@pytest.mark.parametrize("command", ["mesh", "run"])
def test_existing_user_folder_is_refused_and_kept(tmp_path, capsys, command):
    folder = _user_folder(tmp_path)
    case = write_toml(tmp_path / "c.toml", PLATE)
    before = _snapshot(tmp_path)
    assert main([command, str(case), "--out", str(folder)]) == 2
    assert _snapshot(tmp_path) == before
    err = capsys.readouterr().err
    assert "thesis.txt" in err and "did not write" in err


def test_a_file_given_as_out_is_refused_and_not_moved(tmp_path, capsys):
    target = tmp_path / "somefile"
    target.write_text("keep me", encoding="utf-8")
    case = write_toml(tmp_path / "c.toml", PLATE)
    assert main(["mesh", str(case), "--out", str(target)]) == 2
    assert target.read_text(encoding="utf-8") == "keep me"
    assert sorted(p.name for p in tmp_path.iterdir()) == ["c.toml", "somefile"]
    assert "is a file" in capsys.readouterr().err


@pytest.mark.parametrize("out", [".", ".."])
def test_the_current_folder_or_its_parent_is_refused(tmp_path, capsys, monkeypatch, out):
    work = tmp_path / "work"
    work.mkdir()
    case = write_toml(work / "c.toml", PLATE)
    monkeypatch.chdir(work)
    assert main(["mesh", str(case), "--out", out]) == 2
    assert sorted(p.name for p in tmp_path.rglob("*")) == ["c.toml", "work"]     # no scratch left
    assert "current folder" in capsys.readouterr().err


@pytest.mark.parametrize("name", ["/abs/victim", "../../victim", ".", "..", "a/b/c", "x\u0000y", "n" * 300,
                                  "[/x]", "$\\frac{$", " lead", "trail ", "", ".hidden", "a\\b"])
def test_a_case_name_cannot_be_a_path(tmp_path, monkeypatch, capsys, name):
    work = tmp_path / "work"
    (work / "results" / "other_case").mkdir(parents=True)
    (work / "results" / "other_case" / "summary.json").write_text("{}", encoding="utf-8")
    victim = tmp_path / "victim"
    victim.mkdir()
    (victim / "precious.txt").write_text("x", encoding="utf-8")
    case = write_toml(work / "c.toml", {**PLATE, "name": name})
    monkeypatch.chdir(work)
    before = _snapshot(tmp_path)
    assert main(["mesh", str(case)]) == 2
    assert _snapshot(tmp_path) == before
    err = capsys.readouterr().err
    assert "name = " in err and "results-folder name" in err


def test_plain_names_are_accepted_and_defaults_from_file_names_are_made_safe():
    for name in ("capstan_cone", "Kupplung-3.5 bar", "pack+8", "A1"):
        assert label_problem("name", name) is None
        assert case_from_dict({**CONE, "name": name}).name == name
    assert safe_label("my [odd] case$") == "my_odd_case"
    assert safe_label("...") == "case"
    with pytest.raises(CaseError) as exc:
        case_from_dict({**CONE, "name": "../up"})
    assert any(p.startswith("name = '../up'") for p in exc.value.problems)


def test_own_results_folder_is_replaced_but_not_when_a_user_added_a_file(tmp_path, capsys):
    case = write_toml(tmp_path / "c.toml", PLATE)
    folder = tmp_path / "res"
    assert main(["mesh", str(case), "--out", str(folder)]) == 0
    marker = json.loads((folder / MARKER).read_text(encoding="utf-8"))
    assert marker["written_by"] == "clutchfe" and "mesh.vtu" in marker["entries"]
    assert main(["mesh", str(case), "--out", str(folder)]) == 0          # its own folder: replaced
    (folder / "my_notes.txt").write_text("do not lose", encoding="utf-8")
    capsys.readouterr()
    assert main(["mesh", str(case), "--out", str(folder)]) == 2
    assert (folder / "my_notes.txt").read_text(encoding="utf-8") == "do not lose"
    assert "my_notes.txt" in capsys.readouterr().err


def test_an_empty_folder_may_be_used(tmp_path):
    folder = tmp_path / "empty"
    folder.mkdir()
    check_output_folder(folder)
    with atomic_folder(folder) as tmp:
        (tmp / "a.txt").write_text("a", encoding="utf-8")
    assert (folder / "a.txt").exists() and (folder / MARKER).exists()


def test_a_symbolic_link_is_refused(tmp_path):
    real = tmp_path / "real"
    real.mkdir()
    (tmp_path / "link").symlink_to(real)
    with pytest.raises(OutputFolderError, match="symbolic link"):
        check_output_folder(tmp_path / "link")


def test_a_second_writer_is_refused_while_the_first_holds_the_folder(tmp_path):
    folder = tmp_path / "res"
    with folder_lock(folder):
        with pytest.raises(OutputFolderError, match="another clutchfe run"):
            with atomic_folder(folder):
                pass
    with atomic_folder(folder) as tmp:      # free again once the first is done
        (tmp / "x").write_text("x", encoding="utf-8")
    assert (folder / "x").exists()


def test_scratch_of_a_killed_writer_is_cleaned_by_the_next_run(tmp_path):
    # a child process opens a scratch folder and is killed with SIGKILL before it finishes
    folder = tmp_path / "res"
    code = ("import os, signal, sys\n"
            "from clutchfe.output.folders import atomic_folder\n"
            f"with atomic_folder({str(folder)!r}) as tmp:\n"
            "    (tmp / 'half.txt').write_text('half')\n"
            "    os.kill(os.getpid(), signal.SIGKILL)\n")
    proc = subprocess.run([sys.executable, "-c", code], cwd=tmp_path)
    assert proc.returncode == -9
    stale = [p for p in tmp_path.iterdir() if ".writing-" in p.name]
    assert len(stale) == 1 and not folder.exists()          # nothing half-written in place
    with atomic_folder(folder) as tmp:
        (tmp / "whole.txt").write_text("whole", encoding="utf-8")
    assert not [p for p in tmp_path.iterdir() if ".writing-" in p.name or ".old-" in p.name]
    assert (folder / "whole.txt").exists()


def test_a_live_writers_scratch_is_left_alone(tmp_path):
    folder = tmp_path / "res"
    live = tmp_path / f".res.writing-{os.getppid()}-abc"       # the parent process is alive
    live.mkdir()
    with atomic_folder(folder):
        pass
    assert live.exists()


def test_study_names_and_folders_are_checked_too(tmp_path, capsys):
    from clutchfe.study import load_study

    write_toml(tmp_path / "base.toml", PLATE)
    study = {"name": "../../victim", "base_case": "base.toml",
             "vary": [{"key": "load.axial_force", "values": [3000.0, 4000.0]}]}
    path = write_toml(tmp_path / "s.study.toml", study)
    with pytest.raises(CaseError) as exc:
        load_study(path)
    assert any(p.startswith("name = '../../victim'") for p in exc.value.problems)
    study["name"] = "ok_study"
    path = write_toml(tmp_path / "s.study.toml", study)
    folder = _user_folder(tmp_path)
    before = _snapshot(folder)
    assert main(["study", str(path), "--workers", "1", "--out", str(folder)]) == 2
    assert _snapshot(folder) == before
