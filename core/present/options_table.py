"""The options table and the options chart's frame: one table for the page, the HTML report and the command line.

Text with units, one column per option; the same words as the verdict (:data:`core.analyses.compare.LOADS_ROW`,
"Passes every rule" with the rules broken, as :func:`core.analyses.validity.why_set_aside` says them).
"""

from __future__ import annotations

import math

import pandas as pd

from core.analyses.compare import LOADS_ROW
from core.analyses.options import OPTION_LABELS
from core.analyses.validity import why_set_aside
from core.present.figures import fmt_kwh, fmt_pct, fmt_years

#: (delta key, label) of the energy rows, kWh a year against the existing system.
ENERGY_ROWS = (
    ("to_loads_added_kwh", LOADS_ROW),
    ("self_consumed_added_kwh", "More PV self-consumed"),
    ("battery_discharge_added_kwh", "More from the battery"),
    ("curtailed_added_kwh", "More curtailed"),
    ("clipped_added_kwh", "More clipped"),
    ("export_allowed_added_kwh", "More export within the limit"),
    ("exported_uncontrolled_kwh", "Uncontrolled export"),
)
CHART_ROWS = ("to_loads_added_kwh", "curtailed_added_kwh", "clipped_added_kwh", "exported_uncontrolled_kwh")


def _years(x: float | None) -> str:
    """A payback; None means it does not happen within the analysis period."""
    return fmt_years(math.inf if x is None else x)


def _kwh(x: float, *, signed: bool) -> str:
    """An energy difference; none at all is "0 kWh", not "+0 kWh"."""
    text = fmt_kwh(x, signed=signed)
    return text[1:] if text.startswith("+0 ") else text


def _passes(r) -> str:
    """"yes", or "no: " and the rules broken in the verdict's words (the figures are in the rows above)."""
    return "yes" if r.valid else "no: " + why_set_aside(r.failed_rules)


def options_table(comparison) -> pd.DataFrame:
    """Figures × options, as text with units (the baseline column holds the existing system's own year)."""
    opts = [k for k in comparison.options if k != "baseline"]
    rows = []
    for key, label in ENERGY_ROWS:
        rows.append([label + " (kWh/yr)", *[_kwh(comparison.options[k].delta[key],
                                                 signed=key != "exported_uncontrolled_kwh") for k in opts]])
    rows.append(["Hours with uncontrolled export (h/yr)",
                 *[f"{comparison.options[k].delta['exported_uncontrolled_hours']:,.0f} h" for k in opts]])
    rows.append(["More battery cycles (per year)",
                 *[f"{comparison.options[k].delta['battery_cycles_added']:+,.0f}" for k in opts]])
    rows.append(["Passes every rule", *[_passes(comparison.options[k]) for k in opts]])
    cur = comparison.scenario.tariff.currency
    for label, get in (
        (f"Investment ({cur})", lambda e: f"{e.investment:,.0f}"),
        (f"First-year saving ({cur})", lambda e: f"{e.annual_saving:,.0f}"),
        ("Simple payback", lambda e: _years(e.simple_payback_years)),
        ("Discounted payback", lambda e: _years(e.discounted_payback_years)),
        (f"NPV ({cur})", lambda e: f"{e.npv:,.0f}"),
        ("IRR", lambda e: "—" if e.irr is None else fmt_pct(e.irr * 100.0)),
    ):
        rows.append([label, *[get(comparison.options[k].economics) for k in opts]])
    return pd.DataFrame(rows, columns=["Against the existing system", *[OPTION_LABELS[k] for k in opts]])


def chart_frame(comparison) -> pd.DataFrame:
    labels = dict(ENERGY_ROWS)
    return pd.DataFrame([{"option": k, "label": OPTION_LABELS[k], "figure": labels[key], "kwh": r.delta[key]}
                         for k, r in comparison.options.items() if k != "baseline" for key in CHART_ROWS])
