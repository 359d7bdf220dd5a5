"""The quantiles of cvfit.quantity are the numbers scipy.stats gives, to the last bit.

cvfit evaluates its Student-t, normal, F and χ² quantiles with scipy.special (the
functions scipy.stats evaluates for them) so that a run need not import scipy.stats;
results.json must not change by a bit, ends of the ranges and invalid arguments included.
"""

from __future__ import annotations

import itertools

import numpy as np
import pytest
from scipy import stats

from cvfit.quantity import (
    chi2_quantile,
    chi2_upper_quantile,
    f_quantile,
    f_upper_tail,
    normal_quantile,
    t_quantile,
)

P = [0.0, 1e-300, 1e-20, 1e-10, 0.025, 0.05, 0.5, 0.95, 0.975, 0.99, 1 - 1e-12, 1.0, -0.1, 1.1,
     np.nan]  # fmt: skip
DOF = [-1.0, 0.0, 0.5, 1.0, 2.0, 3.0, 4.5, 30.0, 1e6, np.inf, np.nan]
X = [-1.0, 0.0, 1e-12, 0.3, 1.0, 4.0, 1e10, np.inf, np.nan]


def _same(mine, ref) -> bool:
    a, b = np.asarray(mine, dtype=float), np.asarray(ref, dtype=float)
    return np.array_equal(a, b, equal_nan=True) and np.array_equal(
        np.signbit(a[~np.isnan(a)]), np.signbit(b[~np.isnan(b)])
    )


@pytest.mark.parametrize(
    ("mine", "ref"),
    [
        (t_quantile, stats.t.ppf),
        (chi2_quantile, stats.chi2.ppf),
        (chi2_upper_quantile, stats.chi2.isf),
    ],
    ids=["t.ppf", "chi2.ppf", "chi2.isf"],
)
def test_one_dof_quantiles_match_scipy_stats(mine, ref):
    bad = [(p, d) for p, d in itertools.product(P, DOF) if not _same(mine(p, d), ref(p, d))]
    assert not bad


def test_normal_quantile_matches_scipy_stats():
    assert all(_same(normal_quantile(p), stats.norm.ppf(p)) for p in P)


def test_f_quantile_and_tail_match_scipy_stats():
    pairs = list(itertools.product(DOF, DOF))
    bad = [
        (p, a, b)
        for p in P
        for a, b in pairs
        if not _same(f_quantile(p, a, b), stats.f.ppf(p, a, b))
    ]
    bad += [
        (x, a, b)
        for x in X
        for a, b in pairs
        if not _same(f_upper_tail(x, a, b), stats.f.sf(x, a, b))
    ]
    assert not bad


def test_arrays_and_scalars():
    nu = np.geomspace(1.0, 1e6, 50)
    assert _same(t_quantile(0.975, nu), stats.t.ppf(0.975, nu))
    assert isinstance(t_quantile(0.975, 3), float)
    # a known value: t(0.975, 10) = 2.228 (printed t tables; from memory)
    assert t_quantile(0.975, 10) == pytest.approx(2.228, abs=5e-4)


def test_a_series_run_does_not_import_scipy_stats(tmp_path):
    """The point of the module's quantiles: a Lingane run leaves scipy.stats (and lmfit,
    which imports it) unloaded, ~0.3 s of a typical run's start-up."""
    import subprocess
    import sys

    code = (
        "import sys\n"
        "from cvfit.cli import main\n"
        f"assert main(['demo', '--out', {str(tmp_path)!r}, '--quiet']) == 0\n"
        "print('loaded:', [m for m in ('scipy.stats', 'lmfit') if m in sys.modules])\n"
    )
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip().splitlines()[-1] == "loaded: []"
