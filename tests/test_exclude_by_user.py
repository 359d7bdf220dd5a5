"""A file left out by hand: ``exclude = "reason"`` on a ``[[voltammogram]]``.

The file is read, analysed and shown, but no fit takes its E½ — neither as a titration
point nor as the reference E½(s) — and the reason appears in results.json, the terminal
summary, the HTML report and an info flag. The outlier is a file whose potentials are
shifted by 40 mV (as a reference electrode that moved for one solution would shift them):
a clean voltammogram the screen cannot catch. Truth: tests/seriesfactory.py (Lingane's
relation, Lingane, Chem. Rev. 29 (1941) 1), the same tolerances as tests/test_pipeline.py.
"""

from __future__ import annotations

import csv
import json
from dataclasses import fields
from pathlib import Path

import pytest
from seriesfactory import (
    LIGAND_M,
    TRUE_DELTA_LIGANDS,
    TRUE_LOG10_RATIO,
    simulate_point,
    write_manifest,
    write_plain_csv,
)

from cvfit.cli import main
from cvfit.errors import InputError
from cvfit.io import load_manifest
from cvfit.pipeline.series import analyse_series
from cvfit.report.headline import screen_sentence, screen_short

SHIFT_V = 0.040
OUTLIER = "L_0.04.csv"  # one titration point
BAD_FREE = "free_b.csv"  # a second ligand-free solution, shifted too
REASON = "bubble on the electrode"
LABEL = "fourth addition"


def _write_files(folder: Path) -> list[dict]:
    """The series, the outlier and a second ligand-free file with potentials moved by
    SHIFT_V."""
    entries = []
    for k, ligand in enumerate(LIGAND_M):
        v = simulate_point(ligand, seed=40 + k)
        name = "free_a.csv" if ligand == 0 else f"L_{ligand:g}.csv"
        write_plain_csv(folder / name, _shifted(v) if name == OUTLIER else v)
        entry = {"file": name, "ligand_M": ligand, "scan_rate_V_s": 0.1}
        entries.append({**entry, "label": LABEL} if name == OUTLIER else entry)
    write_plain_csv(folder / BAD_FREE, _shifted(simulate_point(0.0, seed=99)))
    entries.insert(1, {"file": BAD_FREE, "ligand_M": 0.0, "scan_rate_V_s": 0.1})
    return entries


@pytest.fixture(scope="module")
def runs(tmp_path_factory):
    folder = tmp_path_factory.mktemp("exclude")
    entries = _write_files(folder)
    marked = [{**e, "exclude": REASON} if e["file"] in (OUTLIER, BAD_FREE) else e for e in entries]
    dropped = [e for e in entries if e["file"] not in (OUTLIER, BAD_FREE)]
    out = {}
    for name, these in (("all", entries), ("marked", marked), ("dropped", dropped)):
        path = write_manifest(folder / f"{name}.toml", these)
        out[name] = (path, analyse_series(load_manifest(path)))
    return out


def _shifted(v):
    return type(v)(**{**_fields(v), "potential_V": v.potential_V + SHIFT_V})


def _fields(v) -> dict:
    return {f.name: getattr(v, f.name) for f in fields(v) if f.init}


def test_the_excluded_outlier_gives_the_constants_of_the_series_without_it(runs):
    _, everything = runs["all"]
    _, marked = runs["marked"]
    _, dropped = runs["dropped"]
    assert marked.fit is not None and dropped.fit is not None and everything.fit is not None
    for name in ("log10_beta_ratio", "delta_ligands"):
        got = getattr(marked.fit, name).value
        assert got == pytest.approx(getattr(dropped.fit, name).value, abs=1e-9)
    assert abs(marked.fit.log10_beta_ratio.value - TRUE_LOG10_RATIO) < 0.03
    assert abs(marked.fit.delta_ligands.value - TRUE_DELTA_LIGANDS) < 0.05
    # the outliers do move the constants when they are used: the test can fail
    assert abs(everything.fit.log10_beta_ratio.value - TRUE_LOG10_RATIO) > 0.1
    assert marked.reference.E_half_V == pytest.approx(dropped.reference.E_half_V, abs=1e-12)
    assert BAD_FREE not in marked.reference.files and BAD_FREE in everything.reference.files


def test_the_excluded_files_are_analysed_and_carry_the_reason(runs):
    _, marked = runs["marked"]
    by_name = {f.file: f for f in marked.files}
    for name in (OUTLIER, BAD_FREE):
        f = by_name[name]
        assert f.E_half_V is not None and f.reversible is True  # measured, screened
        assert not f.used_in_fit and not f.half_wave.accepted
        assert f.half_wave.why == REASON and f.excluded_by_user == REASON
        codes = {fl.code: fl for fl in f.flags}
        assert REASON in codes["EXCLUDED_BY_USER"].message
        assert codes["EXCLUDED_BY_USER"].severity == "info"
    # left out by hand is not "failed the screen"
    assert not [fl for fl in marked.flags if fl.code == "FILES_EXCLUDED"]
    assert marked.nernstian


def test_the_reason_appears_in_every_output(runs, tmp_path, capsys):
    path, _ = runs["marked"]
    out = tmp_path / "out"
    assert main(["run", str(path), "--out", str(out)]) == 0
    terminal = capsys.readouterr().out
    data = json.loads((out / "results.json").read_text(encoding="utf-8"))
    files = {v["file"]: v for v in data["voltammograms"]}
    assert files[OUTLIER]["excluded_by_user"] == REASON
    assert files[OUTLIER]["used_in_fit"] is False
    assert files["free_a.csv"]["excluded_by_user"] is None
    assert "EXCLUDED_BY_USER" in {fl["code"] for fl in files[OUTLIER]["flags"]}
    row = next(line for line in terminal.splitlines() if line.startswith(OUTLIER))
    assert row.split()[-1] == "excl"
    assert f"  {OUTLIER}: {REASON}" in terminal and f"  {BAD_FREE}: {REASON}" in terminal
    with (out / "voltammograms.csv").open(encoding="utf-8", newline="") as fh:
        table = {row["file"]: row for row in csv.DictReader(fh)}
    assert table[OUTLIER]["excluded_by_user"] == REASON and table[OUTLIER]["label"] == LABEL
    assert table["free_a.csv"]["excluded_by_user"] == "" and table["free_a.csv"]["label"] == ""
    said = f"Left out by hand (2): {BAD_FREE}: {REASON}; {OUTLIER}: {REASON}."
    head = terminal.split("\n\n")[0]  # the headline: constants, the fit, the screen
    assert head.splitlines()[-1].endswith(said)
    html = (out / "report.html").read_text(encoding="utf-8")
    assert html.count('class="has-flags excluded"') == 2
    assert html.count(f"Left out of the fits by the manifest: {REASON}") == 2
    assert said in html


def test_a_file_left_out_by_hand_is_not_counted_by_the_screen():
    files = [
        {"file": "a.csv", "ligand_M": 0.0, "reversible": False, "excluded_by_user": "cracked"},
        {"file": "b.csv", "ligand_M": 0.0, "reversible": True, "excluded_by_user": None},
        {"file": "c.csv", "ligand_M": 0.01, "reversible": True, "used_in_fit": True},
    ]
    data = {"voltammograms": files}
    assert screen_sentence(data) == (
        "All 2 files passed the reversibility screen. Left out by hand (1): a.csv: cracked."
    )
    assert screen_short(data) == "all 2 passed"


@pytest.mark.parametrize("value", ['""', '"   "', "true", "3"])
def test_exclude_must_be_a_reason(tmp_path, value):
    path = tmp_path / "series.toml"
    path.write_text(
        '[series]\nelectrons = 1\n[[voltammogram]]\nfile = "a.csv"\nligand_M = 0.0\n'
        f"exclude = {value}\n",
        encoding="utf-8",
    )
    with pytest.raises(InputError, match="exclude.*non-empty text string"):
        load_manifest(path)
