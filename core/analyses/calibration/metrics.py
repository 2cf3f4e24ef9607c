"""Goodness of fit of a model against measurement: NMBE and CV(RMSE) as ASHRAE Guideline 14 defines them.

ASHRAE Guideline 14-2014, *Measurement of Energy, Demand, and Water Savings*, calibrated simulation (from memory):

- NMBE = 100 · Σ(yᵢ − ŷᵢ) / ((n − p) · ȳ)
- CV(RMSE) = 100 · √(Σ(yᵢ − ŷᵢ)² / (n − p)) / ȳ

with yᵢ measured, ŷᵢ modelled, ȳ the mean of the measurements, n the number of periods and p the number of
parameters (p = 1 for a calibrated simulation). A model is calibrated when, on monthly data, |NMBE| ≤ 5 % and
CV(RMSE) ≤ 15 %, or on hourly data |NMBE| ≤ 10 % and CV(RMSE) ≤ 30 %. A positive NMBE means the model
under-predicts.
"""

from __future__ import annotations

import math

import numpy as np

#: (|NMBE| limit, CV(RMSE) limit) in percent, per resolution (ASHRAE Guideline 14-2014, from memory).
GUIDELINE_14 = {"monthly": (5.0, 15.0), "hourly": (10.0, 30.0)}


def _pairs(measured, modelled) -> tuple[np.ndarray, np.ndarray]:
    y = np.asarray(measured, dtype=float)
    y_hat = np.asarray(modelled, dtype=float)
    if y.shape != y_hat.shape:
        raise ValueError("measured and modelled series differ in length")
    keep = np.isfinite(y) & np.isfinite(y_hat)
    return y[keep], y_hat[keep]


def nmbe_pct(measured, modelled, p: int = 1) -> float:
    """Normalised mean bias error (%), ASHRAE Guideline 14-2014; NaN when n ≤ p or the measured mean is 0."""
    y, y_hat = _pairs(measured, modelled)
    n = y.size
    if n <= p or y.mean() == 0.0:
        return math.nan
    return float(100.0 * (y - y_hat).sum() / ((n - p) * y.mean()))


def cv_rmse_pct(measured, modelled, p: int = 1) -> float:
    """Coefficient of variation of the root-mean-square error (%), ASHRAE Guideline 14-2014; NaN when n ≤ p or
    the measured mean is 0."""
    y, y_hat = _pairs(measured, modelled)
    n = y.size
    if n <= p or y.mean() == 0.0:
        return math.nan
    return float(100.0 * math.sqrt(((y - y_hat) ** 2).sum() / (n - p)) / y.mean())


def meets_guideline_14(resolution: str, nmbe: float, cv_rmse: float) -> bool:
    """Whether a fit meets Guideline 14's calibration criteria at ``resolution`` ("monthly" or "hourly")."""
    nmbe_limit, cv_limit = GUIDELINE_14[resolution]
    return bool(math.isfinite(nmbe) and math.isfinite(cv_rmse) and abs(nmbe) <= nmbe_limit and cv_rmse <= cv_limit)
