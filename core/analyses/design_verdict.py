"""The compare verdict with the design search: the design to pick, and only fixes the search has checked.

:func:`core.analyses.compare.compare` judges the expansion as typed; an option that breaks a rule is set aside.
The usual fixes — an export limiter, fewer panels, re-wiring the existing strings, another controller — are only
worth suggesting when they work, and whether they do depends on the module, the controller's voltage window and the
battery. The design search (:mod:`core.analyses.design`) has tried every such arrangement and kept the valid ones,
so the verdict here names the best valid design to pick and, for each option set aside, the best valid design of
the same kind with what it changes. It never repeats a generic fix that the search found to fail.

The search is the costly part; :func:`with_design` only reads a finished one, so a page can reuse a cached search
and the command line runs it only for a scenario with a ``[design]`` section.
"""

from __future__ import annotations

import dataclasses

from core.analyses.compare import Comparison
from core.analyses.design.strings import describe
from core.analyses.options import OPTION_LABELS, Option

#: The verdict's sentence that :func:`with_design` replaces: the generic fix for uncontrolled export.
GENERIC_FIX = "Uncontrolled export is energy sent into a grid"
#: How the checked sentences begin (the page shows these beside the verdict's first line).
PICK = "Pick design"
CHECKED_FIX = "Checked fix for"
NO_FIX = "No checked fix for"

#: Which designs stand in for an option: their coupling, and for AC-coupled ones the side.
_KIND = {Option.AC_BACKED_UP: ("ac", "backed_up"), Option.AC_GRID: ("ac", "grid"), Option.DC: ("dc", None)}


def _of_kind(design, option: str) -> bool:
    coupling, side = _KIND[Option(option)]
    parts = design.candidate.parts
    return design.candidate.coupling == coupling and (side is None or all(p.side == side for p in parts))


def changes(design, sc, asked: int, faces: dict | None = None) -> list[str]:
    """What the design changes against the expansion as typed, in words: the fixes it stands for. ``faces``: the
    search's faces by name, to tell a face other than the typed orientation."""
    e = sc.expansion
    faces = faces or {}
    out = []
    n = design.candidate.new_modules
    if asked and n < asked:
        out.append(f"fewer panels ({n} instead of {asked})")
    elif asked and n > asked:
        out.append(f"more panels ({n} instead of {asked})")
    for p in design.candidate.parts:
        if p.coupling == "ac":
            if p.export_control != sc.grid.ac_export_control:
                out.append("an export limiter that curtails the microinverters" if p.export_control == "limiter"
                           else f"export control '{p.export_control}' instead of '{sc.grid.ac_export_control}'")
            if e is not None and e.microinverter and p.microinverter != e.microinverter:
                out.append(f"microinverter {p.microinverter} instead of {e.microinverter}")
        else:
            if p.restrung:
                out.append(f"re-stringing: the {p.existing_modules} modules of '{p.restrung}' and the new ones "
                           f"re-wired as {describe(p.modules_per_string, p.strings)}")
            elif p.joins:
                out.append(f"new strings of {p.modules_per_string} in parallel with '{p.joins}'")
            elif e is not None and e.modules_per_string and p.modules_per_string != e.modules_per_string:
                out.append(f"strings of {p.modules_per_string} instead of {e.modules_per_string}")
            if e is not None and e.controller and p.controller != e.controller:
                out.append(f"controller {p.controller} instead of {e.controller}")
        if e is not None and p.face != e.face and (e.face or not _faces_as_typed(faces.get(p.face), e)):
            out.append(f"on {p.face}")
    return out


def _faces_as_typed(face, e) -> bool:
    """Whether a face has the orientation typed in ``[expansion]`` (within a degree)."""
    if face is None:
        return True
    turn = abs((face.azimuth_deg - e.azimuth_deg + 180.0) % 360.0 - 180.0)
    return abs(face.tilt_deg - e.tilt_deg) <= 1.0 and turn <= 1.0


def fix_sentence(comparison: Comparison, option: str, result) -> str:
    """For an option set aside: the best valid design of its kind and what it changes, or that the search found none
    (with the checks that every design of that kind failed)."""
    sc, label = comparison.scenario, OPTION_LABELS[Option(option)]
    cur = sc.tariff.currency
    best = next((d for d in result.valid if _of_kind(d, option)), None)
    if best is None:
        tried = [d for d in result.designs if _of_kind(d, option)]
        if not tried:
            return f"{NO_FIX} {label}: the design search tried no design of that kind."
        fails = sorted({c for d in tried for c in d.failed_checks})
        return (f"{NO_FIX} {label}: all {len(tried)} such designs the search tried fail a check "
                f"({', '.join(fails)}), so neither a limiter, fewer panels nor re-stringing makes it valid here.")
    what = changes(best, sc, comparison.layout.count, {f.name: f for f in result.spec.faces})
    how = "; ".join(what) if what else "the same panels, arranged as the search checked them"
    return (f"{CHECKED_FIX} {label}: design {best.id} ({best.candidate.words()}) passes every check and leaks nothing "
            f"into the grid — {how}; NPV {best.economics.npv:,.0f} {cur}.")


def pick_sentence(result) -> str:
    """The design to pick: the search's best valid one with its reason, or why none is valid."""
    best = result.best["overall"]
    if best is None:
        return f"No design to pick: {result.reasons['overall']}"
    return (f"{PICK} {best.id}, the best of the {len(result.valid)} valid designs of {len(result.designs)} the "
            f"design search tried. {result.reasons['overall']}")


def with_design(comparison: Comparison, result) -> Comparison:
    """The comparison with its verdict led by the design to pick and the generic fix replaced by checked ones.

    ``result``: a finished :class:`core.analyses.design.SearchResult` of the same scenario. The verdict's
    ``design`` is the id of the best valid design (None when the search found no valid design).
    """
    v = comparison.verdict
    blocked = [k for k, r in comparison.options.items() if k != Option.BASELINE and not r.valid]
    reasons = [pick_sentence(result)]
    fixes = [fix_sentence(comparison, k, result) for k in blocked]
    placed = False
    for r in v.reasons:
        if r.startswith(GENERIC_FIX):  # the unchecked "limiter or fewer panels": the checked fixes instead
            reasons += fixes
            placed = True
        else:
            reasons.append(r)
    if not placed:
        # after the last set-aside sentence, so each option's fix follows why it was set aside
        last = max((i for i, r in enumerate(reasons) if r.startswith("Set aside")), default=0)
        reasons[last + 1:last + 1] = fixes
    best = result.best["overall"]
    verdict = dataclasses.replace(v, text=" ".join(reasons), reasons=tuple(reasons),
                                  design=None if best is None else best.id)
    return dataclasses.replace(comparison, verdict=verdict)
