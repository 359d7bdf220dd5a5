"""The measurement of an E½ given in a table: the value and its standard error as stated."""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any, Literal

from cvfit.flags import Flag
from cvfit.techniques.base import HalfWaveEstimate, StandardMeasurement

__all__ = ["TableMeasurement", "TABLE_TECHNIQUE"]

#: The technique name of a table's E½ (results.json ``technique`` of the entry).
TABLE_TECHNIQUE = "table"
#: Keys every file record of results.json carries; a table point has no voltammogram, so
#: its peak data are null.
_NO_PEAKS = ("Epc_V", "Epa_V", "delta_Ep_V", "ipc_A", "ipa_A", "current_ratio", "curve_fit")


def _table_flags(stderr_V: float | None) -> tuple[Flag, ...]:
    given = Flag(
        "E_HALF_FROM_TABLE",
        "E½ given in the manifest ([[point]]), not measured from a voltammogram: taken as "
        "the E½ of a Nernstian couple as stated, no reversibility screen",
        "info",
    )
    if stderr_V is not None:
        return (given,)
    scatter = Flag(
        "E_HALF_ERROR_FROM_SCATTER",
        "no E_half_stderr_V given for this point: its standard error is estimated by the fit "
        "from the scatter of the points about the model (with other points' errors given, the "
        "stepwise model takes their median)",
        "info",
    )
    return (given, scatter)


@dataclass(frozen=True)
class TableMeasurement:
    """An E½ given in the manifest (:class:`cvfit.techniques.base.Measurement`).

    Attributes
    ----------
    E_half_V : float
        As given, V.
    E_half_stderr_V : float or None
        As given, V; None when the table gives none (the fits then take it from the
        scatter, and a flag says so).
    """

    E_half_V: float
    E_half_stderr_V: float | None = None

    technique = TABLE_TECHNIQUE
    standard: StandardMeasurement | None = None
    #: A table's E½ is taken as that of a Nernstian couple, as stated (no screen is run).
    reversible = True
    bulk_form: Literal["ox", "red"] | None = None
    diffusion_current_A: float | None = None

    @property
    def flags(self) -> tuple[Flag, ...]:
        return _table_flags(self.E_half_stderr_V)

    def half_wave_estimate(self) -> HalfWaveEstimate:
        """The E½ as given (kind ``"nernstian"``, source ``"table"``)."""
        return HalfWaveEstimate(self.E_half_V, self.E_half_stderr_V, "table", "nernstian")

    def to_dict(self) -> dict[str, Any]:
        return {**dict.fromkeys(_NO_PEAKS), "reversible": self.reversible}

    def table_cells(self) -> dict[str, object]:
        return {}

    def figure_marks(
        self,
    ) -> tuple[list[tuple[tuple[float, ...], tuple[float, ...]]], list[tuple[float, ...]]]:
        """Nothing to mark: a table entry has no voltammogram."""
        return [], []

    def summary_cells(self) -> dict[str, str]:
        return {}
