"""The verdict's sentence on shading: what the face's shade costs the new panels as a string and on microinverters.

A shaded module on its own microinverter loses only itself; in a string it drags the string's current down or is
bypassed substring by substring (common practice). The numbers come from each option's loss breakdown
(:func:`core.face_arrays.array_breakdown`) of the expansion array.
"""

from __future__ import annotations

from core.analyses.options import EXPANSION_ARRAY, Option
from core.face_arrays import array_breakdown

#: Shading losses that differ by less than this are not worth a sentence, kWh a year.
SHADE_EPS_KWH = 1.0
SHADING_LOSSES = ("horizon", "obstacles", "row_shading")


def shading_cost_kwh(sim) -> float | None:
    """The expansion array's yearly loss to horizon, obstacles and rows in front, kWh (None without one)."""
    for a in array_breakdown(sim):
        if a["name"] == EXPANSION_ARRAY:
            return sum(a["losses_kwh"][k] for k in SHADING_LOSSES)
    return None


def shading_reason(results: dict, energy_winner: str | None) -> str | None:
    """One sentence with the numbers when shading separates the string from the microinverters, else None.

    ``results``: option key -> an object with ``.simulation`` (compare's OptionResult)."""
    if "dc" not in results:
        return None
    string = shading_cost_kwh(results["dc"].simulation)
    micro_key = next((k for k in ("ac_backed_up", "ac_grid") if k in results), None)
    if string is None or micro_key is None:
        return None
    micro = shading_cost_kwh(results[micro_key].simulation)
    if micro is None or string - micro < SHADE_EPS_KWH:
        return None
    text = (f"Shading on the new panels' face costs them {string:.0f} kWh a year as one string and {micro:.0f} kWh "
            f"on microinverters: a shaded module on its own microinverter loses only itself")
    if energy_winner is not None and energy_winner.startswith("ac_"):
        text += f", which is part of why {Option(energy_winner).label} wins"
    return text + "."
