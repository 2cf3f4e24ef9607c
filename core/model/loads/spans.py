"""Intervals from readings: the spans of mean-power, per-interval-energy and register rows, the spike rule,
and the warnings for the gaps left or filled (see :mod:`core.model.loads.read` for the rules)."""

from __future__ import annotations

import numpy as np

from core.model.loads.rows import _Rows, _runs
from core.model.loads.units import (
    POWER_UNITS,
    SCALE,
)

SPIKE_FACTOR = 10.0
SPIKE_QUANTILE = 0.999
SPIKE_MIN_ROWS = 50


def _interval_spans(t: np.ndarray, v: np.ndarray, order: np.ndarray, book: _Rows, unit: str, step: int,
                    label: str, max_power_w: float, value_label: str):
    """Spans for mean-power and per-interval-energy rows; rejects negative, impossible and spike values."""
    times = t[order]
    values = v[order]
    if label == "start":
        start = times
        end = np.minimum(times + step, np.concatenate([times[1:], [np.inf]]))
    else:
        end = times
        start = np.maximum(times - step, np.concatenate([[-np.inf], times[:-1]]))
    duration = end - start
    scale = SCALE[unit]
    if unit in POWER_UNITS:
        power = values * scale
        nominal = power
    else:
        power = values * scale * 3600.0 / duration
        nominal = values * scale * 3600.0 / step
    bad = np.zeros(t.size, dtype=bool)
    bad[order[values < 0]] = True
    book.reject(bad, "negative value", value_label)
    bad[:] = False
    bad[order[nominal > max_power_w]] = True
    book.reject(bad, f"mean power above {max_power_w / 1000:g} kW (impossible for this tool)", value_label)
    keep = book.ok[order]
    _reject_spikes(nominal, keep, order, book, value_label)
    keep = book.ok[order]
    energy = power * duration / 3600.0
    del power, nominal, values, duration, bad  # five arrays of a row each, before the kept rows are copied
    if keep.all():  # the usual file: every row kept, nothing to copy
        return start, end, energy, np.zeros(keep.size, dtype=bool), book.lines[order]
    return (start[keep], end[keep], energy[keep], np.zeros(int(keep.sum()), dtype=bool),
            book.lines[order[keep]])


def _reject_spikes(power: np.ndarray, keep: np.ndarray, order: np.ndarray, book: _Rows, value_label: str
                   ) -> None:
    if keep.sum() < SPIKE_MIN_ROWS:
        return
    # A short record's 99.9th percentile would sit on the spike itself: keep at least five values above it.
    quantile = min(SPIKE_QUANTILE, 1.0 - 5.0 / keep.sum())
    reference = float(np.quantile(power[keep], quantile))
    if reference <= 0:
        return
    spikes = keep & (power > SPIKE_FACTOR * reference)
    mask = np.zeros(book.lines.size, dtype=bool)
    mask[order[spikes]] = True
    book.reject(mask, f"spike (more than {SPIKE_FACTOR:g} times the record's {100 * quantile:.1f}th "
                      f"percentile, {reference:.0f} W)", value_label)


def _register_spans(t: np.ndarray, v: np.ndarray, order: np.ndarray, book: _Rows, unit: str, step: int,
                    max_gap_fill_s: int, max_power_w: float, value_label: str, lines: np.ndarray):
    """Spans between consecutive register readings, with out-of-sequence readings, resets and gaps handled."""
    warnings: list[str] = []
    scale = SCALE[unit]
    values = v[order]
    negative = values < 0
    bad = np.zeros(t.size, dtype=bool)
    bad[order[negative]] = True
    book.reject(bad, "negative value", value_label)
    order = order[book.ok[order]]
    values = v[order]
    if values.size >= 3:
        prev = np.concatenate([[np.nan], values[:-1]])
        nxt = np.concatenate([values[1:], [np.nan]])
        bracket = prev <= nxt
        low = bracket & (values < prev)
        high = bracket & (values > nxt)
        for mask_rows, reason in ((low, "register reading lower than its neighbours"),
                                  (high, "register reading higher than its neighbours")):
            bad = np.zeros(t.size, dtype=bool)
            bad[order[mask_rows]] = True
            book.reject(bad, reason, value_label)
        order = order[book.ok[order]]
        values = v[order]
    times = t[order]
    rise = np.diff(values) * scale
    duration = np.diff(times)
    reset = rise < 0
    restart_power = values[1:] * scale * 3600.0 / np.maximum(duration, 1e-9)
    plausible_restart = reset & (restart_power <= max_power_w)
    increment = np.where(plausible_restart, values[1:] * scale, rise)
    usable = ~(reset & ~plausible_restart)
    if reset.any():
        first = int(np.argmax(reset)) + 1
        kinds = []
        if plausible_restart.any():
            kinds.append(f"{int(plausible_restart.sum())} taken as a reset to zero (the new reading is the use "
                         "since the reset)")
        if (reset & ~plausible_restart).any():
            kinds.append(f"{int((reset & ~plausible_restart).sum())} left as missing intervals")
        warnings.append(f"column {value_label}: the register falls {int(reset.sum())} time(s) (first at row "
                        f"{int(lines[order[first]])}: {values[first - 1]:g} to {values[first]:g}); "
                        + "; ".join(kinds))
    long_span = duration > max_gap_fill_s + step
    if (long_span & usable).any():
        lost = float(increment[long_span & usable].sum()) / 1000.0
        first = int(np.argmax(long_span & usable)) + 1
        warnings.append(f"column {value_label}: {int((long_span & usable).sum())} gap(s) between readings "
                        f"longer than {max_gap_fill_s / 3600:g} h (first before row {int(lines[order[first]])}); "
                        f"their {lost:.3f} kWh cannot be placed in time and are left out")
    usable &= ~long_span & (duration > 0)
    power = increment * 3600.0 / np.maximum(duration, 1e-9)
    bad = np.zeros(t.size, dtype=bool)
    bad[order[1:][usable & (power > max_power_w)]] = True
    book.reject(bad, f"mean power above {max_power_w / 1000:g} kW (impossible for this tool)", value_label)
    usable &= book.ok[order[1:]]
    nominal = np.where(usable, power, np.nan)
    _reject_spikes(np.nan_to_num(nominal, nan=0.0), usable, order[1:], book, value_label)
    usable &= book.ok[order[1:]]
    start, end = times[:-1][usable], times[1:][usable]
    stretched = (end - start) > 1.5 * step
    return (start, end, increment[usable], stretched, book.lines[order[1:][usable]]), warnings


def _gap_warnings(gaps, stretched: np.ndarray, origin: float, step: int, start: np.ndarray, end: np.ndarray,
                  span_lines: np.ndarray, max_gap_fill_s: int, time_label: str) -> list[str]:
    """Warnings for filled and left gaps, naming the rows on either side."""
    out = []

    def row_before(cell: int) -> int:
        when = origin + cell * step
        k = max(int(np.searchsorted(end, when, side="right")) - 1, 0)
        return int(span_lines[k])

    def row_after(cell: int) -> int:
        when = origin + cell * step
        k = min(int(np.searchsorted(start, when, side="left")), span_lines.size - 1)
        return int(span_lines[k])

    limit_h = f"{max_gap_fill_s / 3600:g} h"
    if gaps.gaps_filled:
        first = int(np.argmax(gaps.filled))
        out.append(f"column {time_label}: {gaps.gaps_filled} gap(s) of up to {limit_h} ({int(gaps.filled.sum())} "
                   f"interval(s)) filled by linear interpolation (first after row {row_before(first)})")
    if stretched.any():
        first = int(np.argmax(stretched))
        out.append(f"column {time_label}: {_runs(stretched)} gap(s) of up to {limit_h} between register readings "
                   f"spread evenly ({int(stretched.sum())} interval(s); first after row {row_before(first)})")
    if gaps.gaps_left:
        cell, n = max(gaps.gaps_left, key=lambda g: g[1])
        out.append(f"column {time_label}: {len(gaps.gaps_left)} gap(s) longer than {limit_h} left missing; the "
                   f"longest is {n * step / 3600:.1f} h, from row {row_before(cell)} to row {row_after(cell + n)}")
    return out

