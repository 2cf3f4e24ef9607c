"""What the search may do: the scenario's ``[design]``, or one built from its ``[expansion]``.

The search works on a :class:`DesignSpec`: the module to buy, how many, the faces with their room, the candidate
converters and export-control modes, and the cost items. A scenario without ``[design]`` gets one from its
``[expansion]`` (its module, count, one face from its orientation, its controller and microinverter, its costs
per panel), so every scenario with an expansion can be searched.
"""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass

from core.errors import InputError
from core.scenario import AC_CONTROL_MODES, Array, Face, Scenario

#: Orientation differences within which an array that names no face lies on a face (our own choice, as the
#: string checks' "same orientation").
SAME_TILT_DEG = 1.0
SAME_AZIMUTH_DEG = 1.0
#: The face made from ``[expansion]``'s orientation when the scenario has no ``[[faces]]``.
EXPANSION_FACE = "new panels' face"


@dataclass(frozen=True)
class DesignSpec:
    """The search's brief. Costs are in the tariff's currency; ``room`` is new modules each face can take."""

    module: str
    new_modules_max: int
    faces: tuple[Face, ...]
    room: dict[str, int]
    controllers: tuple[str, ...]
    microinverters: tuple[str, ...]
    export_controls: tuple[str, ...]
    cost_fixed_dc: float
    cost_fixed_ac: float
    cost_per_module_dc: float
    cost_per_module_ac: float
    cost_restring: float
    cost_limiter: float
    from_expansion: bool  # built from [expansion] (module and converter prices are then in its costs)

    def face(self, name: str) -> Face:
        return next(f for f in self.faces if f.name == name)


def on_face(array: Array, face: Face) -> bool:
    """Whether an existing array lies on the face: it names it, or names none and faces the same way."""
    if array.face is not None:
        return array.face == face.name
    turn = abs((array.azimuth_deg - face.azimuth_deg + 180.0) % 360.0 - 180.0)
    return abs(array.tilt_deg - face.tilt_deg) <= SAME_TILT_DEG and turn <= SAME_AZIMUTH_DEG


def existing_on_face(sc: Scenario, face: Face) -> list[Array]:
    return [a for a in sc.arrays if a.module_count > 0 and on_face(a, face)]


def _expansion_face(sc: Scenario) -> Face:
    e = sc.expansion
    face = Face(name=EXPANSION_FACE, tilt_deg=e.tilt_deg, azimuth_deg=e.azimuth_deg, mount=e.mount,
                losses_pct=e.losses_pct, row_pitch_m=e.row_pitch_m, max_modules=0)
    existing = sum(a.module_count for a in existing_on_face(sc, face))
    return dataclasses.replace(face, max_modules=existing + e.count)


def design_spec(sc: Scenario) -> DesignSpec:
    """The search's brief from ``[design]`` (or ``[expansion]``), with each face's room for new modules."""
    d, e = sc.design, sc.expansion
    if d is None and e is None:
        raise InputError("there is nothing to design: the scenario has neither [design] nor [expansion]",
                         where="design", hint="add [design] with module = … and [[faces]], or an [expansion]")
    faces = sc.faces or ((_expansion_face(sc),) if e is not None else ())
    if not faces:
        raise InputError("[design] needs roof faces to put modules on", where="faces",
                         hint="add [[faces]] entries with name, tilt_deg, azimuth_deg and max_modules")
    room = {f.name: max(0, f.max_modules - sum(a.module_count for a in existing_on_face(sc, f))) for f in faces}
    if d is not None:
        chosen = d.faces if d.faces is not None else [f.name for f in faces if room[f.name] > 0]
        modes = d.export_controls if d.export_controls is not None else AC_CONTROL_MODES
        return DesignSpec(
            module=d.module, new_modules_max=d.new_modules_max, faces=tuple(f for f in faces if f.name in chosen),
            room=room, controllers=tuple(d.controllers if d.controllers is not None else sc.controllers),
            microinverters=tuple(d.microinverters if d.microinverters is not None else sc.microinverters),
            export_controls=tuple(modes), cost_fixed_dc=d.cost_fixed_dc, cost_fixed_ac=d.cost_fixed_ac,
            cost_per_module_dc=d.cost_per_module, cost_per_module_ac=d.cost_per_module,
            cost_restring=d.cost_restring, cost_limiter=d.cost_limiter, from_expansion=False)
    per = max(e.count, 1)
    return DesignSpec(
        module=e.module, new_modules_max=e.count, faces=tuple(f for f in faces if room[f.name] > 0), room=room,
        controllers=(e.controller,) if e.controller and sc.battery is not None else (),
        microinverters=(e.microinverter,) if e.microinverter else (), export_controls=tuple(AC_CONTROL_MODES),
        cost_fixed_dc=0.0, cost_fixed_ac=0.0, cost_per_module_dc=e.cost_dc / per, cost_per_module_ac=e.cost_ac / per,
        cost_restring=0.0, cost_limiter=0.0, from_expansion=True)
