"""Judge and simulate designs: the design checks first, then the year for those that pass, in batches.

A design that fails a check that needs no simulation (string voltages and currents, microinverter inputs, the
AC-coupled rating against the inverter-charger) is invalid and is not simulated. The others go through the
engine together (:func:`core.model.dispatch.dispatch_many`, one call per batch of designs that share the plant's
settings), sharing one :func:`core.simulate.prepare_site` and one :class:`core.simulate.OrientationCache`; then
every design check runs again with the simulated year (:func:`core.analyses.checks.run_checks`), so uncontrolled
export and the year-based rules count too. A design is valid when no check fails.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass

import numpy as np
import pandas as pd

from core.analyses.checks import design_temperatures, run_checks
from core.analyses.checks.ac_coupling import ac_coupling_checks
from core.analyses.checks.microinverter import microinverter_checks
from core.analyses.checks.strings import string_checks
from core.analyses.design.build import design_scenario
from core.analyses.design.candidates import Candidate
from core.analyses.design.costs import Cost, design_cost
from core.analyses.design.spec import DesignSpec
from core.analyses.sweep import engine_columns  # the engine flows as year_totals reads them
from core.model import dispatch, metrics
from core.model import economics as econ
from core.scenario import Scenario
from core.simulate import (
    OrientationCache,
    SiteData,
    SourcePower,
    charge_window,
    dispatch_params,
    source_power,
)

#: Uncontrolled export below this counts as none (rounding of the engine's sums), kWh a year.
EXPORT_EPS_KWH = 1e-3
#: Bytes of engine output and inputs per batch (as the sweep's).
BATCH_BYTES = 64e6
_SOURCE_KEYS = ("dc_out_w", "dc_loss_w", "ac_backed_out_w", "ac_backed_loss_w", "ac_grid_out_w", "ac_grid_loss_w")


@dataclass(frozen=True)
class DesignResult:
    """One design: what it is, what it costs, whether it is valid and why, and its year against the existing one."""

    candidate: Candidate
    scenario: Scenario
    cost: Cost
    valid: bool
    failed_checks: tuple[str, ...]
    warnings: tuple[str, ...]
    checks: tuple  # the design checks (core.analyses.checks.Check) as run
    figures: dict[str, float] | None  # year totals, kWh (None when not simulated)
    added: dict[str, float] | None  # differences from the existing system, kWh a year
    economics: econ.Economics | None
    simulated: bool

    @property
    def id(self) -> str:
        return self.candidate.id

    @property
    def npv(self) -> float | None:
        return None if self.economics is None else self.economics.npv

    @property
    def added_self_consumed_kwh(self) -> float | None:
        return None if self.added is None else self.added["self_consumed_kwh"]

    def reasons_invalid(self) -> list[str]:
        """The failing checks' sentences, one per check."""
        return [f"{c.id}: {c.sentence}" for c in self.checks if c.status == "fail"]

    def to_dict(self) -> dict:
        e, a = self.economics, self.added
        return {
            "id": self.id, "coupling": self.candidate.coupling, "new_modules": self.candidate.new_modules,
            "parts": [p.to_dict() for p in self.candidate.parts], "label": self.candidate.words(),
            "valid": self.valid, "failed_checks": list(self.failed_checks), "warnings": list(self.warnings),
            "cost": round(self.cost.total, 2), "cost_items": {k: round(v, 2) for k, v in self.cost.items.items()},
            "npv": None if e is None else round(e.npv, 2), "irr": None if e is None else e.irr,
            "simple_payback_years": None if e is None else e.simple_payback_years,
            "added_self_consumed_kwh": None if a is None else round(a["self_consumed_kwh"], 3),
            "curtailed_added_kwh": None if a is None else round(a["curtailed_kwh"], 3),
            "uncontrolled_export_kwh": None if self.figures is None else round(self.figures["uncontrolled"], 3),
            "uncontrolled_export_hours": None if self.figures is None else self.figures["uncontrolled_hours"],
            "reasons_invalid": self.reasons_invalid(),
        }


def year_figures(flows: np.ndarray, s: SourcePower, site: SiteData, initial_wh: float) -> dict[str, float]:
    """Year totals (kWh) and hours of one design from its engine flows and source powers.

    Every figure is :func:`core.model.metrics.year_totals`' (the one definition, as compare and the sweep read
    it), under the short names the search's tables use; ``totals`` keeps the whole record for
    :func:`added_figures`.
    """
    t = metrics.year_totals(engine_columns(flows, s, site), dt_h=site.dt_h, initial_wh=initial_wh)
    e = t.energy_kwh
    return {
        "potential": e["pv_potential"], "clipped": e["clipped"], "curtailed": e["curtailed"],
        "harvested": e["harvested"], "exported": e["exported"], "export_allowed": e["exported_allowed"],
        "grid_import": e["grid_import"], "unserved": e["unserved"], "uncontrolled": e["exported_uncontrolled"],
        "uncontrolled_hours": t.hours["export_uncontrolled"], "totals": t,
    }


def added_figures(f: dict[str, float], base: dict[str, float]) -> dict[str, float]:
    """A design's year against the existing system's (kWh a year): :func:`core.model.metrics.delta` of the two
    years (self-consumed = harvested − exported, Luthander et al. 2015), under the search's short names."""
    d = metrics.delta(base["totals"], f["totals"], expansion_potential_kwh=f["potential"] - base["potential"])
    return {
        "self_consumed_kwh": d["self_consumed_added_kwh"], "grid_import_saved_kwh": d["grid_import_saved_kwh"],
        "export_allowed_kwh": d["export_allowed_added_kwh"], "curtailed_kwh": d["curtailed_added_kwh"],
        "clipped_kwh": d["clipped_added_kwh"], "harvested_kwh": d["harvested_added_kwh"],
        "potential_kwh": d["expansion_potential_kwh"], "unserved_kwh": d["unserved_added_kwh"],
        "to_loads_kwh": d["to_loads_added_kwh"],
    }


def design_economics(sc: Scenario, cost: float, added: dict[str, float]) -> econ.Economics:
    """NPV, IRR and paybacks against the existing system (paid export only; uncontrolled export earns nothing)."""
    t = sc.tariff
    paid = added["export_allowed_kwh"] if sc.grid.export_allowed else 0.0
    return econ.appraise(investment=cost, import_avoided_kwh=added["grid_import_saved_kwh"], export_added_kwh=paid,
                         import_price_per_kwh=t.import_price_per_kwh, export_price_per_kwh=t.export_price_per_kwh,
                         escalation_pct=t.escalation_pct, discount_pct=t.discount_pct, years=t.years,
                         degradation_pct_per_year=t.degradation_pct_per_year, currency=t.currency)


@dataclass(frozen=True)
class _Totals:
    energy_kwh: dict[str, float]
    hours: dict[str, float]


@dataclass(frozen=True)
class YearView:
    """What the design checks read of a simulated year, made from a batch's arrays without the full step table."""

    scenario: Scenario
    site: SiteData
    steps: pd.DataFrame
    results: _Totals
    sources: SourcePower


def year_view(sc: Scenario, site: SiteData, s: SourcePower, figures: dict[str, float]) -> YearView:
    steps = pd.DataFrame({"ac_backed_out_w": s.ac_backed.out_w, "ac_grid_out_w": s.ac_grid.out_w,
                          "load_backed_w": site.load_backed_w, "load_grid_only_w": site.load_grid_only_w,
                          "grid_up": site.grid_up}, copy=False)
    totals = _Totals(energy_kwh={"exported_uncontrolled": figures["uncontrolled"]},
                     hours={"export_uncontrolled": figures["uncontrolled_hours"]})
    return YearView(scenario=sc, site=site, steps=steps, results=totals, sources=s)


def static_checks(sc: Scenario, temps) -> list:
    """The checks that need no simulated year and can fail on their own: strings, microinverter inputs, the
    AC-coupled rating on the backed-up side."""
    return [*string_checks(sc, temps), *microinverter_checks(sc, temps, None),
            *(c for c in ac_coupling_checks(sc, None) if c.id == "ac_coupling.ratio")]


def _ids(checks, status: str) -> tuple[str, ...]:
    return tuple(dict.fromkeys(c.id for c in checks if c.status == status))


def evaluate(sc: Scenario, spec: DesignSpec, candidates: list[Candidate], site: SiteData, cache: OrientationCache,
             *, progress: Callable[[float, str], None] | None = None,
             batch_bytes: float = BATCH_BYTES) -> tuple[dict[str, float], list[DesignResult]]:
    """The existing system's year figures, and every candidate judged (and simulated where its checks allow)."""
    temps = design_temperatures(sc, site.weather.data["temp_air"].to_numpy(dtype=float))
    n = len(site.index)
    per_variant = (len(dispatch.FLOWS) + len(_SOURCE_KEYS)) * n * 8
    batch = max(1, int(batch_bytes // per_variant))
    buffers: dict[str, np.ndarray] = {}

    def run(scenarios: list[Scenario], sources: list[SourcePower]) -> list[dict[str, float]]:
        k = len(sources)
        if not buffers or buffers["flows"].shape[0] < k:
            buffers.update({key: np.empty((max(k, batch), n)) for key in _SOURCE_KEYS},
                           flows=np.empty((max(k, batch), len(dispatch.FLOWS), n)))
        for i, s in enumerate(sources):
            rows = {"dc_out_w": s.dc.out_w, "dc_loss_w": s.dc.loss_w, "ac_backed_out_w": s.ac_backed.out_w,
                    "ac_backed_loss_w": s.ac_backed.loss_w, "ac_grid_out_w": s.ac_grid.out_w,
                    "ac_grid_loss_w": s.ac_grid.loss_w}
            for key, row in rows.items():
                buffers[key][i] = row
        params = dispatch_params(scenarios[0], site.dt_h)
        flows = dispatch.dispatch_many(site.load_backed_w, site.load_grid_only_w, site.grid_up,
                                       {key: buffers[key][:k] for key in _SOURCE_KEYS}, params,
                                       out=buffers["flows"][:k], charge_window=charge_window(scenarios[0], site))
        return [year_figures(flows[i], s, site, params.initial_wh) for i, s in enumerate(sources)]

    base = run([sc], [source_power(sc, site, cache)])[0]
    results: dict[str, DesignResult] = {}
    # Designs that pass the checks without a year, grouped by the plant settings they run with (export control).
    groups: dict[object, list[tuple[Candidate, Scenario, Cost]]] = {}
    for cand in candidates:
        sc_c = design_scenario(sc, spec, cand)
        cost = design_cost(sc, spec, cand)
        checks = static_checks(sc_c, temps)
        failed = _ids(checks, "fail")
        if failed:
            results[cand.id] = DesignResult(cand, sc_c, cost, False, failed, _ids(checks, "warn"), tuple(checks),
                                            None, None, None, simulated=False)
        else:
            groups.setdefault(sc_c.grid, []).append((cand, sc_c, cost))
    todo = sum(len(g) for g in groups.values())
    done = 0
    for members in groups.values():
        for start in range(0, len(members), batch):
            chunk = members[start:start + batch]
            sources = [source_power(sc_c, site, cache) for _, sc_c, _ in chunk]
            for (cand, sc_c, cost), s, f in zip(chunk, sources, run([m[1] for m in chunk], sources), strict=True):
                checks = run_checks(sc_c, year_view(sc_c, site, s, f), cache=cache)
                added = added_figures(f, base)
                failed = _ids(checks, "fail")
                results[cand.id] = DesignResult(cand, sc_c, cost, not failed, failed, _ids(checks, "warn"),
                                                tuple(checks), f, added, design_economics(sc_c, cost.total, added),
                                                simulated=True)
            done += len(chunk)
            if progress:
                progress(done / max(todo, 1), f"{done} of {todo} designs simulated")
    return base, [results[c.id] for c in candidates]
