"""Two runs into one output folder take turns: both succeed, and the folder always holds one
complete set (its record lists exactly the files there, each with its hash).

The rounds run in two processes of the ``cvfit`` command line (``cvfit.cli.main``, the
console script's entry point), started together and meeting before each round, so that
both begin each round at once; a fresh process per run would spend most of the time
importing.
"""

from __future__ import annotations

import hashlib
import json
import subprocess
import sys
from pathlib import Path

import pytest
from seriesfactory import write_small_series

import cvfit.report.atomic as atomic
from cvfit.cli import main
from cvfit.report.ownership import MARKER_NAME

ROUNDS = 20

#: One side of the rounds: wait for the other side, run, wait again; side "a" then checks
#: that the folder holds one complete set. Prints one line per round.
DRIVER = r"""
import contextlib, hashlib, io, json, sys, time
from pathlib import Path
from cvfit.cli import main

manifest, out, me, rounds, sync = sys.argv[1:]
out, rounds, sync = Path(out), int(rounds), Path(sync)
other = "b" if me == "a" else "a"

def meet(tag):
    (sync / f"{tag}-{me}").touch()
    deadline = time.monotonic() + 120
    while not (sync / f"{tag}-{other}").exists():
        if time.monotonic() > deadline:
            raise SystemExit(f"the other side did not come to {tag}")
        time.sleep(0.002)

def complete(out):
    record = json.loads((out / ".cvfit-set.json").read_text(encoding="utf-8"))["files"]
    there = sorted(p.name for p in out.iterdir() if p.name != ".cvfit-set.json")
    if there != sorted(record):
        return f"holds {there}, its record lists {sorted(record)}"
    for name, digest in record.items():
        if hashlib.sha256((out / name).read_bytes()).hexdigest() != digest:
            return f"{name} differs from its record"
    beside = sorted(p.name for p in out.parent.iterdir() if p.name != out.name)
    return f"left beside it: {beside}" if beside else "complete"

for k in range(rounds):
    meet(f"start{k}")
    with contextlib.redirect_stdout(io.StringIO()):  # "results written to ..."
        status = main(["run", manifest, "--out", str(out), "--quiet", "--jobs", "1"])
    meet(f"end{k}")
    print(k, status, complete(out) if me == "a" else "", flush=True)
"""


@pytest.fixture(scope="module")
def manifest(tmp_path_factory) -> Path:
    """A small series (4 files at 5 mV steps): the rounds are about the folder, not the data."""
    return write_small_series(tmp_path_factory.mktemp("series"), 4, seed=77, step_V=0.005)


@pytest.mark.slow  # 20 rounds of two runs that write a whole set each: some 30-60 s
def test_twenty_rounds_of_two_runs_into_one_folder(manifest, tmp_path):
    out = tmp_path / "runs" / "out"
    out.parent.mkdir()
    sync = tmp_path / "sync"
    sync.mkdir()
    sides = [
        subprocess.Popen(
            [sys.executable, "-c", DRIVER, str(manifest), str(out), me, str(ROUNDS), str(sync)],
            stdout=subprocess.PIPE,
            stderr=subprocess.PIPE,
            text=True,
        )
        for me in ("a", "b")
    ]
    results = [side.communicate(timeout=600) for side in sides]
    for side, (stdout, stderr) in zip(sides, results, strict=True):
        assert side.returncode == 0, stderr
        assert stderr == "", stderr  # no run failed with a line blaming the folder
        statuses = [line.split()[1] for line in stdout.splitlines()]
        assert statuses == ["0"] * ROUNDS, stdout
    checks = [line.split(maxsplit=2)[2] for line in results[0][0].splitlines()]
    assert checks == ["complete"] * ROUNDS, checks


def _complete(out: Path) -> bool:
    record = json.loads((out / MARKER_NAME).read_text(encoding="utf-8"))["files"]
    there = sorted(p.name for p in out.iterdir() if p.name != MARKER_NAME)
    return there == sorted(record) and all(
        hashlib.sha256((out / n).read_bytes()).hexdigest() == h for n, h in record.items()
    )


def test_a_run_waits_a_bounded_time_then_says_another_run_is_writing(
    manifest, tmp_path, monkeypatch, capsys
):
    out = tmp_path / "out"
    assert main(["run", str(manifest), "--out", str(out), "--quiet", "--jobs", "1"]) == 0
    capsys.readouterr()
    monkeypatch.setattr(atomic, "LOCK_WAIT_S", 0.3)
    with atomic.folder_lock(out):  # another run holds the folder
        assert main(["run", str(manifest), "--out", str(out), "--quiet", "--jobs", "1"]) == 2
    lines = capsys.readouterr().err.splitlines()
    assert len(lines) == 1 and "another cvfit run is writing this folder" in lines[0], lines
    assert _complete(out)
    assert sorted(p.name for p in tmp_path.iterdir()) == ["out"]  # the lock file is gone too


def test_leftovers_of_a_run_that_is_gone_are_removed_under_the_lock(manifest, tmp_path):
    out = tmp_path / "out"
    dead = tmp_path / ".out.cvfit-new-0123abcd"  # a killed run's staging folder
    dead.mkdir()
    (dead / "results.json").write_text("{torn", encoding="utf-8")
    (tmp_path / ".out.cvfit-lock").touch()  # and the lock file it left (unlocked: it is gone)
    assert main(["run", str(manifest), "--out", str(out), "--quiet", "--jobs", "1"]) == 0
    assert sorted(p.name for p in tmp_path.iterdir()) == ["out"] and _complete(out)


def test_a_lock_file_that_is_not_cvfits_is_left_alone(tmp_path):
    out = tmp_path / "out"
    (tmp_path / ".out.cvfit-lock").symlink_to(tmp_path / "elsewhere")
    with pytest.raises(OSError):  # a link is not followed, nor removed
        with atomic.folder_lock(out):
            pass
    assert (tmp_path / ".out.cvfit-lock").is_symlink()
