"""Figures for print: the file formats written, the resolution, and the size rule.

The rule (common practice of journals: lettering 7–9 pt at the printed size, one column
≈ 8.5 cm, two columns ≈ 17.8 cm): every figure is drawn at the width it is meant to be
printed at — :data:`ONE_COLUMN_IN` for a single plot, :data:`TWO_COLUMNS_IN` for a grid of
panels — so that its smallest text, scaled to that width, is at least
:data:`MIN_PRINTED_PT` points (:func:`printed_font_pt` measures it on the drawn figure).
PNG files are written at :data:`PNG_DPI` (journals ask for ≥ 300 dpi for photographs, less
for line art; 200 dpi keeps a one-column figure 670 px wide for the HTML report).

No matplotlib at import: the command line validates ``--figure-format`` with this module.
"""

from __future__ import annotations

from collections.abc import Iterator
from contextlib import contextmanager
from contextvars import ContextVar
from typing import TYPE_CHECKING

from cvfit.errors import InputError

if TYPE_CHECKING:
    from matplotlib.figure import Figure

__all__ = [
    "FIGURE_FORMATS",
    "DEFAULT_FORMATS",
    "PNG_DPI",
    "ONE_COLUMN_IN",
    "TWO_COLUMNS_IN",
    "MIN_PRINTED_PT",
    "parse_figure_formats",
    "figure_formats",
    "formats_in_force",
    "printed_font_pt",
]

#: File formats a figure can be written in (the suffix of its file).
FIGURE_FORMATS = ("png", "svg", "pdf")
#: Written when no format is asked for; PNG is always written (the HTML report embeds it).
DEFAULT_FORMATS: tuple[str, ...] = ("png",)
#: Resolution of the PNG files, dots per inch.
PNG_DPI = 200
#: Print widths, inches: one column (8.5 cm) and two columns (17.8 cm).
ONE_COLUMN_IN = 8.5 / 2.54
TWO_COLUMNS_IN = 17.8 / 2.54
#: Smallest lettering at the printed width, points.
MIN_PRINTED_PT = 7.0

_FORMATS: ContextVar[tuple[str, ...]] = ContextVar("cvfit_figure_formats", default=DEFAULT_FORMATS)


def parse_figure_formats(text: str) -> tuple[str, ...]:
    """The formats of a ``--figure-format`` value (``"png,svg,pdf"``), PNG first.

    Raises
    ------
    InputError
        An empty item or a format not in :data:`FIGURE_FORMATS`.
    """
    items = [item.strip().lower() for item in text.split(",")]
    for item in items:
        if item not in FIGURE_FORMATS:
            shown = f"{item!r}" if item else "an empty item"
            raise InputError(
                f"--figure-format {text!r}: {shown} is not a figure format; "
                f"give a comma list of {', '.join(FIGURE_FORMATS)}",
                source="<command line>",
            )
    return tuple(dict.fromkeys(["png", *items]))


@contextmanager
def figure_formats(formats: tuple[str, ...]) -> Iterator[None]:
    """Inside, every figure drawn is written in each of *formats* (same base name)."""
    token = _FORMATS.set(tuple(dict.fromkeys(["png", *formats])))
    try:
        yield
    finally:
        _FORMATS.reset(token)


def formats_in_force() -> tuple[str, ...]:
    """The formats figures are written in now (PNG first)."""
    return _FORMATS.get()


def printed_font_pt(fig: Figure, print_width_in: float) -> float:
    """Size of the smallest visible text of *fig*, points, once printed *print_width_in*
    wide (the figure scaled as a whole); ``inf`` when it holds no text."""
    from matplotlib.text import Text

    scale = print_width_in / float(fig.get_size_inches()[0])
    sizes = [
        float(t.get_fontsize())
        for t in fig.findobj(Text)
        if isinstance(t, Text) and t.get_visible() and t.get_text().strip()
    ]
    return min(sizes, default=float("inf")) * float(scale)
