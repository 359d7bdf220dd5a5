"""One function decides the E½ a file contributes (cvfit.pipeline.half_wave).

The regression case: an internal reference couple in every file, a ligand-free solution
recorded at three scan rates that its scan-rate study fails (slow transfer, k0 0.01 cm/s),
a reversible titration. Before the decision was one function, the failed files got their
raw midpoint back — the standard's correction dropped — and E½(s) averaged them without
looking at their verdicts: log10(β_ox/β_red) came out 10.7 against a truth of 4.0 (the gap
is the standard's 0.40 V over 59.16 mV). Truth: ML with log β1 = 4.0 (p − q = 1), E½ of
the free couple 0.0 V and of the standard 0.40 V on the electrode's scale, so −0.400 V
against the standard (Lingane, Chem. Rev. 29 (1941) 1).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import pytest
from seriesfactory import write_manifest, write_plain_csv

from cvfit.chemistry.complexation import complexed_half_wave_V
from cvfit.flags import Flag
from cvfit.io.manifest_standard import InternalStandard
from cvfit.pipeline import analyse_manifest_file
from cvfit.pipeline.half_wave import decide_half_wave
from cvfit.simulate.internal_standard import simulate_two_waves
from cvfit.techniques.base import HalfWaveEstimate, StandardMeasurement

STANDARD_V = 0.40
RATES_FREE = (0.05, 0.2, 0.8)
LIGAND = (0.005, 0.01, 0.02, 0.05, 0.1, 0.2)


def _series(folder, *, fit=None):
    cv = dict(start_V=0.7, switch_V=-0.5, step_V=0.001, double_layer_F=2e-6)
    runs = [(0.0, v, 0.01) for v in RATES_FREE] + [(c, 0.1, None) for c in LIGAND]
    entries = []
    for k, (c, v, k0) in enumerate(runs):
        e = float(complexed_half_wave_V(0.0, ligand_M=c, log10_beta_ox=(4.0,), log10_beta_red=()))
        rec = simulate_two_waves(
            E_half_V=e, standard_E_half_V=STANDARD_V, scan_rate_V_s=v, k0_cm_s=k0,
            noise_fraction=0.003, seed=11 + k, **cv,
        )  # fmt: skip
        write_plain_csv(folder / f"s{k}.csv", rec)
        entries.append({"file": f"s{k}.csv", "ligand_M": c, "scan_rate_V_s": v})
    manifest = write_manifest(
        folder / "series.toml",
        entries,
        series={"electrons": 1, "analyte_window_V": [-0.6, 0.2]},
        fit=fit,
    )
    with manifest.open("a", encoding="utf-8") as fh:
        fh.write("[internal_standard]\nwindow_V = [0.2, 0.8]\n")
    return manifest


@pytest.fixture(scope="module")
def result(tmp_path_factory):
    return analyse_manifest_file(_series(tmp_path_factory.mktemp("istd_study")))


def test_the_failed_reference_keeps_the_standards_correction(result):
    free = [f for f in result.files if f.ligand_M == 0.0]
    assert all(f.reversible is False for f in free)  # failed by their scan-rate study
    assert all("DELTA_EP_GROWS_WITH_SCAN_RATE" in [g.code for g in f.flags] for f in free)
    for f in free:  # on the standard's scale, as the titration points are
        assert f.E_half_V == pytest.approx(-STANDARD_V, abs=3e-3)
        assert f.half_wave.kind == "approximate" and f.E_half_source == "midpoint"


def test_the_constants_hold_the_truth_and_the_reference_is_flagged(result):
    fit = result.fit
    lo, hi = fit.log10_beta_ratio.ci95
    assert lo <= 4.0 <= hi, fit.log10_beta_ratio
    lo, hi = fit.delta_ligands.ci95
    assert lo <= 1.0 <= hi, fit.delta_ligands
    codes = [f.code for f in result.flags]
    assert "REFERENCE_NOT_NERNSTIAN" in codes  # never averaged in silently


def test_with_peaks_only_the_failed_reference_is_left_out_and_the_headline_says_what_to_do(
    tmp_path,
):
    result = analyse_manifest_file(_series(tmp_path, fit={"half_wave_source": "peaks"}))
    assert result.fit is None and result.reference.E_half_V is None
    flag = next(f for f in result.flags if f.code == "NO_REFERENCE_E_HALF")
    assert "record the ligand-free solution again" in flag.message
    assert all(f"s{k}.csv: it failed the reversibility screen" in flag.message for k in range(3))
    from cvfit.report.headline import headline_lines

    assert "record the ligand-free solution again" in headline_lines(result.to_dict())[0]


@dataclass(frozen=True)
class _Fake:
    """A measurement of some technique: an estimate and a standard, nothing else."""

    estimate: HalfWaveEstimate
    standard: StandardMeasurement | None = None
    technique: str = "fake"
    flags: tuple[Flag, ...] = ()
    reversible: bool | None = None
    bulk_form: str | None = None
    diffusion_current_A: float | None = None

    def half_wave_estimate(self) -> HalfWaveEstimate:
        return self.estimate


_STD = InternalStandard(window_V=(0.2, 0.8), E_half_V=0.1)


def test_the_standards_scale_applies_whatever_the_verdict():
    std = StandardMeasurement(E_half_V=0.45, E_half_stderr_V=3e-4, reversible=True)
    for kind in ("nernstian", "approximate", "unusable"):
        est = HalfWaveEstimate(-0.02, 4e-4, "x", kind)  # type: ignore[arg-type]
        d = decide_half_wave(_Fake(est, std), internal_standard=_STD, exclude_non_nernstian=True)
        assert d.E_half_V == pytest.approx(-0.02 - 0.45 + 0.1)  # E½ − E½,std + assigned
        assert d.stderr_V == pytest.approx(math.hypot(4e-4, 3e-4))
        assert d.accepted is (kind != "unusable")


def test_an_unusable_E_half_enters_only_when_the_manifest_says_so():
    est = HalfWaveEstimate(0.1, 1e-4, "x", "unusable", why="it failed the screen")
    out = decide_half_wave(_Fake(est), internal_standard=None, exclude_non_nernstian=True)
    assert not out.accepted and out.why == "it failed the screen"
    assert [f.code for f in out.flags] == ["EXCLUDED_NON_NERNSTIAN"]
    kept = decide_half_wave(_Fake(est), internal_standard=None, exclude_non_nernstian=False)
    assert kept.accepted and kept.E_half_V == 0.1 and not kept.flags


def test_a_missing_standard_leaves_no_E_half():
    est = HalfWaveEstimate(0.1, 1e-4, "x", "nernstian")
    lost = StandardMeasurement(E_half_V=None, E_half_stderr_V=None, reversible=None)
    d = decide_half_wave(_Fake(est, lost), internal_standard=_STD, exclude_non_nernstian=True)
    assert d.E_half_V is None and not d.accepted
    assert [f.code for f in d.flags] == ["INTERNAL_STANDARD_NOT_FOUND"]


@pytest.mark.parametrize("kind", ["nernstian", "approximate", "unusable"])
@pytest.mark.parametrize("exclude", [True, False])
def test_the_users_exclusion_overrides_every_verdict_and_keeps_the_E_half(kind, exclude):
    est = HalfWaveEstimate(0.1, 1e-4, "x", kind, why="a reason of the screen")  # type: ignore[arg-type]
    d = decide_half_wave(
        _Fake(est), internal_standard=None, exclude_non_nernstian=exclude,
        excluded_by_user="bubble on the electrode",
    )  # fmt: skip
    assert not d.accepted and d.why == "bubble on the electrode"
    assert d.E_half_V == 0.1 and d.stderr_V == 1e-4  # measured and reported all the same
    codes = [f.code for f in d.flags]
    assert "EXCLUDED_BY_USER" in codes and "EXCLUDED_NON_NERNSTIAN" not in codes


def test_the_users_exclusion_is_said_also_when_no_E_half_was_measured():
    est = HalfWaveEstimate(None, None, "x", "unusable", why="no peaks")
    d = decide_half_wave(
        _Fake(est), internal_standard=None, exclude_non_nernstian=True, excluded_by_user="r"
    )
    assert not d.accepted and d.why == "no peaks"
    assert [f.code for f in d.flags] == ["EXCLUDED_BY_USER"]
