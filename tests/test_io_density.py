"""A current-density column is never read as a current (its unit is per area)."""

import numpy as np
import pytest

from cvfit.errors import InputError
from cvfit.io import parse_voltammogram_text
from cvfit.io.columns import parse_label


@pytest.mark.parametrize(
    "label", ["j/mA cm-2", "Current density (mA/cm2)", "i / µA cm⁻²", "I (uA/cm^2)"]
)
def test_density_units_are_not_current_units(label):
    assert parse_label(label).unit is None


@pytest.mark.parametrize("header", ["E/V,j/mA cm-2", "E/V,Current density (mA/cm2)"])
def test_density_column_is_refused_with_the_file_named(header):
    E = np.linspace(0.4, -0.2, 300)
    E = np.concatenate([E, E[::-1]])
    body = "\n".join(f"{a:.5f},{b:.6e}" for a, b in zip(E, 1e-6 * np.sin(10 * E), strict=True))
    with pytest.raises(InputError, match=r"^dens\.csv: .*current"):
        parse_voltammogram_text(header + "\n" + body, source="dens.csv")


def test_plain_current_units_still_read():
    assert parse_label("I/mA").unit == "ma"
    assert parse_label("Current (µA)").unit == "ua"
