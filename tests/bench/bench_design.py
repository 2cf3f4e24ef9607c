"""The design search against doing it by hand: a pvlib ModelChain per array and the plain dispatch loop per
candidate (``bench_reference.reference_year``), times the number of candidates, over the search's own time.

The search's time (best of two) starts from the prepared site — weather, sun, loads and outages, which the
reference is given ready too (``bench_reference.Shared`` comes from ``prepare_site``) — and includes everything
else: enumeration, every orientation (a fresh cache), the checks, the batched engine, economics and ranking. The
time from nothing (site preparation included) is reported beside it. The reference's time per candidate is the median over a few valid designs of each kind (DC, AC, both),
each the best of two; it is multiplied by every candidate the search considered (``design_ratio``) and, for
a stricter figure, by the candidates it simulated (``design_ratio_simulated``).
"""

from __future__ import annotations

import statistics
import time

from bench_reference import reference_year

from core.analyses.design import search
from core.simulate import OrientationCache, prepare_site

REFERENCE_DESIGNS = 2  # of each kind
REPEATS = 2


def design_benchmark(sc, shared, site) -> dict:
    def one():
        return search(sc, site=site, cache=OrientationCache())

    best, result = float("inf"), None
    for _ in range(REPEATS):
        t = time.perf_counter()
        out = one()
        seconds = time.perf_counter() - t
        if seconds < best:
            best, result = seconds, out
    t = time.perf_counter()
    search(sc, site=prepare_site(sc), cache=OrientationCache())
    from_nothing = time.perf_counter() - t
    candidates = len(result.designs)
    simulated = sum(1 for d in result.designs if d.simulated)
    picked = []
    for kind in ("dc", "ac", "dc+ac"):
        picked += [d for d in result.valid if d.candidate.coupling == kind][:REFERENCE_DESIGNS]
    ref = []
    worst_import = 0.0
    for d in picked:
        runs = [reference_year(d.scenario, shared) for _ in range(REPEATS)]
        r = min(runs, key=lambda x: x.seconds)
        ref.append(r.seconds)
        # the same year: ModelChain and our chain differ only in the diffuse IAM (see test_bench)
        worst_import = max(worst_import, abs(r.figures["grid_import"] / d.figures["grid_import"] - 1.0))
    per = statistics.median(ref)
    return {"search_s": best, "from_nothing_s": from_nothing, "candidates": candidates, "simulated": simulated, "reference_per_s": per,
            "reference_designs": len(picked), "worst_import": worst_import,
            "design_ratio": per * candidates / best, "design_ratio_simulated": per * simulated / best}
