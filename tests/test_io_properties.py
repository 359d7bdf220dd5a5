"""Property tests: malformed text or bytes only ever raise InputError.

The importer may accept a random input (then it returns a valid Voltammogram) or refuse it
with an InputError; any other exception, or a warning (pytest runs with
filterwarnings=error), is a bug.
"""

from __future__ import annotations

import numpy as np
from dialects import DIALECTS, triangle_wave, write_dialect
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from cvfit import Voltammogram
from cvfit.errors import InputError
from cvfit.io import ImportOptions, parse_voltammogram_bytes
from cvfit.io import parse_voltammogram_text as parse_text

SETTINGS = settings(
    max_examples=300,
    deadline=None,
    derandomize=True,
    suppress_health_check=[HealthCheck.too_slow, HealthCheck.data_too_large],
)
_ALPHABET = st.sampled_from(list("0123456789.,;\t -+eE\n\r:=/()[]µAVmnuIt#\"'xnaif") + ["\r\n"])


def _accept_or_refuse(call) -> bool:
    """True when the input was accepted."""
    try:
        vg = call()
    except InputError as exc:
        assert "\n" not in str(exc) and str(exc)
        return False
    assert isinstance(vg, Voltammogram)
    assert np.all(np.isfinite(vg.potential_V)) and np.all(np.isfinite(vg.current_A))
    return True


@SETTINGS
@given(st.binary(max_size=3000))
def test_random_bytes(data):
    _accept_or_refuse(lambda: parse_voltammogram_bytes(data, source="random.bin"))


@SETTINGS
@given(st.lists(_ALPHABET, max_size=1500).map("".join))
def test_random_text(text):
    _accept_or_refuse(lambda: parse_text(text, source="random.txt"))


def _template(tmp_path_factory, dialect: str) -> bytes:
    E, i, t = triangle_wave(points_per_sweep=15)
    path = tmp_path_factory.mktemp("t") / "x.csv"
    return write_dialect(path, potential_V=E, current_A=i, time_s=t, dialect=dialect).read_bytes()


@SETTINGS
@given(
    dialect=st.sampled_from(DIALECTS),
    edits=st.lists(
        st.tuples(st.floats(0, 1), st.integers(0, 3), st.binary(min_size=0, max_size=6)),
        min_size=1,
        max_size=6,
    ),
    options=st.fixed_dictionaries(
        {
            "delimiter": st.sampled_from([None, ",", ";", "\t", "whitespace"]),
            "decimal": st.sampled_from([None, ".", ","]),
            "potential_column": st.sampled_from([None, 0, 1, 2, "E/V", "nope"]),
        }
    ),
)
def test_corrupted_valid_files(tmp_path_factory, dialect, edits, options):
    data = bytearray(
        _TEMPLATES.get(dialect)
        or _TEMPLATES.setdefault(dialect, _template(tmp_path_factory, dialect))
    )
    for where, kind, blob in edits:
        at = int(where * len(data))
        if kind == 0:
            data[at:at] = blob  # insert
        elif kind == 1:
            del data[at : at + max(1, len(blob))]  # delete
        elif kind == 2:
            data[at : at + len(blob)] = blob  # overwrite
        else:
            data = data[:at]  # truncate
    _accept_or_refuse(
        lambda: parse_voltammogram_bytes(
            bytes(data), source="c.csv", options=ImportOptions(**options)
        )
    )


_TEMPLATES: dict[str, bytes] = {}


def test_light_corruption_is_often_survivable(tmp_path_factory):
    """The property tests above exercise both outcomes, not only refusals."""
    rng = np.random.default_rng(7)
    accepted = 0
    for dialect in DIALECTS:
        data = bytearray(_template(tmp_path_factory, dialect))
        at = int(rng.integers(len(data) // 2, len(data)))
        data[at:at] = b"\n"  # an extra line break splits one row into two
        accepted += _accept_or_refuse(
            lambda d=bytes(data): parse_voltammogram_bytes(d, source="x")
        )
    assert 0 < accepted <= len(DIALECTS)
