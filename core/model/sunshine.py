"""Minute-scale synthetic sunshine inside each hour of a weather file, keeping every hour's mean exactly.

The clear-sky index ``kc = GHI / GHI_clear`` of each minute follows a two-state Markov chain -- sun or cloud --
after Morf, "The stochastic two-state solar irradiance model (STSIM)", Solar Energy 85 (2011) 1992-2002 (from
memory): the share of sunny minutes is set by the hour's mean clearness, so a clear hour stays clear, an overcast
hour stays dull and a broken-cloud hour switches between bright and dark, with a mean cycle of
:data:`CYCLE_MIN` minutes when half of it is sunny (broken cumulus passes in minutes; common practice, from memory). The minutes are then
scaled per hour so that the hour's mean GHI equals the file's to rounding, and the diffuse part follows Erbs, Klein
& Duffie, Solar Energy 28 (1982) 293-302 (:func:`pvlib.irradiance.erbs`), rescaled to keep the hour's mean
diffuse where the hour allows it; DNI follows from closure. Seeded and reproducible. The variability the chain
makes can be read with the variability index of Stein, Hansen & Reno (2012), :func:`variability_index`.
"""

from __future__ import annotations

import numpy as np
import pandas as pd
import pvlib

#: Clear-sky index of a sunny minute and of a minute under a cloud (common practice, from memory).
KC_SUN = 1.0
KC_CLOUD = 0.25
#: Mean length of one sun + cloud cycle in broken cloud, minutes (from memory).
CYCLE_MIN = 12.0
#: Relative noise on each cloudy minute's clear-sky index (a cloud's texture).
NOISE = 0.01


def two_state_kc(kc_mean: np.ndarray, minutes: int, rng: np.random.Generator) -> np.ndarray:
    """Minute clear-sky indices (hours, minutes) whose sunny share ``p`` gives each hour's mean clearness:
    ``p KC_SUN + (1 - p) KC_CLOUD = kc_mean`` (clipped to 0..1 share; outside, the hour is all sun or all cloud at
    its own clearness). Sun lasts ``CYCLE_MIN / (4 (1 - p))`` and cloud ``CYCLE_MIN / (4 p)`` minutes on average."""
    kc_mean = np.asarray(kc_mean, float)
    p = np.clip((kc_mean - KC_CLOUD) / (KC_SUN - KC_CLOUD), 0.0, 1.0)
    # Switching rates (1 - p)/T and p/T keep the sunny share at p; T = CYCLE_MIN / 4 makes a half-sunny hour's
    # cycle CYCLE_MIN long, and a nearly clear hour keeps its sun for long stretches.
    leave_sun = np.clip((1.0 - p) * 4.0 / CYCLE_MIN, 0.0, 1.0)
    leave_cloud = np.clip(p * 4.0 / CYCLE_MIN, 0.0, 1.0)
    sunny = rng.random(len(p)) < p
    draws = rng.random((len(p), minutes))
    states = np.empty((len(p), minutes), dtype=bool)
    for m in range(minutes):
        states[:, m] = sunny
        switch = draws[:, m] < np.where(sunny, leave_sun, leave_cloud)
        sunny = np.where(switch, ~sunny, sunny)
    level_sun = np.where(p >= 1.0, kc_mean, KC_SUN)[:, None]
    level_cloud = np.where(p <= 0.0, kc_mean, KC_CLOUD)[:, None]
    # Texture under a cloud only: a sunny minute is as smooth as the clear sky itself.
    noise = np.where(states, 0.0, NOISE * rng.standard_normal(states.shape))
    return np.where(states, level_sun, level_cloud) * (1.0 + noise)


def synthetic_irradiance(ghi_coarse_w_m2, dhi_coarse_w_m2, clearsky_fine_w_m2, zenith_fine_deg, times_fine, *,
                         per_interval: int, step_s: int, seed: int = 0) -> dict[str, np.ndarray]:
    """GHI, DHI and DNI (W/m2) at a fine step of ``step_s`` from coarse interval means (``per_interval`` fine steps
    each); ``times_fine`` are the fine interval starts and ``zenith_fine_deg`` the true zenith at their midpoints.

    Each fine step is the mean of its minutes (a fine step of one minute or more; minutes are generated and
    averaged). Every coarse interval's mean GHI is kept to rounding; intervals with no clear-sky light keep a flat
    profile. Returns keys ``ghi``, ``dhi``, ``dni`` (fine arrays) and ``kc`` (the minute clear-sky index).
    """
    ghi_c = np.asarray(ghi_coarse_w_m2, float)
    dhi_c = np.asarray(dhi_coarse_w_m2, float)
    n, k = len(ghi_c), int(per_interval)
    cs = np.asarray(clearsky_fine_w_m2, float).reshape(n, k)
    cs_mean = cs.mean(axis=1)
    has_sky = cs_mean > 1.0
    kc_mean = np.where(has_sky, ghi_c / np.where(has_sky, cs_mean, 1.0), 0.0)
    rng = np.random.default_rng(seed)
    sub = max(1, int(round(step_s / 60)))  # minutes per fine step
    kc_min = two_state_kc(kc_mean, k * sub, rng).clip(0.0, 1.5)
    kc = kc_min.reshape(n, k, sub).mean(axis=2)
    ghi = kc * cs
    ghi = _keep_means(ghi, ghi_c)
    zen = np.asarray(zenith_fine_deg, float)
    times = pd.DatetimeIndex(times_fine)
    split = pvlib.irradiance.erbs(ghi.ravel(), zen, times.day_of_year.to_numpy())
    dhi = np.minimum(np.nan_to_num(np.asarray(split["dhi"], float), nan=0.0).reshape(n, k), ghi)
    dhi = np.minimum(_keep_means(dhi, dhi_c), ghi)
    cosz = np.cos(np.radians(zen)).reshape(n, k)
    up = cosz >= 0.065
    dni = np.where(up, (ghi - dhi) / np.where(up, cosz, 1.0), 0.0)
    dhi = np.where(up, dhi, ghi)
    dni = np.clip(dni, 0.0, np.asarray(pvlib.irradiance.get_extra_radiation(times), float).reshape(n, k))
    return {"ghi": ghi.ravel(), "dhi": dhi.ravel(), "dni": dni.ravel(), "kc": kc.ravel()}


def _keep_means(fine: np.ndarray, coarse_mean: np.ndarray) -> np.ndarray:
    """Scale each row (n, k) to the coarse mean; rows without shape get a flat profile."""
    mean = fine.mean(axis=1)
    shaped = mean > 1e-9
    out = fine * np.where(shaped, coarse_mean / np.where(shaped, mean, 1.0), 0.0)[:, None]
    flat = ~shaped & (coarse_mean > 0)
    out[flat] = coarse_mean[flat, None]
    return out


def variability_index(ghi_w_m2, clearsky_w_m2, dt_min: float = 1.0) -> float:
    """Variability index of Stein, Hansen & Reno, "The variability index: a new and novel metric for quantifying
    irradiance and PV output variability", ASES 2012: the length of the GHI curve over the length of the clear-sky
    curve, ``sum sqrt(dGHI^2 + dt^2) / sum sqrt(dCS^2 + dt^2)`` (W/m2 and minutes). Near 1 on clear days."""
    g, c = np.asarray(ghi_w_m2, float), np.asarray(clearsky_w_m2, float)
    return float(np.sum(np.sqrt(np.diff(g) ** 2 + dt_min ** 2)) / np.sum(np.sqrt(np.diff(c) ** 2 + dt_min ** 2)))
