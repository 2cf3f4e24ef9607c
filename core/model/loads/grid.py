"""Readings to mean power on a regular grid at the data's own interval, and the filling of short gaps.

Every reading becomes a *span* of time with a known energy: a mean-power or per-interval-energy row covers
one interval from its timestamp (or up to it, for interval-end labels), cut short where the next row starts;
a register increment covers the time between two readings. The cumulative energy and the covered time are
piecewise linear in time, so both are interpolated at the grid edges (``numpy.interp``) and differenced:
energy is conserved exactly, jittery timestamps are handled, and no Python loop runs over rows.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

#: Intervals a load record is snapped to (seconds); all divide an hour.
NICE_STEPS_S = (1, 2, 3, 4, 5, 6, 10, 12, 15, 20, 30, 60, 120, 180, 240, 300, 360, 600, 900, 1200, 1800, 3600)
#: A grid cell needs readings over at least this share of it to count as measured.
MIN_COVERED_SHARE = 0.5
#: Most cells a record may span (a year of 1-second data is 31.5 million).
MAX_CELLS = 40_000_000


@dataclass(frozen=True)
class Interval:
    step_s: int          # the snapped interval
    median_s: float      # median spacing of the timestamps
    regular_share: float  # share of spacings within 2 % of step_s


@dataclass(frozen=True)
class GridPower:
    origin_s: float          # UTC seconds of the first cell's start
    step_s: int
    power_w: np.ndarray      # mean power per cell, NaN where unknown
    measured: np.ndarray     # bool: from readings
    stretched: np.ndarray    # bool: from a register increment that spans a short gap (energy known, shape not)


@dataclass(frozen=True)
class FilledGaps:
    power_w: np.ndarray
    filled: np.ndarray       # bool: cells filled by interpolation
    gaps_filled: int         # runs of missing cells filled
    gaps_left: list[tuple[int, int]]   # (first cell, cells) of runs left missing


def detect_interval(times_s: np.ndarray) -> Interval:
    """The data's interval: the median spacing of sorted distinct timestamps, snapped to a divisor of an hour."""
    steps = np.diff(times_s)
    steps = steps[steps > 0]
    median = float(np.median(steps))
    nice = np.asarray(NICE_STEPS_S, dtype=float)
    step = int(nice[np.argmin(np.abs(np.log(nice / max(median, 1e-3))))])
    regular = float(np.mean(np.abs(steps - step) <= 0.02 * step))
    return Interval(step_s=step, median_s=median, regular_share=regular)


def detect_phase(times_s: np.ndarray, step_s: int) -> int:
    """Offset (s) of the grid from whole multiples of the step since the epoch (0 unless most rows agree).

    Hourly data from a zone at UTC+05:30 sit at half past the UTC hour: the phase keeps them on the grid.
    """
    if step_s <= 1:
        return 0
    remainders = np.round(np.mod(times_s, step_s)).astype(np.int64) % step_s
    counts = np.bincount(remainders, minlength=step_s)
    phase = int(np.argmax(counts))
    return phase if counts[phase] >= 0.5 * times_s.size else 0


def to_grid(start_s: np.ndarray, end_s: np.ndarray, energy_wh: np.ndarray, stretched: np.ndarray,
            step_s: int, phase_s: int) -> GridPower:
    """Spread span energies over grid cells (spans sorted, not overlapping, each with end > start)."""
    origin = np.floor((start_s[0] - phase_s) / step_s) * step_s + phase_s
    cells = int(np.ceil((end_s[-1] - origin) / step_s - 1e-9))
    edges = origin + np.arange(cells + 1, dtype=np.float64) * step_s
    knots = np.empty(2 * start_s.size)
    knots[0::2], knots[1::2] = start_s, end_s
    duration = end_s - start_s
    # One cumulative quantity at a time, so that a file of millions of rows holds few arrays of twice its length.
    cell_energy = _cell_sums(edges, knots, energy_wh)
    cell_covered = _cell_sums(edges, knots, duration)
    # Without stretched spans (every file but a register's with short gaps) their sum is zero in every cell.
    cell_stretched = _cell_sums(edges, knots, np.where(stretched, duration, 0.0)) if stretched.any() else \
        np.zeros(cells)
    known = cell_covered >= MIN_COVERED_SHARE * step_s
    power = np.full(cells, np.nan)
    power[known] = cell_energy[known] * 3600.0 / cell_covered[known]
    stretched_cells = known & (cell_stretched > 0.5 * cell_covered)
    return GridPower(origin_s=float(origin), step_s=step_s, power_w=power, measured=known & ~stretched_cells,
                     stretched=stretched_cells)


def _cell_sums(edges: np.ndarray, knots: np.ndarray, per_span: np.ndarray) -> np.ndarray:
    """How much of a quantity spread evenly over each span falls in each cell between ``edges``."""
    cum = np.concatenate([[0.0], np.cumsum(per_span)])
    at_knots = np.empty(2 * per_span.size)
    at_knots[0::2], at_knots[1::2] = cum[:-1], cum[1:]
    del cum
    return np.diff(np.interp(edges, knots, at_knots))


def fill_short_gaps(power_w: np.ndarray, max_cells: int) -> FilledGaps:
    """Fill interior runs of up to ``max_cells`` missing cells by linear interpolation of power."""
    missing = np.isnan(power_w)
    if not missing.any() or missing.all():
        return FilledGaps(power_w=power_w.copy(), filled=np.zeros_like(missing), gaps_filled=0, gaps_left=[])
    padded = np.concatenate([[False], missing, [False]])
    change = np.flatnonzero(np.diff(padded.astype(np.int8)))
    starts, stops = change[0::2], change[1::2]
    lengths = stops - starts
    interior = (starts > 0) & (stops < power_w.size)
    short = interior & (lengths <= max_cells)
    valid = np.flatnonzero(~missing)
    interpolated = np.interp(np.arange(power_w.size), valid, power_w[valid])
    fill_mask = np.zeros(power_w.size, dtype=bool)
    if short.any():
        marks = np.zeros(power_w.size + 1, dtype=np.int64)
        np.add.at(marks, starts[short], 1)
        np.add.at(marks, stops[short], -1)
        fill_mask = np.cumsum(marks[:-1]) > 0
    out = power_w.copy()
    out[fill_mask] = interpolated[fill_mask]
    left = [(int(s), int(n)) for s, n in zip(starts[~short], lengths[~short], strict=True)]
    return FilledGaps(power_w=out, filled=fill_mask, gaps_filled=int(short.sum()), gaps_left=left)
