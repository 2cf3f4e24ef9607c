"""The expansion options: the scenario's ``[expansion]`` turned into one more array, per coupling.

``baseline``      the existing system as it is;
``ac_backed_up``  the new panels on microinverters on the backed-up (output) side of the inverter-charger;
``ac_grid``       the same on the grid side (they stop in an outage: anti-islanding);
``dc``            the new panels on a charge controller — the scenario's existing controller (sharing its
                  output limit with the arrays already on it) or one that no array uses yet (an added one).
"""

from __future__ import annotations

import dataclasses
import math
from dataclasses import dataclass

from core.errors import InputError
from core.scenario import Array, Scenario

OPTIONS = ("baseline", "ac_backed_up", "ac_grid", "dc")
OPTION_LABELS = {
    "baseline": "Existing system",
    "ac_backed_up": "AC-coupled, backed-up side",
    "ac_grid": "AC-coupled, grid side",
    "dc": "DC-coupled",
}
EXPANSION_ARRAY = "expansion"


@dataclass(frozen=True)
class Layout:
    """Where and how many: the what-if knobs that the explorer's sliders and the sweep move."""

    count: int
    tilt_deg: float
    azimuth_deg: float

    def __post_init__(self) -> None:
        for key, value, low, high in (("count", self.count, 0, 1000), ("tilt_deg", self.tilt_deg, 0, 90),
                                      ("azimuth_deg", self.azimuth_deg, 0, 360)):
            if not isinstance(value, int | float) or not math.isfinite(value) or not low <= value <= high:
                raise InputError(f"{value!r} is outside {low}…{high}", where=key,
                                 hint="panels added 0…1000, tilt 0…90°, azimuth 0…360° (180 = south)")


def applicable_options(sc: Scenario) -> tuple[str, ...]:
    """The options the scenario's ``[expansion]`` gives enough information for."""
    e = sc.expansion
    if e is None:
        return ("baseline",)
    out = ["baseline"]
    if e.microinverter is not None:
        out += ["ac_backed_up", "ac_grid"]
    if e.controller is not None and sc.battery is not None:
        out.append("dc")
    return tuple(out)


def layout_of(sc: Scenario) -> Layout:
    e = sc.expansion
    if e is None:
        return Layout(0, 30.0, 180.0)
    return Layout(e.count, e.tilt_deg, e.azimuth_deg)


def dc_string_layout(count: int, modules_per_string: int | None) -> tuple[int, int]:
    """(modules per string, strings) for ``count`` new modules on a controller.

    The scenario's modules-per-string is kept and strings are added as the count grows; a count
    that does not fill whole strings is rounded down to whole strings (parallel strings on one MPPT
    input must be of equal length). Without a given string length all modules form one string.
    """
    if count <= 0:
        return 0, 0
    per = modules_per_string or count
    if count < per:
        return count, 1  # fewer modules than one string: one shorter string
    return per, count // per


def with_option(sc: Scenario, option: str, layout: Layout | None = None) -> Scenario:
    """The scenario with the expansion added as the given option (``baseline`` returns it unchanged)."""
    if option not in OPTIONS:
        raise InputError(f"unknown option {option!r}", where="option", hint=f"one of {', '.join(OPTIONS)}")
    if option == "baseline":
        return sc
    e = sc.expansion
    if e is None:
        raise InputError("the scenario has no [expansion] section", where="expansion",
                         hint="add [expansion] with module, count, tilt_deg and azimuth_deg")
    lay = layout or layout_of(sc)
    if lay.count <= 0:
        return sc
    common = dict(name=EXPANSION_ARRAY, module=e.module, tilt_deg=float(lay.tilt_deg),
                  azimuth_deg=float(lay.azimuth_deg), mount=e.mount, losses_pct=e.losses_pct, row_pitch_m=e.row_pitch_m)
    face = next((f for f in sc.faces if f.name == e.face), None) if e.face else None
    if face is not None:  # on a named face the panels take its orientation, mount and shading
        common.update(face=face.name, tilt_deg=face.tilt_deg, azimuth_deg=face.azimuth_deg, mount=face.mount,
                      losses_pct=face.losses_pct, row_pitch_m=face.row_pitch_m)
    if option in ("ac_backed_up", "ac_grid"):
        if e.microinverter is None:
            raise InputError("the AC-coupled option needs a microinverter", where="expansion.microinverter")
        array = Array(coupling="ac", side="backed_up" if option == "ac_backed_up" else "grid",
                      microinverter=e.microinverter, modules=int(lay.count), **common)
    else:
        if e.controller is None:
            raise InputError("the DC-coupled option needs a controller", where="expansion.controller")
        per, strings = dc_string_layout(int(lay.count), e.modules_per_string)
        array = Array(coupling="dc", controller=e.controller, modules_per_string=per, strings=strings, **common)
    return dataclasses.replace(sc, arrays=(*sc.arrays, array))
