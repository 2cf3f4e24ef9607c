"""A design as an ordinary scenario: the arrays as designed, no ``[design]`` or ``[expansion]`` section.

The same scenario is what the search simulates and checks, and what ``--write-best`` writes out, so a written
design reproduces the search's figures when simulated.
"""

from __future__ import annotations

import dataclasses
from pathlib import Path

from core.analyses.design.candidates import Candidate, Part
from core.analyses.design.spec import DesignSpec
from core.scenario import Array, Scenario


def _new_array(sc: Scenario, spec: DesignSpec, part: Part, name: str) -> Array:
    face = spec.face(part.face)
    named = any(f.name == face.name for f in sc.faces)  # a face of the file (not one made from [expansion])
    common = dict(name=name, module=spec.module, tilt_deg=face.tilt_deg, azimuth_deg=face.azimuth_deg,
                  face=face.name if named else None, mount=face.mount, losses_pct=face.losses_pct,
                  row_pitch_m=face.row_pitch_m)
    if part.coupling == "dc":
        return Array(coupling="dc", controller=part.controller, modules_per_string=part.modules_per_string,
                     strings=part.strings, **common)
    return Array(coupling="ac", side=part.side, microinverter=part.microinverter, modules=part.modules, **common)


def _unique(name: str, taken: set[str]) -> str:
    out, i = name, 2
    while out in taken:
        out, i = f"{name} ({i})", i + 1
    return out


def design_scenario(sc: Scenario, spec: DesignSpec, candidate: Candidate) -> Scenario:
    """The scenario with the design built in: a re-strung array re-wired, new arrays added, the export control
    set; without ``[design]`` and ``[expansion]`` (the design is the expansion now)."""
    arrays = list(sc.arrays)
    grid = sc.grid
    for part in candidate.parts:
        if part.restrung is not None:
            i = next(k for k, a in enumerate(arrays) if a.name == part.restrung)
            arrays[i] = dataclasses.replace(arrays[i], modules_per_string=part.modules_per_string,
                                            strings=part.strings)
            continue
        kind = "DC" if part.coupling == "dc" else "AC"
        name = _unique(f"new {kind} on {part.face}", {a.name for a in arrays})
        arrays.append(_new_array(sc, spec, part, name))
        if part.coupling == "ac":
            grid = dataclasses.replace(grid, ac_export_control=part.export_control)
    return sc.replace(arrays=tuple(arrays), grid=grid, design=None, expansion=None)


def write_design(scenario: Scenario, path: str | Path, header: str = "") -> Path:
    """Write a designed scenario as a TOML file (atomically), data paths relative to its folder, with an
    optional comment header (each line prefixed with ``#``)."""
    from core.files import write_atomic
    from core.scenario import scenario_to_toml

    path = Path(path)
    text = scenario_to_toml(scenario, relative_to=path.parent)
    comment = "".join(f"# {line}\n".replace("# \n", "#\n") for line in header.splitlines())
    write_atomic(path, (comment + text).encode("utf-8"))
    return path
