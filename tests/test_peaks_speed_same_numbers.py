"""The fast kernels of the peak analysis give the numbers of the plain forms they replace.

The peak analysis was made faster by restructuring its arithmetic (an exact median by one
partition; least squares and pseudo-inverses from a QR of the design followed by the SVD
of its small triangle; the vertex window by bisection on monotonic sweeps; residuals
reused). None of that may change a reported number beyond rounding. Checked here:

* each kernel against the plain form it replaced, written out below (``np.median``; one
  SVD of the whole design for the coefficients with ``np.linalg.lstsq``'s cut-off and for
  (XᵀX)⁺ with ``np.linalg.pinv``'s; ``np.linalg.pinv`` of the vertex design; designs built
  with ``np.column_stack``), including rank-deficient and badly scaled designs;
* :func:`cvfit.techniques.cv.peaks.analysis.analyse_peaks` with those plain forms patched in
against the fast
  path, on simulated and synthetic voltammograms;
* ``STORED``: the values :func:`analyse_peaks` gave with the plain forms (same
  closed-form synthetic records, built below without the simulator, so a change to the
  simulator cannot move them), to 1e-9 relative, with the same flags.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from cvfit.simulate.voltammogram import simulate_cv
from cvfit.techniques.cv.peaks import baseline as pf
from cvfit.techniques.cv.peaks import least_squares as la
from cvfit.techniques.cv.peaks import location as pl
from cvfit.techniques.cv.peaks.analysis import _OPTIONAL, analyse_peaks
from cvfit.units import thermal_voltage
from cvfit.voltammogram import Voltammogram

RTOL = 1e-9


def _close(actual, expected, rtol=RTOL):
    """Equal to ``rtol`` of the largest magnitude of ``expected`` (norm-wise)."""
    expected = np.asarray(expected, dtype=float)
    scale = float(np.max(np.abs(expected))) if expected.size else 0.0
    np.testing.assert_allclose(actual, expected, rtol=rtol, atol=rtol * scale)


# --- the plain forms the kernels replace -------------------------------------------------


def _ref_noise_sd(*currents):
    d2 = [np.diff(np.asarray(c, dtype=float), 2) for c in currents if np.size(c) >= 3]
    if not d2:
        return 0.0
    d = np.concatenate(d2)
    mad = float(np.median(np.abs(d - np.median(d))))
    return pf._MAD_TO_SD * mad / math.sqrt(6.0)


def _ref_least_squares(X, y):
    U, S, Vt = np.linalg.svd(X, full_matrices=False)
    top = float(S[0]) if S.size else 0.0
    keep = S > np.finfo(float).eps * max(X.shape) * top
    inv = np.divide(1.0, S, out=np.zeros_like(S), where=keep)
    coef = Vt.T @ (inv * (U.T @ y))
    keep2 = S * S > 1e-15 * top * top
    inv2 = np.divide(1.0, S * S, out=np.zeros_like(S), where=keep2)
    return coef, (Vt.T * inv2) @ Vt


def _ref_fit_foot(E, i, sign, kappa_per_V, sigma, tail=None, extra=None):
    E0 = float(np.mean(E))
    u = np.clip(sign * kappa_per_V * (E - E[-1]), -700.0, 0.0)
    cols = [np.ones(E.size), E - E0, np.exp(u)] + ([] if tail is None else [tail])
    X = np.column_stack(cols)
    y = i
    if tail is not None and extra is not None:
        E_x, i_x, t_x = extra
        z = np.zeros(E_x.size)
        lower = np.column_stack([z, E_x - E0, z, t_x])
        offset = np.concatenate([np.zeros(E.size), np.ones(E_x.size)])
        X = np.column_stack([np.vstack([X, lower]), offset])
        y = np.concatenate([i, i_x])
    coef, gram_inv = _ref_least_squares(X, y)
    keep = [0, 1] if tail is None else [0, 1, 3]
    if sign * coef[2] <= 0:
        X = X[:, [k for k in range(X.shape[1]) if k != 2]]
        coef, gram_inv = _ref_least_squares(X, y)
        coef = np.insert(coef, 2, 0.0)
        cov = np.insert(np.insert(sigma**2 * gram_inv, 2, 0.0, 0), 2, 0.0, 1)
    else:
        cov = sigma**2 * gram_inv
    return pf.LineFit(E0, coef[keep], cov[np.ix_(keep, keep)])


def _ref_switch_step(E_forward, i_forward, E_reverse, i_reverse, E_switch, *, points, gap=3):
    f_sl = slice(-points - gap, -gap)
    r_sl = slice(gap, points + gap)
    tf = -np.abs(E_forward[f_sl] - E_switch)
    tr = np.abs(E_reverse[r_sl] - E_switch)
    scale = float(max(np.max(tr), np.max(-tf)))
    t = np.concatenate([tf, tr]) / scale
    after = np.concatenate([np.zeros(tf.size), np.ones(tr.size)])
    root = np.sqrt(np.clip(t, 0.0, None))
    X = np.column_stack([np.ones_like(t), t, t * t, after, after * root, after * root**3])
    y = np.concatenate([i_forward[f_sl], i_reverse[r_sl]])
    coef, gram_inv = _ref_least_squares(X, y)
    return float(coef[3]), float(coef[0]), math.sqrt(gram_inv[3, 3])


def _ref_vertex_fit(E, y, centre, half_width_V, monotonic=False):
    if not half_width_V > 0:
        return None
    idx = np.nonzero(np.abs(E - centre) <= half_width_V)[0]
    deg = pl.VERTEX_DEGREE
    if idx.size < deg + 4:
        return None
    x = (E[idx] - centre) / half_width_V
    X = np.column_stack([x**j for j in range(deg + 1)])
    pinv = np.linalg.pinv(X)
    b = pinv @ y[idx]
    xv = pl._stationary(b)
    if xv is None or abs(xv) > 1.0:
        return None
    j = np.arange(deg + 1)
    curvature = sum(k * (k - 1) * b[k] * xv ** (k - 2) for k in range(2, deg + 1))
    dvdb = -np.array([k * xv ** (k - 1) if k else 0.0 for k in j]) / curvature
    height = float(sum(b[k] * xv**k for k in j))
    return pl.Vertex(centre + half_width_V * xv, height, half_width_V * (dvdb @ pinv), idx)


# --- closed-form synthetic voltammograms (no simulator) ---------------------------------

E_HALF = 0.1
IP = 20e-6


def synthetic_cv(
    *,
    first="reduction",
    n=1,
    start_off=0.25,
    switch_off=0.35,
    cycles=1,
    noise=0.005,
    seed=0,
    jitter_V=0.0,
    step_V=0.001,
    wave=1.0,
):
    """A CV-like record from closed forms: peaked waves with an exponential foot and a
    t^-1/2 decay, their tails after each sweep, charging steps, a slope and noise.

    Not a physical model (the values are only a regression reference); ``jitter_V`` adds
    noise to the potential so that the sweeps are not monotonic.
    """
    rt_nf = thermal_voltage(298.15, n)
    d = -1.0 if first == "reduction" else 1.0
    start, switch = E_HALF - d * start_off, E_HALF + d * switch_off
    m = int(round(abs(switch - start) / step_V))
    fwd = start + d * step_V * np.arange(m + 1)
    one = np.concatenate([fwd, fwd[::-1][1:]])
    E = np.concatenate([one] + [one[1:]] * (cycles - 1))
    tau = np.arange(E.size) * step_V
    i = np.zeros(E.size)
    for k in range(2 * cycles):
        a, b = k * m, (k + 1) * m
        direction = d if k % 2 == 0 else -d
        xi = direction * (E[a : b + 1] - E_HALF) / rt_nf
        g = 1.0 / (1.0 + np.exp(-xi)) / np.sqrt(1.0 + 0.8 * np.logaddexp(0.0, xi))
        i[a : b + 1] += direction * wave * IP * g
        later = tau[b + 1 :] - tau[b]
        i[b + 1 :] += direction * wave * IP * g[-1] * np.sqrt(0.05 / (0.05 + later))
        i[a + 1 : b + 1] += direction * 2e-6
    i += 3e-6 * (E - E_HALF) + 0.5e-6
    rng = np.random.default_rng(seed)
    i += rng.normal(0.0, noise * IP, E.size)
    if jitter_V:
        E = E + rng.normal(0.0, jitter_V, E.size)
    return Voltammogram(E, i, source=f"synthetic-{seed}")


CASES = {
    "reduction": dict(seed=1),
    "oxidation_n2": dict(first="oxidation", n=2, start_off=0.15, switch_off=0.25, seed=2),
    "three_cycles": dict(cycles=3, seed=3),
    "two_cycles_oxidation": dict(first="oxidation", cycles=2, seed=10),
    "short_foot": dict(start_off=0.08, seed=4),
    "switch_at_foot": dict(switch_off=0.02, seed=5),
    "jittered_potential": dict(jitter_V=0.0004, seed=6),
    "noise_free": dict(noise=0.0, seed=7),
    "no_wave": dict(wave=0.0, seed=8),
    "fine_steps": dict(step_V=0.0001, seed=9),
}
# every optional number of PeakAnalysis, in its field order, and the noise
FIELDS = (*_OPTIONAL, "noise_A")
# analyse_peaks(synthetic_cv(**CASES[name]), cycle=c, electrons=n) with the plain forms
# (recorded again when the vertex fit became a degree-7 polynomial over ±1.1·|Ep − Ep/2|)
STORED = {
    ("reduction", 1): (
        (
            0.05190577160950922,
            0.14984001017179518,
            1.0707713454574781e-05,
            1.2774086304280662e-05,
            0.12166976856533555,
            0.07155072678167083,
            0.1008728908906522,
            0.0005711968865760539,
            0.09793423856228597,
            1.1929798419122843,
            1.0182879596456634e-07,
        ),
        (),
    ),
    ("oxidation_n2", 1): (
        (
            0.07532205836098949,
            0.12419383139150245,
            1.2224788533464568e-05,
            1.0686427357005616e-05,
            0.1132818157666004,
            0.08996065939014568,
            0.09975794487624597,
            0.0003891383400261845,
            0.04887177303051296,
            1.143954674941056,
            1.0141407120532337e-07,
        ),
        (),
    ),
    ("three_cycles", 1): (
        (
            0.05057516198663152,
            0.14902468817145761,
            1.0794111547281396e-05,
            1.2877594048979118e-05,
            0.12042483223766236,
            0.07337957919089254,
            0.09979992507904456,
            0.00053471092404831,
            0.0984495261848261,
            1.1930202863451478,
            1.0415567137472233e-07,
        ),
        (),
    ),
    ("three_cycles", 2): (
        (
            0.05888720842244812,
            0.14347125163589122,
            8.616220220185566e-06,
            None,
            0.11805524381600084,
            None,
            0.10117923002916968,
            0.0004916733151169125,
            0.0845840432134431,
            None,
            9.9413360753758e-08,
        ),
        ("CURRENT_RATIO_NOT_DETERMINED",),
    ),
    ("three_cycles", 3): (
        (
            0.05805966768913107,
            0.14235975968848724,
            8.686669446898521e-06,
            None,
            0.11811867375801953,
            None,
            0.10020971368880915,
            0.0004944579157865548,
            0.08430009199935617,
            None,
            1.0030203712870595e-07,
        ),
        ("CURRENT_RATIO_NOT_DETERMINED",),
    ),
    ("two_cycles_oxidation", 1): (
        (
            0.04921016852977511,
            0.14923239277764344,
            1.2582920856548467e-05,
            1.0718726721335623e-05,
            0.12753748063888629,
            0.07962400333677984,
            0.09922128065370928,
            0.0006101406750498229,
            0.10002222424786833,
            1.1739193640884757,
            1.0531195243506785e-07,
        ),
        (),
    ),
    ("two_cycles_oxidation", 2): (
        (
            0.05552754003746503,
            0.14228251663396366,
            None,
            8.633186781295202e-06,
            None,
            0.08117238390830428,
            0.09890502833571435,
            0.0005974636250033179,
            0.08675497659649863,
            None,
            9.727468278294785e-08,
        ),
        ("CURRENT_RATIO_NOT_DETERMINED",),
    ),
    ("short_foot", 1): (
        (
            0.07724606082532932,
            None,
            3.4857990523746936e-06,
            None,
            0.11284437311093896,
            None,
            None,
            None,
            None,
            None,
            1.0408848571679794e-07,
        ),
        ("SHORT_BASELINE", "NO_REVERSE_PEAK"),
    ),
    ("switch_at_foot", 1): (
        (
            None,
            None,
            None,
            None,
            None,
            None,
            None,
            None,
            None,
            None,
            9.016422749103658e-08,
        ),
        ("NO_FORWARD_PEAK", "NO_REVERSE_PEAK"),
    ),
    ("jittered_potential", 1): (
        (
            0.0525797608137776,
            0.14922542075697337,
            1.0608581461943904e-05,
            1.2799623072533628e-05,
            0.12031383456646808,
            0.07155555523581235,
            0.10090259078537549,
            0.0005385224739213939,
            0.09664565994319577,
            1.2065348339407709,
            1.0006741492600907e-07,
        ),
        (),
    ),
    ("noise_free", 1): (
        (
            0.05181806139654114,
            0.14954974900386597,
            1.0720326909869942e-05,
            1.2823994427782914e-05,
            0.12119039946713313,
            0.07175697403509433,
            0.10068390520020355,
            4.567004591240708e-07,
            0.09773168760732484,
            1.1962316574484475,
            8.555656406208316e-11,
        ),
        (),
    ),
    ("no_wave", 1): (
        (
            None,
            None,
            None,
            None,
            None,
            None,
            None,
            None,
            None,
            None,
            1.0898855669585791e-07,
        ),
        ("NO_FORWARD_PEAK", "NO_REVERSE_PEAK"),
    ),
    ("fine_steps", 1): (
        (
            0.051572907133682934,
            0.1492492277601618,
            1.0731611589357497e-05,
            1.2752827560924452e-05,
            0.11896524349050111,
            0.07263102259895204,
            0.10041106744692237,
            0.00017587660183947476,
            0.09767632062647888,
            1.1883422591972475,
            1.0192447686020276e-07,
        ),
        (),
    ),
}


def _case(name):
    kw = CASES[name]
    return synthetic_cv(**kw), kw.get("n", 1)


def _cycles(name):
    return {"three_cycles": (1, 2, 3), "two_cycles_oxidation": (1, 2)}.get(name, (1,))


STORED_KEYS = [(name, c) for name in CASES for c in _cycles(name)]


@pytest.mark.parametrize(("name", "cycle"), STORED_KEYS)
def test_analysis_gives_the_stored_numbers(name, cycle):
    v, n = _case(name)
    p = analyse_peaks(v, cycle=cycle, electrons=n)
    values, codes = STORED[name, cycle]
    for field, expected in zip(FIELDS, values, strict=True):
        got = getattr(p, field)
        if expected is None:
            assert got is None, field
        else:
            assert got == pytest.approx(expected, rel=RTOL, abs=0.0), field
    assert tuple(f.code for f in p.flags) == codes


def test_the_jittered_case_takes_the_non_monotonic_path():
    # otherwise the exact full-sweep window search would go untested here
    v, _ = _case("jittered_potential")
    fwd = np.asarray(v.cycle(1).forward.potential_V)
    steps = np.diff(fwd)
    assert steps.min() < 0 < steps.max()


# --- kernels ------------------------------------------------------------------------------


@pytest.mark.parametrize("size", [1, 2, 3, 4, 5, 10, 11, 1000, 1001, 20_000])
def test_median_in_place_is_numpy_median(size):
    rng = np.random.default_rng(size)
    for values in (
        rng.normal(size=size),
        np.round(rng.normal(size=size), 1),  # many ties
        np.sort(rng.normal(size=size)),
        np.full(size, 0.25),
    ):
        assert la.median_in_place(values.copy()) == np.median(values)


def test_median_of_nothing_raises():
    with pytest.raises(ValueError, match="empty"):
        la.median_in_place(np.array([]))


def test_noise_sd_is_the_plain_form_exactly():
    rng = np.random.default_rng(0)
    a, b = rng.normal(size=10_001), rng.normal(size=9_998)
    smooth = np.sin(np.linspace(0, 3, 500)) + 1e-3 * rng.normal(size=500)
    for args in ((a, b), (a,), (b, np.array([1.0, 2.0])), (smooth,), (np.arange(5.0),)):
        assert pf.noise_sd(*args) == _ref_noise_sd(*args)
    assert pf.noise_sd(np.array([1.0, 2.0])) == 0.0 == _ref_noise_sd(np.array([1.0, 2.0]))


def _designs():
    rng = np.random.default_rng(3)
    x = np.linspace(-0.2, 0.1, 900)
    yield "random", rng.normal(size=(400, 4))
    scaled = np.column_stack([np.ones_like(x), x - x.mean(), np.exp(38.9 * (x - x[-1]))])
    yield "scaled", scaled
    yield "far foot", np.column_stack([np.ones_like(x), x, np.exp(38.9 * (x - 0.6))])
    dup = rng.normal(size=(300, 4))
    dup[:, 3] = 2.0 * dup[:, 1]
    yield "rank deficient", dup
    near = rng.normal(size=(300, 3))
    near[:, 2] = near[:, 0] + 1e-9 * rng.normal(size=300)
    yield "nearly rank deficient", near
    yield "zero column", np.column_stack([np.ones(50), np.zeros(50), np.arange(50.0)])
    yield "wide", rng.normal(size=(3, 5))
    yield "square", rng.normal(size=(4, 4))


@pytest.mark.parametrize(("name", "X"), list(_designs()), ids=[d[0] for d in _designs()])
def test_least_squares_is_the_svd_form(name, X):
    rng = np.random.default_rng(1)
    y = X @ rng.normal(size=X.shape[1]) + 0.01 * rng.normal(size=X.shape[0])
    m, p = X.shape
    A = la.augmented(m, p)
    A[:, :p], A[:, p] = X, y
    coef, gram_inv = la.solve_least_squares(*la.reduce_rows(A))
    ref_coef, ref_gram = _ref_least_squares(X, y)
    _close(coef, ref_coef)
    _close(gram_inv, ref_gram)
    if name in ("random", "scaled", "rank deficient", "zero column", "wide"):
        _close(coef, np.linalg.lstsq(X, y, rcond=None)[0])


# With cond(X) ~ 1e10 ("nearly rank deficient") no two stable factorisations agree on
# pinv(X) better than ~cond·eps; the analysis never forms such a design (the vertex design
# is scaled to [-1, 1]), so the pseudo-inverse and subset checks use the others.
WELL_POSED = [d for d in _designs() if d[0] != "nearly rank deficient"]


@pytest.mark.parametrize(("name", "X"), WELL_POSED, ids=[d[0] for d in WELL_POSED])
def test_a_subset_of_columns_needs_no_new_factorisation(name, X):
    rng = np.random.default_rng(2)
    y = rng.normal(size=X.shape[0])
    m, p = X.shape
    A = la.augmented(m, p)
    A[:, :p], A[:, p] = X, y
    R, rows = la.reduce_rows(A)
    for cols in ([0, 1], [0, 2], list(range(1, p))):
        coef, gram_inv = la.solve_least_squares(R, rows, cols)
        ref_coef, ref_gram = _ref_least_squares(X[:, cols], y)
        _close(coef, ref_coef)
        _close(gram_inv, ref_gram)


@pytest.mark.parametrize(("name", "X"), WELL_POSED, ids=[d[0] for d in WELL_POSED])
def test_pinv_is_numpy_pinv(name, X):
    rng = np.random.default_rng(4)
    y = rng.normal(size=X.shape[0])
    m, p = X.shape
    A = la.augmented(m, p)
    A[:, :p], A[:, p] = X, y
    b, P = la.solve_pinv(la.reduce_rows(A)[0])
    pinv = np.linalg.pinv(X)
    _close(b, pinv @ y)
    _close(P @ X.T, pinv)


def _sweeps():
    rng = np.random.default_rng(5)
    up = np.linspace(-0.3, 0.4, 7001)
    yield "increasing", up
    yield "decreasing", up[::-1].copy()
    yield "staircase", np.repeat(np.round(up[::10], 3), 10)
    yield "staircase down", np.repeat(np.round(up[::-10], 3), 10)
    yield "jittered", up + rng.normal(0.0, 2e-4, up.size)


@pytest.mark.parametrize(("name", "E"), list(_sweeps()), ids=[s[0] for s in _sweeps()])
def test_window_search_finds_the_same_points(name, E):
    steps = np.diff(E)
    monotonic = bool(steps.min() >= 0 or steps.max() <= 0)
    assert monotonic == (name != "jittered")
    rng = np.random.default_rng(6)
    centres = np.concatenate([rng.choice(E, 40), rng.uniform(-0.35, 0.45, 40), [-0.3, 0.4]])
    for centre in centres:
        for half_width in (1e-4, 0.001, 0.0105, 0.034, 2.0):
            expected = np.nonzero(np.abs(E - centre) <= half_width)[0]
            got = pl._within(E, float(centre), half_width, monotonic)
            np.testing.assert_array_equal(got, expected)


def _record(name):
    v, _ = _case(name)
    cyc = v.cycle(1)
    return (
        np.asarray(cyc.forward.potential_V),
        np.asarray(cyc.forward.current_A),
        np.asarray(cyc.reverse.potential_V),
        np.asarray(cyc.reverse.current_A),
        int(cyc.forward.direction),
    )


def _same_line(line, ref):
    assert line.E0_V == ref.E0_V
    _close(line.coef, ref.coef)
    _close(line.cov, ref.cov)


@pytest.mark.parametrize("name", ["reduction", "oxidation_n2", "jittered_potential"])
def test_fit_foot_is_the_plain_form(name):
    E, i, _, _, s = _record(name)
    kappa = 1.0 / thermal_voltage(298.15, 1)
    rng = np.random.default_rng(7)
    tail = 1.0 / np.sqrt(0.05 + np.arange(E.size) * 1e-3)
    extra = (E[:40] + 0.01, i[:40] * 0.5, 1.0 / np.sqrt(0.01 + np.arange(40) * 1e-3))
    for lo, hi in ((2, 60), (2, 180), (10, 300), (0, E.size)):
        for sign in (s, -s):  # the wrong sign exercises the refit without the foot term
            args = (E[lo:hi], i[lo:hi], sign, kappa, 1e-7)
            _same_line(pf.fit_foot(*args), _ref_fit_foot(*args))
            t = tail[lo:hi]
            _same_line(pf.fit_foot(*args, t), _ref_fit_foot(*args, t))
            _same_line(pf.fit_foot(*args, t, extra), _ref_fit_foot(*args, t, extra))
            noisy = (E[lo:hi], i[lo:hi] + 1e-6 * rng.normal(size=hi - lo), sign, kappa, 1e-7)
            _same_line(pf.fit_foot(*noisy), _ref_fit_foot(*noisy))


@pytest.mark.parametrize("name", ["reduction", "oxidation_n2", "noise_free"])
def test_switch_step_and_residual_are_the_plain_forms(name):
    E_f, i_f, E_r, i_r, s = _record(name)
    for points in (10, 40, 200):
        got = pf.switch_step(E_f, i_f, E_r, i_r, float(E_f[-1]), points=points)
        ref = _ref_switch_step(E_f, i_f, E_r, i_r, float(E_f[-1]), points=points)
        _close(got, ref)
    line = pf.fit_foot(E_f[2:80], i_f[2:80], s, 38.9, 1e-7)
    for sign in (1, -1):
        np.testing.assert_array_equal(line.residual(E_f, i_f, sign), sign * (i_f - line(E_f)))


@pytest.mark.parametrize("name", ["reduction", "oxidation_n2", "jittered_potential"])
def test_vertex_fit_is_the_pinv_form(name):
    E_f, i_f, E_r, i_r, s = _record(name)
    for E, y in ((E_f, s * (i_f - i_f[5])), (E_r, -s * (i_r - i_r[5]))):
        steps = np.diff(E)
        monotonic = bool(steps.min() >= 0 or steps.max() <= 0)
        k = int(np.argmax(y))
        for half_width in (0.004, 0.02, 0.034, 0.06):
            for centre in (float(E[k]), float(E[k]) + 0.3 * half_width):
                got = pl._vertex_fit(E, y, centre, half_width, monotonic)
                ref = _ref_vertex_fit(E, y, centre, half_width)
                assert (got is None) == (ref is None)
                if got is None:
                    continue
                np.testing.assert_array_equal(got.index, ref.index)
                assert got.E_V == pytest.approx(ref.E_V, rel=RTOL)
                assert got.height == pytest.approx(ref.height, rel=RTOL)
                _close(got.grad_y, ref.grad_y)


def _simulated():
    return simulate_cv(
        E_half_V=0.105, start_V=0.305, switch_V=-0.395, cycles=2, double_layer_F=20e-6,
        background_slope_A_per_V=6e-6, noise_fraction=0.005, seed=11,
    )  # fmt: skip


def _analyses():
    for name in ("reduction", "oxidation_n2", "three_cycles", "jittered_potential"):
        v, n = _case(name)
        for c in _cycles(name):
            yield v, c, n
    v = _simulated()
    yield v, 1, 1
    yield v, 2, 1


def test_analysis_with_the_plain_forms_patched_in_is_the_same(monkeypatch):
    fast = [analyse_peaks(v, cycle=c, electrons=n) for v, c, n in _analyses()]
    monkeypatch.setattr(pf, "noise_sd", _ref_noise_sd)
    monkeypatch.setattr(pf, "fit_foot", _ref_fit_foot)
    monkeypatch.setattr(pf, "switch_step", _ref_switch_step)
    monkeypatch.setattr(pl, "_vertex_fit", _ref_vertex_fit)
    plain = [analyse_peaks(v, cycle=c, electrons=n) for v, c, n in _analyses()]
    for a, b in zip(fast, plain, strict=True):
        for field in FIELDS:
            x, y = getattr(a, field), getattr(b, field)
            assert (x is None) == (y is None), field
            if x is not None:
                assert x == pytest.approx(y, rel=RTOL, abs=0.0), field
        assert a.flags == b.flags
