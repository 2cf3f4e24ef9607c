"""Per-row bookkeeping of the load reader: which rows are rejected and why, and the refusals when too few are
left (see :mod:`core.model.loads.read` for the rules)."""

from __future__ import annotations

import numpy as np
import pandas as pd

from core.errors import InputError

FAR_GAP_S = 60 * 86400
FAR_SHARE = 0.01
#: Above this share of bad rows in a column, the column (or the file) is wrong rather than a few rows.
MOSTLY_BAD = 0.5


class _Rows:
    """Per-row rejection bookkeeping: the first reason that rejects a row is kept."""

    def __init__(self, lines: np.ndarray, raw_values: pd.Series, raw_times: pd.Series) -> None:
        self.lines = lines
        # Kept as Series (compact strings), read one cell at a time for messages: as arrays of Python strings
        # they would cost hundreds of MB on a file of millions of rows.
        self.raw_values = raw_values.reset_index(drop=True)
        self.raw_times = raw_times.reset_index(drop=True)
        self.reason = np.zeros(lines.size, dtype=np.int16)
        self.names: list[str] = [""]
        self.columns: list[str] = [""]

    @property
    def ok(self) -> np.ndarray:
        return self.reason == 0

    def reject(self, mask: np.ndarray, reason: str, column: str) -> None:
        mask = mask & self.ok
        if not mask.any():
            return
        if reason not in self.names:
            self.names.append(reason)
            self.columns.append(column)
        self.reason[mask] = self.names.index(reason)

    def summary(self) -> tuple[dict[str, int], list[str]]:
        counts: dict[str, int] = {}
        warnings: list[str] = []
        for code, reason in enumerate(self.names):
            if code == 0:
                continue
            hit = np.flatnonzero(self.reason == code)
            if hit.size == 0:
                continue
            counts[reason] = int(hit.size)
            first = hit[np.argmin(self.lines[hit])]
            column = self.columns[code]
            shown = self.raw_times.iloc[first] if "timestamp" in reason or "local time" in reason else \
                self.raw_values.iloc[first]
            warnings.append(f"column {column}: {hit.size} row(s) rejected, {reason} (first at row "
                            f"{int(self.lines[first])}: {str(shown)[:40]!r})")
        return counts, warnings



def _runs(mask: np.ndarray) -> int:
    if not mask.any():
        return 0
    return int(np.count_nonzero(np.diff(np.concatenate([[0], mask.astype(np.int8)])) == 1))


def _refuse_mostly_bad(bad: np.ndarray, lines: np.ndarray, raw: pd.Series, where: str, what: str, file: str,
                       hint: str) -> None:
    if bad.size and bad.mean() > MOSTLY_BAD:
        first = int(np.argmax(bad))
        shown = str(raw.iloc[first])[:40]
        raise InputError(f"{bad.sum()} of {bad.size} values {what} (row {int(lines[first])}: {shown!r})",
                         file=file, where=where, hint=hint)


def _too_few_rows(book: _Rows, lines: np.ndarray, file: str, usable: int, time_label: str,
                  value_label: str) -> None:
    counts, _ = book.summary()
    if counts:
        worst = max(counts, key=counts.__getitem__)
        code = book.names.index(worst)
        row = int(lines[np.flatnonzero(book.reason == code)].min())
        raise InputError(f"only {usable} usable row(s); rejected: " +
                         ", ".join(f"{n} {r}" for r, n in counts.items()), file=file,
                         where=f"row {row}, column {book.columns[code]}",
                         hint="at least two readings are needed; check the column, unit and time zone")
    rows = f"row {int(lines[0])}" if lines.size == 1 else f"rows {int(lines[0])}-{int(lines[-1])}"
    raise InputError(f"{lines.size} data row(s) ({rows}) give {usable} usable interval(s); at least two "
                     "readings a step apart are needed", file=file, where=f"row {int(lines[0])}",
                     hint="export a longer period")



def _time_order(t: np.ndarray, book: _Rows, lines: np.ndarray, time_label: str, warnings: list[str]
                ) -> np.ndarray:
    """Indices of the usable rows in time order (stable: equal times keep file order)."""
    usable = np.flatnonzero(book.ok & np.isfinite(t))
    steps = np.diff(t[usable])
    if (steps < 0).any():
        first_back = usable[int(np.argmax(steps < 0)) + 1]
        warnings.append(f"column {time_label}: rows are not in time order (first at row {int(lines[first_back])}, "
                        f"{int((steps < 0).sum())} step(s) back in time); sorted by time")
    return usable[np.argsort(t[usable], kind="stable")]


def _reject_duplicates(t: np.ndarray, v: np.ndarray, order: np.ndarray, book: _Rows, time_label: str) -> None:
    if order.size < 2:
        return
    same = np.concatenate([[False], np.abs(np.diff(t[order])) < 1e-3])
    mask = np.zeros(t.size, dtype=bool)
    mask[order[same]] = True
    book.reject(mask, "duplicate timestamp (the first row with it is kept)", time_label)


def _reject_far_rows(t: np.ndarray, order: np.ndarray, book: _Rows, time_label: str) -> None:
    """Reject small clusters of rows separated from the bulk of the record by more than 60 days."""
    if order.size < 10:
        return
    ts = t[order]
    breaks = np.flatnonzero(np.diff(ts) > FAR_GAP_S) + 1
    if breaks.size == 0:
        return
    bounds = np.concatenate([[0], breaks, [ts.size]])
    sizes = np.diff(bounds)
    mask = np.zeros(t.size, dtype=bool)
    for a, b, n in zip(bounds[:-1], bounds[1:], sizes, strict=True):  # loop over clusters, not rows
        if n < FAR_SHARE * ts.size:
            mask[order[a:b]] = True
    book.reject(mask, "timestamp more than 60 days away from the rest of the record", time_label)
