"""Exits and streams of the command: a terminal without β, a closed or abandoned stdout,
Ctrl-C to a pooled run, no arguments, more --jobs than cores. Each through the real command
in a subprocess with a timeout."""

from __future__ import annotations

import os
import signal
import subprocess
import sys
import time
from concurrent.futures import ThreadPoolExecutor
from pathlib import Path

import pytest
from seriesfactory import write_small_series

from cvfit.cli.streams import ASCII_SPELLINGS

TIMEOUT_S = 120


@pytest.fixture(scope="module")
def manifest(tmp_path_factory) -> Path:
    return write_small_series(tmp_path_factory.mktemp("series"), 4, seed=31, step_V=0.002)


def _start(args: list[str], cwd: Path, *, env=None, stdout=subprocess.PIPE, **kw):
    return subprocess.Popen(
        [sys.executable, "-m", "cvfit", *args],
        cwd=cwd,
        stdin=subprocess.DEVNULL,
        stdout=stdout,
        stderr=subprocess.PIPE,
        env={**os.environ, **(env or {})},
        **kw,
    )


def _cp1252_many_jobs(manifest: Path, cwd: Path):
    p = _start(["run", str(manifest), "--out", str(cwd / "o1"), "--jobs", "64"], cwd,
               env={"PYTHONIOENCODING": "cp1252"})  # fmt: skip
    out, err = p.communicate(timeout=TIMEOUT_S)
    return p.returncode, out.decode("cp1252"), err.decode("cp1252")


def _ascii_stdout_closed(manifest: Path, cwd: Path):
    p = _start(["run", str(manifest), "--out", str(cwd / "o2"), "--jobs", "1"], cwd,
               env={"PYTHONIOENCODING": "ascii"}, stdout=None,
               preexec_fn=lambda: os.close(1))  # fmt: skip
    _, err = p.communicate(timeout=TIMEOUT_S)
    return p.returncode, "", err.decode("ascii")


def _reader_gone(manifest: Path, cwd: Path):
    read, write = os.pipe()
    os.close(read)  # as `cvfit run ... | head -c0` once head has ended
    p = _start(["run", str(manifest), "--out", str(cwd / "o3"), "--jobs", "1"], cwd, stdout=write)
    os.close(write)
    _, err = p.communicate(timeout=TIMEOUT_S)
    return p.returncode, "", err.decode("utf-8")


@pytest.fixture(scope="module")
def runs(manifest, tmp_path_factory) -> dict[str, tuple[int, str, str]]:
    cwd = tmp_path_factory.mktemp("streams")
    cases = {
        "cp1252, --jobs 64": _cp1252_many_jobs,
        "ascii, stdout closed": _ascii_stdout_closed,
        "stdout reader gone": _reader_gone,
    }
    with ThreadPoolExecutor(2) as pool:
        done = {name: pool.submit(run, manifest, cwd) for name, run in cases.items()}
    return {name: f.result() for name, f in done.items()}


def test_a_terminal_without_beta_gets_ascii_spellings(runs):
    code, out, err = runs["cp1252, --jobs 64"]
    assert code == 0, err
    assert "log10(beta_ox/beta_red)" in out and "β" not in out
    assert "½" in out  # cp1252 has it: only what the terminal lacks is spelled out


def test_jobs_above_the_cores_are_cut_with_a_note(runs):
    code, _, err = runs["cp1252, --jobs 64"]
    cores = len(os.sched_getaffinity(0))
    assert code == 0
    assert err == (
        f"cvfit: note: --jobs 64 is more than the {cores} CPU core{'s' if cores > 1 else ''} "
        f"this run may use; using {cores}\n"
    )


@pytest.mark.parametrize("name", ["ascii, stdout closed", "stdout reader gone"])
def test_a_closed_or_abandoned_stdout_is_not_an_error(runs, name):
    code, _, err = runs[name]
    assert (code, err) == (0, "")


def test_no_arguments_print_the_short_usage_and_where_help_is(tmp_path):
    p = _start([], tmp_path)
    out, err = p.communicate(timeout=TIMEOUT_S)
    lines = err.decode().splitlines()
    assert p.returncode == 2 and out == b""
    assert len(lines) == 1 and "usage: cvfit" in lines[0] and "cvfit --help" in lines[0]


def test_every_ascii_spelling_is_ascii():
    assert all(v.isascii() and not k.isascii() for k, v in ASCII_SPELLINGS.items())


def _children(pid: int) -> list[int]:
    try:
        text = Path(f"/proc/{pid}/task/{pid}/children").read_text()
    except OSError:
        return []
    return [int(x) for x in text.split()]


def _as_from_a_terminal() -> None:
    """In the child before exec: SIGINT as a terminal's command gets it (default, not
    blocked). A test runner's worker may ignore it, and a child inherits an ignored signal:
    cvfit then rightly leaves it ignored, as for a command started in the background."""
    signal.signal(signal.SIGINT, signal.SIG_DFL)
    signal.pthread_sigmask(signal.SIG_UNBLOCK, [signal.SIGINT])


@pytest.fixture(scope="module")
def long_series(tmp_path_factory) -> Path:
    """60 files: a pooled run that is still busy when Ctrl-C comes."""
    from cvfit.simulate.titration_series import simulate_series

    folder = tmp_path_factory.mktemp("long")
    ligands = [0.0, *(1e-4 * 1.15**k for k in range(59))]
    return simulate_series(folder, ligand_M=ligands, E_half_free_V=0.1, log10_beta_ox=[4.0],
                           log10_beta_red=[], noise_fraction=0.01, seed=5, start_V=0.45,
                           switch_V=-0.35)  # fmt: skip


@pytest.mark.slow  # a 60-file series simulated, then three pooled runs: some 15-30 s
@pytest.mark.skipif(not Path("/proc/self/task").is_dir(), reason="needs /proc to see workers")
def test_ctrl_c_to_a_pooled_run_is_one_line_exit_130_and_no_staging(long_series, tmp_path):
    interrupted = 0
    for k in range(8):  # until two runs were interrupted in their work
        out = tmp_path / f"out{k}"
        p = _start(["run", str(long_series), "--out", str(out), "--jobs", "2", "--quiet"],
                   tmp_path, start_new_session=True, preexec_fn=_as_from_a_terminal)  # fmt: skip
        deadline = time.monotonic() + 60
        while len(_children(p.pid)) < 2 and p.poll() is None and time.monotonic() < deadline:
            time.sleep(0.02)
        time.sleep(0.1 * (k % 3))  # the workers at different points of their files
        assert p.poll() is None, "the run ended before Ctrl-C"
        os.killpg(p.pid, signal.SIGINT)  # a terminal sends it to every process of the command
        _, err = p.communicate(timeout=TIMEOUT_S)
        time.sleep(0.5)  # the workers end within their parent poll (0.2 s)
        staging = sorted(q.name for q in tmp_path.iterdir() if q.name.startswith("."))
        assert staging == []
        if p.returncode == 0:  # the work was done when the signal came (a loaded machine):
            assert (out / "results.json").is_file() and err == b""  # complete, and quiet
            continue
        assert p.returncode == 130, err
        assert err.decode() == "cvfit: interrupted\n"
        assert not out.exists()
        interrupted += 1
        if interrupted == 2:
            break
    assert interrupted >= 1
