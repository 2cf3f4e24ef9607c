"""Field metadata of the scenario's dataclasses: what the one general reader checks a value against."""

from __future__ import annotations


def _num(lo: float | None = None, hi: float | None = None, *, lo_open: bool = False, unit: str = "",
         count: int | None = None, missing: float | None = None) -> dict:
    """Field metadata: the sensible range, the unit for messages, a list's length, a list's "no value" marker."""
    return {"lo": lo, "hi": hi, "lo_open": lo_open, "unit": unit, "count": count, "missing": missing}
