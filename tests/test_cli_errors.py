"""Every bad input gives one line ``cvfit: error: FILE[:LINE]: ...`` and exit status 2.

Run through the real console-script entry point in a subprocess, so nothing in-process
(a caught exception, a patched stream) can hide a traceback.
"""

from __future__ import annotations

import hashlib
import os
import shutil
import subprocess
import sys
from pathlib import Path

import pytest
from seriesfactory import LIGAND_M, simulate_point, write_manifest, write_plain_csv

CVFIT = shutil.which("cvfit", path=os.path.dirname(sys.executable)) or shutil.which("cvfit")


def run_cli(*args: str, cwd: Path) -> subprocess.CompletedProcess:
    cmd = [CVFIT, *args] if CVFIT else [sys.executable, "-m", "cvfit", *args]
    return subprocess.run(cmd, cwd=cwd, capture_output=True, text=True, timeout=120)


def digest(folder: Path) -> dict[str, str]:
    return {
        p.name: hashlib.sha256(p.read_bytes()).hexdigest()
        for p in sorted(folder.iterdir())
        if p.is_file()
    }


@pytest.fixture(scope="module")
def good_csvs(tmp_path_factory) -> Path:
    """A folder with a small valid series (4 files) to break in various ways."""
    folder = tmp_path_factory.mktemp("good")
    for k, ligand in enumerate(LIGAND_M[:4]):
        write_plain_csv(folder / f"p{k}.csv", simulate_point(ligand, seed=100 + k, step_V=0.002))
    return folder


def make_case(
    tmp_path: Path,
    good: Path,
    *,
    broken: bytes | None = None,
    entries: list[dict] | None = None,
    series: dict | None = None,
) -> Path:
    for p in good.iterdir():
        shutil.copy(p, tmp_path / p.name)
    if broken is not None:
        (tmp_path / "p1.csv").write_bytes(broken)
    if entries is None:
        entries = [{"file": f"p{k}.csv", "ligand_M": c} for k, c in enumerate(LIGAND_M[:4])]
    return write_manifest(tmp_path / "series.toml", entries, series=series or {"electrons": 1})


def assert_one_line_error(proc: subprocess.CompletedProcess, *must_contain: str) -> str:
    assert proc.returncode == 2, (proc.returncode, proc.stdout, proc.stderr)
    err = proc.stderr.strip()
    assert "Traceback" not in proc.stderr
    assert len(err.splitlines()) == 1, err
    assert err.startswith("cvfit: error: "), err
    for text in must_contain:
        assert text in err, (text, err)
    return err


GOOD_HEADER = b"time_s,potential_V,current_A\n"


@pytest.mark.parametrize(
    ("name", "content", "expected"),
    [
        ("empty file", b"", ["p1.csv"]),
        ("binary file", bytes(range(256)) * 8, ["p1.csv"]),
        ("no numeric columns", b"a,b,c\nx,y,z\nu,v,w\n" * 5, ["p1.csv"]),
        (
            "non-numeric cell on line 5",
            GOOD_HEADER
            + b"0,0.2,1e-6\n0.01,0.199,1e-6\n0.02,0.198,1e-6\n0.03,oops,1e-6\n"
            + b"".join(
                f"{0.04 + k * 0.01:.2f},{0.197 - k * 0.001:.3f},1e-6\n".encode() for k in range(30)
            ),
            ["p1.csv:5"],
        ),
        (
            "flat potential",
            GOOD_HEADER
            + b"".join(f"{k * 0.01:.2f},0.100,{k * 1e-7:.2e}\n".encode() for k in range(50)),
            ["p1.csv", "flat"],
        ),
    ],
)
def test_bad_data_file(tmp_path, good_csvs, name, content, expected):
    manifest = make_case(tmp_path, good_csvs, broken=content)
    before = digest(tmp_path)
    proc = run_cli("run", str(manifest), "--out", str(tmp_path / "out"), cwd=tmp_path)
    assert_one_line_error(proc, *expected)
    assert digest(tmp_path) == before  # inputs never written


def test_missing_file(tmp_path, good_csvs):
    entries = [{"file": f"p{k}.csv", "ligand_M": c} for k, c in enumerate(LIGAND_M[:4])]
    entries.append({"file": "not_there.csv", "ligand_M": 0.5})
    manifest = make_case(tmp_path, good_csvs, entries=entries)
    assert_one_line_error(run_cli("run", str(manifest), cwd=tmp_path), "not_there.csv")


def test_missing_manifest(tmp_path):
    assert_one_line_error(run_cli("run", "nowhere.toml", cwd=tmp_path), "nowhere.toml")


def test_missing_required_key(tmp_path, good_csvs):
    manifest = make_case(tmp_path, good_csvs, series={"title": "no n given"})
    assert_one_line_error(run_cli("run", str(manifest), cwd=tmp_path), "series.toml", "electrons")


def test_negative_concentration(tmp_path, good_csvs):
    entries = [{"file": f"p{k}.csv", "ligand_M": c} for k, c in enumerate(LIGAND_M[:4])]
    entries[2]["ligand_M"] = -0.01
    manifest = make_case(tmp_path, good_csvs, entries=entries)
    assert_one_line_error(run_cli("run", str(manifest), cwd=tmp_path), "series.toml", "ligand_M")


def test_unknown_key_named(tmp_path, good_csvs):
    entries = [{"file": f"p{k}.csv", "ligand_M": c} for k, c in enumerate(LIGAND_M[:4])]
    entries[1]["ligand_mM"] = 5.0
    manifest = make_case(tmp_path, good_csvs, entries=entries)
    assert_one_line_error(run_cli("run", str(manifest), cwd=tmp_path), "ligand_mM")


def test_fewer_than_three_titration_points(tmp_path, good_csvs):
    entries = [{"file": f"p{k}.csv", "ligand_M": c} for k, c in enumerate(LIGAND_M[:3])]
    manifest = make_case(tmp_path, good_csvs, entries=entries)
    assert_one_line_error(run_cli("run", str(manifest), cwd=tmp_path), "series.toml", "at least 3")


def test_bad_command_line_value(tmp_path):
    proc = run_cli("simulate", "--scan-rate", "-1", "--out", str(tmp_path / "x.csv"), cwd=tmp_path)
    assert_one_line_error(proc, "<command line>")


def test_unknown_subcommand(tmp_path):
    assert_one_line_error(run_cli("frobnicate", cwd=tmp_path), "<command line>")
