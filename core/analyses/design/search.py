"""The design search: every arrangement enumerated, judged, simulated where valid, ranked.

One :func:`core.simulate.prepare_site` and one :class:`core.simulate.OrientationCache` serve every design; the
designs' years go through the engine in batches (:mod:`core.analyses.design.evaluate`).
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass
from pathlib import Path

from core.analyses.design.build import write_design
from core.analyses.design.candidates import enumerate_candidates
from core.analyses.design.evaluate import DesignResult, evaluate
from core.analyses.design.rank import KINDS, best_of, ranked, reasons
from core.analyses.design.spec import DesignSpec, design_spec
from core.errors import InputError
from core.scenario import Scenario
from core.simulate import OrientationCache, SiteData, prepare_site


@dataclass(frozen=True)
class SearchResult:
    scenario: Scenario
    spec: DesignSpec
    baseline: dict[str, float]  # the existing system's year totals, kWh
    designs: list[DesignResult]  # valid best first, then the invalid ones
    best: dict[str, DesignResult | None]  # "overall", "dc", "ac"
    reasons: dict[str, str]

    def get(self, design_id: str) -> DesignResult:
        return next(d for d in self.designs if d.id == design_id)

    @property
    def valid(self) -> list[DesignResult]:
        return [d for d in self.designs if d.valid]

    def to_dict(self, top: int | None = None) -> dict:
        """The JSON of ``python -m core design``: designs (without ``top`` all, the invalid ones after the valid
        ones; with it the ``top`` best valid ones and any best of a kind below them) and the ids of the best; each
        best design carries its reason."""
        if top is None:
            shown = self.designs
        else:
            bests = {d.id for d in self.best.values() if d is not None}
            shown = [d for i, d in enumerate(self.valid) if i < top or d.id in bests]
        why = {d.id: self.reasons[k] for k, d in self.best.items() if d is not None}
        return {"designs": [{**d.to_dict(), "reason": why.get(d.id)} for d in shown],
                "best": {k: (None if self.best[k] is None else self.best[k].id) for k in ("dc", "ac", "overall")}}


def search(sc: Scenario, *, site: SiteData | None = None, cache: OrientationCache | None = None,
           progress: Callable[[float, str], None] | None = None) -> SearchResult:
    """Enumerate, judge, simulate and rank every design the scenario's ``[design]`` (or ``[expansion]``) allows."""
    spec = design_spec(sc)
    candidates = enumerate_candidates(sc, spec)
    if progress:
        progress(0.0, f"{len(candidates)} designs: weather and loads")
    site = site or prepare_site(sc)
    cache = cache if cache is not None else OrientationCache()

    def inner(fraction: float, what: str) -> None:
        if progress:
            progress(0.05 + 0.95 * fraction, what)

    base, results = evaluate(sc, spec, candidates, site, cache, progress=inner)
    if progress:
        progress(1.0, "search done")
    return SearchResult(scenario=sc, spec=spec, baseline=base, designs=ranked(results), best=best_of(results),
                        reasons=reasons(results))


def best_designs(sc: Scenario, **kwargs) -> dict[str, DesignResult | None]:
    """The best valid design overall, DC-only and AC-only (None where no valid one exists): for verdicts that must
    point only at a checked design. Keyword arguments go to :func:`search`."""
    return search(sc, **kwargs).best


def write_best(result: SearchResult, folder: str | Path) -> list[Path]:
    """Write each best design (overall, DC, AC; one file per distinct design) as an ordinary scenario file."""
    folder = Path(folder)
    if folder.exists() and not folder.is_dir():
        raise InputError("exists and is not a folder", file=str(folder), hint="give a folder for the scenario files")
    folder.mkdir(parents=True, exist_ok=True)
    written: dict[str, Path] = {}
    for kind in KINDS:
        d = result.best[kind]
        if d is None or d.id in written:
            continue
        e = d.economics
        header = (f"{result.scenario.name}: design {d.id}, the best {'' if kind == 'overall' else kind.upper() + ' '}"
                  f"design of the search.\n{d.candidate.words()}.\n"
                  f"Cost {d.cost.total:.0f} {e.currency}; NPV {e.npv:.0f} {e.currency}; adds "
                  f"{d.added['self_consumed_kwh']:.0f} kWh a year of self-consumed PV.\n"
                  "An estimate, not a design approval: have DC and AC work done and signed off by licensed "
                  "practitioners under local codes.")
        written[d.id] = write_design(d.scenario, folder / f"design_{d.id}.toml", header)
    return list(written.values())
