"""E½ tables: ``[[point]]`` entries instead of files, or beside them.

A table's E½ passes the one E½ decision like a file's, so a series of points gives the
same constants as the files the points were measured from; a point without a standard
error is flagged and its error taken from the scatter.
"""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np
import pytest
from scipy.constants import R, physical_constants
from seriesfactory import write_small_series

from cvfit.errors import InputError
from cvfit.io import load_manifest
from cvfit.pipeline.series import analyse_series

F = physical_constants["Faraday constant"][0]


def _points(folder: Path, rows, *, head: str = "", name: str = "points.toml") -> Path:
    """A manifest of [[point]] tables; *rows* are dicts of the point's keys."""
    lines = ["[series]", "electrons = 1", head]
    for row in rows:
        lines.append("[[point]]")
        lines += [f"{k} = {v!r}" for k, v in row.items() if v is not None]
    path = folder / name
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    return path


def test_a_table_alone_gives_the_constants_of_the_files_it_came_from(tmp_path):
    files = analyse_series(load_manifest(write_small_series(tmp_path, 6, seed=11)))
    rows = [
        {
            "ligand_M": f.ligand_M,
            "E_half_V": f.E_half_V,
            "E_half_stderr_V": f.E_half_total_stderr_V,
        }
        for f in files.files
    ]
    table = analyse_series(load_manifest(_points(tmp_path, rows)))
    for key in ("log10_beta_ratio", "delta_ligands", "slope_V_per_decade"):
        a, b = getattr(files.fit, key), getattr(table.fit, key)
        assert b.value == pytest.approx(a.value, abs=1e-12)
        assert b.stderr == pytest.approx(a.stderr, abs=1e-12)
        assert b.ci95 == pytest.approx(a.ci95, abs=1e-12)
    assert table.reference.E_half_V == pytest.approx(files.reference.E_half_V, abs=1e-15)
    for f in table.files:
        assert f.E_half_source == "table" and f.measurement.technique == "table"
        assert "E_HALF_FROM_TABLE" in {fl.code for fl in f.flags}


def test_a_pH_table_alone_gives_the_constants_of_its_voltammograms(tmp_path):
    from cvfit.simulate.variable_series import simulate_pH_series

    manifest = simulate_pH_series(
        tmp_path / "cv", pH=[2.0, 3.0, 4.0, 5.0, 6.0, 7.0, 8.0, 9.0], E0_V=0.1, pKa_ox=[4.0],
        pKa_red=[7.0], noise_fraction=0.003, seed=3, start_V=0.7, switch_V=-0.3, max_protons=1,
    )  # fmt: skip
    files = analyse_series(load_manifest(manifest))
    rows = [
        {"pH": f.pH, "E_half_V": f.E_half_V, "E_half_stderr_V": f.E_half_total_stderr_V}
        for f in files.files
    ]
    head = '[fit]\nmodel = "proton"\nmax_protons = 1'
    table = analyse_series(load_manifest(_points(tmp_path, rows, head=head)))
    for a, b in zip(
        (*files.fit.pKa_ox, *files.fit.pKa_red),
        (*table.fit.pKa_ox, *table.fit.pKa_red),
        strict=True,
    ):
        assert b.value.value == pytest.approx(a.value.value, abs=1e-9)
        assert b.value.ci95 == pytest.approx(a.value.ci95, abs=1e-6)


def test_points_beside_files_and_points_without_an_error(tmp_path):
    files = analyse_series(load_manifest(write_small_series(tmp_path, 4, seed=5)))
    text = (tmp_path / "series.toml").read_text(encoding="utf-8")
    # two more solutions, measured elsewhere, without a standard error
    slope = files.fit.slope_V_per_decade.value
    ref = files.reference.E_half_V
    lines = [text]
    for L in (0.15, 0.3):
        lines += ["[[point]]", f"ligand_M = {L!r}", f"E_half_V = {ref + slope * math.log10(L)!r}"]
    (tmp_path / "series.toml").write_text("\n".join(lines) + "\n", encoding="utf-8")
    mixed = analyse_series(load_manifest(tmp_path / "series.toml"))
    assert len(mixed.files) == 6 and mixed.fit.n_points == 5
    points = [f for f in mixed.files if f.measurement.technique == "table"]
    assert [f.file for f in points] == ["point 1", "point 2"]
    for f in points:
        assert {"E_HALF_FROM_TABLE", "E_HALF_ERROR_FROM_SCATTER"} <= {fl.code for fl in f.flags}
        assert f.used_in_fit
    # a point lacks an error: the line is fitted unweighted (the scatter sets the scale)
    assert not mixed.fit.weighted


def test_silver_ammine_table_from_published_constants(tmp_path):
    """An E½ table of Ag⁺/Ag in ammonia, reduced form (the metal) uncomplexed:
    E = E°(Ag⁺/Ag) − (RT/F) ln(1 + β1[NH3] + β2[NH3]²), written out here from the published
    constants log β1 = 3.31, log β2 = 7.21 and E° = 0.7996 V (Smith & Martell, Critical
    Stability Constants; CRC Handbook; both from memory), rounded to 0.1 mV as a table
    would print it. The table is computed, not read from a paper: no published E½–[L] table
    was at hand to re-read. Refitted as [[point]] tables by the stepwise model, the
    constants come back within 0.02 (the rounding of the table moves them by < 0.01)."""
    L = [0.0, 0.001, 0.003, 0.01, 0.03, 0.1, 0.3, 1.0]
    k = R * 298.15 / F
    E = [0.7996 - k * math.log(1 + 10**3.31 * x + 10**7.21 * x**2) for x in L]
    rows = [
        {"ligand_M": x, "E_half_V": round(e, 4), "E_half_stderr_V": 5e-5}
        for x, e in zip(L, E, strict=True)
    ]
    head = '[fit]\nmodel = "stepwise"\ncurrent_ratio_correction = false'
    fit = analyse_series(load_manifest(_points(tmp_path, rows, head=head))).fit
    assert [q.value for q in fit.log10_beta] == pytest.approx([3.31, 7.21], abs=0.02)
    assert fit.n_complexes == 2


def test_bad_tables_are_refused(tmp_path):
    (tmp_path / "a.csv").write_text("E/V,I/A\n", encoding="utf-8")
    rows = [{"ligand_M": 0.0, "E_half_V": 0.1}, {"ligand_M": 0.01}]
    with pytest.raises(InputError, match=r"point\[2\]\.E_half_V"):
        load_manifest(_points(tmp_path, rows))
    rows = [{"E_half_V": 0.1, "ligand_M": 0.0}]
    with pytest.raises(InputError, match="global curve fit"):
        load_manifest(_points(tmp_path, rows, head="[fit]\nglobal = true"))
    head = '[fit]\nmodel = "proton"'
    rows = [{"pH": 3.0, "E_half_V": 0.1, "ligand_M": 0.0}, {"pH": 5.0, "E_half_V": 0.1,
            "ligand_M": 0.1}]  # fmt: skip
    with pytest.raises(InputError, match="ligand_M differs"):
        load_manifest(_points(tmp_path, rows, head=head))
    rows = [{"pH": 3.0, "E_half_V": 0.1}, {"pH": 5.0, "E_half_V": 0.05}]
    with pytest.raises(InputError, match="with a pH; a titration fit needs at least 3"):
        analyse_series(load_manifest(_points(tmp_path, rows, head=head)))


def test_a_pH_point_table_alone_draws_its_figures(tmp_path):
    from cvfit.report import write_outputs

    pH = np.arange(2.0, 10.1, 1.0)
    E = 0.1 + R * 298.15 / F * np.log((1 + 10 ** (7.5 - pH)) / (1 + 10 ** (4.0 - pH)))
    rows = [{"pH": float(x), "E_half_V": float(e)} for x, e in zip(pH, E, strict=True)]
    result = analyse_series(load_manifest(_points(tmp_path, rows, head='[fit]\nmodel = "proton"')))
    out = write_outputs(result, tmp_path / "out")
    assert {"proton_figure", "proton_fractions_figure"} <= set(out)
    assert "voltammograms_figure" not in out  # no voltammogram to draw
