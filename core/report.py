"""Exports of a simulated year: the step-by-step table as CSV (the HTML report builds on the same data)."""

from __future__ import annotations

import io
from pathlib import Path

from core.errors import InputError
from core.files import write_atomic


def steps_csv_text(sim) -> str:
    """The per-step flows (W, step means; SOC in Wh) with interval-start times in site standard time."""
    table = sim.steps.copy()
    table.index.name = "interval_start"
    buffer = io.StringIO()
    table.to_csv(buffer, float_format="%.4f")
    return buffer.getvalue()


def write_steps_csv(sim, path, *, inputs: list[Path] = ()) -> Path:
    """Write the step table atomically; refuse to write over one of the run's input files."""
    path = Path(path)
    target = path.resolve()
    protected = {Path(p).resolve() for p in inputs}
    sc = sim.scenario
    for rel in (sc.weather.path, sc.load.path, sc.load.grid_only_path, sc.grid.outages_path):
        if rel:
            protected.add(sc.resolve(rel))
    if target in protected:
        raise InputError("refusing to write over an input file", file=str(path),
                         hint="choose another name for the output")
    if not target.parent.is_dir():
        raise InputError("the output folder does not exist", file=str(path))
    return write_atomic(path, steps_csv_text(sim).encode("utf-8"))
