"""AC-coupling checks: AC-coupled rating against the inverter-charger, the battery's absorption of AC-coupled
surplus, and uncontrolled export under a zero-export connection.

Background (common practice): microinverters on the inverter-charger's output cannot be throttled by it while the
grid is up, and in an outage they are held in check only by frequency-watt response. Makers of inverter-chargers
therefore ask that the AC-coupled PV on the output not be rated above the inverter-charger's continuous rating,
and that the battery can take the surplus (the "1:1" rule of thumb).
"""

from __future__ import annotations

import math

from core.analyses.checks.common import CAUTION_AC, CAUTION_BATTERY, Check
from core.analyses.validity import EXPORT_EPS_KWH
from core.model import metrics
from core.scenario import Array, Scenario


def ac_rating_w(sc: Scenario, array: Array) -> float:
    """Nameplate AC rating of an AC-coupled array: microinverter units × their AC rating, W."""
    mi = sc.microinverters[array.microinverter]
    return math.ceil(array.module_count / mi.inputs) * mi.ac_rating_w


def ac_coupled_rating_w(sc: Scenario, side: str | None = None) -> float:
    """Total AC-coupled nameplate rating, W, on one side (``"backed_up"`` / ``"grid"``) or both (None)."""
    return float(sum(ac_rating_w(sc, a) for a in sc.arrays
                     if a.coupling == "ac" and a.module_count > 0 and (side is None or a.side == side)))


def charger_absorption_limit_w(sc: Scenario) -> float:
    """Most AC power the inverter-charger can push into the battery: its charger's AC input rating, or the
    battery's charge limit (DC side) divided by the charger efficiency, whichever is lower, W."""
    ic, b = sc.inverter_charger, sc.battery
    if b is None or b.usable_kwh <= 0:
        return 0.0
    charger = ic.rating_w if ic.charger_rating_w is None else ic.charger_rating_w
    return float(min(charger, b.max_charge_a * b.nominal_v / ic.charger_efficiency))


def worst_ac_surplus_w(steps, metering: str) -> float:
    """The largest AC-coupled surplus over the loads that the inverter-charger sees in any step, W.

    Grid up, site metering: ``H_acb + H_acg − L_b − L_g``; inverter metering: ``H_acb − L_b`` (the grid side
    is outside its view); in an outage ``H_acb − L_b`` (grid-side units stop). Converter outputs before any
    curtailment (docs/design.md §4).
    """
    surplus = metrics.ac_surplus_w(steps["ac_backed_out_w"], steps["ac_grid_out_w"], steps["load_backed_w"],
                                   steps["load_grid_only_w"], steps.get("grid_up"), metering=metering)
    return float(max(0.0, surplus.max())) if surplus.size else 0.0


def ac_coupling_checks(sc: Scenario, sim=None) -> list[Check]:
    checks: list[Check] = []
    if not any(a.coupling == "ac" and a.module_count > 0 for a in sc.arrays):
        return checks
    ic, g = sc.inverter_charger, sc.grid
    backed = ac_coupled_rating_w(sc, "backed_up")
    if backed > 0:
        over = backed > ic.rating_w
        checks.append(Check(
            id="ac_coupling.ratio", status="fail" if over else "pass", value=backed, limit=ic.rating_w, unit="W",
            sentence=(f"{backed:.0f} W of microinverters on the backed-up side against the inverter-charger's "
                      f"{ic.rating_w:.0f} W continuous rating: "
                      + ("too much — in an outage the inverter-charger must form the grid for, and absorb or shed, "
                         "more power than it is rated for; use fewer microinverters there or move some to the grid "
                         "side." if over else "within it.")),
            source="common practice (the AC-coupled PV should not be rated above the inverter-charger's continuous "
                   "rating)", caution=CAUTION_AC, subject="system"))
    limit = charger_absorption_limit_w(sc)
    if sim is None:
        surplus = ac_coupled_rating_w(sc) if g.metering == "site" else backed
        basis = "the AC-coupled nameplate rating with no load (no simulation given)"
    else:
        surplus = worst_ac_surplus_w(sim.steps, g.metering)
        basis = "the worst step of the simulated year"
    room = g.export_limit_w if g.export_allowed else 0.0
    if surplus <= limit:
        status, what = "pass", "the charger and battery can take all of it while the battery has room"
    elif surplus <= limit + room:
        status, what = "pass", f"the rest is exported within the {room:.0f} W export limit"
    elif g.ac_control_mode in _HELD_BACK:
        status, what = "warn", _HELD_BACK[g.ac_control_mode]
    else:
        status, what = "fail", ("the rest flows into the grid: uncontrolled export under a zero-export connection; "
                                "add an export limiter, fewer AC-coupled panels or a larger charger")
    checks.append(Check(
        id="ac_coupling.absorption", status=status, value=round(surplus, 0), limit=round(limit, 0), unit="W",
        sentence=(f"AC-coupled surplus over the loads up to {surplus:.0f} W ({basis}) against {limit:.0f} W that the "
                  f"charger (its rating, and the battery's charge limit) can absorb: {what}. When the battery is "
                  "full none of it can be absorbed."),
        source="charger and battery datasheet limits (common practice)",
        caution=CAUTION_BATTERY if status != "pass" else None, subject="system"))
    if sim is not None:
        e = sim.results.energy_kwh
        kwh, hours = e["exported_uncontrolled"], sim.results.hours["export_uncontrolled"]
        bad = kwh > EXPORT_EPS_KWH
        rule = ("a zero-export connection" if not g.export_allowed
                else f"an export limit of {g.export_limit_w:.0f} W")
        checks.append(Check(
            id="ac_coupling.uncontrolled_export", status="fail" if bad else "pass", value=round(kwh, 3), limit=0.0,
            unit="kWh",
            sentence=(f"{kwh:.1f} kWh flows into the grid beyond {rule} in {hours:.0f} hours of the year: not allowed; "
                      "add an export limiter that curtails the microinverters, or fewer AC-coupled panels." if bad
                      else f"No export beyond {rule} in the simulated year."),
            source="the connection's terms (zero export / export limit)", caution=CAUTION_AC, subject="system"))
    return checks


#: How the rest of the AC-coupled surplus is held back, per grid.ac_control mode other than "none".
_HELD_BACK = {
    "limiter": "the rest is curtailed by the export limiter",
    "islanded": ("the backed-up side runs off-grid and curtails the rest by frequency-watt; grid-side "
                 "microinverters are not held back"),
    "relay": "a relay opens the microinverter circuit when the battery is nearly full",
}
