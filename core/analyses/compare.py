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
"""

from __future__ import annotations

import dataclasses
from collections.abc import Callable
from dataclasses import dataclass

import numpy as np

from core.analyses.checks import check_options
from core.analyses.options import OPTION_LABELS, Layout, applicable_options, layout_of, with_option
from core.model import economics as econ
from core.scenario import Scenario
from core.simulate import OrientationCache, SimulationResult, SiteData, import_prices, prepare_site, simulate

#: Uncontrolled export below this counts as none (rounding of the engine's sums), kWh a year.
EXPORT_EPS_KWH = 1e-3
#: Energy differences below this are "about the same" in the verdict, kWh a year.
TIE_KWH = 1.0


@dataclass(frozen=True)
class OptionResult:
    """One option's year, its difference from the existing system and its economics (None for the baseline)."""

    option: str
    label: str
    scenario: Scenario
    simulation: SimulationResult
    delta: dict[str, float]
    economics: econ.Economics | None
    # Design checks whose outcome this option changes (for the baseline: the existing system's own).
    checks: tuple = ()

    @property
    def failed(self) -> tuple:
        return tuple(c for c in self.checks if c.status == "fail")

    def to_dict(self) -> dict:
        return {"label": self.label, "simulate": self.simulation.results.to_dict(), "delta": self.delta,
                "economics": None if self.economics is None else self.economics.to_dict(),
                "checks": [c.to_dict() for c in self.checks]}


@dataclass(frozen=True)
class Verdict:
    """Which option wins on energy and on money (option keys, or None), and why, in plain words."""

    energy: str | None
    money: str | None
    text: str
    reasons: tuple[str, ...]

    def to_dict(self) -> dict:
        return {"energy": self.energy, "money": self.money, "text": self.text, "reasons": list(self.reasons)}


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
def _step_kwh(sim: SimulationResult, column: str) -> float:
    return float(sim.steps[column].sum() * sim.site.dt_h / 1000.0)


def option_delta(base: SimulationResult, opt: SimulationResult) -> dict[str, float]:
    """The option's difference from the existing system (kWh a year unless the key says otherwise).

    ``to_loads_added_kwh`` is what the loads get from PV in addition: grid import saved plus load served in
    outages that was unserved before. ``self_consumed_added_kwh`` follows Luthander et al. (2015): harvested
    PV not exported.
    """
    b, o = base.results.energy_kwh, opt.results.energy_kwh

    def d(key: str) -> float:
        return float(o[key] - b[key])

    saved = float(b["grid_import"] - o["grid_import"])
    unserved_avoided = float(b["unserved"] - o["unserved"])
    expansion = opt.sources.per_array_dc_w.get("expansion")
    potential = 0.0 if expansion is None else float(np.sum(expansion) * opt.site.dt_h / 1000.0)
    clipped_dc = _step_kwh(opt, "clipped_dc_w") - _step_kwh(base, "clipped_dc_w")
    clipped_ac = _step_kwh(opt, "clipped_ac_w") - _step_kwh(base, "clipped_ac_w")
    export_allowed = _step_kwh(opt, "export_allowed_w") - _step_kwh(base, "export_allowed_w")
    usable = opt.scenario.battery.usable_kwh if opt.scenario.battery else 0.0
    return {
        "expansion_potential_kwh": potential,
        "to_loads_added_kwh": saved + unserved_avoided,
        "grid_import_saved_kwh": saved,
        "unserved_added_kwh": -unserved_avoided,
        "self_consumed_added_kwh": d("harvested") - d("exported"),
        "harvested_added_kwh": d("harvested"),
        "battery_charge_added_kwh": d("battery_charge"),
        "battery_discharge_added_kwh": d("battery_discharge"),
        "battery_cycles_added": d("battery_discharge") / usable if usable > 0 else 0.0,
        "curtailed_added_kwh": d("curtailed"),
        "curtailed_dc_added_kwh": d("curtailed_dc"),
        "curtailed_ac_added_kwh": d("curtailed_ac"),
        "clipped_added_kwh": d("clipped"),
        "clipped_dc_added_kwh": clipped_dc,
        "clipped_ac_added_kwh": clipped_ac,
        "exported_added_kwh": d("exported"),
        "export_allowed_added_kwh": export_allowed,
        "exported_uncontrolled_kwh": float(o["exported_uncontrolled"]),
        "exported_uncontrolled_hours": float(opt.results.hours["export_uncontrolled"]),
        "exported_uncontrolled_added_kwh": d("exported_uncontrolled"),
        "conversion_losses_added_kwh": d("conversion_losses"),
        "battery_losses_added_kwh": d("battery_losses"),
        # priced by the hour (time-of-use periods by the local clock), in the tariff's currency
        "import_cost_saved": _import_cost(base) - _import_cost(opt),
    }


def _import_cost(sim: SimulationResult) -> float:
    price = import_prices(sim.scenario, sim.site)
    return float(np.sum(sim.steps["grid_import_w"].to_numpy() * price) * sim.site.dt_h / 1000.0)


def option_economics(sc: Scenario, option: str, delta: dict[str, float]) -> econ.Economics:
    """The option's economics from its first-year difference (paid export only; uncontrolled export earns nothing)."""
    t, e = sc.tariff, sc.expansion
    investment = 0.0 if e is None else (e.cost_dc if option == "dc" else e.cost_ac)
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


def make_verdict(sc: Scenario, results: dict[str, OptionResult]) -> Verdict:
    """Which option wins on energy (what the loads get from PV) and on money (NPV), and why."""
    others = [k for k in results if k != "baseline"]
    if not others:
        return Verdict(None, None, "There is no expansion to compare: add an [expansion] section.", ())
    cur = sc.tariff.currency
    reasons: list[str] = []
    base = results["baseline"].simulation
    chains = conversion_chains(sc, base)
    leaking = [k for k in others if results[k].delta["exported_uncontrolled_kwh"] > EXPORT_EPS_KWH]
    # An option that leaks into the grid or fails a design check cannot win while another does neither.
    failing = {k: [c for c in results[k].failed if c.id != "ac_coupling.uncontrolled_export"] for k in others}
    blocked = [k for k in others if k in leaking or failing[k]]
    allowed = [k for k in others if k not in blocked] or others
    for k in leaking:
        d = results[k].delta
        reasons.append(f"{OPTION_LABELS[k]} sends {d['exported_uncontrolled_kwh']:.0f} kWh into the grid uncontrolled "
                       f"in {d['exported_uncontrolled_hours']:.0f} hours of the year, which the connection forbids; "
                       "it needs an export limiter (which curtails instead) or fewer panels.")
    for k in others:
        for c in failing[k]:
            reasons.append(f"{OPTION_LABELS[k]} fails a design check ({c.id}): {c.sentence}")

    def gain(k: str) -> float:
        return results[k].delta["to_loads_added_kwh"]

    ranked = sorted(allowed, key=gain, reverse=True)
    energy = ranked[0]
    de = results[energy].delta
    none_pass = all(k in blocked for k in others)
    head = ("No option passes as it stands (each leaks into the grid or fails a design check; see below). "
            "On energy, before any fix, " if none_pass else "On energy, ")
    head += (f"{OPTION_LABELS[energy]} wins: the loads get {de['to_loads_added_kwh']:.0f} kWh a year more "
             "from PV")
    if len(ranked) > 1:
        runner = ranked[1]
        diff = gain(energy) - gain(runner)
        head += (f", {diff:.0f} kWh more than {OPTION_LABELS[runner]}" if diff > TIE_KWH
                 else f", about the same as {OPTION_LABELS[runner]}")
    reasons.insert(0, head + ".")
    better_but_blocked = [k for k in blocked if gain(k) > gain(energy) + TIE_KWH and energy not in blocked]
    for k in reversed(better_but_blocked):
        why_not = "without uncontrolled export" if k in leaking else "passing its design checks"
        reasons.insert(1, f"{OPTION_LABELS[k]} would give the loads {gain(k):.0f} kWh, but not {why_not}.")
    # why: the conversion chains, and how much AC-coupled output was used as it was made
    ac_allowed = [k for k in allowed if k.startswith("ac_") and k not in leaking]
    if chains.ac_direct is not None and chains.dc_direct is not None:
        why = (f"AC-coupled energy used in daytime skips the battery and one conversion: the microinverter alone "
               f"({_pct(chains.ac_direct)}) against controller and inverter ({_pct(chains.dc_direct)}); stored "
               f"AC-coupled energy takes three conversions and the battery (microinverter, charger, battery, "
               f"inverter: {_pct(chains.ac_stored)}) against {_pct(chains.dc_stored)} for stored DC-coupled energy.")
        ac_opts = [k for k in others if k.startswith("ac_")]
        if ac_opts:
            share = results[ac_opts[0]].simulation.results.baseload.get("ac_direct_share")
            if share is not None:
                why += f" Here {_pct(share)} of the AC-coupled output is used by the loads as it is made."
        reasons.append(why)
        if energy == "dc" and ac_allowed:
            reasons.append("DC-coupling wins here because too much of the new panels' output cannot be used as it is "
                           "made: stored, DC-coupled energy takes one conversion fewer, and a DC-coupled array is "
                           "throttled at its controller instead of being curtailed on the AC side.")
    for k in others:
        d = results[k].delta
        lost = d["curtailed_added_kwh"] + d["clipped_added_kwh"]
        if d["expansion_potential_kwh"] > 0 and lost > 0.05 * d["expansion_potential_kwh"]:
            reasons.append(f"With {OPTION_LABELS[k]} the system curtails or clips {lost:.0f} kWh a year more "
                           f"({_pct(lost / d['expansion_potential_kwh'])} of the new panels' potential): the loads "
                           "and the battery cannot take it all.")
    # money: the best NPV among the allowed options
    money = max(allowed, key=lambda k: results[k].economics.npv)
    m = results[money].economics
    pay = ("does not pay back within the analysis period" if m.simple_payback_years is None
           else f"pays back in {m.simple_payback_years:.1f} years (discounted: "
                + ("not within the period" if m.discounted_payback_years is None
                   else f"{m.discounted_payback_years:.1f} years") + ")")
    reasons.append(f"On money,{' before any fix,' if none_pass else ''} {OPTION_LABELS[money]} wins: it saves {m.annual_saving:.0f} {cur} in the first year "
                   f"for {m.investment:.0f} {cur}, {pay}, with an NPV of {m.npv:.0f} {cur} over {m.years} years"
                   + (f" and an IRR of {_pct(m.irr)}." if m.irr is not None else "."))
    return Verdict(energy=energy, money=money, text=" ".join(reasons), reasons=tuple(reasons))


# ------------------------------------------------------------------------------------------------ compare
def compare(sc: Scenario, layout: Layout | None = None, *, options: tuple[str, ...] | None = None,
            site: SiteData | None = None, cache: OrientationCache | None = None,
            progress: Callable[[float, str], None] | None = None) -> Comparison:
    """Simulate the existing system and every applicable expansion option, and compare them.

    ``layout`` overrides the ``[expansion]`` count, tilt and azimuth; ``options`` limits the options (the
    baseline is always included). ``site`` and ``cache`` reuse earlier work; one of each serves all options.
    """
    layout = layout or layout_of(sc)
    priced = sc if sc.expansion is None else sc.replace(expansion=sc.expansion.priced_for(layout.count))
    chosen = [o for o in applicable_options(sc) if options is None or o == "baseline" or o in options]
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
        if option == "baseline":
            base_sim = sim
            delta = option_delta(sim, sim)
            economics = None
        else:
            delta = option_delta(base_sim, sim)
            economics = option_economics(priced, option, delta)
        results[option] = OptionResult(option=option, label=OPTION_LABELS[option], scenario=sc_o, simulation=sim,
                                       delta=delta, economics=economics)
    if progress:
        progress(1.0, "done")
    # Design checks whose outcome each option changes; they can keep an option from winning.
    found = check_options(sc, layout=layout, sims={k: r.simulation for k, r in results.items()}, site=site,
                          cache=cache, options=tuple(results))
    results = {k: dataclasses.replace(r, checks=tuple(found.get(k, ()))) for k, r in results.items()}
    verdict = (make_verdict(priced, results) if layout.count > 0 else
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
    return Verdict(energy=v.energy, money=v.money, text=f"{v.text} {reason}".strip(), reasons=(*v.reasons, reason))
