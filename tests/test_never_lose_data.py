"""A run killed at any moment leaves the complete earlier output set or the complete new one.

Every output set is written into a hidden folder beside the output folder and swapped in
whole (cvfit.report.atomic.output_set), so after a SIGKILL the output folder holds, file for
file, either the earlier set or the new one, never a mix, and never a temporary file; what
the kill left beside it is removed by the next run. Inputs are never touched.
"""

from __future__ import annotations

import hashlib
import os
import random
import shutil
import signal
import subprocess
import sys
import time
from pathlib import Path

import pytest
from seriesfactory import LIGAND_M, simulate_point, write_manifest, write_plain_csv

from cvfit.report.atomic import atomic_path, atomic_write_text, set_leftovers

#: Kills in the second run: some while it starts and analyses, most while it writes.
N_KILLS = 12
KILL_SEED = 13


def _digests(folder: Path) -> dict[str, str]:
    """Every entry of *folder* (hidden ones too) by name, with the hash of its content."""
    return {
        p.name: hashlib.sha256(p.read_bytes()).hexdigest() if p.is_file() else "<folder>"
        for p in folder.iterdir()
    }


# The run is started through a small driver that slows each rename of an output file into
# place by RENAME_PAUSE_S, so the writing phase lasts long enough for the kills below to land
# inside it on any machine (the production code is unchanged; only os.replace is wrapped).
RENAME_PAUSE_S = 0.05
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


def _complete(manifest: Path, out: Path) -> None:
    proc = _start(manifest, out)
    _, err = proc.communicate(timeout=120)
    assert proc.returncode == 0, err


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


def _wait_for_staging(proc: subprocess.Popen, out: Path) -> None:
    deadline = time.monotonic() + 120
    stale = set(set_leftovers(out))
    while proc.poll() is None and time.monotonic() < deadline:
        if set(set_leftovers(out)) - stale:
            return
        time.sleep(0.0005)


def _writing_time(proc: subprocess.Popen, out: Path) -> float:
    """Seconds from *proc*'s staging folder's appearance to its end (it runs to the end)."""
    _wait_for_staging(proc, out)
    start = time.monotonic()
    _, err = proc.communicate(timeout=120)
    assert proc.returncode == 0, err
    return time.monotonic() - start


def _kill(proc: subprocess.Popen, out: Path, *, after_start_s: float | None, delay_s: float):
    """SIGKILL *proc*: *after_start_s* after it started, or else *delay_s* after its staging
    folder appeared beside *out*; True if it died by the kill."""
    if after_start_s is not None:
        time.sleep(after_start_s)
    else:
        _wait_for_staging(proc, out)
        time.sleep(delay_s)
    if proc.poll() is None:
        os.kill(proc.pid, signal.SIGKILL)
    proc.wait(timeout=60)
    proc.stderr.close()
    return proc.returncode == -signal.SIGKILL


@pytest.fixture(scope="module")
def two_sets(tmp_path_factory):
    """Two manifests of one input folder whose output sets differ in every file, and the
    complete set of each (the outputs are deterministic)."""
    folder = tmp_path_factory.mktemp("kill")
    entries = []
    for k, ligand in enumerate(LIGAND_M[:5]):
        write_plain_csv(folder / f"k{k}.csv", simulate_point(ligand, seed=500 + k))
        entries.append({"file": f"k{k}.csv", "ligand_M": ligand})
    first = write_manifest(folder / "first.toml", entries, series={"electrons": 1, "title": "A"})
    second = write_manifest(
        folder / "second.toml", entries[:4], series={"electrons": 1, "title": "B"}
    )
    sets = {}
    for manifest in (first, second):
        ref = tmp_path_factory.mktemp("reference") / "out"
        _complete(manifest, ref)
        sets[manifest] = (ref, _digests(ref))
    return folder, first, second, sets, tmp_path_factory.mktemp("outs")


@pytest.mark.slow  # kill runs: deselect with -m 'not slow'
def test_killed_runs_leave_the_earlier_or_the_new_set_whole(two_sets):
    folder, first, second, sets, outs = two_sets
    (ref_a, set_a), (_, set_b) = sets[first], sets[second]
    # every file differs between the two sets, so a mix of them cannot pass for either
    assert set_a.keys() == set_b.keys() and all(set_a[n] != set_b[n] for n in set_a)
    inputs = _digests(folder)
    out = outs / "out"
    # how long the second run writes: from its staging folder's appearance to its end
    shutil.copytree(ref_a, out)
    writing_s = _writing_time(_start(second, out), out)
    rng = random.Random(KILL_SEED)
    killed = mid_write = 0
    outcomes = []
    for k in range(N_KILLS):
        # the folder holds the complete first set, as a finished first run leaves it
        if out.exists():
            shutil.rmtree(out)
        shutil.copytree(ref_a, out)
        proc = _start(second, out)
        early = k % 4 == 0  # a quarter at any moment of the run, the rest while it writes
        died = _kill(
            proc,
            out,
            after_start_s=rng.uniform(0.0, 3.0) if early else None,
            delay_s=rng.uniform(0.0, 1.25 * writing_s),
        )
        killed += died
        if sys.platform == "linux":  # the workers end with the run they served
            assert _no_orphans_left(proc.pid) == [], k
        now = _digests(out)
        assert now in (set_a, set_b), (k, sorted(now))  # never a mix, never a temporary
        outcomes.append("old" if now == set_a else "new")
        mid_write += died and bool(set_leftovers(out))  # a staging folder was being written
        assert _digests(folder) == inputs
    # most runs died by the kill, some of them in the middle of writing a set (else the
    # test proved nothing)
    assert killed >= N_KILLS // 2, (killed, outcomes)
    assert mid_write >= 1, outcomes
    # a run left to finish replaces the set whole and removes what the kills left
    _complete(second, out)
    assert _digests(out) == set_b
    assert set_leftovers(out) == []
    assert [p.name for p in outs.iterdir()] == ["out"]


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
