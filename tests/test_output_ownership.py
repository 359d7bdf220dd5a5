"""A user's file is never deleted: an output folder is cvfit's to replace only by the record
of what cvfit wrote (``.cvfit-set.json``), for ``cvfit run``, ``cvfit plan`` and the inputs
of ``cvfit demo``.

Every case runs the real command in a subprocess with a timeout; the cases run two at a
time (module fixture) and each test checks one of them: exit 2 with one line, and every
file, folder and link of the user's still there, unchanged.
"""

from __future__ import annotations

import hashlib
import json
import os
import shutil
import subprocess
import sys
from collections.abc import Callable
from concurrent.futures import ThreadPoolExecutor
from pathlib import Path

import pytest
from seriesfactory import write_small_series

from cvfit.cli import main
from cvfit.report.output_names import EARLIER_SERIES_SET
from cvfit.report.ownership import MARKER_NAME, foreign_reason, write_marker

TIMEOUT_S = 120
RUN_NAMES = {"results.json", "report.html", "voltammograms.csv"}


def snapshot(folder: Path) -> dict[str, str]:
    """Every entry under *folder* (links not followed): hashes, link targets, folders."""
    found = {}
    for dirpath, dirnames, filenames in os.walk(folder):
        for name in dirnames + filenames:
            p = Path(dirpath) / name
            rel = str(p.relative_to(folder))
            if p.is_symlink():
                found[rel] = "link:" + os.readlink(p)
            elif p.is_dir():
                found[rel] = "folder"
            else:
                found[rel] = hashlib.sha256(p.read_bytes()).hexdigest()
    return found


@pytest.fixture(scope="module")
def earlier(tmp_path_factory) -> tuple[Path, Path]:
    """A small series and a complete output set cvfit wrote for it."""
    manifest = write_small_series(tmp_path_factory.mktemp("series"), 4, seed=4242)
    root = tmp_path_factory.mktemp("earlier")
    assert main(["run", str(manifest), "--out", str(root / "out"), "--quiet", "--jobs", "1"]) == 0
    return manifest, root / "out"


PLAN = """\
[expect]
log10_beta_ratio = 4.0
delta_ligands = 2
[design]
ligand_min_M = 1e-4
ligand_max_M = 0.1
points = 4
E_half_stderr_V = 5e-4
"""


def _set(folder: Path, earlier: tuple[Path, Path]) -> None:
    shutil.copytree(earlier[1], folder / "out", symlinks=True)


def _legacy(folder: Path, earlier: tuple[Path, Path]) -> None:
    _set(folder, earlier)
    (folder / "out" / MARKER_NAME).unlink()


def _plan_folder(folder: Path, fill: Callable[[Path], None]) -> list[str]:
    (folder / "plan.toml").write_text(PLAN, encoding="utf-8")
    (folder / "planout").mkdir()
    fill(folder / "planout")
    return ["plan", str(folder / "plan.toml"), "--out", str(folder / "planout"), "--quiet"]


def _cases(earlier: tuple[Path, Path]) -> dict[str, Callable[[Path], list[str]]]:
    manifest = earlier[0]

    def run_into(prepare: Callable[[Path], None]) -> Callable[[Path], list[str]]:
        def build(folder: Path) -> list[str]:
            prepare(folder)
            return ["run", str(manifest), "--out", str(folder / "out"), "--quiet", "--jobs", "1"]

        return build

    def backup(folder: Path) -> None:
        _set(folder, earlier)
        (folder / "out" / ".results.json.backup").write_text("my backup", encoding="utf-8")

    def folder_as_report(folder: Path) -> None:
        (folder / "out" / "report.html").mkdir(parents=True)
        (folder / "out" / "report.html" / "notes.txt").write_text("notes", encoding="utf-8")

    def link_to_file(folder: Path) -> None:
        (folder / "mine.txt").write_text("precious", encoding="utf-8")
        (folder / "out").mkdir()
        (folder / "out" / "results.json").symlink_to(folder / "mine.txt")

    def link_to_folder(folder: Path) -> None:
        (folder / "keep").mkdir()
        (folder / "keep" / "a.txt").write_text("a", encoding="utf-8")
        (folder / "out").mkdir()
        (folder / "out" / "report.html").symlink_to(folder / "keep", target_is_directory=True)

    def edited(folder: Path) -> None:
        _set(folder, earlier)
        with open(folder / "out" / "report.html", "a", encoding="utf-8") as fh:
            fh.write("<!-- my annotations -->")

    def forged(folder: Path) -> None:
        (folder / "out").mkdir()
        (folder / "out" / MARKER_NAME).write_text("my notes", encoding="utf-8")
        (folder / "out" / "results.json").write_text("{}", encoding="utf-8")

    def legacy_hidden(folder: Path) -> None:
        _legacy(folder, earlier)
        (folder / "out" / ".report.html.old").write_text("mine", encoding="utf-8")

    def loop(folder: Path) -> list[str]:
        (folder / "a").symlink_to("b")
        (folder / "b").symlink_to("a")
        return ["run", str(manifest), "--out", str(folder / "a"), "--quiet", "--jobs", "1"]

    def demo_inputs(folder: Path) -> list[str]:
        (folder / "d" / "inputs").mkdir(parents=True)
        (folder / "d" / "inputs" / "series.toml").write_text("# mine\n", encoding="utf-8")
        return ["demo", "--out", str(folder / "d"), "--quiet"]

    def demo_truth(folder: Path) -> list[str]:
        (folder / "d").mkdir()
        (folder / "d" / "simulated_with.toml").write_text("# mine\n", encoding="utf-8")
        return ["demo", "--out", str(folder / "d"), "--quiet"]

    def plan_json(out: Path) -> None:
        (out / "plan.json").write_text('{"mine": true}', encoding="utf-8")

    def plan_html_folder(out: Path) -> None:
        (out / "plan.html").mkdir()
        (out / "plan.html" / "n.txt").write_text("n", encoding="utf-8")

    return {
        "hidden look-alike .results.json.backup": run_into(backup),
        "a user folder named report.html": run_into(folder_as_report),
        "results.json a link to a user's file": run_into(link_to_file),
        "report.html a link to a user's folder": run_into(link_to_folder),
        "an output the user edited": run_into(edited),
        "a user file named like the record": run_into(forged),
        "an earlier version's set with a hidden file": run_into(legacy_hidden),
        "--out a symbolic link loop": loop,
        "demo over the user's inputs/series.toml": demo_inputs,
        "demo over the user's simulated_with.toml": demo_truth,
        "plan over the user's plan.json": lambda f: _plan_folder(f, plan_json),
        "plan over a user folder named plan.html": lambda f: _plan_folder(f, plan_html_folder),
    }


def _run(args: list[str], cwd: Path) -> subprocess.CompletedProcess:
    return subprocess.run(
        [sys.executable, "-m", "cvfit", *args],
        cwd=cwd,
        capture_output=True,
        text=True,
        timeout=TIMEOUT_S,
        stdin=subprocess.DEVNULL,
    )


@pytest.fixture(scope="module")
def refused(earlier, tmp_path_factory) -> dict[str, tuple]:
    """Each refusal case run once: name -> (process, snapshot before, snapshot after)."""
    root = tmp_path_factory.mktemp("refused")
    jobs = []
    for k, (name, build) in enumerate(_cases(earlier).items()):
        folder = root / f"case{k}"
        folder.mkdir()
        args = build(folder)
        jobs.append((name, folder, args, snapshot(folder)))
    with ThreadPoolExecutor(2) as pool:
        procs = list(pool.map(lambda j: _run(j[2], j[1]), jobs))
    return {
        name: (proc, before, snapshot(folder))
        for (name, folder, _, before), proc in zip(jobs, procs, strict=True)
    }


CASE_NAMES = list(_cases((Path("m"), Path("o"))))


@pytest.mark.parametrize("name", CASE_NAMES)
def test_a_folder_that_is_not_cvfits_is_refused_and_left_untouched(refused, name):
    proc, before, after = refused[name]
    lines = proc.stderr.splitlines()
    assert proc.returncode == 2, (proc.returncode, proc.stderr)
    assert len(lines) == 1 and lines[0].startswith("cvfit: error: "), proc.stderr
    assert after == before  # nothing of the user's removed, changed or added to


def test_the_refusals_say_why(refused):
    def line(name: str) -> str:
        return refused[name][0].stderr

    assert "'.results.json.backup'" in line("hidden look-alike .results.json.backup")
    assert "'report.html', a folder" in line("a user folder named report.html")
    assert "a symbolic link" in line("results.json a link to a user's file")
    assert "changed after cvfit wrote it" in line("an output the user edited")
    assert "not a record cvfit wrote" in line("a user file named like the record")
    assert "symbolic link loop" in line("--out a symbolic link loop")
    assert "simulated_with.toml" in line("demo over the user's simulated_with.toml")


def test_own_set_and_an_earlier_versions_set_are_replaced(earlier, tmp_path):
    """Accepted: a set with its record, and (before the record) only output names."""
    _legacy(tmp_path, earlier)
    args = ["run", str(earlier[0]), "--out", str(tmp_path / "out"), "--quiet", "--jobs", "1"]
    for _ in range(2):  # the second run replaces a set with its record
        proc = _run(args, tmp_path)
        assert proc.returncode == 0 and proc.stderr == "", proc.stderr
        record = json.loads((tmp_path / "out" / MARKER_NAME).read_text(encoding="utf-8"))
        listed = set(record["files"])
        assert listed == {p.name for p in (tmp_path / "out").iterdir()} - {MARKER_NAME}
        assert RUN_NAMES <= listed
    assert sorted(p.name for p in tmp_path.iterdir()) == ["out"]  # no leftover, no lock


def test_plan_writes_its_three_files_as_one_set_and_replaces_it(tmp_path):
    (tmp_path / "plan.toml").write_text(PLAN, encoding="utf-8")
    args = ["plan", str(tmp_path / "plan.toml"), "--out", str(tmp_path / "o"), "--quiet"]
    for _ in range(2):
        proc = _run(args, tmp_path)
        assert proc.returncode == 0 and proc.stderr == "", proc.stderr
    names = sorted(p.name for p in (tmp_path / "o").iterdir())
    assert names == sorted([MARKER_NAME, "plan.html", "plan.json", "plan.png"])
    assert sorted(p.name for p in tmp_path.iterdir()) == ["o", "plan.toml"]


# --- the rule itself ---------------------------------------------------------------------


def test_record_lists_every_file_with_its_hash(tmp_path):
    (tmp_path / "a.txt").write_text("a", encoding="utf-8")
    (tmp_path / "b.png").write_bytes(b"\x89PNG")
    record = json.loads(write_marker(tmp_path).read_text(encoding="utf-8"))
    # SHA-256 (NIST FIPS 180-4) of the one byte "a", as widely published (from memory)
    assert record["files"]["a.txt"] == (
        "ca978112ca1bbdcafac231b39a23dc4da786eff8147c4e72b9807785afee48bb"
    )
    assert sorted(record["files"]) == ["a.txt", "b.png"]
    assert foreign_reason(tmp_path) is None


@pytest.mark.parametrize(
    ("make", "reason"),
    [
        (lambda d: (d / "notes.txt").write_text("x"), "'notes.txt'"),
        (lambda d: (d / "a.txt").write_text("changed"), "changed after cvfit wrote it"),
        (lambda d: ((d / "a.txt").unlink(), (d / "a.txt").mkdir()), "a folder"),
        (lambda d: (d / MARKER_NAME).write_text("[]"), "not a record cvfit wrote"),
    ],
)
def test_anything_but_the_recorded_files_unchanged_is_foreign(tmp_path, make, reason):
    (tmp_path / "a.txt").write_text("a", encoding="utf-8")
    write_marker(tmp_path)
    assert foreign_reason(tmp_path) is None
    make(tmp_path)
    assert reason in foreign_reason(tmp_path)


def test_without_a_record_only_output_names_and_a_results_json_of_cvfits(tmp_path):
    earlier = EARLIER_SERIES_SET
    (tmp_path / "results.json").write_text('{"mine": 1}', encoding="utf-8")
    assert "not recognisably cvfit's" in foreign_reason(tmp_path, earlier)
    (tmp_path / "results.json").write_text('{"cvfit_version": "0.0.9"}', encoding="utf-8")
    assert foreign_reason(tmp_path, earlier) is None
    assert "which cvfit did not write" in foreign_reason(tmp_path)  # no earlier set allowed
    (tmp_path / "report.html").symlink_to(tmp_path / "results.json")
    assert "a symbolic link" in foreign_reason(tmp_path, earlier)
    (tmp_path / "report.html").unlink()
    (tmp_path / ".results.json.x1y2z3ab.json").write_text("", encoding="utf-8")
    assert "which cvfit did not write" in foreign_reason(tmp_path, earlier)
