"""The calibrated scenario: a copy of the user's with the fitted values in place, written to a new file."""

from __future__ import annotations

import dataclasses
import os
from collections.abc import Iterable
from pathlib import Path

from core.errors import InputError
from core.scenario import Scenario, save_scenario


def apply_fit(sc: Scenario, losses_pct: dict[str, float], standing_draw_w: float | None) -> Scenario:
    """The scenario with the fitted array losses (one decimal) and standing draw (whole watts)."""
    arrays = tuple(dataclasses.replace(a, losses_pct=round(min(max(losses_pct[a.name], 0.0), 99.0), 1))
                   if a.name in losses_pct else a for a in sc.arrays)
    grid = sc.grid if standing_draw_w is None else dataclasses.replace(
        sc.grid, standing_draw_w=float(round(max(standing_draw_w, 0.0))))
    return dataclasses.replace(sc, arrays=arrays, grid=grid)


def write_calibrated(calibrated: Scenario, path: str | os.PathLike, protected: Iterable[str | os.PathLike]) -> Path:
    """Write the calibrated scenario to ``path`` (paths in it relative to its new folder), never over the user's
    scenario or one of its data files (``protected``)."""
    target = Path(path)
    resolved = target.resolve()
    for other in protected:
        if Path(other).resolve() == resolved:
            raise InputError("would overwrite one of your own files", file=str(target), where="--write",
                             hint="give the calibrated scenario a new name, e.g. scenario_calibrated.toml")
    if not target.parent.is_dir():
        raise InputError("the folder does not exist", file=str(target), where="--write",
                         hint="write into an existing folder")
    return save_scenario(calibrated, target)
