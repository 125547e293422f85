"""Publishing an output folder, seen from the command line: whole or not at all, never mixed.

Each test runs ``shoreline`` (in-process through ``shoreline.cli.main``, or as a process for
signals and pipes) and checks what a user sees: the files on disk, the exit code and the one
line on standard error.
"""

from __future__ import annotations

import errno
import fcntl
import json
import os
import shutil
import signal
import subprocess
import sys
from pathlib import Path

import geopandas as gpd
import pytest
import shapely

import shoreline.export
import shoreline.folders
import shoreline.run
from shoreline.cli import main
from shoreline.folders import MARKER

COAST = shapely.LineString([(500_000.0, 4_000_000.0), (503_000.0, 4_000_000.0)])
STUDY = '[coast]\nfile = "coast.gpkg"\nsea = "right"\n\n[waves]\nhs_m = 1.2\ntp_s = 8.0\n' + (
    "dir_deg = 200.0\n"
)
STORM = (
    '\n[[scenario]]\nname = "storm"\nhs_m = 3.0\ntp_s = 10.0\ndir_deg = 220.0\nduration_h = 24.0\n'
)
ROOT = Path(__file__).resolve().parents[1]


def make_study(folder: Path, name: str = "study.toml", extra: str = "") -> Path:
    folder.mkdir(parents=True, exist_ok=True)
    if not (folder / "coast.gpkg").exists():
        gpd.GeoDataFrame(geometry=[COAST], crs="EPSG:32631").to_file(folder / "coast.gpkg")
    path = folder / name
    path.write_text(STUDY + extra, encoding="utf-8")
    return path


def run(*args) -> int:
    return main(["run", *map(str, args), "--no-figures", "--quiet"])


def snapshot(folder: Path) -> dict[str, bytes]:
    return {
        str(p.relative_to(folder)): p.read_bytes() for p in sorted(folder.rglob("*")) if p.is_file()
    }


def one_line(capsys) -> str:
    err = capsys.readouterr().err.strip()
    assert len(err.splitlines()) == 1, err
    assert "Traceback" not in err
    return err


def siblings(out: Path) -> list[str]:
    """What lies beside the output folder apart from the study's own files."""
    return sorted(p.name for p in out.parent.iterdir() if p.name.startswith(out.name + "."))


@pytest.fixture
def earlier(tmp_path, capsys):
    """A study folder with an earlier run (reference and one scenario) in ``out``."""
    study = make_study(tmp_path, extra=STORM)
    out = tmp_path / "out"
    assert run(study, "--out", out) == 0
    capsys.readouterr()
    return study, out, snapshot(out)


# --- the output folder holds exactly the last command's outputs -------------------------------


def test_a_second_study_leaves_none_of_the_first_studys_outputs(earlier, capsys):
    study, out, _ = earlier
    assert (out / "storm" / "summary.json").exists()
    other = make_study(study.parent, "other.toml")  # no scenarios
    assert run(other, "--out", out) == 0
    assert sorted(p.name for p in out.iterdir()) == [MARKER, "reference", "run.json"]
    assert "command: shoreline run other.toml" in (out / MARKER).read_text()
    assert siblings(out) == []  # no partial folder, no old tree, no lock file left


def test_transects_replace_a_run_in_the_same_folder(earlier, capsys):
    study, out, _ = earlier
    assert main(["transects", str(study), "--out", str(out), "--quiet"]) == 0
    assert sorted(p.name for p in out.iterdir()) == [
        MARKER,
        "transects.geojson",
        "transects.gpkg",
    ]


@pytest.mark.parametrize("content", ["notes.txt", "folder"])
def test_a_folder_not_written_by_shoreline_is_refused_and_kept(tmp_path, capsys, content):
    study = make_study(tmp_path)
    out = tmp_path / "mine"
    out.mkdir()
    if content == "folder":
        (out / "sub").mkdir()
        (out / "sub" / "data.csv").write_text("a,b\n")
    else:
        (out / "notes.txt").write_text("my own notes\n")
    before = snapshot(out)
    assert run(study, "--out", out) == 2
    err = one_line(capsys)
    assert str(out) in err and "empty or new folder" in err
    assert snapshot(out) == before
    assert main(["transects", str(study), "--out", str(out)]) == 2
    assert snapshot(out) == before


def test_an_empty_existing_folder_is_fine_and_a_file_is_refused(tmp_path, capsys):
    study = make_study(tmp_path)
    empty = tmp_path / "empty"
    empty.mkdir()
    assert run(study, "--out", empty) == 0
    assert (empty / "run.json").exists() and (empty / MARKER).exists()
    a_file = tmp_path / "a-file"
    a_file.write_text("x")
    capsys.readouterr()
    assert run(study, "--out", a_file) == 2
    assert "not a folder" in one_line(capsys) and a_file.read_text() == "x"


def test_an_output_folder_holding_the_study_is_refused(tmp_path, capsys):
    out = tmp_path / "out"
    study = make_study(out / "inputs")
    (out / MARKER).write_text("shoreline output folder\n")
    before = snapshot(out)
    assert run(study, "--out", out) == 2
    err = one_line(capsys)
    assert str(out) in err and "study.toml" in err
    assert snapshot(out) == before


# --- a lock: two runs into one folder do not interleave ---------------------------------------


def test_a_second_run_refuses_while_another_writes_the_folder(earlier, capsys):
    study, out, before = earlier
    lock_path = out.parent / "out.lock"
    fd = os.open(lock_path, os.O_RDWR | os.O_CREAT)
    try:
        fcntl.flock(fd, fcntl.LOCK_EX | fcntl.LOCK_NB)
        os.write(fd, b"4242\n")
        assert run(study, "--out", out) == 2
        err = one_line(capsys)
        assert "being written by another run (pid 4242)" in err and "--out" in err
        assert str(out) in err
        assert main(["report", str(out)]) == 2
        assert "another run" in one_line(capsys)
    finally:
        os.close(fd)
    assert snapshot(out) == before
    assert run(study, "--out", out) == 0  # the other run has ended: fine again
    assert not lock_path.exists()


# --- write failures: one line, earlier output intact, no partial folder ---------------------


@pytest.mark.parametrize(
    ("code", "reason"), [(errno.ENOSPC, "No space left on device"), (errno.EACCES, "denied")]
)
def test_a_write_failure_part_way_keeps_the_earlier_output(
    earlier, capsys, monkeypatch, code, reason
):
    study, out, before = earlier
    real = shoreline.export.write_json

    def fail_on_run_json(path, data):
        if path.name == "run.json":  # every scenario folder is written by then
            raise OSError(code, os.strerror(code), str(path))
        real(path, data)

    monkeypatch.setattr(shoreline.export, "write_json", fail_on_run_json)
    assert run(study, "--out", out) == 2
    err = one_line(capsys)
    assert str(out) in err and reason in err and "earlier output" in err and "unchanged" in err
    assert ".partial-" not in err
    assert snapshot(out) == before
    assert siblings(out) == []


def test_a_failure_with_no_earlier_output_creates_nothing(tmp_path, capsys, monkeypatch):
    study = make_study(tmp_path)

    def full(*_args, **_kwargs):
        raise OSError(errno.ENOSPC, os.strerror(errno.ENOSPC))

    monkeypatch.setattr(shoreline.export, "write_geojson", full)
    out = tmp_path / "out"
    assert run(study, "--out", out) == 2
    assert "nothing was written" in one_line(capsys)
    assert not out.exists() and siblings(out) == []


def test_no_room_beside_the_output_folder_keeps_it(earlier, capsys, monkeypatch):
    study, out, before = earlier

    def denied(*_args):
        raise PermissionError(errno.EACCES, os.strerror(errno.EACCES))

    monkeypatch.setattr(shoreline.folders, "_write_marker", denied)
    assert run(study, "--out", out) == 2
    err = one_line(capsys)
    assert str(out.parent) in err and "Permission denied" in err and "unchanged" in err
    assert snapshot(out) == before and siblings(out) == []


def test_a_read_only_folder_for_the_lock_is_refused_before_any_work(earlier, capsys, monkeypatch):
    study, out, before = earlier
    real_open = os.open

    def read_only(path, *args, **kwargs):
        if str(path).endswith(".lock"):
            raise OSError(errno.EROFS, os.strerror(errno.EROFS), str(path))
        return real_open(path, *args, **kwargs)

    monkeypatch.setattr(shoreline.folders.os, "open", read_only)
    monkeypatch.setattr(shoreline.run, "run_study", lambda *a, **k: pytest.fail("computed"))
    assert run(study, "--out", out) == 2
    err = one_line(capsys)
    assert str(out) in err and "Read-only file system" in err and "writable" in err
    assert snapshot(out) == before


def test_an_old_tree_that_cannot_be_removed_is_a_warning_not_a_failure(
    earlier, capsys, monkeypatch
):
    study, out, _ = earlier
    real_remove = shoreline.folders._remove_ours

    def stubborn(folder):
        if (folder / "storm").exists():  # the old tree: only the earlier run had a scenario
            raise PermissionError(errno.EACCES, os.strerror(errno.EACCES), str(folder))
        real_remove(folder)

    monkeypatch.setattr(shoreline.folders, "_remove_ours", stubborn)
    other = make_study(study.parent, "other.toml")
    assert run(other, "--out", out) == 0
    err = one_line(capsys)
    assert err.startswith("shoreline: warning: could not remove") and "Permission denied" in err
    assert sorted(p.name for p in out.iterdir()) == [MARKER, "reference", "run.json"]
    assert len(siblings(out)) == 1  # the old tree, marked as ours
    monkeypatch.setattr(shoreline.folders, "_remove_ours", real_remove)
    assert run(other, "--out", out) == 0
    assert siblings(out) == []  # the next run removed it


def test_an_output_folder_under_a_file_is_one_line(tmp_path, capsys):
    study = make_study(tmp_path)
    assert run(study, "--out", tmp_path / "study.toml" / "out") == 2
    assert "study.toml is a file, not a folder" in one_line(capsys)


def test_a_failed_swap_keeps_the_earlier_output(earlier, capsys, monkeypatch):
    study, out, before = earlier

    def refuse(a, b):
        raise OSError(errno.EPERM, os.strerror(errno.EPERM), str(b))

    monkeypatch.setattr(shoreline.folders, "_exchange", refuse)
    assert run(study, "--out", out) == 2
    err = one_line(capsys)
    assert "cannot move the new output into place" in err and "unchanged" in err
    assert snapshot(out) == before and siblings(out) == []


def test_two_renames_where_no_atomic_exchange_exists(earlier, capsys, monkeypatch):
    study, out, _ = earlier
    monkeypatch.setattr(shoreline.folders, "_renameat2", lambda: None)
    other = make_study(study.parent, "other.toml")
    assert run(other, "--out", out) == 0
    assert not (out / "storm").exists() and siblings(out) == []


def test_when_the_second_rename_fails_the_earlier_output_is_put_back(earlier, capsys, monkeypatch):
    study, out, before = earlier
    monkeypatch.setattr(shoreline.folders, "_renameat2", lambda: None)
    real_rename = os.rename

    def rename(src, dst):
        if ".partial-" in str(src):  # the new folder cannot be moved in
            raise OSError(errno.EIO, os.strerror(errno.EIO), str(dst))
        real_rename(src, dst)

    monkeypatch.setattr(shoreline.folders.os, "rename", rename)
    assert run(study, "--out", out) == 2
    err = one_line(capsys)
    assert "Input/output error" in err and "unchanged" in err
    assert snapshot(out) == before and siblings(out) == []


# --- leftovers of a run killed outright --------------------------------------------------------


def test_leftovers_of_a_killed_run_are_removed_and_foreign_folders_kept(earlier, capsys):
    study, out, _ = earlier
    ours = [out.parent / "out.partial-0123abcd", out.parent / "out.old-89abcdef"]
    for folder in ours:
        (folder / "reference").mkdir(parents=True)
        (folder / "reference" / "transects.csv").write_text("half")
        (folder / MARKER).write_text("shoreline output folder\n")
    (out.parent / "out.partial-4567cdef").mkdir()  # killed before its marker was written
    foreign = [out.parent / "out.partial-00000000", out.parent / "out.old-notours"]
    for folder in foreign:
        folder.mkdir()
        (folder / "keep.txt").write_text("someone's")
    assert run(study, "--out", out) == 0
    assert siblings(out) == sorted(p.name for p in foreign)


def test_an_earlier_output_moved_aside_by_a_killed_swap_is_put_back(earlier, capsys, monkeypatch):
    study, out, before = earlier
    out.rename(out.parent / "out.old-0123abcd")  # killed between the two renames

    def full(*_args):
        raise OSError(errno.ENOSPC, os.strerror(errno.ENOSPC))

    monkeypatch.setattr(shoreline.export, "write_json", full)
    assert run(study, "--out", out) == 2
    assert "unchanged" in one_line(capsys)
    assert snapshot(out) == before and siblings(out) == []


# --- signals: the partial folder is removed; a swap under way is finished first -------------

SLOW = """
import sys, time
import shoreline.export, shoreline.folders
where = sys.argv.pop(1)
def announce_and_wait(seconds):
    print("WAITING", file=sys.stderr, flush=True)
    time.sleep(seconds)
if where == "build":
    real = shoreline.export.write_json
    def slow(path, data):
        if path.name == "run.json":
            announce_and_wait(30)
        real(path, data)
    shoreline.export.write_json = slow
else:
    real_swap = shoreline.folders._swap
    def slow_swap(new, target):
        announce_and_wait(1.5)
        return real_swap(new, target)
    shoreline.folders._swap = slow_swap
from shoreline.cli import main
sys.exit(main(sys.argv[1:]))
"""


def start(where: str, *args) -> subprocess.Popen:
    env = os.environ | {"PYTHONPATH": str(ROOT)}
    return subprocess.Popen(
        [sys.executable, "-c", SLOW, where, "run", *map(str, args), "--no-figures", "--quiet"],
        stdout=subprocess.DEVNULL,
        stderr=subprocess.PIPE,
        text=True,
        env=env,
    )


def signal_when_waiting(proc: subprocess.Popen, signum: int) -> tuple[int, str]:
    assert proc.stderr.readline().strip() == "WAITING"
    proc.send_signal(signum)
    err = proc.stderr.read()
    return proc.wait(timeout=30), err


@pytest.mark.parametrize("signum", [signal.SIGINT, signal.SIGTERM, signal.SIGHUP])
def test_a_signal_while_writing_leaves_the_earlier_output_and_no_partial(earlier, signum):
    study, out, before = earlier
    code, err = signal_when_waiting(start("build", study, "--out", out), signum)
    assert code == 128 + signum
    assert len(err.strip().splitlines()) == 1 and "Traceback" not in err, err
    assert signal.Signals(signum).name in err and "no new output was moved into place" in err
    assert snapshot(out) == before and siblings(out) == []


def test_a_signal_during_the_swap_is_delivered_after_it(earlier):
    study, out, _ = earlier
    other = make_study(study.parent, "other.toml")
    code, err = signal_when_waiting(start("swap", other, "--out", out), signal.SIGTERM)
    assert code == 143
    assert len(err.strip().splitlines()) == 1 and "after the new output was moved" in err, err
    assert sorted(p.name for p in out.iterdir()) == [MARKER, "reference", "run.json"]
    assert json.loads((out / "run.json").read_text())["study_file"] == "other.toml"
    assert siblings(out) == []


def test_a_killed_run_leaves_the_earlier_output_and_the_next_run_cleans_up(earlier, capsys):
    study, out, before = earlier
    proc = start("build", study, "--out", out)
    assert proc.stderr.readline().strip() == "WAITING"
    proc.kill()
    proc.wait(timeout=30)
    assert snapshot(out) == before
    assert any(".partial-" in name for name in siblings(out))
    assert run(study, "--out", out) == 0
    assert siblings(out) == []


def test_a_reader_that_goes_away_is_no_error(tmp_path):
    study = make_study(tmp_path)
    out = tmp_path / "out"
    proc = subprocess.Popen(
        [
            sys.executable,
            "-m",
            "shoreline.cli",
            "run",
            str(study),
            "--out",
            str(out),
            "--no-figures",
        ],
        stdout=subprocess.PIPE,
        stderr=subprocess.PIPE,
        env=os.environ | {"PYTHONPATH": str(ROOT)},
        text=True,
    )
    proc.stdout.close()  # like `| head -0`: nobody reads the summary
    err = proc.stderr.read()
    assert proc.wait(timeout=60) == 0, err
    assert err == ""
    assert (out / "run.json").exists() and (out / "reference" / "transects.csv").exists()


# --- the records carry no paths of this machine ------------------------------------------------


def test_records_hold_paths_relative_to_the_study(tmp_path, capsys):
    first = tmp_path / "here" / "study"
    study = make_study(first)
    assert run(study, "--out", first / "results") == 0
    text = (first / "results" / "run.json").read_text()
    record = json.loads(text)
    assert str(tmp_path) not in text
    assert record["study_file"] == "study.toml"
    assert set(record["inputs"]) == {"study.toml", "coast.gpkg"}
    assert record["command"] == [
        "shoreline",
        "run",
        "study.toml",
        "--out",
        "results",
        "--no-figures",
    ]
    # the same study moved elsewhere keeps its record
    moved = tmp_path / "elsewhere" / "copy"
    shutil.copytree(first, moved)
    assert run(moved / "study.toml", "--out", moved / "results") == 0
    again = json.loads((moved / "results" / "run.json").read_text())
    assert again["inputs"] == record["inputs"] and again["command"] == record["command"]
