"""How many processes read the files of one series when --jobs is not given."""

from __future__ import annotations

import pytest

from cvfit.cli import file_jobs
from cvfit.errors import InputError
from cvfit.pipeline.per_file import check_jobs


def test_small_series_stay_in_one_process(monkeypatch):
    monkeypatch.setattr(file_jobs, "available_cores", lambda: 2)
    assert file_jobs.default_file_jobs(20) == 1
    assert file_jobs.default_file_jobs(file_jobs.PARALLEL_MIN_FILES - 1) == 1


def test_large_series_get_one_worker_per_core(monkeypatch):
    monkeypatch.setattr(file_jobs, "available_cores", lambda: 2)
    assert file_jobs.default_file_jobs(file_jobs.PARALLEL_MIN_FILES) == 2
    monkeypatch.setattr(file_jobs, "available_cores", lambda: 1)
    assert file_jobs.default_file_jobs(500) == 1


@pytest.mark.parametrize("bad", [0, -3, True, 1.5])
def test_jobs_below_one_or_not_whole_is_bad_input(bad):
    with pytest.raises(InputError, match="--jobs must be at least 1"):
        check_jobs(bad)
