"""Thin adapters from the page to the comparison, sweep, checks and economics of ``core``.

Each one calls the core function that owns the job and returns what the views draw; when that core module is not
installed in this build, :class:`Missing` says so and the view shows one line instead of a section.
"""

from __future__ import annotations

import importlib
from dataclasses import dataclass

from core.scenario import Scenario


@dataclass(frozen=True)
class Missing:
    """A core feature this build does not have yet."""

    what: str

    def __str__(self) -> str:
        return f"{self.what} is not available in this build."


def _module(name: str):
    try:
        return importlib.import_module(name)
    except ModuleNotFoundError as exc:
        if exc.name and name.startswith(exc.name):
            return None
        raise


def checks(sc: Scenario, sim, option: str = "", cache=None):
    """The design checks of the simulated scenario (:func:`core.checks.run_checks`), or :class:`Missing`."""
    mod = _module("core.checks")
    if mod is None or not hasattr(mod, "run_checks"):
        return Missing("The design checks (core.checks)")
    return mod.run_checks(sc, sim, cache=cache, option=option)


def compare_module():
    """``core.compare`` when installed, else :class:`Missing`."""
    mod = _module("core.compare")
    return mod if mod is not None else Missing("The side-by-side comparison (core.compare)")


def sweep_module():
    """``core.sweep`` when installed, else :class:`Missing`."""
    mod = _module("core.sweep")
    return mod if mod is not None else Missing("The count × orientation sweep (core.sweep)")
