"""Hostile inputs end in one clean line and exit 2: no hang, no internal error.

Each case runs the real ``cvfit run`` in a subprocess with a timeout, so a hang fails the
test instead of stopping the suite, and nothing in-process can hide a traceback.
"""

from __future__ import annotations

import json
import os
import shutil
from pathlib import Path

import numpy as np
import pytest
from clirun import assert_clean_error, run_cli
from seriesfactory import LIGAND_M, simulate_point, write_manifest, write_plain_csv

from cvfit.errors import InputError, printable
from cvfit.io import load_manifest, parse_voltammogram_text, read_voltammogram
from cvfit.io.limits import (
    MAX_DATA_FILE_BYTES,
    MAX_LINE_BYTES,
    MAX_MANIFEST_BYTES,
    check_line_lengths,
)


@pytest.fixture(scope="module")
def good(tmp_path_factory) -> Path:
    """Four valid data files to build the cases from."""
    folder = tmp_path_factory.mktemp("good")
    for k, ligand in enumerate(LIGAND_M[:4]):
        write_plain_csv(folder / f"p{k}.csv", simulate_point(ligand, seed=300 + k, step_V=0.002))
    return folder


def series(tmp_path: Path, good: Path, *, files: list[str] | None = None, **kw) -> Path:
    for p in good.iterdir():
        shutil.copy(p, tmp_path / p.name)
    names = files or [f"p{k}.csv" for k in range(4)]
    entries = [{"file": n, "ligand_M": c} for n, c in zip(names, LIGAND_M[:4], strict=True)]
    return write_manifest(tmp_path / "series.toml", entries, **kw)


# --- hangs ----------------------------------------------------------------------------


def test_data_file_of_one_10_mb_line_is_refused_quickly(tmp_path, good):
    manifest = series(tmp_path, good)
    (tmp_path / "p2.csv").write_bytes(b"1.0," * 2_500_000)  # 10 MB, no line break
    proc = run_cli("run", str(manifest), "--out", str(tmp_path / "out"), cwd=tmp_path)
    line = assert_clean_error(proc, "p2.csv:1:", "64 KiB")
    assert "10000000 bytes" in line
    assert not (tmp_path / "out").exists()


@pytest.mark.parametrize("kind", [bytes, str])
def test_the_quick_line_scan_never_misses_a_long_line(monkeypatch, kind):
    """The block scan that spares most files the exact search finds every line over the
    limit (a small limit here, so that many lengths around it are tried)."""
    import re

    from cvfit.io import limits

    monkeypatch.setattr(limits, "MAX_LINE_BYTES", 64)
    rng = np.random.default_rng(11)
    for _ in range(3000):
        lengths = rng.integers(0, 160, size=rng.integers(1, 12))
        breaks = rng.choice(["\n", "\r\n", "\r"], size=lengths.size)
        text = "".join("x" * int(n) + b for n, b in zip(lengths, breaks, strict=True))
        text = text[: rng.integers(1, len(text) + 1)]  # maybe no break at the end
        longest = max(len(run) for run in re.split(r"[\r\n]", text))
        content = text if kind is str else text.encode("ascii")
        if longest > 64:
            assert limits._may_hold_a_long_line(content), repr(text)


def test_a_long_line_after_a_header_names_its_line(tmp_path):
    data = b"E/V,I/A\r\n0.1,1e-6\r\n" + b"0.2," * (MAX_LINE_BYTES // 4 + 1) + b"\r\n"
    with pytest.raises(InputError) as err:
        check_line_lengths(data, source="x.csv")
    assert err.value.line == 3 and "64 KiB" in str(err.value)
    with pytest.raises(InputError) as err:  # the same in text, with lone-CR line ends
        parse_voltammogram_text(data.decode().replace("\r\n", "\r"), source="x.csv")
    assert err.value.line == 3
    check_line_lengths(b"a\n" * MAX_LINE_BYTES, source="x.csv")  # many short lines are fine
    check_line_lengths(b"x" * MAX_LINE_BYTES, source="x.csv")  # the limit itself is fine


@pytest.mark.skipif(not hasattr(os, "mkfifo"), reason="no named pipes here")
def test_listed_data_file_that_is_a_fifo_is_refused(tmp_path, good):
    manifest = series(tmp_path, good, files=["p0.csv", "p1.csv", "pipe.csv", "p3.csv"])
    os.mkfifo(tmp_path / "pipe.csv")
    proc = run_cli("run", str(manifest), "--out", str(tmp_path / "out"), cwd=tmp_path)
    assert_clean_error(proc, "series.toml", "pipe.csv", "not a regular file")


@pytest.mark.skipif(not hasattr(os, "mkfifo"), reason="no named pipes here")
def test_manifest_that_is_a_fifo_is_refused(tmp_path):
    os.mkfifo(tmp_path / "series.toml")
    proc = run_cli("run", "series.toml", "--out", "out", cwd=tmp_path)
    assert_clean_error(proc, "series.toml:", "named pipe (FIFO)")


@pytest.mark.skipif(not hasattr(os, "mkfifo"), reason="no named pipes here")
def test_fifo_swapped_in_after_loading_is_refused_without_blocking(tmp_path, good):
    # the manifest was checked while the file was regular; the reader looks again
    os.mkfifo(tmp_path / "pipe.csv")
    with pytest.raises(InputError, match="named pipe"):
        read_voltammogram(tmp_path / "pipe.csv")


# --- internal errors where the input is at fault ---------------------------------------


def test_listed_file_that_is_a_symlink_loop(tmp_path, good):
    manifest = series(tmp_path, good, files=["p0.csv", "loop_a", "p2.csv", "p3.csv"])
    os.symlink("loop_b", tmp_path / "loop_a")
    os.symlink("loop_a", tmp_path / "loop_b")
    proc = run_cli("run", str(manifest), "--out", str(tmp_path / "out"), cwd=tmp_path)
    assert_clean_error(proc, "series.toml:", "voltammogram[2].file", "loop_a")
    with pytest.raises(InputError, match="symbolic link loop"):
        read_voltammogram(tmp_path / "loop_a")


def test_manifest_that_is_a_symlink_loop(tmp_path):
    os.symlink("b.toml", tmp_path / "a.toml")
    os.symlink("a.toml", tmp_path / "b.toml")
    proc = run_cli("run", "a.toml", cwd=tmp_path)
    assert_clean_error(proc, "a.toml:", "symbolic link loop")


@pytest.mark.skipif(not Path("/dev/zero").exists(), reason="no /dev/zero here")
def test_dev_zero_as_manifest_is_refused_before_reading(tmp_path):
    proc = run_cli("run", "/dev/zero", "--out", "out", cwd=tmp_path)
    assert_clean_error(proc, "/dev/zero:", "character device")
    with pytest.raises(InputError, match="character device"):
        read_voltammogram("/dev/zero")


@pytest.mark.parametrize("depth", [300, 2_000, 100_000])
def test_deeply_nested_toml(tmp_path, depth):
    text = "[series]\nelectrons = 1\ntitle = " + "[" * depth + "1" + "]" * depth + "\n"
    (tmp_path / "deep.toml").write_text(text, encoding="utf-8")
    proc = run_cli("run", "deep.toml", "--out", "out", cwd=tmp_path)
    assert_clean_error(proc, "deep.toml")


def test_one_megabyte_title_draws_and_results_keep_it(tmp_path, good):
    title = "Zn(II) + glycinate, 0.1 M KNO3 " * 33_000  # ~1 MB, no line break
    manifest = series(tmp_path, good, series={"electrons": 1, "title": title})
    out = tmp_path / "out"
    proc = run_cli("run", str(manifest), "--out", str(out), cwd=tmp_path)
    assert proc.returncode == 0, proc.stderr
    data = json.loads((out / "results.json").read_text(encoding="utf-8"))
    assert data["series"]["title"] == title  # whole in the results, cut only in figures
    assert max(len(line) for line in proc.stdout.splitlines()) < 1000


def test_stepwise_figures_take_a_huge_title(tmp_path, good):
    manifest = series(
        tmp_path, good, series={"electrons": 1, "title": "x" * 200_000}, fit={"model": "stepwise"}
    )
    proc = run_cli("run", str(manifest), "--out", str(tmp_path / "out"), cwd=tmp_path)
    assert proc.returncode == 0, proc.stderr


# --- limits -----------------------------------------------------------------------------


def test_data_file_over_the_size_limit_is_refused_unread(tmp_path, good):
    manifest = series(tmp_path, good)
    with open(tmp_path / "p1.csv", "r+b") as fh:  # sparse: costs no disk
        fh.truncate(MAX_DATA_FILE_BYTES + 1)
    proc = run_cli("run", str(manifest), "--out", str(tmp_path / "out"), cwd=tmp_path)
    assert_clean_error(proc, "p1.csv:", "64 MiB", "per data file")


def _stat_reporting(size: int, real):
    """*real* (os.stat or os.fstat) as if the file held *size* bytes (it grew since)."""

    def fake(target):
        st = real(target)
        return os.stat_result((st.st_mode, *tuple(st)[1:6], size, *tuple(st)[7:10]))

    return fake


def _grown_since_looked(monkeypatch, size: int) -> None:
    from cvfit.io import limits

    monkeypatch.setattr(limits.os, "stat", _stat_reporting(size, os.stat))
    monkeypatch.setattr(limits.os, "fstat", _stat_reporting(size, os.fstat))


def test_a_file_that_grew_after_its_size_was_taken_is_read_whole(tmp_path, monkeypatch):
    from cvfit.io import limits

    data = b"0.1,2.0\n" * 1000
    (tmp_path / "f.csv").write_bytes(data)
    _grown_since_looked(monkeypatch, 10)
    got = limits.read_regular_file(
        tmp_path / "f.csv", limit=len(data), what="data file", missing="m", folder="f"
    )
    assert got == data


def test_a_file_that_grew_past_the_limit_after_its_size_was_taken_is_refused(
    tmp_path, monkeypatch
):
    from cvfit.io import limits

    (tmp_path / "f.csv").write_bytes(b"0.1,2.0\n" * 1000)
    _grown_since_looked(monkeypatch, 10)
    with pytest.raises(InputError, match="more than 3.9 KiB"):
        limits.read_regular_file(
            tmp_path / "f.csv", limit=4000, what="data file", missing="m", folder="f"
        )


def test_manifest_over_the_size_limit_is_refused(tmp_path):
    padding = "# padding\n" * (MAX_MANIFEST_BYTES // 10 + 1)
    (tmp_path / "big.toml").write_text("[series]\nelectrons = 1\n" + padding, encoding="utf-8")
    with pytest.raises(InputError, match="1 MiB cvfit reads per manifest"):
        load_manifest(tmp_path / "big.toml")


# --- messages ---------------------------------------------------------------------------


def test_control_characters_in_a_key_are_escaped(tmp_path, good):
    manifest = series(tmp_path, good)
    text = manifest.read_text(encoding="utf-8")
    text = text.replace("[series]\n", '[series]\n"bad\\u001b[2Jkey" = 1\n')  # TOML escape
    manifest.write_text(text, encoding="utf-8")
    proc = run_cli("run", str(manifest), "--out", str(tmp_path / "out"), cwd=tmp_path)
    assert_clean_error(proc, "bad\\x1b[2Jkey")
    assert "\x1b" not in proc.stderr


def test_manifest_name_with_a_newline_prints_one_line(tmp_path):
    name = "bad\nname\x07.toml"
    (tmp_path / name).write_text("[series]\nelectrons = \n", encoding="utf-8")
    proc = run_cli("run", name, "--out", "out", cwd=tmp_path)
    line = assert_clean_error(proc, "bad\\nname\\x07.toml")
    assert "\x07" not in line


def test_listed_file_name_with_control_characters(tmp_path, good):
    manifest = series(tmp_path, good, files=["p0.csv", "NAME", "p2.csv", "p3.csv"])
    text = manifest.read_text(encoding="utf-8")
    manifest.write_text(text.replace('"NAME"', '"new\\nline\\u202e.csv"'), encoding="utf-8")
    proc = run_cli("run", str(manifest), "--out", str(tmp_path / "out"), cwd=tmp_path)
    assert_clean_error(proc, "new\\nline\\u202e.csv")


def test_printable():
    assert printable("plain µA name.csv") == "plain µA name.csv"
    assert printable("a\nb\rc\td") == "a\\nb\\rc\\td"
    assert printable("\x1b[31mred\x7f\x9b") == "\\x1b[31mred\\x7f\\x9b"
    assert printable("x\u2028y\u202ez") == "x\\u2028y\\u202ez"
    assert printable(os.fsdecode(b"caf\xe9.csv")) == "caf\\xe9.csv"  # undecodable byte
    assert printable("abcdef", limit=4) == "abc…"
    assert printable(printable("a\nb")) == printable("a\nb")  # escaping twice changes nothing
    assert "\n" not in InputError("x\ny", source="a\nb").one_line()
