"""One call for ``inspect-load``: the data-quality summary of a load file."""

from __future__ import annotations

from os import PathLike
from typing import Any

from core.model.loads.read import read_load_csv


def inspect_load_summary(path: str | PathLike[str], *, timezone: str | None = None, unit: str | None = None,
                         column: str | None = None, label: str = "start", latitude: float | None = None,
                         longitude: float | None = None) -> dict[str, Any]:
    """The data-quality summary of a load file as a JSON-ready dict (see :class:`LoadQuality`)."""
    measured = read_load_csv(path, column=column, unit=unit, timezone=timezone, label=label,
                             latitude=latitude, longitude=longitude)
    return measured.quality.to_dict()
