"""Clear-sky periods in a PV output, by Reno & Hansen's method applied to the output normalised to its rating.

Reno, M. J. & Hansen, C. W., "Identification of periods of clear sky irradiance in time series of GHI
measurements", Renewable Energy 90 (2016) 520-531 (:func:`pvlib.clearsky.detect_clearsky`, with the limits
inferred from the interval, Jordan & Hansen 2023). The output and its lossless clear-sky model are scaled to
W/m²-like numbers (1000 at the rated output), the scale the method's thresholds are written for; the method fits
its own scale factor between the two, so the array's losses do not decide what is clear.
"""

from __future__ import annotations

import warnings

import numpy as np
import pandas as pd
import pvlib

#: The method needs a few intervals per window; coarser records are judged day by day instead.
FINEST_FOR_DETECTION_S = 900


def clear_intervals(measured_w: pd.Series, model_w: pd.Series, rating_w: float, step_s: int) -> pd.Series:
    """Clear-sky intervals of a PV output against its clear-sky model (both W); all False above 15 minutes."""
    if step_s > FINEST_FOR_DETECTION_S:
        return pd.Series(False, index=measured_w.index)
    scale = 1000.0 / rating_w
    meas = (measured_w.fillna(0.0) * scale).clip(lower=0.0)
    with warnings.catch_warnings(), np.errstate(all="ignore"):
        warnings.simplefilter("ignore")
        flags = pvlib.clearsky.detect_clearsky(meas, model_w * scale, infer_limits=True)
    return pd.Series(np.asarray(flags, dtype=bool), index=measured_w.index)
