"""Every arrangement the faces, modules and candidate converters allow: DC parts, AC parts and both.

DC parts, for each face and each count of new modules that fits:

* **re-stringing** — the face carries a DC array of the design's module: all its modules and the new ones are
  re-wired as every series × parallel factorisation of their sum on that array's controller (the factorisation
  with the array's own string length is not re-wiring: see the next item);
* **added strings** — new strings of the existing length in parallel, when the count fills whole strings;
* **own controller** — the new modules alone as every factorisation of their count on a candidate controller that
  no array uses yet (it is bought). New modules share an existing controller's input only as added strings of
  the same module, length and orientation (common practice: parallel strings on one MPPT input must match).

AC parts: each candidate microinverter (⌈modules / inputs⌉ units), each side and each export-control mode.
A design is one DC part, one AC part, or one of each on faces with room for both.
"""

from __future__ import annotations

from dataclasses import dataclass, field

from core.analyses.design.spec import DesignSpec, existing_on_face
from core.analyses.design.strings import factorisations
from core.scenario import Scenario

SIDES = ("backed_up", "grid")


@dataclass(frozen=True)
class Part:
    """One part of a design: new modules on one face, DC-coupled on a controller or AC-coupled on microinverters.

    DC: ``modules_per_string`` × ``strings`` is the arrangement as wired (for a re-stringing, existing and new
    modules together); ``restrung`` names the existing array re-wired, ``joins`` one whose controller the new
    strings share. AC: ``units`` microinverters on ``side`` with the system's ``export_control`` mode.
    """

    coupling: str  # "dc" | "ac"
    face: str
    modules: int  # new modules in this part
    controller: str | None = None
    modules_per_string: int | None = None
    strings: int | None = None
    restrung: str | None = None  # name of the existing array re-wired
    joins: str | None = None  # name of an existing array whose controller input the new strings share
    existing_modules: int = 0  # its modules, re-wired with the new ones
    microinverter: str | None = None
    units: int | None = None
    side: str | None = None
    export_control: str | None = None

    def to_dict(self) -> dict:
        out = {"coupling": self.coupling, "face": self.face, "modules": self.modules}
        if self.coupling == "dc":
            out.update(controller=self.controller, modules_per_string=self.modules_per_string, strings=self.strings,
                       restrung=self.restrung is not None, existing_modules=self.existing_modules)
        else:
            out.update(microinverter=self.microinverter, units=self.units, side=self.side,
                       export_control=self.export_control)
        return out

    def words(self) -> str:
        """The part in plain words."""
        n = f"{self.modules} new module{'s' if self.modules != 1 else ''}"
        if self.coupling == "dc":
            layout = f"{self.strings} string{'s' if self.strings != 1 else ''} of {self.modules_per_string}"
            if self.restrung:
                return (f"{n} on {self.face} re-strung with the {self.existing_modules} of '{self.restrung}' as "
                        f"{layout} on {self.controller}")
            if self.joins:
                return f"{n} on {self.face} as {layout} in parallel with '{self.joins}' on {self.controller}"
            return f"{n} on {self.face} as {layout} on {self.controller}"
        units = f"{self.units} × {self.microinverter}"
        side = "backed-up side" if self.side == "backed_up" else "grid side"
        control = "no export control" if self.export_control == "none" else f"export control '{self.export_control}'"
        return f"{n} on {self.face} on {units}, {side}, {control}"


@dataclass(frozen=True)
class Candidate:
    id: str
    parts: tuple[Part, ...] = field(default_factory=tuple)

    @property
    def new_modules(self) -> int:
        return sum(p.modules for p in self.parts)

    @property
    def coupling(self) -> str:
        return "+".join(dict.fromkeys(p.coupling for p in sorted(self.parts, key=lambda p: p.coupling != "dc")))

    def words(self) -> str:
        return "; plus ".join(p.words() for p in self.parts)


def dc_parts(sc: Scenario, spec: DesignSpec, face_name: str, count: int) -> list[Part]:
    """Every DC part that puts ``count`` new modules on the face."""
    face = spec.face(face_name)
    parts: list[Part] = []
    for a in existing_on_face(sc, face):
        if a.coupling != "dc" or sc.modules[a.module] != sc.modules[spec.module]:
            continue
        total = a.module_count + count
        parts += [Part("dc", face_name, count, controller=a.controller, modules_per_string=per, strings=strings,
                       restrung=a.name, existing_modules=a.module_count)
                  for per, strings in factorisations(total) if per != a.modules_per_string]
        if count % a.modules_per_string == 0:
            parts.append(Part("dc", face_name, count, controller=a.controller, modules_per_string=a.modules_per_string,
                              strings=count // a.modules_per_string, joins=a.name))
    if sc.battery is not None:
        # Strings in parallel on one MPPT input must match (module, length, orientation): that is the
        # added-strings case above; alone, new modules go on a controller that no array uses yet.
        used = {a.controller for a in sc.arrays if a.coupling == "dc" and a.module_count > 0}
        for name in spec.controllers:
            if name in used:
                continue
            parts += [Part("dc", face_name, count, controller=name, modules_per_string=per, strings=strings)
                      for per, strings in factorisations(count)]
    return parts


def ac_parts(spec: DesignSpec, face_name: str, count: int, micro_inputs: dict[str, int]) -> list[Part]:
    """Every AC part that puts ``count`` new modules on the face."""
    return [Part("ac", face_name, count, microinverter=name, units=-(-count // micro_inputs[name]), side=side,
                 export_control=mode)
            for name in spec.microinverters for side in SIDES for mode in spec.export_controls]


def enumerate_candidates(sc: Scenario, spec: DesignSpec) -> list[Candidate]:
    """Every design: a DC part alone, an AC part alone, and one of each where the faces have room for both."""
    limit = spec.new_modules_max
    inputs = {name: sc.microinverters[name].inputs for name in spec.microinverters}
    dc: list[Part] = []
    ac: list[Part] = []
    for face in spec.faces:
        for count in range(1, min(limit, spec.room[face.name]) + 1):
            dc += dc_parts(sc, spec, face.name, count)
            ac += ac_parts(spec, face.name, count, inputs)
    designs: list[tuple[Part, ...]] = [(p,) for p in dc] + [(p,) for p in ac]
    for d in dc:
        for a in ac:
            if d.modules + a.modules > limit:
                continue
            if d.face == a.face and d.modules + a.modules > spec.room[d.face]:
                continue
            designs.append((d, a))
    width = len(str(len(designs)))
    return [Candidate(id=f"d{i + 1:0{width}d}", parts=parts) for i, parts in enumerate(designs)]
