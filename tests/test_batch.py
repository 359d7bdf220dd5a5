"""Batch runs: several manifests or folders, a process pool, one summary, failures isolated.

Truth of the simulated series (tests/seriesfactory.py): log10(β_ox/β_red) = 6.0, p − q = 1
(Lingane, Chem. Rev. 29 (1941) 1).
"""

from __future__ import annotations

import csv
import hashlib
import json
import os
import shutil
import subprocess
import sys
from pathlib import Path

import pytest
from seriesfactory import LIGAND_M, simulate_point, write_manifest, write_plain_csv

from cvfit.cli import main
from cvfit.cli.batch import (
    SeriesOutcome,
    batch_exit_status,
    batch_out_dirs,
    expand_manifests,
    format_batch_summary,
)
from cvfit.errors import InputError

CVFIT = shutil.which("cvfit", path=os.path.dirname(sys.executable))


@pytest.fixture(scope="module")
def csvs(tmp_path_factory) -> Path:
    folder = tmp_path_factory.mktemp("csvs")
    for k, ligand in enumerate(LIGAND_M[:5]):
        write_plain_csv(folder / f"b{k}.csv", simulate_point(ligand, seed=700 + k, step_V=0.002))
    return folder


def make_series(
    folder: Path, csvs: Path, *, stem: str = "series", title: str, broken: bool = False
) -> Path:
    folder.mkdir(parents=True, exist_ok=True)
    entries = []
    for k, ligand in enumerate(LIGAND_M[:5]):
        shutil.copy(csvs / f"b{k}.csv", folder / f"b{k}.csv")
        entries.append({"file": f"b{k}.csv", "ligand_M": ligand})
    if broken:
        (folder / "b2.csv").write_bytes(b"E/V,I/A\n0.1,oops\n")
    return write_manifest(
        folder / f"{stem}.toml", entries, series={"electrons": 1, "title": title}
    )


def digests(root: Path) -> dict[str, str]:
    return {
        str(p.relative_to(root)): hashlib.sha256(p.read_bytes()).hexdigest()
        for p in sorted(root.rglob("*"))
        if p.is_file()
    }


def test_three_series_one_broken(tmp_path, csvs):
    a = make_series(tmp_path / "a", csvs, title="first")
    b = make_series(tmp_path / "b", csvs, title="second")  # same stem as a
    make_series(tmp_path / "c", csvs, stem="broken", title="third", broken=True)
    inputs = digests(tmp_path)
    out = tmp_path / "out"
    cmd = [CVFIT] if CVFIT else [sys.executable, "-m", "cvfit"]
    proc = subprocess.run(
        [*cmd, "run", str(a), str(b), str(tmp_path / "c"), "--out", str(out), "--jobs", "2"],
        capture_output=True,
        text=True,
        timeout=180,
    )
    assert proc.returncode == 2, (proc.stdout, proc.stderr)
    assert proc.stderr == ""  # no progress bar off a terminal, no traceback
    text = proc.stdout
    for folder in ("series", "series-2"):
        data = json.loads((out / folder / "results.json").read_text(encoding="utf-8"))
        assert abs(data["fit"]["log10_beta_ratio"]["value"] - 6.0) < 0.05
        assert (out / folder / "report.html").is_file()
    assert not (out / "broken" / "results.json").exists()
    lines = text.splitlines()
    assert lines[0].split()[:2] == ["series", "status"]
    rows = {line.split()[0]: line for line in lines[2:5]}
    assert set(rows) == {"first", "second", "third"}
    assert " ok " in rows["first"] and str(out / "series") in rows["first"]
    assert str(out / "series-2") in rows["second"]
    assert "bad input" in rows["third"]
    errors = [line for line in lines if "broken" in line and "b2.csv" in line]
    assert len(errors) == 1 and "Traceback" not in text
    assert "2 of 3 series analysed; 1 failed on bad input (exit status 2)." in text
    assert digests(tmp_path / "a") == {k[2:]: v for k, v in inputs.items() if k[:2] == "a/"}


def test_folder_of_manifests_default_outputs_inputs_kept_and_deterministic(tmp_path, csvs, capsys):
    make_series(tmp_path / "d", csvs, stem="one", title="one")
    make_series(tmp_path / "d", csvs, stem="two", title="two")
    before = digests(tmp_path / "d")
    assert main(["run", str(tmp_path / "d"), "--jobs", "1"]) == 0
    first = {
        s: json.loads((tmp_path / "d" / f"{s}_cvfit" / "results.json").read_text("utf-8"))
        for s in ("one", "two")
    }
    after = digests(tmp_path / "d")
    assert {k: after[k] for k in before} == before
    out = capsys.readouterr().out
    assert "2 of 2 series analysed (exit status 0)." in out
    assert (
        main(
            [
                "run",
                str(tmp_path / "d" / "one.toml"),
                str(tmp_path / "d" / "two.toml"),
                "--jobs",
                "2",
            ]
        )
        == 0
    )
    for s in ("one", "two"):
        again = json.loads((tmp_path / "d" / f"{s}_cvfit" / "results.json").read_text("utf-8"))
        assert again == first[s]


def test_out_dirs_beside_or_under_out_with_collisions(tmp_path):
    ms = [
        tmp_path / "x" / "s.toml",
        tmp_path / "y" / "s.toml",
        tmp_path / "y" / "S.toml",
        tmp_path / "s-2.toml",
    ]
    assert batch_out_dirs(ms, None) == [m.parent / f"{m.stem}_cvfit" for m in ms]
    got = batch_out_dirs(ms, tmp_path / "o")
    assert [p.name for p in got] == ["s", "s-2", "S-3", "s-2-2"]
    assert len({p.name.casefold() for p in got}) == len(got)


def test_expand_manifests(tmp_path):
    (tmp_path / "f").mkdir()
    for name in ("b.toml", "a.toml", "notes.txt"):
        (tmp_path / "f" / name).write_text("", encoding="utf-8")
    got = expand_manifests([tmp_path / "f", tmp_path / "f" / "a.toml", "missing.toml"])
    assert [p.name for p in got] == ["a.toml", "b.toml", "missing.toml"]
    (tmp_path / "empty").mkdir()
    with pytest.raises(InputError, match="no .toml manifest"):
        expand_manifests([tmp_path / "empty"])


def test_summary_and_exit_status():
    ok = SeriesOutcome("a.toml", "a_cvfit", "ok", "A", 6.01, 0.012, 1.002, 0.004, 6)
    bad = SeriesOutcome("b.toml", "b_cvfit", "bad input", "B", error="b.toml:3: no")
    odd = SeriesOutcome("c.toml", "c_cvfit", "internal error", None, error="c.toml: boom")
    assert batch_exit_status([ok]) == 0
    assert batch_exit_status([ok, odd]) == 1
    assert batch_exit_status([ok, odd, bad]) == 2
    text = format_batch_summary([ok, bad, odd])
    assert "6.010 ± 0.012" in text and "1.0020 ± 0.0040" in text
    assert "  b.toml:3: no" in text and "  c.toml: boom" in text
    other = SeriesOutcome("d.toml", "d_cvfit", "bad input", error="x.csv:2: bad cell")
    assert "  d.toml → x.csv:2: bad cell" in format_batch_summary([other])
    assert text.endswith(
        "1 of 3 series analysed; 1 failed on bad input; 1 failed on an "
        "internal error (exit status 2)."
    )
    with pytest.raises(ValueError, match="status"):
        SeriesOutcome("a", "b", "fine")


def test_parallel_files_of_one_series_match_serial(tmp_path, csvs, capsys):
    """Files analysed in worker processes give the serial results, file for file, and the
    serial run's first error."""
    import pickle

    from cvfit.io import load_manifest
    from cvfit.pipeline.series import analyse_series

    m = make_series(tmp_path / "p", csvs, title="parallel")
    manifest = load_manifest(m)
    serial = analyse_series(manifest, jobs=1)
    parallel = analyse_series(manifest, jobs=2)
    assert serial.to_dict() == parallel.to_dict()
    for one, two in zip(serial.files, parallel.files, strict=True):
        assert one.file == two.file
        assert (one.curve.current_A == two.curve.current_A).all()
    # what travels back from a worker: the small record, not the 20 000-point file
    assert len(pickle.dumps(parallel.files[0])) < 40_000
    assert main(["run", str(m), "--out", str(tmp_path / "o1"), "--quiet", "--jobs", "1"]) == 0
    assert main(["run", str(m), "--out", str(tmp_path / "o2"), "--quiet", "--jobs", "2"]) == 0
    assert main(["run", str(m), "--out", str(tmp_path / "o3"), "--quiet"]) == 0
    one, two, auto = (
        (tmp_path / o / "results.json").read_text("utf-8") for o in ("o1", "o2", "o3")
    )
    assert one == two == auto
    broken = make_series(tmp_path / "q", csvs, title="broken", broken=True)
    with pytest.raises(InputError) as serial_err:
        analyse_series(load_manifest(broken), jobs=1)
    with pytest.raises(InputError) as parallel_err:
        analyse_series(load_manifest(broken), jobs=2)
    assert str(parallel_err.value) == str(serial_err.value)
    assert "b2.csv" in str(serial_err.value)


def test_out_dirs_named_by_folder_when_every_manifest_is_series_toml(tmp_path):
    ms = [tmp_path / "zinc run" / "series.toml", tmp_path / "b" / "series.toml",
          tmp_path / "c" / "b" / "series.toml"]  # fmt: skip
    got = batch_out_dirs(ms, tmp_path / "o")
    assert [p.name for p in got] == ["zinc run", "b", "b-2"]
    mixed = batch_out_dirs([*ms[:2], tmp_path / "d" / "other.toml"], tmp_path / "o")
    assert [p.name for p in mixed] == ["series", "series-2", "other"]


def test_batch_writes_its_summary_csv_and_json_with_whole_titles(tmp_path, csvs, capsys):
    import csv

    long_title = "zinc(II) with the invented ligand, pH 7.0, 0.1 M KNO3, second day"
    assert len(long_title) > 36
    a = make_series(tmp_path / "run A", csvs, title=long_title)
    b = make_series(tmp_path / "run B", csvs, title="short", broken=True)
    out = tmp_path / "out"
    assert main(["run", str(a), str(b), "--out", str(out), "--jobs", "1"]) == 2
    printed = capsys.readouterr().out
    assert (out / "run A" / "results.json").is_file()  # named by the manifest's folder
    with open(out / "batch_summary.csv", encoding="utf-8", newline="") as fh:
        rows = list(csv.DictReader(fh))
    summary = json.loads((out / "batch_summary.json").read_text(encoding="utf-8"))["series"]
    results = json.loads((out / "run A" / "results.json").read_text(encoding="utf-8"))
    q = results["fit"]["log10_beta_ratio"]
    assert [r["title"] for r in rows] == [s["title"] for s in summary] == [long_title, "short"]
    assert long_title not in printed  # the terminal table still clips it
    assert float(rows[0]["log10_ratio"]) == summary[0]["log10_ratio"] == q["value"]
    assert summary[0]["log10_ratio_stderr"] == q["stderr"]
    assert [r["status"] for r in rows] == ["ok", "bad input"]
    assert rows[1]["log10_ratio"] == "" and summary[1]["log10_ratio"] is None
    assert "b2.csv" in summary[1]["error"] and rows[1]["out_dir"] == str(out / "run B")


def test_batch_summary_without_out_goes_to_the_folder_holding_the_outputs(tmp_path, csvs):
    a = make_series(tmp_path / "p" / "x", csvs, title="x")
    b = make_series(tmp_path / "p" / "y", csvs, stem="other", title="y")
    assert main(["run", str(a), str(b), "--jobs", "1"]) == 0
    data = json.loads((tmp_path / "p" / "batch_summary.json").read_text(encoding="utf-8"))
    assert [s["title"] for s in data["series"]] == ["x", "y"]
    assert (tmp_path / "p" / "batch_summary.csv").is_file()


def test_a_file_of_the_users_is_never_replaced_by_the_summary(tmp_path, csvs):
    """A batch_summary.csv of the user's own in the folder stays as it was: the summary goes
    to batch_summary-2; a second run replaces its own summary there, not the user's file.
    A title a spreadsheet would run as a formula is written as text."""
    a = make_series(tmp_path / "p" / "x", csvs, title="=1+2")
    b = make_series(tmp_path / "p" / "y", csvs, stem="other", title="y")
    mine = tmp_path / "p" / "batch_summary.csv"
    mine.write_text("my own notes\n", encoding="utf-8")
    for _ in range(2):
        assert main(["run", str(a), str(b), "--jobs", "1"]) == 0
        assert mine.read_text(encoding="utf-8") == "my own notes\n"
        assert not (tmp_path / "p" / "batch_summary.json").exists()
        assert not (tmp_path / "p" / "batch_summary-3.csv").exists()
    with open(tmp_path / "p" / "batch_summary-2.csv", encoding="utf-8", newline="") as fh:
        rows = list(csv.DictReader(fh))
    assert [r["title"] for r in rows] == ["'=1+2", "y"]
    data = json.loads((tmp_path / "p" / "batch_summary-2.json").read_text(encoding="utf-8"))
    assert [s["title"] for s in data["series"]] == ["=1+2", "y"]  # JSON keeps the text as it is
