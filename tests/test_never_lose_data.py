"""A run killed while it writes never leaves a torn output, and never touches an input.

Every output goes to a temporary file beside its target and is renamed into place
(cvfit.report.atomic), so after a SIGKILL each output is either the old file or the
complete new one. Leftover temporary files are hidden (leading dot) and never carry an
output's name.
"""

from __future__ import annotations

import hashlib
import json
import os
import signal
import subprocess
import sys
import time
from pathlib import Path

import pytest
from seriesfactory import LIGAND_M, simulate_point, write_manifest, write_plain_csv

from cvfit.report import OUTPUT_NAMES
from cvfit.report.atomic import atomic_path, atomic_write_text

pytestmark = pytest.mark.slow  # kill runs: deselect with -m 'not slow'

OLD = b"old output, must survive or be replaced whole\n"
# extra wait after the first temporary file appears, s; several points of the writing phase
KILL_DELAYS_S = (0.0, 0.05, 0.15, 0.25, 0.35, 0.45)


def _digests(folder: Path, names) -> dict[str, str]:
    return {n: hashlib.sha256((folder / n).read_bytes()).hexdigest() for n in names}


@pytest.fixture(scope="module")
def series(tmp_path_factory):
    """Inputs, and the outputs of one complete run as the reference."""
    folder = tmp_path_factory.mktemp("kill")
    entries = []
    for k, ligand in enumerate(LIGAND_M[:5]):
        write_plain_csv(folder / f"k{k}.csv", simulate_point(ligand, seed=500 + k))
        entries.append({"file": f"k{k}.csv", "ligand_M": ligand})
    manifest = write_manifest(folder / "series.toml", entries)
    ref = tmp_path_factory.mktemp("reference")
    proc = _start(manifest, ref)
    _, err = proc.communicate(timeout=120)
    assert proc.returncode == 0, err
    return manifest, {n: (ref / n).read_bytes() for n in OUTPUT_NAMES.values()}


# The run is started through a small driver that slows every rename into place by
# RENAME_PAUSE_S, so the writing phase lasts long enough for the kills below to land inside
# it on any machine (the production code is unchanged; only os.replace is wrapped).
RENAME_PAUSE_S = 0.12
_DRIVER = f"""
import sys, time
import cvfit.report.atomic as atomic
_replace = atomic.os.replace
def slow_replace(a, b):
    time.sleep({RENAME_PAUSE_S})
    _replace(a, b)
atomic.os.replace = slow_replace
from cvfit.cli import main
sys.exit(main(sys.argv[1:]))
"""


def _start(manifest: Path, out: Path) -> subprocess.Popen:
    # a session of its own: the run and the workers it starts share its process group
    return subprocess.Popen(
        [sys.executable, "-c", _DRIVER, "run", str(manifest), "--out", str(out), "--quiet"],
        stdout=subprocess.DEVNULL,
        stderr=subprocess.PIPE,
        cwd=manifest.parent,
        start_new_session=True,
    )


def _live_members(group: int) -> list[int]:
    """Processes of process group *group* that still run (zombies excluded), from /proc."""
    found = []
    for stat in Path("/proc").glob("[0-9]*/stat"):
        try:
            text = stat.read_text()
        except OSError:  # the process ended while we looked
            continue
        fields = text[text.rindex(")") + 2 :].split()  # after "pid (name) "
        if int(fields[2]) == group and fields[0] != "Z":
            found.append(int(stat.parent.name))
    return found


def _no_orphans_left(group: int, timeout_s: float = 10.0) -> list[int]:
    """Wait for the workers of a killed run to end; the ones still there after *timeout_s*."""
    deadline = time.monotonic() + timeout_s
    while (alive := _live_members(group)) and time.monotonic() < deadline:
        time.sleep(0.05)
    return alive


def _kill_while_writing(proc: subprocess.Popen, out: Path, delay_s: float) -> bool:
    """SIGKILL *proc* *delay_s* after its first temporary output appears; True if it died."""
    stale = {p.name for p in out.iterdir() if p.name.startswith(".")}
    deadline = time.monotonic() + 120
    while proc.poll() is None and time.monotonic() < deadline:
        if any(p.name.startswith(".") and p.name not in stale for p in out.iterdir()):
            break
        time.sleep(0.0005)
    time.sleep(delay_s)
    if proc.poll() is None:
        os.kill(proc.pid, signal.SIGKILL)
    proc.wait(timeout=60)
    proc.stderr.close()
    return proc.returncode == -signal.SIGKILL


def test_killed_runs_leave_old_or_complete_outputs(series):
    manifest, reference = series
    folder = manifest.parent  # --out is the input folder: the strictest case
    inputs = sorted(p.name for p in folder.iterdir() if p.is_file())
    before = _digests(folder, inputs)
    for name in OUTPUT_NAMES.values():
        (folder / name).write_bytes(OLD)
    killed = 0
    for delay in KILL_DELAYS_S:
        proc = _start(manifest, folder)
        killed += _kill_while_writing(proc, folder, delay)
        if sys.platform == "linux":  # the figure workers end with the run they served
            assert _no_orphans_left(proc.pid) == [], delay
        for name in OUTPUT_NAMES.values():
            content = (folder / name).read_bytes()
            assert content in (OLD, reference[name]), (delay, name, len(content))
        data = (folder / OUTPUT_NAMES["results"]).read_bytes()
        if data != OLD:
            json.loads(data)  # the complete new one parses
            # results.json is written last: when it is new, so is everything else
            assert all((folder / n).read_bytes() == reference[n] for n in OUTPUT_NAMES.values())
        for p in folder.iterdir():
            if p.name not in inputs and p.name not in OUTPUT_NAMES.values():
                # a temporary file the kill left behind: hidden, never an output's name
                assert p.name.startswith("."), p.name
        assert _digests(folder, inputs) == before
    # most kills landed while the run was still writing (else the test proved nothing)
    assert killed >= len(KILL_DELAYS_S) // 2, killed
    # a run that is left to finish replaces everything with the complete outputs
    proc = _start(manifest, folder)
    _, err = proc.communicate(timeout=120)
    assert proc.returncode == 0, err
    for name in OUTPUT_NAMES.values():
        assert (folder / name).read_bytes() == reference[name], name
    assert _digests(folder, inputs) == before


def test_failed_writer_keeps_the_old_file_and_no_temporary(tmp_path):
    target = tmp_path / "results.json"
    atomic_write_text(target, '{"old": 1}\n')
    with pytest.raises(RuntimeError, match="disk gone"), atomic_path(target) as tmp:
        tmp.write_text('{"torn', encoding="utf-8")
        raise RuntimeError("disk gone")
    assert target.read_text(encoding="utf-8") == '{"old": 1}\n'
    assert [p.name for p in tmp_path.iterdir()] == ["results.json"]


def test_outputs_get_the_ordinary_file_mode(tmp_path):
    mask = os.umask(0o022)
    try:
        atomic_write_text(tmp_path / "a.txt", "x")
    finally:
        os.umask(mask)
    assert (tmp_path / "a.txt").stat().st_mode & 0o777 == 0o644
