"""Fitting the model's guesses to the record: array losses, the standing draw and the base load.

**Array losses.** On clear-sky periods the measured PV output is compared with the same array modelled under
pvlib's Ineichen clear sky (its shipped Linke turbidity), lossless; each clear day gives a ratio
``r = Σ measured / Σ modelled`` over its clear intervals with the sun above :data:`MIN_ELEVATION_DEG` that passed
the screening and keep the controller below its output limit, and the loss is ``100 · (1 − mean r)``. Clear periods are
found by Reno & Hansen's method, "Identification of periods of clear sky irradiance in time series of GHI
measurements", Renewable Energy 90 (2016) 520–531 (:func:`pvlib.clearsky.detect_clearsky`), applied to the PV
output normalised to its rating against the normalised clear-sky model (records of up to 15-minute intervals);
coarser records take days whose shape follows the clear-sky model closely (correlation ≥ :data:`SHAPE_MIN`) and
whose yield is near the record's best. With the period's own weather every screened daytime interval is used
(hour by hour), not only clear ones. The uncertainty is the half-width of the 95 % confidence interval of the mean
daily ratio (Student's t), in loss points; it does not include the clear-sky model's own error.

**Standing draw.** The median grid import while the battery is above its outage reserve (by
:data:`RESERVE_MARGIN_PCT`), when the controller holds the grid at its set point; its uncertainty from the median
absolute deviation (a normal-equivalent standard error of the median, 95 %) over the hours behind it.

**Base load.** The monthly base load of :func:`core.model.loads.base_load_w` (5th percentile of hourly means),
averaged over the record's months; its uncertainty from the spread of daily minimum hourly means.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
import pandas as pd
from scipy import stats

from core.analyses.calibration.clearsky import clear_intervals
from core.model.loads import base_load_w

MIN_ELEVATION_DEG = 15.0
MIN_CLEAR_DAYS = 3
CLEAR_DAY_SHARE = 0.8
SHAPE_MIN = 0.995
RESERVE_MARGIN_PCT = 5.0
MIN_STANDING_HOURS = 24.0
MIN_WEATHER_DAYS = 5
#: Intervals whose modelled output is below this share of the rating are left out of an hour-by-hour fit.
LOW_MODEL = 0.05


@dataclass(frozen=True)
class Fitted:
    """A fitted value, its uncertainty (95 %) and what it rests on (days or hours)."""

    value: float
    uncertainty: float
    days: int = 0
    hours: float = 0.0


class NotFitted(Exception):
    """A value the record cannot give; the message says what is missing."""


def clear_days(measured_w: pd.Series, model_w: pd.Series, usable: pd.Series, day: pd.Series, rating_w: float,
               step_s: int) -> tuple[list, pd.Series]:
    """Days (labels of ``day``) on which the PV output followed the clear-sky model, and the clear intervals of
    those days that may be fitted (see the module docstring)."""
    if step_s <= 900:
        clear = clear_intervals(measured_w, model_w, rating_w, step_s) & usable
        share = clear[usable].groupby(day[usable]).mean()
        days = sorted(share.index[share >= CLEAR_DAY_SHARE])
        return days, clear & day.isin(days)
    frame = pd.DataFrame({"m": measured_w, "c": model_w, "day": day})[usable]
    out, ratios = [], {}
    for label, g in frame.groupby("day"):
        if len(g) >= 4 and g["c"].sum() > 0 and g["m"].std() > 0:
            if np.corrcoef(g["m"], g["c"])[0, 1] >= SHAPE_MIN:
                ratios[label] = g["m"].sum() / g["c"].sum()
    if ratios:
        best = np.percentile(list(ratios.values()), 90)
        out = sorted(k for k, r in ratios.items() if r >= 0.9 * best)
    return out, usable & day.isin(out)


def _mean_with_ci(ratios: np.ndarray) -> tuple[float, float]:
    n = ratios.size
    if n < 2:
        return float(ratios.mean()), math.nan
    half = stats.t.ppf(0.975, n - 1) * ratios.std(ddof=1) / math.sqrt(n)
    return float(ratios.mean()), float(half)


def losses_from_days(measured_w: pd.Series, model_w: pd.Series, usable: pd.Series, day: pd.Series,
                     days: list, step_s: int, min_days: int) -> Fitted:
    """Losses (%) from the daily ratio of measured to lossless modelled output on the given days."""
    use = usable & day.isin(days)
    frame = pd.DataFrame({"m": measured_w, "c": model_w, "day": day})[use]
    sums = frame.groupby("day")[["m", "c"]].sum()
    sums = sums[sums["c"] > 0]
    if len(sums) < min_days:
        raise NotFitted(f"{len(sums)} usable day(s), at least {min_days} needed")
    ratio, half = _mean_with_ci((sums["m"] / sums["c"]).to_numpy())
    return Fitted(value=100.0 * (1.0 - ratio), uncertainty=100.0 * half, days=int(len(sums)),
                  hours=float(use.sum() * step_s / 3600.0))


def standing_draw(grid_import_w: pd.Series, soc_pct: pd.Series, reserve_pct: float, step_s: int) -> Fitted:
    """The standing draw (W) from grid import while the battery is above its reserve (see the module docstring)."""
    use = (soc_pct > reserve_pct + RESERVE_MARGIN_PCT) & grid_import_w.notna()
    hours = float(use.sum() * step_s / 3600.0)
    if hours < MIN_STANDING_HOURS:
        raise NotFitted(f"only {hours:.0f} h with the battery above its reserve ({reserve_pct:g} % + "
                        f"{RESERVE_MARGIN_PCT:g}) and grid import logged; {MIN_STANDING_HOURS:g} h needed")
    values = grid_import_w[use].to_numpy(float)
    median = float(np.median(values))
    mad = float(np.median(np.abs(values - median))) * 1.4826
    independent = max(hours, 1.0)  # neighbouring readings within an hour are not independent
    return Fitted(value=median, uncertainty=1.96 * 1.2533 * mad / math.sqrt(independent), hours=hours,
                  days=int(round(hours / 24)))


def base_load(load_w: pd.Series, *, latitude: float, longitude: float, tz, step_s: int) -> Fitted:
    """The base load (W) from the load column (see the module docstring)."""
    logged = load_w.notna()
    hours = float(logged.sum() * step_s / 3600.0)
    if hours < 24.0:
        raise NotFitted(f"only {hours:.0f} h of load logged; a day or more is needed")
    monthly = base_load_w(load_w, latitude=latitude, longitude=longitude, tz=tz)["all_w"].dropna()
    hourly = load_w.tz_convert(tz).resample("1h").mean()
    daily_min = hourly.groupby(hourly.index.date).min().dropna()
    if monthly.empty or daily_min.size < 2:
        raise NotFitted("too few complete hours of load to find the base load")
    spread = float(daily_min.std(ddof=1)) / math.sqrt(daily_min.size)
    return Fitted(value=float(monthly.mean()), uncertainty=1.96 * spread, hours=hours, days=int(daily_min.size))
