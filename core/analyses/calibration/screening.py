"""Screening a monitoring record before any fit: which intervals of each PV channel can be trusted.

Daytime is when the sun stands above the horizon (its position at each interval's midpoint). Within daytime, an
interval is excluded for the first of these reasons that holds (so the counts add up):

1. **gaps**: nothing was logged (NaN after reading; the reader fills no gap for a calibration).
2. **curtailed**: the output was held back. A zero-export system curtails its DC-coupled arrays whenever the
   battery is full and the loads take less than the arrays could give. With a state-of-charge column, every
   daytime interval with the battery at or near full (within :data:`FULL_MARGIN_PCT` of the highest SOC in the
   record, and at least :data:`FULL_SOC_MIN_PCT`) is excluded; without one, flat tops found by pvanalytics'
   geometric clipping detection (:func:`pvanalytics.features.clipping.geometric`) are.
3. **stale**: a logger repeating its last value (:func:`pvanalytics.quality.gaps.stale_values_diff`, six equal
   values in a row) while the output is above :data:`LOW_FRACTION` of the rating.
4. **outliers**: above what the clear sky can give (:data:`ABOVE_CLEAR_SKY` times the lossless clear-sky model
   plus 2 % of the rating), or a lone spike by the Hampel filter
   (:func:`pvanalytics.quality.outliers.hampel`) that is also more than 10 % of the rating off its neighbours.
"""

from __future__ import annotations

import warnings
from dataclasses import dataclass

import pandas as pd
from pvanalytics.features import clipping
from pvanalytics.quality import gaps, outliers

REASONS = ("gaps", "curtailed", "stale", "outliers")
FULL_MARGIN_PCT = 3.0
FULL_SOC_MIN_PCT = 80.0
LOW_FRACTION = 0.005
ABOVE_CLEAR_SKY = 1.3
HELD_BELOW = 0.8
FLAT_RANGE = 0.08


@dataclass(frozen=True, eq=False)
class Screen:
    """One PV channel's screening: ``reason`` per interval ("" = kept, or one of :data:`REASONS`; night is "")."""

    daytime: pd.Series
    reason: pd.Series
    curtailment_method: str

    @property
    def kept(self) -> pd.Series:
        return self.daytime & (self.reason == "")

    def counts(self) -> dict[str, int]:
        return {r: int((self.reason == r).sum()) for r in REASONS}


def full_battery(soc_pct: pd.Series) -> pd.Series:
    """Intervals with the battery at or near full (see the module docstring); NaN SOC counts as not full."""
    top = float(soc_pct.max())
    threshold = max(top - FULL_MARGIN_PCT, FULL_SOC_MIN_PCT)
    return (soc_pct >= threshold).fillna(False).astype(bool)


def flat_tops(power_w: pd.Series, step_s: int) -> pd.Series:
    """Flat-topped stretches of a PV output (pvanalytics' geometric clipping detection), False where unknown."""
    known = power_w.dropna()
    if len(known) < 10:
        return pd.Series(False, index=power_w.index)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        try:
            flags = clipping.geometric(power_w.fillna(0.0), freq=f"{step_s}s")
        except (ValueError, IndexError):  # too short or too irregular a record for its daily fits
            return pd.Series(False, index=power_w.index)
    return flags.reindex(power_w.index).fillna(False).astype(bool) & power_w.notna()


def held_below_clear_sky(power_w: pd.Series, clearsky_lossless_w: pd.Series, sun_elevation_deg: pd.Series,
                         rating_w: float) -> pd.Series:
    """Flat stretches well below the day's clear-sky envelope: how curtailment looks without a SOC column.

    The envelope is the day's 90th-percentile ratio of output to the lossless clear-sky model (with the sun above
    15°) times the model. An interval is taken as held back when its output is below :data:`HELD_BELOW` of the
    envelope while it and its two neighbours differ by less than :data:`FLAT_RANGE` of the rating (a zero-export
    system holds its arrays to the load, which changes slowly; clouds move the output in steps of the clear-sky
    scale). Cloudy stretches that happen to be flat are caught too; they would not be fitted anyway.
    """
    high = (sun_elevation_deg > 15.0) & (clearsky_lossless_w > 0.1 * rating_w)
    ratio = (power_w / clearsky_lossless_w).where(high)
    day = pd.Series(power_w.index.date, index=power_w.index)
    envelope = ratio.groupby(day).transform(lambda r: r.quantile(0.9)) * clearsky_lossless_w
    spread = power_w.rolling(3, center=True, min_periods=3)
    flat = (spread.max() - spread.min()) < FLAT_RANGE * rating_w
    return (high & (power_w < HELD_BELOW * envelope) & flat).fillna(False).astype(bool)


def screen_pv(power_w: pd.Series, *, sun_elevation_deg: pd.Series, clearsky_lossless_w: pd.Series, rating_w: float,
              step_s: int, soc_pct: pd.Series | None) -> Screen:
    """Screen one PV channel (mean power, W) against its lossless clear-sky model and rating (see module doc)."""
    daytime = sun_elevation_deg > 0.0
    reason = pd.Series("", index=power_w.index, dtype=object)

    def mark(mask: pd.Series, name: str) -> None:
        reason[(mask & daytime & (reason == "")).to_numpy()] = name

    mark(power_w.isna(), "gaps")
    if soc_pct is not None and soc_pct.notna().any():
        mark(full_battery(soc_pct), "curtailed")
        method = "state of charge at or near full"
    else:
        held = held_below_clear_sky(power_w, clearsky_lossless_w, sun_elevation_deg, rating_w)
        mark(flat_tops(power_w, step_s) | held, "curtailed")
        method = "flat-top detection (pvanalytics geometric clipping; flat stretches below the clear sky)"
    lit = power_w > LOW_FRACTION * rating_w
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        stale = gaps.stale_values_diff(power_w.fillna(-1.0), window=6)
    mark(stale.reindex(power_w.index).fillna(False).astype(bool) & lit, "stale")
    above = power_w > ABOVE_CLEAR_SKY * clearsky_lossless_w + 0.02 * rating_w
    known = power_w.dropna()
    spikes = pd.Series(False, index=power_w.index)
    if len(known) > 10:
        spikes = outliers.hampel(known, window=5, max_deviation=6.0).reindex(power_w.index, fill_value=False)
        neighbours = known.rolling(5, center=True, min_periods=1).median().reindex(power_w.index)
        spikes = spikes & ((power_w - neighbours).abs() > 0.1 * rating_w)
    mark(above | spikes, "outliers")
    return Screen(daytime=daytime, reason=reason, curtailment_method=method)
