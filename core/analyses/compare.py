"""The expansion options side by side: the existing system, AC-coupled on either side, DC-coupled.

Every option is the same scenario with one more array (``core.analyses.options.with_option``), so all of them share
one :func:`core.simulate.prepare_site` and one :class:`core.simulate.OrientationCache`: weather, sun, loads and
each orientation's module output are computed once. For each option the full year's figures, the difference
from the existing system, the economics, and a plain-words verdict on which option wins on energy and on money,
and why.

Why the options differ (the conversion chains, each step losing a little):

* AC-coupled energy used by the loads as it is made passes **one** conversion (the microinverter);
* DC-coupled energy used as it is made passes **two** (charge controller, then the inverter);
* AC-coupled energy that is stored passes **three** (microinverter, charger, inverter) plus the battery;
* DC-coupled energy that is stored passes **two** (controller, inverter) plus the battery;
* AC-coupled energy that neither loads nor battery can take is curtailed — or, without an export limiter,
  leaks into the grid (uncontrolled export), which a zero-export connection forbids; grid-side
  microinverters stop in an outage (anti-islanding).

Only valid options are recommended (:mod:`core.analyses.validity`): one that fails a design check or leaks into
the grid is set aside, and the verdict names it with the rules it breaks, in the options table's words. Every
figure is :func:`core.model.metrics.delta` of two years; each option is priced for the modules it simulates.
"""

from __future__ import annotations

import dataclasses
from collections.abc import Callable
from dataclasses import dataclass

import numpy as np

from core.analyses.checks import check_options
from core.analyses.options import (
    EXPANSION_ARRAY,
    OPTION_LABELS,
    Layout,
    Option,
    applicable_options,
    layout_of,
    with_option,
)
from core.analyses.shading_verdict import shading_reason
from core.analyses.validity import EXPORT_EPS_KWH, LEAK_RULE, why_set_aside
from core.analyses.validity import failed_rules as _failed_rules
from core.face_arrays import array_breakdown
from core.model import economics as econ
from core.model import metrics
from core.scenario import Scenario
from core.simulate import OrientationCache, SimulationResult, SiteData, import_prices, prepare_site, simulate

__all__ = ["EXPORT_EPS_KWH", "LOADS_ROW", "TIE_KWH", "Chains", "Comparison", "OptionResult", "Verdict", "added_modules",
           "compare", "conversion_chains", "make_verdict", "option_delta", "option_economics", "priced_scenario",
           "set_aside_sentence"]
#: Energy differences below this are "about the same" in the verdict, kWh a year.
TIE_KWH = 1.0
#: The words of the options table's first row (the page, the command line and the verdict say it the same way):
#: :func:`core.model.metrics.delta`'s ``to_loads_added_kwh``, the change in loads served less grid import.
LOADS_ROW = "Loads supplied from PV, added"


@dataclass(frozen=True)
class OptionResult:
    """One option's year, its difference from the existing system and its economics (None for the baseline)."""

    option: Option
    label: str
    scenario: Scenario
    simulation: SimulationResult
    delta: dict[str, float]
    economics: econ.Economics | None
    # Design checks whose outcome this option changes (for the baseline: the existing system's own).
    checks: tuple = ()
    # New modules actually simulated and priced (a DC string layout may hold fewer than the count asked for).
    modules: int = 0

    @property
    def failed(self) -> tuple:
        return tuple(c for c in self.checks if c.status == "fail")

    @property
    def failed_rules(self) -> tuple[str, ...]:
        """Ids of the rules this option breaks: failing design checks, and uncontrolled export."""
        return _failed_rules(self.checks, self.delta["exported_uncontrolled_kwh"])

    @property
    def valid(self) -> bool:
        """Whether the option may be recommended: it passes every design check and leaks nothing into the grid."""
        return not self.failed_rules

    def to_dict(self) -> dict:
        return {"label": self.label, "simulate": self.simulation.results.to_dict(), "delta": self.delta,
                "economics": None if self.economics is None else self.economics.to_dict(),
                "checks": [c.to_dict() for c in self.checks], "modules": self.modules, "valid": self.valid,
                "failed_checks": list(self.failed_rules),
                "arrays": array_breakdown(self.simulation)}


@dataclass(frozen=True)
class Verdict:
    """Which option wins on energy and on money (option keys, or None), and why, in plain words."""

    energy: str | None
    money: str | None
    text: str
    reasons: tuple[str, ...]
    # The design search's best valid design (its id), when the verdict was made with a search
    # (core.analyses.design_verdict.with_design); None without one.
    design: str | None = None

    def to_dict(self) -> dict:
        return {"energy": self.energy, "money": self.money, "text": self.text, "reasons": list(self.reasons),
                "design": self.design}


@dataclass(frozen=True)
class Comparison:
    scenario: Scenario
    layout: Layout
    options: dict[str, OptionResult]
    verdict: Verdict

    def to_dict(self) -> dict:
        return {"name": self.scenario.name, "currency": self.scenario.tariff.currency,
                "layout": {"count": self.layout.count, "tilt_deg": self.layout.tilt_deg,
                           "azimuth_deg": self.layout.azimuth_deg},
                "options": {k: v.to_dict() for k, v in self.options.items()}, "verdict": self.verdict.to_dict()}


# ------------------------------------------------------------------------------------------------ figures
def option_delta(base: SimulationResult, opt: SimulationResult) -> dict[str, float]:
    """The option's difference from the existing system: :func:`core.model.metrics.delta` of the two years,
    with the new panels' module energy (kWh a year) and the battery's usable size for the cycles."""
    expansion = opt.sources.per_array_dc_w.get(EXPANSION_ARRAY)
    potential = 0.0 if expansion is None else float(np.sum(expansion) * opt.site.dt_h / 1000.0)
    e = opt.scenario.expansion
    if expansion is None and e is not None and e.restring in opt.sources.per_array_dc_w:
        # re-strung: the new modules' share is what the re-wired array gives beyond the existing one
        grown = opt.sources.per_array_dc_w[e.restring]
        before = base.sources.per_array_dc_w.get(e.restring, 0.0)
        potential = float(max(np.sum(grown) - np.sum(before), 0.0) * opt.site.dt_h / 1000.0)
    usable = opt.scenario.battery.usable_kwh if opt.scenario.battery else 0.0
    out = metrics.delta(base.results, opt.results, expansion_potential_kwh=potential, usable_kwh=usable)
    # priced by the hour (time-of-use periods by the local clock), in the tariff's currency
    out["import_cost_saved"] = _import_cost(base) - _import_cost(opt)
    return out


def added_modules(sc_option: Scenario, base: Scenario | None = None) -> int:
    """New modules in a scenario with an option applied: the modules of its expansion array (0 for the baseline),
    or, given the scenario without it, every module it has more (a re-strung array holds the new ones too)."""
    if base is not None:
        return sum(a.module_count for a in sc_option.arrays) - sum(a.module_count for a in base.arrays)
    return sum(a.module_count for a in sc_option.arrays if a.name == EXPANSION_ARRAY)


def priced_scenario(sc: Scenario, modules: int) -> Scenario:
    """The scenario with its expansion's costs scaled to the modules actually simulated."""
    return sc if sc.expansion is None else sc.replace(expansion=sc.expansion.priced_for(modules))


def _import_cost(sim: SimulationResult) -> float:
    price = import_prices(sim.scenario, sim.site)
    return float(np.sum(sim.steps["grid_import_w"].to_numpy() * price) * sim.site.dt_h / 1000.0)


def option_economics(sc: Scenario, option: str, delta: dict[str, float]) -> econ.Economics:
    """The option's economics from its first-year difference (paid export only; uncontrolled export earns nothing).

    ``sc`` must be priced for the modules simulated (:func:`priced_scenario`).
    """
    t, e = sc.tariff, sc.expansion
    investment = 0.0 if e is None else (e.cost_dc if option == Option.DC else e.cost_ac)
    paid_export = delta["export_allowed_added_kwh"] if sc.grid.export_allowed else 0.0
    # With time-of-use periods the import saved is worth its hours' prices: the mean price of the saving.
    saved_kwh, saved_cost = delta["grid_import_saved_kwh"], delta.get("import_cost_saved")
    price = t.import_price_per_kwh if saved_cost is None or not t.periods or abs(saved_kwh) < 1e-9 \
        else saved_cost / saved_kwh
    return econ.appraise(investment=investment, import_avoided_kwh=saved_kwh,
                         export_added_kwh=paid_export, import_price_per_kwh=price,
                         export_price_per_kwh=t.export_price_per_kwh, escalation_pct=t.escalation_pct,
                         discount_pct=t.discount_pct, years=t.years,
                         degradation_pct_per_year=t.degradation_pct_per_year, currency=t.currency)


# ------------------------------------------------------------------------------------------------ verdict
@dataclass(frozen=True)
class Chains:
    """Efficiencies of the conversion chains (0…1), from the scenario and the simulated year."""

    micro: float | None
    controller: float | None
    inverter: float
    charger: float
    battery: float  # round trip

    @property
    def ac_direct(self) -> float | None:
        return self.micro

    @property
    def dc_direct(self) -> float | None:
        return None if self.controller is None else self.controller * self.inverter

    @property
    def ac_stored(self) -> float | None:
        return None if self.micro is None else self.micro * self.charger * self.battery * self.inverter

    @property
    def dc_stored(self) -> float | None:
        return None if self.controller is None else self.controller * self.battery * self.inverter


def conversion_chains(sc: Scenario, base: SimulationResult) -> Chains:
    """The chain efficiencies: the expansion's microinverter and controller from the scenario, the inverter's
    mean efficiency as realised in the existing system's year (its part-load curve at the loads it met)."""
    e = sc.expansion
    micro = sc.microinverters[e.microinverter].efficiency if e and e.microinverter else None
    ctrl = sc.controllers[e.controller].efficiency if e and e.controller else None
    s = base.steps
    ac, loss = float(s["inverter_ac_w"].sum()), float(s["inverter_loss_w"].sum())
    if ac > 0:
        inverter = ac / (ac + loss)
    else:
        eff = sc.inverter_charger.efficiency
        inverter = float(eff) if isinstance(eff, int | float) else float(np.mean([p[1] for p in eff]))
    rte = sc.battery.roundtrip_efficiency if sc.battery else 1.0
    return Chains(micro=micro, controller=ctrl, inverter=inverter, charger=sc.inverter_charger.charger_efficiency,
                  battery=rte)


def _pct(x: float) -> str:
    return f"{x * 100:.1f} %"


def set_aside_sentence(r: OptionResult) -> str:
    """Why an option that breaks a rule is set aside, in the options table's words, with what it would have given."""
    d = r.delta
    why = why_set_aside(r.failed_rules, exported_uncontrolled_kwh=d["exported_uncontrolled_kwh"],
                        exported_uncontrolled_hours=d["exported_uncontrolled_hours"])
    text = (f"Set aside: {r.label} ({why}), although it would give the loads {d['to_loads_added_kwh']:,.0f} "
            f"kWh/yr more from PV ({LOADS_ROW}).")
    for c in r.failed:
        if c.id != LEAK_RULE:
            text += f" {c.id}: {c.sentence}"
    return text


def make_verdict(sc: Scenario, results: dict[str, OptionResult], *, asked: int | None = None) -> Verdict:
    """Which valid option wins on energy (loads supplied from PV, added) and on money (NPV), and why.

    Only valid options are named winners (:attr:`OptionResult.valid`); every option set aside is named with the
    rules it breaks, and when none is valid the verdict says so and names no winner. ``asked``: the panel count
    asked for, when an option may simulate fewer (whole DC strings); it is then said.
    """
    others = [k for k in results if k != Option.BASELINE]
    if not others:
        return Verdict(None, None, "There is no expansion to compare: add an [expansion] section.", ())
    cur = sc.tariff.currency
    base = results[Option.BASELINE].simulation
    chains = conversion_chains(sc, base)
    allowed = [k for k in others if results[k].valid]
    blocked = [k for k in others if not results[k].valid]

    def gain(k: str) -> float:
        return results[k].delta["to_loads_added_kwh"]

    reasons: list[str] = []
    energy = money = None
    if not allowed:
        reasons.append(f"No option passes as it stands: each of the {len(others)} options breaks a rule (below), so "
                       "none is recommended.")
    else:
        ranked = sorted(allowed, key=gain, reverse=True)
        energy = ranked[0]
        head = (f"On energy, {OPTION_LABELS[energy]} wins among the options that pass: the loads get "
                f"{gain(energy):,.0f} kWh/yr more from PV ({LOADS_ROW})")
        if len(ranked) > 1:
            runner = ranked[1]
            diff = gain(energy) - gain(runner)
            head += (f", {diff:,.0f} kWh/yr more than {OPTION_LABELS[runner]}" if diff > TIE_KWH
                     else f", about the same as {OPTION_LABELS[runner]}")
        reasons.append(head + ".")
    for k in sorted(blocked, key=gain, reverse=True):
        reasons.append(set_aside_sentence(results[k]))
    if any(LEAK_RULE in results[k].failed_rules for k in blocked):
        reasons.append("Uncontrolled export is energy sent into a grid that may not take it: the connection forbids "
                       "it; an export limiter (which curtails instead) or fewer panels is the usual fix.")
    for k in others:
        r = results[k]
        if asked is not None and r.modules != asked:
            reasons.append(f"{OPTION_LABELS[k]}: {r.modules} new modules are simulated and priced, not {asked}: "
                           "parallel strings on one controller input must be of equal length, so only whole strings "
                           "are added (common practice).")
    # why: the conversion chains, and how much AC-coupled output was used as it was made
    if chains.ac_direct is not None and chains.dc_direct is not None:
        why = (f"AC-coupled energy used in daytime skips the battery and one conversion: the microinverter alone "
               f"({_pct(chains.ac_direct)}) against controller and inverter ({_pct(chains.dc_direct)}); stored "
               f"AC-coupled energy takes three conversions and the battery (microinverter, charger, battery, "
               f"inverter: {_pct(chains.ac_stored)}) against {_pct(chains.dc_stored)} for stored DC-coupled energy.")
        ac_opts = [k for k in others if Option(k).is_ac]
        if ac_opts:
            share = results[ac_opts[0]].simulation.results.baseload.get("ac_direct_share")
            if share is not None:
                why += f" Here {_pct(share)} of the AC-coupled output is used by the loads as it is made."
        reasons.append(why)
        if energy == Option.DC and any(Option(k).is_ac for k in allowed):
            reasons.append("DC-coupling wins here because too much of the new panels' output cannot be used as it is "
                           "made: stored, DC-coupled energy takes one conversion fewer, and a DC-coupled array is "
                           "throttled at its controller instead of being curtailed on the AC side.")
    if shade := shading_reason(results, energy):
        reasons.append(shade)
    for k in others:
        d = results[k].delta
        lost = d["curtailed_added_kwh"] + d["clipped_added_kwh"]
        if d["expansion_potential_kwh"] > 0 and lost > 0.05 * d["expansion_potential_kwh"]:
            reasons.append(f"With {OPTION_LABELS[k]} the system curtails or clips {lost:,.0f} kWh/yr more "
                           f"({_pct(lost / d['expansion_potential_kwh'])} of the new panels' potential): the loads "
                           "and the battery cannot take it all.")
    # money: the best NPV among the valid options
    if allowed:
        money = max(allowed, key=lambda k: results[k].economics.npv)
        m = results[money].economics
        pay = ("does not pay back within the analysis period" if m.simple_payback_years is None
               else f"pays back in {m.simple_payback_years:.1f} years (discounted: "
                    + ("not within the period" if m.discounted_payback_years is None
                       else f"{m.discounted_payback_years:.1f} years") + ")")
        reasons.append(f"On money, {OPTION_LABELS[money]} wins among the options that pass: it saves "
                       f"{m.annual_saving:,.0f} {cur} in the first year for {m.investment:,.0f} {cur}, {pay}, with an "
                       f"NPV of {m.npv:,.0f} {cur} over {m.years} years"
                       + (f" and an IRR of {_pct(m.irr)}." if m.irr is not None else "."))
    return Verdict(energy=energy, money=money, text=" ".join(reasons), reasons=tuple(reasons))


# ------------------------------------------------------------------------------------------------ compare
def compare(sc: Scenario, layout: Layout | None = None, *, options: tuple[str, ...] | None = None,
            site: SiteData | None = None, cache: OrientationCache | None = None,
            progress: Callable[[float, str], None] | None = None) -> Comparison:
    """Simulate the existing system and every applicable expansion option, and compare them.

    ``layout`` overrides the ``[expansion]`` count, tilt and azimuth; ``options`` limits the options (the
    baseline is always included). ``site`` and ``cache`` reuse earlier work; one of each serves all options.
    Each option is priced for the new modules it actually simulates (:func:`added_modules`).
    """
    layout = layout or layout_of(sc)
    chosen = [o for o in applicable_options(sc) if options is None or o == Option.BASELINE or o in options]
    if progress:
        progress(0.0, "weather and loads")
    site = site or prepare_site(sc)
    cache = cache if cache is not None else OrientationCache()
    results: dict[str, OptionResult] = {}
    base_sim: SimulationResult | None = None
    for i, option in enumerate(chosen):
        if progress:
            progress(0.1 + 0.9 * i / len(chosen), OPTION_LABELS[option])
        sc_o = with_option(sc, option, layout)
        sim = simulate(sc_o, site, cache)
        modules = added_modules(sc_o, sc)
        if option == Option.BASELINE:
            base_sim = sim
            delta = option_delta(sim, sim)
            economics = None
        else:
            delta = option_delta(base_sim, sim)
            economics = option_economics(priced_scenario(sc, modules), option, delta)
        results[option] = OptionResult(option=Option(option), label=OPTION_LABELS[option], scenario=sc_o,
                                       simulation=sim, delta=delta, economics=economics, modules=modules)
    if progress:
        progress(1.0, "done")
    # Design checks whose outcome each option changes; they can keep an option from winning.
    found = check_options(sc, layout=layout, sims={k: r.simulation for k, r in results.items()}, site=site,
                          cache=cache, options=tuple(results))
    results = {k: dataclasses.replace(r, checks=tuple(found.get(k, ()))) for k, r in results.items()}
    verdict = (make_verdict(sc, results, asked=layout.count) if layout.count > 0 else
               Verdict(None, None, "No panels are added (a count of 0): every option is the existing system.", ()))
    if sc.grid.charge_window is not None and base_sim is not None:
        verdict = _with_reason(verdict, _charge_window_reason(sc, base_sim))
    return Comparison(scenario=sc, layout=layout, options=results, verdict=verdict)


def _charge_window_reason(sc: Scenario, base: SimulationResult) -> str:
    """Whether grid charging by the clock pays, for the existing system, in one sentence."""
    from core.analyses.running_costs import charge_window_value

    v = charge_window_value(base)
    w, cur = sc.grid.charge_window, sc.tariff.currency
    verb = "saves" if v["pays"] else "costs"
    return (f"Grid charging from {w.hours[0]}:00 to {w.hours[1]}:00 up to {w.target_pct:.0f} % {verb} "
            f"{abs(v['cost']):.0f} {cur} a year against the same system without it "
            f"({v['extra_import_kwh']:+.0f} kWh of import): it {'pays' if v['pays'] else 'does not pay'}.")


def _with_reason(v: Verdict, reason: str) -> Verdict:
    return dataclasses.replace(v, text=f"{v.text} {reason}".strip(), reasons=(*v.reasons, reason))
