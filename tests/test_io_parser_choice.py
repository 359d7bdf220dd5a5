"""When the importer loads its compiled number parser: only where the load repays itself.

Loading numba and the parser's machine code costs 0.3-0.5 s per process; a small series
must not pay it, a large one loads it once before its workers start. Which parser reads a
file never changes the record (tests/test_io_numparse.py compares them bit for bit).
"""

from __future__ import annotations

import subprocess
import sys

import numpy as np
import pytest
from seriesfactory import write_small_series

from cvfit import _file_stage
from cvfit.io import _numparse, _parser_choice, load_manifest, read_voltammogram

needs_numba = pytest.mark.skipif(not _numparse.HAVE_NUMBA, reason="numba is not installed")


@pytest.fixture
def fresh(monkeypatch):
    """The state of a new process: nothing loaded, nothing read."""
    monkeypatch.setattr(_parser_choice, "_module", None)
    monkeypatch.setattr(_parser_choice, "_tried", False)
    monkeypatch.setattr(_parser_choice, "_bytes_read", 0)
    return monkeypatch


@pytest.fixture(scope="module")
def series(tmp_path_factory):
    return write_small_series(tmp_path_factory.mktemp("choice"), 4, seed=40, step_V=0.002)


def test_not_loaded_for_small_reads(fresh, series):
    files = [e.file for e in load_manifest(series).voltammograms]
    for f in files:
        read_voltammogram(f)
    assert _parser_choice.compiled_parser() is None
    assert _parser_choice._bytes_read == sum(f.stat().st_size for f in files)
    assert not _parser_choice.load_compiled_parser_if_worth(10**6, processes=1)
    assert _parser_choice.compiled_parser() is None


@needs_numba
def test_loaded_once_enough_has_been_read(fresh, series):
    files = [e.file for e in load_manifest(series).voltammograms]
    fresh.setattr(_parser_choice, "WORTH_LOADING_BYTES", files[0].stat().st_size + 1)
    pandas_read = read_voltammogram(files[0])
    assert _parser_choice.compiled_parser() is None
    read_voltammogram(files[1])  # crosses the threshold: loaded for what comes next
    assert _parser_choice.compiled_parser() is _numparse
    again = read_voltammogram(files[0])  # now through the compiled parser, same record
    np.testing.assert_array_equal(again.current_A, pandas_read.current_A)
    assert again.metadata == pandas_read.metadata


@needs_numba
def test_threshold_is_per_process(fresh):
    limit = _parser_choice.WORTH_LOADING_BYTES
    assert not _parser_choice.load_compiled_parser_if_worth(2 * limit - 1, processes=2)
    assert _parser_choice.compiled_parser() is None
    assert _parser_choice.load_compiled_parser_if_worth(2 * limit, processes=2)
    assert _parser_choice.compiled_parser() is _numparse


@needs_numba
def test_series_stage_loads_it_for_a_large_series_only(fresh, series):
    manifest = load_manifest(series)
    _file_stage.analyse_files(manifest)
    assert _parser_choice.compiled_parser() is None
    total = sum(e.file.stat().st_size for e in manifest.voltammograms)
    fresh.setattr(_parser_choice, "WORTH_LOADING_BYTES", total)
    fresh.setattr(_parser_choice, "_bytes_read", 0)  # the serial run above counted its reads
    # two processes: half each, not enough; this one reads some files (never all: a
    # worker takes the first run), so it does not reach the threshold while reading
    _file_stage.analyse_files(manifest, jobs=2)
    assert _parser_choice.compiled_parser() is None
    _file_stage.analyse_files(manifest, jobs=1)
    assert _parser_choice.compiled_parser() is _numparse


def test_a_fresh_small_run_does_not_import_numba(series, tmp_path):
    args = ["run", str(series), "--out", str(tmp_path / "o"), "--quiet"]
    code = (
        "import sys\n"
        "from cvfit.cli import main\n"
        f"assert main({args!r}) == 0\n"
        "assert 'numba' not in sys.modules, 'numba imported for a small series'\n"
    )
    run = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True)
    assert run.returncode == 0, run.stderr[-2000:]
