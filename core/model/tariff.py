"""Money by the hour: time-of-use import prices, fixed charges, holidays and the grid-charging window.

Clock rules (periods, the charge window) are read in the site's local clock time, daylight saving
included, while the simulation runs in local standard time: a step is placed on the clock by converting
its start to the site's time zone. Holidays come from the ``holidays`` package and are priced as
weekend days.
"""

from __future__ import annotations

import numpy as np
import pandas as pd


def local_clock(index: pd.DatetimeIndex, timezone: str) -> pd.DatetimeIndex:
    """The steps' starts on the site's wall clock (daylight saving applied)."""
    return index.tz_convert(timezone)


def in_hours(hour: np.ndarray, start: int, end: int) -> np.ndarray:
    """True where the clock hour lies in ``[start, end)``; a window with ``end <= start`` wraps past midnight."""
    hour = np.asarray(hour)
    if start < end:
        return (hour >= start) & (hour < end)
    return (hour >= start) | (hour < end)


def weekend_or_holiday(clock: pd.DatetimeIndex, country: str | None) -> np.ndarray:
    """Saturdays, Sundays and (with a country code) that country's public holidays."""
    off = np.asarray(clock.day_of_week >= 5)
    if country:
        import holidays

        days = holidays.country_holidays(country, years=sorted(set(clock.year)))
        dates = clock.normalize().tz_localize(None)
        unique = dates.unique()  # a year has 365 dates however fine its steps
        free = unique[[d.date() in days for d in unique]]
        off = off | np.asarray(dates.isin(free))
    return off


def import_prices(clock: pd.DatetimeIndex, *, base_price: float, periods, holidays_country: str | None) -> np.ndarray:
    """Import price per kWh for every step: the first period that matches its hour, day and month, else the base.

    ``periods`` are records with ``price_per_kwh``, ``hours`` ([start, end) clock hours), ``days``
    ("all", "weekdays", "weekends") and ``months`` (1–12).
    """
    price = np.full(len(clock), float(base_price))
    if not periods:
        return price
    free = np.ones(len(clock), dtype=bool)  # not yet matched by an earlier period
    hour, month = np.asarray(clock.hour), np.asarray(clock.month)
    off = weekend_or_holiday(clock, holidays_country)
    for p in periods:
        match = free & in_hours(hour, *p.hours) & np.isin(month, p.months)
        if p.days == "weekdays":
            match &= ~off
        elif p.days == "weekends":
            match &= off
        price[match] = p.price_per_kwh
        free &= ~match
    return price


def bill(grid_import_w: np.ndarray, export_w: np.ndarray, price_per_kwh: np.ndarray, *, dt_h: float,
         export_price_per_kwh: float, fixed_per_month: float, months: int = 12) -> dict[str, float]:
    """The year's import cost, fixed charges and export credit (in the tariff's currency)."""
    import_cost = float(np.sum(np.asarray(grid_import_w) * price_per_kwh) * dt_h / 1000.0)
    credit = float(np.sum(export_w) * dt_h / 1000.0 * export_price_per_kwh)
    return {"import_cost": import_cost, "fixed_charges": float(fixed_per_month * months), "export_credit": credit}
