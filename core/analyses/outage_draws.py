"""Outages as statistics: many independent outage years through the batched engine.

Each draw is one year of random outages (Poisson count, exponential durations, see
:func:`core.model.outages.random_outages`) on top of the outages the scenario lists in a file. The draws
share the site, the loads and the sources; only the grid mask differs, so they go through the engine in
batches (:func:`core.model.dispatch.dispatch_many`), each draw reduced at once to a few figures. Draw 0
uses the scenario's seed: it is the year the rest of the results show.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass

import numpy as np

from core.model import dispatch, outages
from core.scenario import Scenario
from core.simulate import SiteData, SourcePower, charge_window, dispatch_params

#: Bytes of engine output per batch of draws (the flows of one draw are len(FLOWS) rows per step).
DEFAULT_BATCH_BYTES = 64e6
_F = dispatch.Flow


def draw_seed(seed: int, i: int):
    """Draw 0 is the scenario's own seed; draw i > 0 an independent stream spawned from it."""
    return seed if i == 0 else np.random.SeedSequence([seed, i])


def grid_masks(sc: Scenario, site: SiteData, first: int, count: int) -> np.ndarray:
    """Grid-up masks of draws ``first … first + count − 1`` (shape count × steps)."""
    r = sc.grid.random_outages
    if r is None:
        raise ValueError("random outage years need grid.random_outages in the scenario")
    fixed = outages.grid_up_mask(site.index, outages.read_outages_csv(
        sc.resolve(sc.grid.outages_path, "grid.outages_path"), site.index.tz)) if sc.grid.outages_path else True
    return np.stack([fixed & outages.random_outage_mask(len(site.index), site.step_s, per_year=r.per_year,
                                                        mean_hours=r.mean_hours, seed=draw_seed(r.seed, i),
                                                        month_weights=r.month_weights)
                     for i in range(first, first + count)])


@dataclass(frozen=True)
class OutageDraws:
    """Per-draw figures of many outage years."""

    unserved_backed_up_kwh: np.ndarray
    unserved_backed_up_hours: np.ndarray
    shed_grid_only_kwh: np.ndarray
    outage_hours: np.ndarray
    soc_at_start_pct: np.ndarray  # every outage start of every draw
    usable_wh: float

    def to_dict(self) -> dict:
        def spread(x: np.ndarray, digits: int) -> dict[str, float | None]:
            if x.size == 0:
                return {"p50": None, "p90": None, "worst": None}
            return {"p50": round(float(np.percentile(x, 50)), digits), "p90": round(float(np.percentile(x, 90)), digits),
                    "worst": round(float(x.max()), digits)}

        soc = self.soc_at_start_pct
        return {
            "draws": int(self.unserved_backed_up_kwh.size),
            "unserved_backed_up_kwh": spread(self.unserved_backed_up_kwh, 2),
            "unserved_backed_up_hours": spread(self.unserved_backed_up_hours, 2),
            "shed_grid_only_kwh": spread(self.shed_grid_only_kwh, 2),
            "outage_hours": spread(self.outage_hours, 1),
            # the SOC when outages begin: typical (median), low (10th percentile) and lowest
            "soc_at_start_pct": {"p50": None if soc.size == 0 else round(float(np.percentile(soc, 50)), 1),
                                 "p10": None if soc.size == 0 else round(float(np.percentile(soc, 10)), 1),
                                 "lowest": None if soc.size == 0 else round(float(soc.min()), 1)},
        }


def outage_draws(sc: Scenario, site: SiteData, sources: SourcePower, *, draws: int | None = None,
                 batch_bytes: float = DEFAULT_BATCH_BYTES,
                 progress: Callable[[float, str], None] | None = None) -> OutageDraws | None:
    """Run ``draws`` outage years (default the scenario's ``grid.random_outages.draws``); None without them."""
    r = sc.grid.random_outages
    if r is None:
        return None
    total = int(draws if draws is not None else r.draws)
    params = dispatch_params(sc, site.dt_h)
    n = len(site.index)
    dt_h = site.dt_h
    batch = max(1, min(total, int(batch_bytes // (len(dispatch.FLOWS) * n * 8))))
    buffer = np.empty((batch, len(dispatch.FLOWS), n))
    shared = {"dc_out_w": sources.dc.out_w, "dc_loss_w": sources.dc.loss_w,
              "ac_backed_out_w": sources.ac_backed.out_w, "ac_backed_loss_w": sources.ac_backed.loss_w,
              "ac_grid_out_w": sources.ac_grid.out_w, "ac_grid_loss_w": sources.ac_grid.loss_w}
    window = charge_window(sc, site)
    figures: dict[str, list] = {"ub": [], "uh": [], "shed": [], "out": [], "soc": []}
    for first in range(0, total, batch):
        k = min(batch, total - first)
        up = grid_masks(sc, site, first, k)
        flows = dispatch.dispatch_many(site.load_backed_w, site.load_grid_only_w, up, shared, params,
                                       out=buffer[:k], charge_window=window)
        ub = flows[:, _F.unserved_backed_up_w, :]
        figures["ub"].append(ub.sum(axis=1) * dt_h / 1000.0)
        figures["uh"].append((ub > 1e-6).sum(axis=1) * dt_h)
        figures["shed"].append(flows[:, _F.shed_grid_only_w, :].sum(axis=1) * dt_h / 1000.0)
        figures["out"].append((~up).sum(axis=1) * dt_h)
        if params.usable_wh > 0:
            for i in range(k):
                starts = np.flatnonzero(~up[i] & np.concatenate([[True], up[i][:-1]]))
                before = np.where(starts > 0, flows[i, _F.soc_wh, np.maximum(starts - 1, 0)], params.initial_wh)
                figures["soc"].append(before / params.usable_wh * 100.0)
        if progress:
            progress((first + k) / total, f"{first + k} of {total} outage years")
    return OutageDraws(
        unserved_backed_up_kwh=np.concatenate(figures["ub"]), unserved_backed_up_hours=np.concatenate(figures["uh"]),
        shed_grid_only_kwh=np.concatenate(figures["shed"]), outage_hours=np.concatenate(figures["out"]),
        soc_at_start_pct=np.concatenate(figures["soc"]) if figures["soc"] else np.empty(0),
        usable_wh=params.usable_wh)


def options_spread(comparison, *, draws: int | None = None,
                   progress: Callable[[float, str], None] | None = None) -> tuple[dict, str | None]:
    """The outage statistics of every option of a comparison, and one sentence that sets them side by side.

    One simulated year can put every outage at night, where a backed-up and a grid-side AC option look the
    same; over many years the difference the side makes shows. Returns ``({option: figures}, sentence)``;
    empty without random outages.
    """
    out: dict[str, dict] = {}
    options = list(comparison.options.items())
    for i, (key, r) in enumerate(options):
        sim = r.simulation
        d = outage_draws(sim.scenario, sim.site, sim.sources, draws=draws)
        if d is None:
            return {}, None
        out[key] = d.to_dict()
        if progress:
            progress((i + 1) / len(options), r.label)
    n = next(iter(out.values()))["draws"]
    parts = [f"{comparison.options[k].label} {v['unserved_backed_up_kwh']['p50']:.1f} / "
             f"{v['unserved_backed_up_kwh']['p90']:.1f} kWh" for k, v in out.items()]
    return out, (f"Over {n} random outage years, backed-up load unserved in a typical / one-in-ten year: "
                 + "; ".join(parts) + ".")
