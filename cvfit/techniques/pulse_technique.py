"""What the pulse techniques (DPV, SWV) share: the record's sweep, the settings checked
against the file, the sampled-current columns, the curve kept for figures, the summary.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import replace
from typing import Any, Literal

import numpy as np

from cvfit.errors import InputError
from cvfit.flags import Flag
from cvfit.io import read_voltammogram
from cvfit.io.manifest import Manifest, VoltammogramEntry
from cvfit.techniques.base import FileView, SeriesStudy, StudyItem, no_report_sections
from cvfit.techniques.curves import CycleCurve
from cvfit.techniques.pulse_measurement import PULSE_HIDDEN_KEYS, PULSE_REPORT_COLUMNS
from cvfit.voltammogram import Voltammogram

__all__ = [
    "first_sweep",
    "setting_flags",
    "read_components",
    "bulk_form_for",
    "drawn_sweep",
    "unchanged_study",
    "screen_summary",
]

#: Relative difference between a setting and what the file shows that is flagged.
SETTING_TOLERANCE = 0.05


def first_sweep(record: Voltammogram) -> tuple[np.ndarray, np.ndarray, np.ndarray | None, slice]:
    """(E, i, t, the slice) of the record's first monotonic sweep (a pulse record has one)."""
    sweeps = record.sweeps()
    cut = slice(sweeps[0].start, sweeps[0].stop + 1) if sweeps else slice(None)
    t = None if record.time_s is None else record.time_s[cut]
    return record.potential_V[cut], record.current_A[cut], t, cut


def bulk_form_for(manifest: Manifest, E: np.ndarray) -> Literal["ox", "red"]:
    """``[series] bulk_form``, else the form the scan converts (ox for a cathodic scan)."""
    given = manifest.series.bulk_form
    if given in ("ox", "red"):
        return given  # type: ignore[return-value]
    return "ox" if E[-1] < E[0] else "red"


def setting_flags(
    E: np.ndarray,
    t: np.ndarray | None,
    *,
    step_V: float | None,
    period_s: float | None,
    amplitude_V: float | None = None,
) -> list[Flag]:
    """Settings of ``[technique]`` that the file contradicts: the step, the period (from
    the time column) and the direction of a DPV pulse."""
    out = []
    checks = [("step_V", step_V, np.abs(np.diff(E)), "V")]
    if t is not None and period_s is not None:
        checks.append(("period_s", period_s, np.diff(t), "s"))
    for key, given, diffs, unit in checks:
        if given is None or diffs.size == 0:
            continue
        seen = float(np.median(diffs))
        if abs(seen - given) > SETTING_TOLERANCE * given:
            out.append(
                Flag(
                    "TECHNIQUE_SETTING_CONTRADICTS_FILE",
                    f"{key} in [technique] is {given:g} {unit} but the file steps by "
                    f"{seen:.4g} {unit}; check the setting",
                )
            )
    if amplitude_V is not None and E.size > 1 and (amplitude_V > 0) != (E[-1] > E[0]):
        out.append(
            Flag(
                "TECHNIQUE_SETTING_CONTRADICTS_FILE",
                f"pulse_amplitude_V {amplitude_V:+g} V goes against the scan's direction (the "
                "pulse usually goes with it: negative for a cathodic scan); E½ = E_peak + ΔE/2 "
                "uses the sign given, so check it",
            )
        )
    return out


def read_components(
    entry: VoltammogramEntry, columns: tuple[str | int | None, str | int | None], cut: slice,
    n: int,
) -> tuple[tuple[np.ndarray, np.ndarray] | None, list[Flag]]:  # fmt: skip
    """The two sampled-current columns named in ``[technique]`` (same rows as the record),
    read with the file's own import settings; None (and a flag when some were named) when
    they cannot be had."""
    if columns[0] is None and columns[1] is None:
        return None, []
    if columns[0] is None or columns[1] is None:
        why = "name both columns"
    else:
        try:
            got = [
                read_voltammogram(
                    entry.file, replace(entry.import_options, current_column=c)
                ).current_A[cut]
                for c in columns
            ]
        except (InputError, OSError) as exc:
            why = str(exc)
        else:
            if all(g.size == n for g in got):
                return (got[0], got[1]), []
            why = "they do not have the record's length"
    return None, [Flag("COMPONENT_COLUMNS_UNREAD", f"sampled-current columns not read: {why}")]


def drawn_sweep(record: Voltammogram, measurement: Any, max_points: int) -> CycleCurve:
    """The record's sweep thinned to about *max_points* for figures."""
    E, i, _, _ = first_sweep(record)
    stride = max(1, math.ceil(E.size / max(2, max_points)))
    return CycleCurve(E[::stride], i[::stride], stride)


def unchanged_study(items: Sequence[StudyItem], manifest: Manifest, reread: Any) -> SeriesStudy:
    """A pulse technique learns nothing more from its series: the measurements stand."""
    return SeriesStudy(tuple(it.measurement for it in items))


def screen_summary(name: str, files: Sequence[FileView]) -> list[str]:
    """One line: how many files passed the technique's Nernstian screen."""
    judged = [f for f in files if getattr(f.measurement, "reversible", None) is not None]
    passed = sum(f.measurement.reversible is True for f in judged)
    if not files:
        return []
    return [f"{name} screen: {passed} of {len(files)} file(s) Nernstian ({len(judged)} judged)"]


class PulseTechnique:
    """What DPV and SWV share behind the technique seam
    (:class:`cvfit.techniques.base.Technique`): no series study, the first sweep drawn, the
    pulse report columns, a one-line screen summary. A subclass gives ``name``, ``label``
    (the summary's words) and ``analyse``."""

    name: str = ""
    label: str = ""
    figures: tuple[str, ...] = ()
    report_columns = PULSE_REPORT_COLUMNS
    hidden_keys = PULSE_HIDDEN_KEYS

    study_series = staticmethod(unchanged_study)
    drawn_curve = staticmethod(drawn_sweep)
    report_sections = staticmethod(no_report_sections)

    def summary_lines(self, files: Sequence[FileView], studies: Sequence[Any]) -> list[str]:
        return screen_summary(self.label, files)
