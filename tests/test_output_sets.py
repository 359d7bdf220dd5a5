"""An output set is swapped in whole; a run that cannot write leaves the earlier set as it
was and says why in one line (permission denied, full disk, file-size limit)."""

from __future__ import annotations

import errno
import hashlib
import os
import resource
import signal
import subprocess
import sys
from pathlib import Path

import pytest
from seriesfactory import write_small_series

import cvfit.report.atomic as atomic
from cvfit.cli import main
from cvfit.errors import InputError, OutputError
from cvfit.io import load_manifest
from cvfit.pipeline.series import analyse_series
from cvfit.report import OUTPUT_NAMES, write_outputs
from cvfit.report.atomic import clean_set_leftovers, output_set, set_leftovers
from cvfit.report.output_names import STEPWISE_ONLY_NAMES, is_output_name
from cvfit.report.ownership import MARKER_NAME


def _digests(folder: Path) -> dict[str, str]:
    return {p.name: hashlib.sha256(p.read_bytes()).hexdigest() for p in folder.iterdir()}


@pytest.fixture(scope="module")
def manifest(tmp_path_factory) -> Path:
    return write_small_series(tmp_path_factory.mktemp("series"), 4, seed=910)


@pytest.fixture(scope="module")
def result(manifest):
    return analyse_series(load_manifest(manifest))


@pytest.fixture
def earlier(result, tmp_path) -> tuple[Path, dict[str, str]]:
    """An output folder that holds a complete earlier set, and its digests."""
    out = tmp_path / "out"
    write_outputs(result, out)
    return out, _digests(out)


def _one_error_line(capsys) -> str:
    err = capsys.readouterr().err
    assert len(err.splitlines()) == 1 and "Traceback" not in err, err
    assert err.startswith("cvfit: error: "), err
    return err


# --- the swap -----------------------------------------------------------------------------


def test_second_set_replaces_the_first_whole(result, earlier):
    out, first = earlier
    assert sorted(first) == sorted([*OUTPUT_NAMES.values(), MARKER_NAME])
    (out / "diagnostics.png").unlink()  # a file of the earlier set gone: still cvfit's
    written = write_outputs(result, out)
    assert _digests(out) == first  # the whole folder is the new set again
    assert all(p.parent == out for p in written.values())
    assert set_leftovers(out) == [] and sorted(p.name for p in out.parent.iterdir()) == ["out"]


def test_failure_while_writing_leaves_the_earlier_set_and_no_leftover(
    result, earlier, monkeypatch
):
    out, first = earlier
    from cvfit.report import results_json

    def broken(*a, **k):
        raise RuntimeError("drawing failed")

    monkeypatch.setattr(results_json, "results_to_json", broken)
    monkeypatch.setattr("cvfit.report.results_to_json", broken)
    with pytest.raises(RuntimeError, match="drawing failed"):
        write_outputs(result, out)
    assert _digests(out) == first
    assert set_leftovers(out) == []


@pytest.mark.parametrize("code", [errno.ENOSPC, errno.EFBIG, errno.EDQUOT])
def test_full_disk_is_one_line_exit_2_and_the_earlier_set_stays(
    manifest, earlier, monkeypatch, capsys, code
):
    out, first = earlier

    def full(fd):  # the disk fills while the new set is written
        raise OSError(code, os.strerror(code))

    monkeypatch.setattr(atomic.os, "fsync", full)
    assert main(["run", str(manifest), "--out", str(out), "--quiet", "--jobs", "1"]) == 2
    err = _one_error_line(capsys)
    assert str(out) in err and os.strerror(code) in err
    assert _digests(out) == first and set_leftovers(out) == []


def test_folder_that_cannot_be_created_is_one_line(manifest, tmp_path, capsys):
    (tmp_path / "a_file").write_text("x", encoding="utf-8")
    out = tmp_path / "a_file" / "out"  # its parent is a file: also refused to root
    assert main(["run", str(manifest), "--out", str(out), "--quiet"]) == 2
    err = _one_error_line(capsys)
    assert str(out) in err and "not a folder" in err


@pytest.mark.skipif(os.name != "posix" or os.geteuid() == 0, reason="root may write anywhere")
def test_folder_without_write_permission(manifest, earlier, capsys):
    out, first = earlier
    os.chmod(out.parent, 0o555)
    try:
        assert main(["run", str(manifest), "--out", str(out / "deeper"), "--quiet"]) == 2
        assert "Permission denied" in _one_error_line(capsys)
        os.chmod(out, 0o555)
        assert main(["run", str(manifest), "--out", str(out), "--quiet"]) == 2
        assert "Permission denied" in _one_error_line(capsys)
    finally:
        os.chmod(out, 0o755)
        os.chmod(out.parent, 0o755)
    assert _digests(out) == first


def test_permission_denied_in_process(manifest, earlier, monkeypatch, capsys):
    # as root the check above cannot run; a refused mkdir stands in for it
    out, first = earlier

    def refuse(path, *a, **k):
        raise PermissionError(errno.EACCES, "Permission denied", str(path))

    monkeypatch.setattr(atomic.os, "mkdir", refuse)
    assert main(["run", str(manifest), "--out", str(out), "--quiet"]) == 2
    err = _one_error_line(capsys)
    assert str(out) in err and "Permission denied" in err and "permissions" in err
    assert _digests(out) == first


@pytest.mark.skipif(not hasattr(signal, "SIGXFSZ"), reason="no file-size limit signal here")
def test_file_size_limit_is_one_line_exit_2_not_a_killed_process(manifest, earlier):
    out, first = earlier
    limit = 30_000  # bytes: less than a figure, more than anything read or imported

    def limited():
        resource.setrlimit(resource.RLIMIT_FSIZE, (limit, limit))

    proc = subprocess.run(
        [sys.executable, "-m", "cvfit", "run", str(manifest), "--out", str(out), "--quiet"],
        preexec_fn=limited,
        capture_output=True,
        text=True,
        timeout=120,
    )
    assert proc.returncode == 2, (proc.returncode, proc.stderr)  # not -SIGXFSZ
    lines = proc.stderr.splitlines()
    assert len(lines) == 1 and "File too large" in lines[0] and "ulimit -f" in lines[0]
    assert _digests(out) == first and set_leftovers(out) == []


# --- what the swap may replace ----------------------------------------------------------------


def test_folder_with_other_files_is_refused_and_kept(manifest, earlier, capsys):
    out, first = earlier
    (out / "notes.txt").write_text("mine", encoding="utf-8")
    assert main(["run", str(manifest), "--out", str(out), "--quiet"]) == 2
    assert "'notes.txt'" in _one_error_line(capsys)
    assert (out / "notes.txt").read_text(encoding="utf-8") == "mine"


def test_current_folder_is_refused(manifest, tmp_path, monkeypatch, capsys):
    here = tmp_path / "empty"
    here.mkdir()
    monkeypatch.chdir(here)
    assert main(["run", str(manifest), "--out", ".", "--quiet"]) == 2
    assert "current folder" in _one_error_line(capsys)
    assert list(here.iterdir()) == []


def test_link_to_the_output_folder_stays_a_link(result, earlier, tmp_path):
    out, first = earlier
    link = tmp_path / "link"
    link.symlink_to(out, target_is_directory=True)
    write_outputs(result, link)
    assert link.is_symlink() and _digests(link) == first


def test_names_of_an_output_folder():
    for name in [*OUTPUT_NAMES.values(), *STEPWISE_ONLY_NAMES]:
        assert is_output_name(name), name
    for name in ["notes.txt", "series.toml", ".results.json", "results.json.bak", "sub",
                 ".results.json.k2j3h4.json", ".results.json.backup"]:  # fmt: skip
        assert not is_output_name(name), name
    from cvfit.report.figures.registry import FIGURES

    # every figure the registry can draw is a name an output folder may hold
    assert all(is_output_name(e.file_name) for e in FIGURES.values())


def test_check_refuses_before_the_analysis(manifest, tmp_path, capsys, monkeypatch):
    out = tmp_path / "busy"
    out.mkdir()
    (out / "data.csv").write_text("1,2\n", encoding="utf-8")
    import cvfit.pipeline.series as series

    def never(*a, **k):
        raise AssertionError("analysed before the output folder was checked")

    monkeypatch.setattr(series, "analyse_series", never)
    assert main(["run", str(manifest), "--out", str(out), "--quiet"]) == 2
    assert "which cvfit did not write" in _one_error_line(capsys)


def test_write_outputs_refuses_a_foreign_folder(result, tmp_path):
    (tmp_path / "mine.csv").write_text("1\n", encoding="utf-8")
    with pytest.raises(InputError, match="mine.csv"):
        write_outputs(result, tmp_path)


# --- leftovers of interrupted runs ---------------------------------------------------------


def test_leftovers_of_interrupted_runs_are_removed_and_only_ours(result, earlier, tmp_path):
    out, first = earlier
    stale_new = tmp_path / ".out.cvfit-new-0123abcd"
    stale_new.mkdir()
    (stale_new / "results.json").write_text("{torn", encoding="utf-8")
    other = tmp_path / ".other.cvfit-new-0123abcd"  # another output folder's: not ours
    other.mkdir()
    lookalike = tmp_path / ".out.cvfit-new-notours"
    lookalike.write_text("user file", encoding="utf-8")
    assert set_leftovers(out) == [stale_new]
    write_outputs(result, out)
    assert not stale_new.exists() and other.exists() and lookalike.exists()
    assert _digests(out) == first


def test_two_step_swap_interrupted_is_put_back(result, earlier, monkeypatch):
    # where the system cannot exchange two folders at once, the set is swapped by two
    # renames; a kill between them leaves the folder missing and the earlier set aside,
    # and the next run puts it back before anything else
    out, first = earlier
    monkeypatch.setattr(atomic, "exchange_paths", lambda a, b: False)
    real_rename = os.rename
    calls = []

    def die_after_first(src, dst):
        calls.append((src, dst))
        real_rename(src, dst)
        if len(calls) == 1:
            raise KeyboardInterrupt  # stands in for the kill

    monkeypatch.setattr(atomic.os, "rename", die_after_first)
    with pytest.raises(KeyboardInterrupt):
        write_outputs(result, out)
    monkeypatch.setattr(atomic.os, "rename", real_rename)
    assert not out.exists()
    (aside,) = set_leftovers(out)
    assert "-old-" in aside.name and _digests(aside) == first
    clean_set_leftovers(out)
    assert _digests(out) == first and set_leftovers(out) == []
    write_outputs(result, out)  # and the slow swap itself completes
    assert _digests(out) == first and set_leftovers(out) == []


def test_output_set_exchange_is_atomic_on_linux(tmp_path):
    a, b = tmp_path / "a", tmp_path / "b"
    a.mkdir()
    b.mkdir()
    (a / "x").write_text("a", encoding="utf-8")
    (b / "x").write_text("b", encoding="utf-8")
    swapped = atomic.exchange_paths(a, b)
    if sys.platform.startswith("linux"):
        assert swapped
    if swapped:
        assert (a / "x").read_text(encoding="utf-8") == "b"
        assert (b / "x").read_text(encoding="utf-8") == "a"


def test_output_set_yields_a_hidden_folder_beside_the_target(tmp_path):
    target = tmp_path / "out"
    with output_set(target) as stage:
        assert stage.parent == tmp_path and stage.name.startswith(".out.cvfit-new-")
        assert not target.exists()
        (stage / "results.json").write_text("{}", encoding="utf-8")
    assert (target / "results.json").read_text(encoding="utf-8") == "{}"
    assert sorted(p.name for p in target.iterdir()) == [MARKER_NAME, "results.json"]
    assert [p.name for p in tmp_path.iterdir()] == ["out"]


def test_output_error_pickles():
    import pickle

    e = OutputError("/x/out", "cannot write the outputs (No space left on device)", errno=28)
    back = pickle.loads(pickle.dumps(e))
    assert back.one_line() == e.one_line() and back.errno == 28


def test_batch_reports_a_series_that_cannot_be_written(manifest, tmp_path, monkeypatch):
    from cvfit.cli.batch import STATUS_OUTPUT, batch_exit_status, format_batch_summary, run_batch

    def full(fd):
        raise OSError(errno.ENOSPC, os.strerror(errno.ENOSPC))

    monkeypatch.setattr(atomic.os, "fsync", full)
    (outcome,) = run_batch([manifest], [tmp_path / "o"], jobs=1, progress=False)
    assert outcome.status == STATUS_OUTPUT and "No space left" in outcome.error
    assert batch_exit_status([outcome]) == 2
    assert "1 could not be written" in format_batch_summary([outcome])


def test_every_optional_figure_is_an_output_name_and_a_rerun_is_accepted(tmp_path):
    """A run writes figures only some series need (the whole-curve fits, the internal
    standard's drift); each must be a name the output folder may hold, or the next run into
    the same folder would be refused. The demo writes the curve-fit figure."""
    from cvfit.report.figures.curve_fits import CURVE_FITS_FIGURE
    from cvfit.report.figures.internal_standard import FILE_NAME

    assert is_output_name(CURVE_FITS_FIGURE) and is_output_name(FILE_NAME)
    demo = Path(__file__).resolve().parents[1] / "cvfit" / "data" / "demo" / "series.toml"
    out = tmp_path / "out"
    for _ in range(2):
        assert main(["run", str(demo), "--out", str(out), "--quiet"]) == 0
    assert (out / CURVE_FITS_FIGURE).is_file()


@pytest.fixture
def ctrl_c_raises():
    """SIGINT as a terminal gives it (an xdist worker may have it ignored)."""
    import signal

    previous = signal.signal(signal.SIGINT, signal.default_int_handler)
    yield
    signal.signal(signal.SIGINT, previous)


def test_ctrl_c_while_the_lock_is_taken_leaves_no_lock_file(tmp_path, monkeypatch, ctrl_c_raises):
    """CI once found the hidden lock file of an interrupted run left beside its folder: a
    Ctrl-C that lands between creating the lock file and owning it. It is now raised after
    the lock is taken and removed again."""
    import os
    import signal

    from cvfit.report import atomic

    real = atomic._try_lock

    def interrupted_inside(path):
        fd = real(path)
        os.kill(os.getpid(), signal.SIGINT)  # the Ctrl-C lands right after the lock
        return fd

    monkeypatch.setattr(atomic, "_try_lock", interrupted_inside)
    target = tmp_path / "out"
    with pytest.raises(KeyboardInterrupt), atomic.folder_lock(target):
        pytest.fail("the block must not run after the Ctrl-C")
    assert [p.name for p in tmp_path.iterdir()] == []


def test_ctrl_c_while_the_lock_is_removed_leaves_no_lock_file(
    tmp_path, monkeypatch, ctrl_c_raises
):
    import os
    import signal

    from cvfit.report import atomic

    real_unlink = os.unlink

    def interrupted_unlink(path, *a, **k):
        os.kill(os.getpid(), signal.SIGINT)  # the Ctrl-C lands as the lock is removed
        return real_unlink(path, *a, **k)

    target = tmp_path / "out"
    with pytest.raises(KeyboardInterrupt), atomic.folder_lock(target):
        monkeypatch.setattr(atomic.os, "unlink", interrupted_unlink)
    monkeypatch.undo()
    assert [p.name for p in tmp_path.iterdir()] == []
