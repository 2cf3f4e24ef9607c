"""Exports of a simulated year: the step-by-step table as CSV (the HTML report builds on the same data)."""

from __future__ import annotations

import io
import os
from collections.abc import Sequence
from pathlib import Path

from core.errors import InputError
from core.files import write_atomic


def steps_csv_text(sim) -> str:
    """The step-by-step table as CSV text.

    Parameters
    ----------
    sim : SimulationResult
        A simulated year.

    Returns
    -------
    str
        One row per step: ``interval_start`` (site standard time), then every flow (W, step means) and the
        stored energy ``soc_wh`` (Wh).
    """
    table = sim.steps.copy()
    table.index.name = "interval_start"
    buffer = io.StringIO()
    table.to_csv(buffer, float_format="%.4f")
    return buffer.getvalue()


def check_output_path(path, sc, *, inputs: Sequence[Path] = ()) -> Path:
    """Raise InputError unless ``path`` may take an output of a run of ``sc``: not one of its input files (however
    the path reaches it: '..', a symbolic link), not a folder, inside a folder that exists. Called before the
    work starts, so that a long run is not wasted on a name that will be refused."""
    path = Path(path)
    try:
        target = path.resolve()
        protected = {Path(p).resolve() for p in inputs}
        is_folder, parent_ok = target.is_dir(), target.parent.is_dir()
        special = os.path.lexists(path) and (path.is_symlink() or not path.is_file())
    except (OSError, RuntimeError, ValueError) as exc:  # a name too long, a NUL character, a symlink loop
        raise InputError(f"cannot use this output path ({exc})", file=str(path)[:300],
                         hint="choose another name for the output") from None
    protected.update(sc.data_files().values())
    if target in protected:
        raise InputError("refusing to write over an input file", file=str(path),
                         hint="choose another name for the output")
    if is_folder:
        raise InputError("the output path is a folder", file=str(path), hint="give a file name, e.g. steps.csv")
    if not parent_ok:
        raise InputError("the output folder does not exist", file=str(path))
    if special:  # a device such as /dev/null, a pipe, a link: the atomic rename would put a file in its place
        raise InputError("exists and is not a regular file; it is not replaced", file=str(path),
                         hint="give the name of a new or ordinary file")
    return path


def write_steps_csv(sim, path, *, inputs: Sequence[Path] = ()) -> Path:
    """Write the step-by-step table as CSV, atomically.

    Parameters
    ----------
    sim : SimulationResult
        A simulated year.
    path : path-like
        The CSV file to write.
    inputs : sequence of Path, optional
        Files of the run besides the scenario's data files (the scenario file itself) that must not be replaced.

    Returns
    -------
    Path
        The file written.

    Raises
    ------
    InputError
        When the path is one of the run's inputs, a folder, in a folder that does not exist, or not writable.
    """
    path = check_output_path(path, sim.scenario, inputs=inputs)
    try:
        return write_atomic(path, steps_csv_text(sim).encode("utf-8"))
    except OSError as exc:
        raise InputError(f"cannot write the output ({exc.strerror or exc})", file=str(path),
                         hint="choose a folder you can write to") from None
