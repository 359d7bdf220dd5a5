"""The global curve fit leaves out a file whose own curve fit was refused (it is not
Nernstian), and gives no constants when its reduced χ² is far above 1.

The series of tests/test_curve_series.py (project simulator, three quasi-reversible files,
global = true); the two-step results are altered where the rule needs it."""

from __future__ import annotations

import dataclasses

import pytest
from test_curve_series import SLOW, write_series

from cvfit.io import load_manifest
from cvfit.pipeline.global_stage import GLOBAL_REFUSE_REDUCED_CHI2, run_global
from cvfit.pipeline.series import analyse_series


@pytest.fixture(scope="module")
def series(tmp_path_factory):
    # the series analysed without its own global fit (the tests make theirs)
    folder = tmp_path_factory.mktemp("global_refusals")
    two_step = analyse_series(load_manifest(write_series(folder, source="project", slow=True)))
    manifest = load_manifest(
        write_series(folder, source="project", slow=True, fit={"global": True})
    )
    return manifest, two_step


def test_a_file_with_a_refused_curve_fit_is_left_out(series):
    manifest, res = series
    slow = next(f for f in res.files if f.ligand_M in SLOW and f.measurement.curve_fit is not None)
    cf = dataclasses.replace(slow.measurement.curve_fit, accepted=False)
    refused = dataclasses.replace(
        slow, measurement=dataclasses.replace(slow.measurement, curve_fit=cf)
    )
    # four files keep the global fit short: the reference, two Nernstian ones, the slow one
    kept = [f for f in res.files if f.ligand_M not in SLOW][:3] + [refused]
    g, flags = run_global(kept, manifest, res.fit, res.reference)
    assert g is not None and slow.file not in g.files and len(g.files) == 3
    note = [f for f in flags if f.code == "GLOBAL_FIT_FILE_LEFT_OUT"]
    assert note and slow.file in note[0].message


def test_a_global_fit_far_above_the_noise_gives_no_constants(series):
    manifest, res = series

    # every file's noise said 3× smaller than it is: the same curves, reduced χ² ≈ 9
    def quieter(f):
        peaks = dataclasses.replace(f.measurement.peaks, noise_A=f.measurement.peaks.noise_A / 3)
        return dataclasses.replace(f, measurement=dataclasses.replace(f.measurement, peaks=peaks))

    files = [quieter(f) for f in res.files if f.ligand_M not in SLOW][:4]
    g, flags = run_global(files, manifest, res.fit, res.reference)
    assert g is None
    refused = [f for f in flags if f.code == "GLOBAL_FIT_REFUSED"]
    assert refused and f"more than {GLOBAL_REFUSE_REDUCED_CHI2:g}" in refused[0].message
    # the same files with their noise as it is: constants given
    honest = [f for f in res.files if f.ligand_M not in SLOW][:4]
    g, _ = run_global(honest, manifest, res.fit, res.reference)
    assert g is not None and g.reduced_chi2 < 1.3
