"""What ``cvfit init`` reads from file names: natural order and the values a name carries.

The expected values are written out by hand (5 mM = 0.005 mol/L, 25 µL = 0.025 mL,
100 mV/s = 0.1 V/s), not computed by the code under test.
"""

from __future__ import annotations

import random

import pytest

from cvfit.io.file_names import natural_key, natural_sorted, parse_name


@pytest.mark.parametrize(
    "ordered",
    [
        ["L1.csv", "L2.csv", "L10.csv", "L11.csv", "L100.csv"],
        ["add_0.csv", "add_3.csv", "add_12.csv"],
        ["a2b1.csv", "a2b10.csv", "a10b1.csv"],
        ["blank.csv", "Fe_L2.csv", "fe_L3.csv", "Fe_L10.csv"],  # case does not split the runs
        ["x.csv", "x0.csv", "x1.csv"],
        ["L_0.25mM.csv", "L_0.5mM.csv", "L_1mM.csv", "L_2.5mM.csv", "L_10mM.csv"],
    ],
)
def test_natural_order(ordered):
    shuffled = ordered[:]
    random.Random(3).shuffle(shuffled)
    assert natural_sorted(shuffled) == ordered
    # plain text order would put 10 before 2: the test would fail on a plain sort
    assert sorted(["L2", "L10"]) == ["L10", "L2"]
    assert natural_key("L2") < natural_key("L10")


def test_natural_order_is_total():
    """Names equal but for case keep one order, whatever order they came in."""
    names = ["run_1.csv", "RUN_1.csv", "Run_1.csv"]
    assert natural_sorted(names) == natural_sorted(names[::-1])


#: name stem → (ligand_M, added_mL, addition, scan_rate_V_s); None where nothing is read.
CASES = {
    "L_5mM": (0.005, None, None, None),
    "5mM": (0.005, None, None, None),
    "Fe_5 mM_L": (0.005, None, None, None),
    "250uM": (0.00025, None, None, None),
    "ligand_250µM": (0.00025, None, None, None),
    "ligand_250μM": (0.00025, None, None, None),  # Greek mu
    "0.1M": (0.1, None, None, None),
    "L_0p5mM": (0.0005, None, None, None),
    "L_0.3mM": (0.0003, None, None, None),
    "titr_50nM": (5e-8, None, None, None),
    "0mM": (0.0, None, None, None),
    "blank": (0.0, None, None, None),
    "Blank_run2": (0.0, None, None, None),
    "ligand-free": (0.0, None, None, None),
    "noL": (0.0, None, None, None),
    "Fe_no_ligand": (0.0, None, None, None),
    "blank_0mM": (0.0, None, None, None),
    "x_0.25uL": (None, 0.00025, None, None),
    "x_25 µL": (None, 0.025, None, None),
    "x_25ul": (None, 0.025, None, None),
    "x_0.5mL": (None, 0.5, None, None),
    "add_3": (None, None, 3, None),
    "Fe_add12": (None, None, 12, None),
    "addition-7": (None, None, 7, None),
    "add_3_25uL": (None, None, 3, None),  # 3_25uL may be 3.25 µL: the volume is not read
    "L_5mM_100mVs": (0.005, None, None, 0.1),
    "free_50 mV_s": (0.0, None, None, 0.05),
    "scan_0.1Vs": (None, None, None, 0.1),
    "run_100mV-s": (None, None, None, 0.1),
    "run_20mVps": (None, None, None, 0.02),
    # nothing: no unit, a length, a number inside a word, or two meanings
    "Fe2_run3": (None, None, None, None),
    "L10": (None, None, None, None),
    "L5mM": (None, None, None, None),
    "electrode_3mm": (None, None, None, None),
    "sample_5MM": (None, None, None, None),
    "2_5mM": (None, None, None, None),
    "2-5mM": (None, None, None, None),
    "0,5mM": (None, None, None, None),
    "1mM_Fe_5mM_L": (None, None, None, None),
    "blank_5mM": (None, None, None, None),
    "5mM_25uL": (None, None, None, None),
    "freeze_test": (None, None, None, None),
    "address_4": (None, None, None, None),
    "100mVs_200mVs": (None, None, None, None),
    "run_5mMol": (None, None, None, None),
}


@pytest.mark.parametrize("stem", list(CASES))
def test_parse_name(stem):
    got = parse_name(stem)
    ligand, added, addition, rate = CASES[stem]
    assert (got.ligand_M, got.added_mL, got.addition) == (ligand, added, addition)
    assert got.scan_rate_V_s == rate
    # every value read is said in words, for the manifest's comments
    read = [v for v in (ligand, added, addition, rate) if v is not None]
    assert len(got.said) == len(read)


@pytest.mark.parametrize(
    ("stem", "doubt"),
    [
        ("2_5mM", "decimal number"),
        ("1mM_Fe_5mM_L", "several amounts"),
        ("blank_5mM", "'blank' beside 5mM"),
        ("100mVs_200mVs", "several scan rates"),
    ],
)
def test_doubts_are_said(stem, doubt):
    """A name that could mean two things says why nothing was read."""
    assert any(doubt in d for d in parse_name(stem).doubts), parse_name(stem).doubts
