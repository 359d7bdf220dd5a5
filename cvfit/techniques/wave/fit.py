"""A sigmoidal wave fitted with the wave equation on a sloping baseline.

The reversible steady-state (or sampled-current) wave obeys E = E½ + (RT/nF) ln((i_l − i)/i)
(Heyrovský & Ilkovič 1935), i.e. i = i_l/(1 + exp(nf(E − E½))) above its residual current.
:func:`fit_wave` fits ``b0 + b1·E + L/(1 + exp(g(E − E½)))`` in the current itself, where
white noise has one standard deviation everywhere, so equal weights are the right ones
(the log plot's straight line needs weights that fall steeply towards the plateaus;
fitting the current is that weighted fit done exactly). The free g gives the log-plot
slope 2.303/g (reversible: 2.303 RT/nF, 59.2/n mV at 25 °C) and, from the data, the
quartile potentials give Tomeš's E¼ − E¾ (reversible: 2 ln 3 · RT/nF, 56.4/n mV at 25 °C).

References
----------
Heyrovský, J.; Ilkovič, D. Collect. Czech. Chem. Commun. 1935, 7, 198.
Tomeš, J. Collect. Czech. Chem. Commun. 1937, 9, 12.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from scipy.optimize import least_squares

from cvfit.techniques.pulse_peak import SIGNIFICANT

__all__ = ["WaveFit", "fit_wave"]

#: Fewest points a fitted wave needs.
MIN_WAVE_POINTS = 15
#: How far each plateau must reach beyond E½, in units of 1/g (e^−4: 2 % of the wave).
PLATEAU_REACH = 4.0


@dataclass(frozen=True)
class WaveFit:
    """One fitted wave.

    Attributes
    ----------
    E_half_V, E_half_stderr_V : float
        Half-wave potential and its standard error, V.
    limiting_A, limiting_stderr_A : float
        Wave height L (signed: negative for a wave that rises towards negative potentials
        in the IUPAC sign) and its standard error, A.
    log_slope_V, log_slope_stderr_V : float
        Slope of the log plot, E against log10((i_l − i)/i): 2.303/g, V per decade.
    quartile_difference_V, quartile_stderr_V : float or None
        |E¼ − E¾| read from the data with the baseline removed.
    baseline : (float, float)
        Intercept at the mean potential (A) and slope (A/V).
    mean_V : float
        The mean potential the intercept refers to.
    noise_A : float
        Standard deviation of the residuals.
    n_points : int
    """

    E_half_V: float
    E_half_stderr_V: float
    limiting_A: float
    limiting_stderr_A: float
    log_slope_V: float
    log_slope_stderr_V: float
    quartile_difference_V: float | None
    quartile_stderr_V: float | None
    baseline: tuple[float, float]
    mean_V: float
    noise_A: float
    n_points: int

    def fraction(self, E: np.ndarray, i: np.ndarray) -> np.ndarray:
        """The part of the wave reached, (i − baseline)/L (1 on the limiting plateau)."""
        b0, b1 = self.baseline
        return (np.asarray(i) - b0 - b1 * (np.asarray(E) - self.mean_V)) / self.limiting_A


def _design(E: np.ndarray, E_half: float, g: float, mid: float) -> np.ndarray:
    s = 1.0 / (1.0 + np.exp(np.clip(g * (E - E_half), -700.0, 700.0)))
    return np.column_stack([np.ones_like(E), E - mid, s])


def _quartiles(E: np.ndarray, z: np.ndarray) -> tuple[float, float] | None:
    """Potentials where z crosses ¼ and ¾ (z falls with E after sorting)."""
    order = np.argsort(E)
    E, z = E[order], z[order]
    out = []
    for level in (0.75, 0.25):
        j = np.nonzero((z[:-1] >= level) & (z[1:] < level))[0]
        if j.size == 0:
            return None
        k = int(j[len(j) // 2])
        t = (z[k] - level) / (z[k] - z[k + 1])
        out.append(float(E[k] + t * (E[k + 1] - E[k])))
    return out[0], out[1]


def fit_wave(E_V: np.ndarray, current_A: np.ndarray, *, nf: float) -> WaveFit | str:
    """Fit a sigmoidal wave (module docstring); a reason when none can be fitted."""
    E = np.asarray(E_V, dtype=float)
    i = np.asarray(current_A, dtype=float)
    if E.size < MIN_WAVE_POINTS:
        return f"only {E.size} points; a wave needs {MIN_WAVE_POINTS}"
    mid = float(np.mean(E))
    k = max(2, E.size // 10)
    lo_end, hi_end = np.argsort(E)[:k], np.argsort(E)[-k:]
    halfway = 0.5 * (np.mean(i[lo_end]) + np.mean(i[hi_end]))
    E0 = float(E[np.argmin(np.abs(i - halfway))])

    # E½ as an offset from E0 + 1 V: the solver's finite-difference step is relative to
    # each parameter, and a start a rounding error from 0 V would get no step at all
    def resid(p: np.ndarray) -> np.ndarray:
        X = _design(E, E0 + p[0] - 1.0, math.exp(p[1]), mid)
        beta, *_ = np.linalg.lstsq(X, i, rcond=None)
        return i - X @ beta

    sol = least_squares(resid, [1.0, math.log(nf)], x_scale=[0.01, 0.1], method="lm")
    E_half, g = E0 + float(sol.x[0]) - 1.0, math.exp(float(sol.x[1]))
    X = _design(E, E_half, g, mid)
    beta, *_ = np.linalg.lstsq(X, i, rcond=None)
    r = i - X @ beta
    noise = math.sqrt(float(r @ r) / max(1, E.size - 5))
    reach = PLATEAU_REACH / g
    if not (E.min() + reach <= E_half <= E.max() - reach) or beta[2] == 0.0:
        return "the wave runs off the end of the record (or none was found); widen the range"
    s = X[:, 2]
    ds = -s * (1.0 - s)  # d s / d(g(E − E½))
    J = np.column_stack([X, beta[2] * ds * (-g), beta[2] * ds * (E - E_half)])
    try:
        cov = noise**2 * np.linalg.inv(J.T @ J)
    except np.linalg.LinAlgError:
        return "the wave's parameters are not determined by the record"
    sd = np.sqrt(np.clip(np.diag(cov), 0.0, None))
    L = float(beta[2])
    if not abs(L) >= max(SIGNIFICANT * sd[2], 1e-6 * float(np.ptp(i))):
        return "no wave stands out of the noise (height below five standard errors)"
    z = (i - beta[0] - beta[1] * (E - mid)) / L
    quart = _quartiles(E, z)
    q = q_sd = None
    if quart is not None:
        q = abs(quart[1] - quart[0])
        q_sd = math.sqrt(2.0) * noise / (abs(L) * g * 3.0 / 16.0)
    ln10 = math.log(10.0)
    return WaveFit(
        E_half_V=E_half,
        E_half_stderr_V=float(sd[3]),
        limiting_A=L,
        limiting_stderr_A=float(sd[2]),
        log_slope_V=ln10 / g,
        log_slope_stderr_V=ln10 / g * float(sd[4]) / g,
        quartile_difference_V=q,
        quartile_stderr_V=q_sd,
        baseline=(float(beta[0]), float(beta[1])),
        mean_V=mid,
        noise_A=noise,
        n_points=int(E.size),
    )
