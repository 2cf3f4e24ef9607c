"""The options side by side (existing system, AC backed-up side, AC grid side, DC) with the verdict in plain words."""

from __future__ import annotations

import math
import re

import pandas as pd
import streamlit as st

from core.analyses.options import OPTION_LABELS
from core.present.figures import fmt_kwh, fmt_pct, fmt_years
from explorer import charts
from explorer.guard import section
from explorer.views import resolution

#: (delta key, label) of the energy rows, kWh a year against the existing system.
ENERGY_ROWS = (
    ("to_loads_added_kwh", "More to the loads from PV"),
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


def verdict_parts(first: str, labels) -> list[str]:
    """The verdict's first sentence cut where it names an option it set aside, so that each can be a line
    of its own; the text is unchanged otherwise (joined, the parts give it back)."""
    names = "|".join(re.escape(label) for label in labels)
    return [p for p in re.split(rf"(?:\. Set aside — |— |\. )(?=(?:{names}): More to the loads|On energy)", first) if p]


def render(m) -> None:
    """The options side by side with the verdict, then what an hourly model would hide."""
    comparison, chosen = m.comparison, m.option
    if len(comparison.options) < 2:
        st.info("The scenario's [expansion] allows no option to compare.")
        return
    lay = comparison.layout
    st.markdown(f"**{lay.count} panel{'s' if lay.count != 1 else ''} at {lay.tilt_deg:.0f}° tilt, {lay.azimuth_deg:.0f}° azimuth**, each way of "
                f"connecting them against the existing system. The sidebar's choice, "
                f"*{OPTION_LABELS[chosen]}*, is the one in the headline figures.")
    v = comparison.verdict
    with st.container(border=True):
        st.markdown("**Verdict**")
        # the energy winner first and the money winner last are the answer; what lies between explains it
        first, *why = v.reasons or (v.text,)
        money = [r for r in why if r.startswith("On money")]
        why = [r for r in why if r not in money]
        parts = [p.strip() for p in verdict_parts(first, [OPTION_LABELS[k] for k in comparison.options])]
        aside = [p.rstrip(".") + "." for p in parts if not p.startswith(("No option", "On energy"))]
        energy = [p for p in parts if p.startswith("On energy")]
        if not energy and not parts[0].startswith("No option"):
            st.markdown(first)  # nothing compared (no expansion, no panels): the sentence as it is
        elif parts[0].startswith("No option"):
            st.markdown(f"**{parts[0]}:**")
            st.markdown("\n".join(f"- {p}" for p in aside))
            for p in energy:
                st.markdown(p)
        else:
            for p in energy:
                st.markdown(p.rstrip(".") + "." + (" Set aside:" if aside else ""))
            if aside:
                st.markdown("\n".join(f"- {p}" for p in aside))
        for r in money:
            st.markdown(r)
        if why:
            with st.expander(f"Why, in {len(why)} point{'s' if len(why) != 1 else ''}"):
                for r in why:
                    st.markdown(f"- {r}")
    table = options_table(comparison)
    # every row and no blank one below them: Streamlit's rows and header are 35 px, plus the frame's 2 px
    st.dataframe(table, hide_index=True, width="stretch", row_height=35, height=35 * (len(table) + 1) + 2)
    charts.draw(charts.options_chart(chart_frame(comparison)))
    st.caption("More to the loads from PV = grid import saved + load served in outages that went unserved before. "
               "Self-consumed = harvested − exported (Luthander et al. 2015). Money: paid export only; uncontrolled "
               "export earns nothing. Investment: the scenario's cost_ac / cost_dc, priced per panel when the count "
               "differs from the file's.")
    st.divider()
    with section("Time resolution"):
        resolution.render(m)
