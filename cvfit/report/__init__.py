"""Outputs of a series analysis: results.json, the per-file table, figures, summary.

- :mod:`.results_json` — the results.json text (every number with its uncertainty)
- :mod:`.file_table` — the per-file CSV table
- :mod:`.si_table` — the supporting-information table (CSV and LaTeX)
- :mod:`.figures` — the figures (matplotlib, imported only when they are drawn)
- :mod:`.html` — one self-contained HTML page to hand on
- :mod:`.summary` — the terminal summary (text; the command line prints it)
- :mod:`.atomic` — files written whole or not at all; output sets swapped in whole
"""

from __future__ import annotations

import json
from collections.abc import Sequence
from pathlib import Path

from cvfit.errors import OutputError
from cvfit.pipeline.results import SeriesResult
from cvfit.report.atomic import atomic_write_text, output_set
from cvfit.report.file_table import write_file_table
from cvfit.report.output_names import EARLIER_SERIES_SET, OUTPUT_NAMES
from cvfit.report.ownership import check_output_folder as check_folder
from cvfit.report.results_json import results_to_json, write_results_json
from cvfit.report.si_table import write_si_tables
from cvfit.report.summary import format_summary

__all__ = [
    "OUTPUT_NAMES",
    "write_outputs",
    "check_output_folder",
    "write_results_json",
    "results_to_json",
    "write_file_table",
    "format_summary",
]


def write_outputs(
    result: SeriesResult,
    out_dir: str | Path,
    *,
    simulated_with: Sequence[str] = (),
    figure_formats: Sequence[str] = ("png",),
) -> dict[str, Path]:
    """Write every output of *result* as one set: the folder *out_dir* holds that set.

    The set is written into a hidden folder beside *out_dir* and swapped in for it at
    once (:func:`cvfit.report.atomic.output_set`): after an interruption at any moment
    *out_dir* holds the complete earlier set or the complete new one, never a mix, and a
    failed run leaves it as it was. *out_dir* is therefore the set's own folder: one that
    holds anything cvfit did not write is refused (:mod:`cvfit.report.ownership`), and a
    second run into it waits until the first has written its set. *simulated_with* — for
    simulated data, the constants they were simulated with, in words — is shown by the HTML
    report (the demo passes it). *figure_formats* (of
    :data:`~cvfit.report.figures.print_style.FIGURE_FORMATS`): every figure is written in
    each, with the same base name; PNG always (the report embeds it).

    Returns
    -------
    dict of str to Path
        The files written, by the keys of :data:`OUTPUT_NAMES` (and the stepwise figures, and
        ``internal_standard_figure`` for a series with an internal standard); a figure in
        another format than PNG under its key and the format (``voltammograms_figure_svg``).

    Raises
    ------
    InputError
        *out_dir* holds files cvfit did not write, or is (or holds) the current folder.
    OutputError
        The set cannot be written: permission denied, a full disk, a file-size limit ...
    """
    out = Path(out_dir)
    try:
        with output_set(out, earlier=EARLIER_SERIES_SET) as stage:
            written = _write_set(result, stage, simulated_with, tuple(figure_formats))
    except OSError as exc:
        raise OutputError.from_os_error(exc, str(out)) from None
    return {key: out / p.name for key, p in written.items()}


def check_output_folder(out: Path) -> None:
    """Refuse an output folder that replacing it with a series' outputs would take from the
    user (:func:`cvfit.report.ownership.check_output_folder`; a folder written before sets
    carried their record may hold the names of :data:`OUTPUT_NAMES` and the optional
    figures only, with a results.json that cvfit wrote).

    Raises
    ------
    InputError
        *out* is not cvfit's to replace, or is (or holds) the current folder.
    OutputError
        *out* exists but may not be written.
    """
    check_folder(out, earlier=EARLIER_SERIES_SET)


def _write_set(
    result: SeriesResult,
    out: Path,
    simulated_with: Sequence[str] = (),
    figure_formats: tuple[str, ...] = ("png",),
) -> dict[str, Path]:
    """Every output of *result* into the empty folder *out*; results.json last."""
    from cvfit.report.figures.print_style import figure_formats as formats_context
    from cvfit.report.figures.registry import draw_figure, figures_for

    json_text = results_to_json(result)
    data = json.loads(json_text)
    written: dict[str, Path] = {
        "table": write_file_table(result, out / OUTPUT_NAMES["table"]),
        **write_si_tables(
            data, out / OUTPUT_NAMES["si_table_csv"], out / OUTPUT_NAMES["si_table_tex"]
        ),
    }
    with formats_context(figure_formats):
        for entry in figures_for(result):
            path = draw_figure(entry, result, out)
            if path is None:
                continue
            written[entry.output_key] = path
            for fmt in figure_formats:
                other = path.with_suffix(f".{fmt}")
                if other != path and other.is_file():
                    written[f"{entry.output_key}_{fmt}"] = other
    # The HTML page embeds every figure written above; keep it after them.
    from cvfit.report.html import write_html_report

    figures = [p for p in written.values() if p.suffix.lower() == ".png"]
    written["html_report"] = write_html_report(
        result, out / OUTPUT_NAMES["html_report"], figures=figures, simulated_with=simulated_with
    )
    written["results"] = out / OUTPUT_NAMES["results"]
    atomic_write_text(written["results"], json_text)
    return written
