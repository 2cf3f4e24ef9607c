"""Numbers as text with their unit and a sensible precision, the same on the page, in the report and on the
command line."""

from __future__ import annotations

import numpy as np


def fmt_kwh(x: float | None, *, signed: bool = False) -> str:
    """A year's energy: no decimals, thousands separated (``1,234 kWh``)."""
    if x is None or not np.isfinite(x):
        return "—"
    x = 0.0 if abs(x) < 0.5 else x
    return f"{x:+,.0f} kWh" if signed else f"{x:,.0f} kWh"


def fmt_w(x: float | None, *, signed: bool = False) -> str:
    """A power: whole watts (``350 W``)."""
    if x is None or not np.isfinite(x):
        return "—"
    x = 0.0 if abs(x) < 0.5 else x
    return f"{x:+,.0f} W" if signed else f"{x:,.0f} W"


def fmt_pct(x: float | None, *, signed: bool = False) -> str:
    """A share in percent with one decimal (``12.3 %``); ``x`` is already in percent."""
    if x is None or not np.isfinite(x):
        return "—"
    x = 0.0 if abs(x) < 0.05 else x
    return f"{x:+.1f} %" if signed else f"{x:.1f} %"


def fmt_hours(x: float | None) -> str:
    """Hours: whole hours from 10 h up, one decimal below (``3.5 h``)."""
    if x is None or not np.isfinite(x):
        return "—"
    return f"{x:,.0f} h" if x >= 10 else f"{x:.1f} h"


def fmt_years(x: float | None, *, signed: bool = False) -> str:
    """Years with one decimal; None is "—" (no figure), infinity "never within the period"."""
    if x is None or np.isnan(x):
        return "—"
    if not np.isfinite(x):
        return "not within the period"
    return f"{x:+.1f} years" if signed else f"{x:.1f} years"


def fmt_value(x: float | None, unit: str, *, signed: bool = False) -> str:
    """Format by unit: ``kWh/yr`` and ``kWh`` as energy, ``W``, ``%``, ``h`` and ``years``."""
    if unit.startswith("kWh"):
        return fmt_kwh(x, signed=signed)
    if unit == "W":
        return fmt_w(x, signed=signed)
    if unit == "%":
        return fmt_pct(x, signed=signed)
    if unit == "h":
        return fmt_hours(x)
    if unit == "years":
        return fmt_years(x, signed=signed)
    if unit == "cycles/yr":
        return "—" if x is None else (f"{x:+,.0f} cycles" if signed else f"{x:,.0f} cycles")
    return "—" if x is None else f"{x:,.1f} {unit}"


_COMPASS = ("north", "north-north-east", "north-east", "east-north-east", "east", "east-south-east", "south-east",
            "south-south-east", "south", "south-south-west", "south-west", "west-south-west", "west",
            "west-north-west", "north-west", "north-north-west")


def compass(azimuth_deg: float) -> str:
    """The nearest of 16 compass points for an azimuth (degrees clockwise from north)."""
    return _COMPASS[int(((azimuth_deg % 360) + 11.25) // 22.5) % 16]
