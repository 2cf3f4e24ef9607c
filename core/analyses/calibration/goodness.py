"""How well the model follows the record, before and after a fit: NMBE and CV(RMSE) on hourly and monthly sums.

Only intervals the screening kept are compared, on both sides. The hourly comparison uses the period's own
weather when the scenario gives it (``measured.weather_path``), otherwise the clear-sky model on the clear-sky
days (other days' weather is unknown hour by hour). The monthly comparison uses the period's weather, otherwise
the scenario's typical year on the same calendar days, which judges the model's year rather than a single month's
weather.
"""

from __future__ import annotations

import pandas as pd

from core.analyses.calibration.metrics import cv_rmse_pct, meets_guideline_14, nmbe_pct


def sums(measured_w: pd.Series, modelled_w: pd.Series, use: pd.Series, step_s: int, freq: str,
         tz) -> pd.DataFrame:
    """Measured and modelled energy (kWh) per period (``freq``: "1h", "D" or "MS", in local standard time) over
    the intervals in ``use``; periods with none are dropped."""
    kwh = step_s / 3.6e6
    frame = pd.DataFrame({"measured_kwh": measured_w.where(use) * kwh, "modelled_kwh": modelled_w.where(use) * kwh,
                          "n": use.astype(int)}).tz_convert(tz)
    out = frame.resample(freq).sum(min_count=1)
    return out[out["n"] > 0].drop(columns="n")


def scores(table: pd.DataFrame) -> dict[str, float | None]:
    """NMBE and CV(RMSE) (%) of a sums table; None where too few periods."""
    nmbe = nmbe_pct(table["measured_kwh"], table["modelled_kwh"])
    cv = cv_rmse_pct(table["measured_kwh"], table["modelled_kwh"])
    return {"nmbe_pct": None if nmbe != nmbe else round(nmbe, 1), "cv_rmse_pct": None if cv != cv else round(cv, 1),
            "periods": int(len(table))}


def judge(after: dict[str, dict]) -> bool:
    """Guideline 14 met: every resolution that could be scored meets its criteria, and at least one could."""
    verdicts = [meets_guideline_14(res, s["nmbe_pct"], s["cv_rmse_pct"]) for res, s in after.items()
                if s["nmbe_pct"] is not None and s["cv_rmse_pct"] is not None]
    return bool(verdicts) and all(verdicts)
