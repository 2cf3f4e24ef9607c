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
from enum import StrEnum

from core.errors import InputError
from core.scenario import Array, Scenario


class Option(StrEnum):
    """The expansion options. Members are strings (``Option.DC == "dc"``), so JSON, scenario files
    (``[expansion] coupling``) and the command line keep their plain spellings."""

    BASELINE = "baseline"
    AC_BACKED_UP = "ac_backed_up"
    AC_GRID = "ac_grid"
    DC = "dc"

    @property
    def label(self) -> str:
        return OPTION_LABELS[self]

    @property
    def is_ac(self) -> bool:
        return self in (Option.AC_BACKED_UP, Option.AC_GRID)


OPTIONS = tuple(Option)
#: The options that add panels (every option but the existing system), in display order.
EXPANSION_OPTIONS = (Option.AC_BACKED_UP, Option.AC_GRID, Option.DC)
OPTION_LABELS = {
    Option.BASELINE: "Existing system",
    Option.AC_BACKED_UP: "AC-coupled, backed-up side",
    Option.AC_GRID: "AC-coupled, grid side",
    Option.DC: "DC-coupled",
}
#: An AC-coupled option's array side (``Array.side``): the project spells the group ``ac_backed`` in flows and
#: fields, ``ac_backed_up`` as an option and ``backed_up`` as an array's side.
AC_SIDES = {Option.AC_BACKED_UP: "backed_up", Option.AC_GRID: "grid"}


def as_option(value: str, *, where: str = "option") -> Option:
    """``value`` as an :class:`Option`, or an input error that lists the spellings."""
    try:
        return Option(value)
    except ValueError:
        raise InputError(f"unknown option {value!r}", where=where,
                         hint=f"one of {', '.join(o.value for o in Option)}") from None
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
        return (Option.BASELINE,)
    out = [Option.BASELINE]
    if e.microinverter is not None:
        out += [Option.AC_BACKED_UP, Option.AC_GRID]
    if e.controller is not None and sc.battery is not None:
        out.append(Option.DC)
    return tuple(out)


def layout_of(sc: Scenario) -> Layout:
    e = sc.expansion
    if e is None:
        return Layout(0, 30.0, 180.0)
    return Layout(e.count, e.tilt_deg, e.azimuth_deg)


def dc_string_layout(count: int, modules_per_string: int | None) -> tuple[int, int]:
    """(modules per string, strings) for ``count`` new modules on a controller, using every one of them.

    Parallel strings on one MPPT input must be of equal length. The scenario's modules-per-string is kept when
    the count fills whole strings of it; otherwise the count is arranged as the equal strings whose length is
    nearest (``core.analyses.design.strings.nearest_arrangements``: 3 modules at 2 per string become one string
    of 3) — never rounded to fewer modules than are priced. The string checks then judge that arrangement, and
    :func:`dc_layout_note` says in words when it differs from the scenario's. Without a given length all modules
    form one string.
    """
    from core.analyses.design.strings import nearest_arrangements

    if count <= 0:
        return 0, 0
    per = modules_per_string or count
    if count % per == 0:
        return per, count // per
    return nearest_arrangements(count, per)[0]


def dc_layout_note(count: int, modules_per_string: int | None) -> str | None:
    """A sentence when ``count`` does not fill whole strings of the scenario's length (None when it does)."""
    from core.analyses.design.strings import describe, nearest_arrangements

    if count <= 0 or not modules_per_string or count % modules_per_string == 0:
        return None
    per, strings = dc_string_layout(count, modules_per_string)
    others = [describe(p, s) for p, s in nearest_arrangements(count, modules_per_string)[1:]]
    return (f"{count} modules do not form equal strings of {modules_per_string}; the DC-coupled option arranges all "
            f"{count} as {describe(per, strings)}" + (f" (or {', '.join(others)})" if others else "")
            + f". For strings of {modules_per_string}, add or remove panels to a multiple of {modules_per_string}.")


def faces_like(layout: Layout, face) -> bool:
    """Whether ``layout`` keeps the orientation of ``face`` (within half a degree of tilt and azimuth)."""
    turn = abs((float(layout.azimuth_deg) - face.azimuth_deg + 180.0) % 360.0 - 180.0)
    return abs(float(layout.tilt_deg) - face.tilt_deg) < 0.5 and turn < 0.5


def fits_on(sc: Scenario, face, count: int) -> bool:
    """Whether ``count`` more modules fit the face's layout beside the arrays already on it (no layout: always)."""
    if face.rows is None or face.columns is None:
        return True
    there = sum(a.module_count for a in sc.arrays if a.face == face.name)
    return there + count <= face.rows * face.columns


def with_option(sc: Scenario, option: str, layout: Layout | None = None) -> Scenario:
    """The scenario with the expansion added as the given option (``baseline`` returns it unchanged)."""
    option = as_option(option)
    if option == Option.BASELINE:
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
    if face is not None and not (faces_like(lay, face) and fits_on(sc, face, int(lay.count))):
        # Turned away from the face, or more than its layout holds (a sweep cell, the what-if's controls), the panels
        # are elsewhere: a free array at that orientation, without the face's layout and shade.
        face = None
    if face is not None:  # on a named face the panels take its orientation, mount and shading
        common.update(face=face.name, tilt_deg=face.tilt_deg, azimuth_deg=face.azimuth_deg, mount=face.mount,
                      losses_pct=face.losses_pct, row_pitch_m=face.row_pitch_m)
    if option.is_ac:
        if e.microinverter is None:
            raise InputError("the AC-coupled option needs a microinverter", where="expansion.microinverter")
        array = Array(coupling="ac", side=AC_SIDES[option],
                      microinverter=e.microinverter, modules=int(lay.count), **common)
    elif e.restring is not None:
        return restrung(sc, e.restring, int(lay.count), e.modules_per_string)
    else:
        if e.controller is None:
            raise InputError("the DC-coupled option needs a controller", where="expansion.controller")
        per, strings = dc_string_layout(int(lay.count), e.modules_per_string)
        array = Array(coupling="dc", controller=e.controller, modules_per_string=per, strings=strings, **common)
    return dataclasses.replace(sc, arrays=(*sc.arrays, array))


def restrung(sc: Scenario, name: str, count: int, modules_per_string: int | None) -> Scenario:
    """The scenario with the existing DC-coupled array ``name`` re-wired with ``count`` new modules of its kind: all
    its modules and the new ones as ``modules_per_string`` in series (its own length when None), on its controller
    and face. A total that forms no equal strings of that length is arranged as the nearest equal strings
    (:func:`dc_string_layout`), every module kept; :func:`restring_note` says so."""
    arrays = list(sc.arrays)
    i = next((k for k, a in enumerate(arrays) if a.name == name and a.coupling == "dc"), None)
    if i is None:
        raise InputError(f"{name!r} is not a DC-coupled array of this scenario", where="expansion.restring")
    old = arrays[i]
    per, strings = dc_string_layout(old.module_count + count, modules_per_string or old.modules_per_string)
    arrays[i] = dataclasses.replace(old, modules_per_string=per, strings=strings)
    return dataclasses.replace(sc, arrays=tuple(arrays))


def restring_note(sc: Scenario, count: int) -> str | None:
    """For a re-strung expansion, the arrangement in words (with :func:`dc_layout_note`'s sentence when the total
    forms no equal strings of the length asked); None when the expansion re-strings nothing."""
    e = sc.expansion
    if e is None or e.restring is None:
        return None
    old = next((a for a in sc.arrays if a.name == e.restring), None)
    if old is None:
        return None
    total = old.module_count + count
    asked = e.modules_per_string or old.modules_per_string
    per, strings = dc_string_layout(total, asked)
    text = (f"Re-strung: the {old.module_count} modules of '{old.name}' and {count} new ones, {total} in all, as "
            f"{strings} string{'s' if strings != 1 else ''} of {per} on {old.controller}.")
    note = dc_layout_note(total, asked)
    return f"{text} {note}" if note else text
