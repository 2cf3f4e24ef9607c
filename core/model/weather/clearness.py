"""Daily clearness of a generated year: the distribution of Bendt, Collares-Pereira & Rabl, "The frequency
distribution of daily insolation values", Solar Energy 27 (1981) 1-5, and day-to-day persistence through a
Gaussian copula (steps 1 and 2 of :mod:`core.model.weather.monthly`, where the sources are given in full).
"""

from __future__ import annotations

import numpy as np
from scipy import optimize, special

#: Bendt et al. (1981) lower limit of daily clearness (from memory).
KT_MIN = 0.05
#: Lag-1 correlation of daily clearness (order of Aguiar et al. 1988; from memory).
PERSISTENCE_RHO = 0.3


def bendt_kt_max(kt_mean: float) -> float:
    """Upper limit of daily clearness for a month of mean clearness ``kt_mean`` (from memory, see module doc)."""
    return 0.6313 + 0.267 * kt_mean - 11.9 * (kt_mean - 0.75) ** 8


def _bendt_limits(kt_mean: float) -> tuple[float, float]:
    # Guard the (rare) very dull months, where the published K_max formula falls below the mean.
    kt_min = min(KT_MIN, 0.5 * kt_mean)
    kt_max = max(bendt_kt_max(kt_mean), kt_mean + 0.05)
    return kt_min, kt_max


def _g(x: np.ndarray | float) -> np.ndarray:
    """Mean position of the truncated exponential on [0, 1] with rate x: 1/(1-exp(-x)) - 1/x (1/2 at x = 0)."""
    x = np.asarray(x, dtype=float)
    small = np.abs(x) < 1e-6
    safe = np.where(small, 1.0, x)
    return np.where(small, 0.5 + x / 12.0, 1.0 / -np.expm1(-safe) - 1.0 / safe)


def bendt_mean(gamma: float, kt_min: float, kt_max: float) -> float:
    """Mean of Bendt's density ``gamma exp(gamma K) / (exp(gamma K_max) - exp(gamma K_min))`` on [K_min, K_max]."""
    width = kt_max - kt_min
    return float(kt_min + width * _g(gamma * width))


def bendt_gamma(kt_mean: float, kt_min: float, kt_max: float) -> float:
    """The ``gamma`` of Bendt's distribution whose mean is ``kt_mean`` (solved numerically)."""
    if not kt_min < kt_mean < kt_max:
        raise ValueError("mean clearness must lie strictly between K_min and K_max")
    return float(optimize.brentq(lambda gm: bendt_mean(gm, kt_min, kt_max) - kt_mean, -700.0, 700.0,
                                 xtol=1e-10))


def bendt_cdf(kt, gamma: float, kt_min: float, kt_max: float) -> np.ndarray:
    """Cumulative distribution ``F(K) = (exp(gamma K_min) - exp(gamma K)) / (exp(gamma K_min) - exp(gamma K_max))``."""
    k = np.clip(np.asarray(kt, dtype=float), kt_min, kt_max)
    width = kt_max - kt_min
    x = gamma * width
    if abs(x) < 1e-9:
        return (k - kt_min) / width
    return np.expm1(gamma * (k - kt_min)) / np.expm1(x)


def bendt_quantile(u, gamma: float, kt_min: float, kt_max: float) -> np.ndarray:
    """Inverse of :func:`bendt_cdf` for probabilities ``u`` in [0, 1]."""
    u = np.clip(np.asarray(u, dtype=float), 0.0, 1.0)
    width = kt_max - kt_min
    x = gamma * width
    if abs(x) < 1e-9:
        return kt_min + u * width
    return np.clip(kt_min + np.log1p(u * np.expm1(x)) / gamma, kt_min, kt_max)


def daily_clearness(kt_mean_per_day: np.ndarray, rng: np.random.Generator,
                    rho: float = PERSISTENCE_RHO) -> np.ndarray:
    """A persistent sequence of daily clearness with Bendt's distribution for each day's monthly mean.

    Gaussian AR(1) ``z_d = rho z_(d-1) + sqrt(1 - rho^2) e_d`` (stationary, unit variance), ``u = Phi(z)``,
    ``K_d = F^-1(u)`` of the day's month.
    """
    n = len(kt_mean_per_day)
    noise = rng.standard_normal(n)
    z = np.empty(n)
    z[0] = noise[0]
    scale = np.sqrt(1.0 - rho * rho)
    for d in range(1, n):
        z[d] = rho * z[d - 1] + scale * noise[d]
    u = special.ndtr(z)
    out = np.zeros(n)
    for kt_mean in np.unique(kt_mean_per_day):
        days = kt_mean_per_day == kt_mean
        if kt_mean <= 0:
            continue
        if kt_mean < 0.02:  # too dull for a distribution to matter (polar twilight): keep the mean
            out[days] = kt_mean
            continue
        kt_min, kt_max = _bendt_limits(float(kt_mean))
        gamma = bendt_gamma(float(kt_mean), kt_min, kt_max)
        out[days] = bendt_quantile(u[days], gamma, kt_min, kt_max)
    return out
