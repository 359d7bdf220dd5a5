"""The command line sets the numerical libraries' environment before it imports them:
one BLAS thread (small least squares), unless the user chose otherwise."""

from __future__ import annotations

import os
import subprocess
import sys

import pytest

from cvfit.cli import NUMERIC_ENVIRONMENT

PROBE = """
import os, sys
import cvfit.cli
assert 'numpy' not in sys.modules, 'import cvfit.cli imported numpy'
try:
    cvfit.cli.main(['--version'])
except SystemExit:
    pass
from threadpoolctl import threadpool_info
import numpy  # imported by the command line or now: the environment is read at load
blas = sorted({i['num_threads'] for i in threadpool_info() if i['user_api'] == 'blas'})
print(os.environ['OPENBLAS_NUM_THREADS'], blas)
"""


def _probe(**env: str) -> str:
    base = {k: v for k, v in os.environ.items() if k not in NUMERIC_ENVIRONMENT}
    run = subprocess.run(
        [sys.executable, "-c", PROBE], capture_output=True, text=True, env={**base, **env}
    )
    assert run.returncode == 0, run.stderr
    return run.stdout.strip().splitlines()[-1]  # after "cvfit <version>"


def test_one_blas_thread_before_numpy_loads():
    assert NUMERIC_ENVIRONMENT["OPENBLAS_NUM_THREADS"] == "1"
    assert _probe() == "1 [1]"


@pytest.mark.skipif((os.cpu_count() or 1) < 2, reason="needs two cores to tell 2 from 1")
def test_the_users_setting_wins():
    assert _probe(OPENBLAS_NUM_THREADS="2") == "2 [2]"
