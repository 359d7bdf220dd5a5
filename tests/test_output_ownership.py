"""A user's file is never deleted: an output folder is cvfit's to replace only by the record
of what cvfit wrote (``.cvfit-set.json``), for ``cvfit run``, ``cvfit plan`` and the inputs
of ``cvfit demo``.

Here: what is accepted (a set with its record, an earlier version's set) through the
command, and the rule itself. The refusals through the command — look-alike names, folders
and links under output names, an edited output, the demo's and the plan's folders — are
cases of the campaign, run by tests/test_reliability_campaign.py.
"""

from __future__ import annotations

import json
import shutil
import subprocess
import sys
from pathlib import Path

import pytest
from seriesfactory import write_small_series

from cvfit.cli import main
from cvfit.report.output_names import EARLIER_SERIES_SET
from cvfit.report.ownership import MARKER_NAME, foreign_reason, write_marker

TIMEOUT_S = 120
RUN_NAMES = {"results.json", "report.html", "voltammograms.csv"}


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


def _legacy(folder: Path, earlier: tuple[Path, Path]) -> None:
    """A set as a version before the record wrote it: the same files, no record."""
    shutil.copytree(earlier[1], folder / "out", symlinks=True)
    (folder / "out" / MARKER_NAME).unlink()


def _run(args: list[str], cwd: Path) -> subprocess.CompletedProcess:
    return subprocess.run(
        [sys.executable, "-m", "cvfit", *args],
        cwd=cwd,
        capture_output=True,
        text=True,
        timeout=TIMEOUT_S,
        stdin=subprocess.DEVNULL,
    )


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
