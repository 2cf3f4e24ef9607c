"""Headline figures: the chosen option against the existing system, which is always shown beside it."""

from __future__ import annotations

import math

import streamlit as st

from core.present.figures import Headline, fmt_value


def _negligible(h: Headline) -> bool:
    return h.delta is not None and abs(h.delta) < (0.05 if h.unit in ("%", "years") else 0.5)


def _alarm(h: Headline) -> bool:
    return h.alarm_when_nonzero and h.value is not None and h.value >= 0.5


def card_value(h: Headline, period_years: int | None = None) -> tuple[str, str]:
    """The card's value, short enough for a quarter of the page, and what it leaves out (for the caption)."""
    if h.unit == "years" and h.value is not None and math.isinf(h.value):
        if period_years:
            return f"> {period_years} years", f"no payback within the {period_years}-year analysis period"
        return "never", "no payback within the analysis period"
    return fmt_value(h.value, h.unit), ""


def _card(h: Headline, period_years: int | None = None) -> None:
    with st.container(border=True):
        quiet = h.delta is None or _negligible(h) or (h.value is not None and math.isinf(h.value))
        delta = None if quiet else fmt_value(h.delta, h.unit, signed=True)
        colour = "normal" if h.higher_is_better else "inverse"
        label = f":red[**{h.label}**]" if _alarm(h) else h.label
        value, note = card_value(h, period_years)
        st.metric(label, value, delta=delta, delta_color=colour, help=h.help or None)
        same = " (no change)" if h.delta is not None and _negligible(h) else ""
        if note:
            st.caption(note)
        elif _alarm(h):
            st.markdown(f":red-background[not allowed here]  \n:gray[existing system: {fmt_value(h.baseline, h.unit)}]")
        elif h.baseline is None:  # a figure of the new panels alone (the payback): the existing system has none
            st.caption("for the new panels alone")
        else:
            st.caption(f"existing system: {fmt_value(h.baseline, h.unit)}{same}")


def _line(h: Headline) -> None:
    # a change from nothing is the value itself: said once
    same = h.delta is None or _negligible(h) or (h.baseline is not None and abs(h.baseline) < 1e-9)
    delta = "" if same else f" ({fmt_value(h.delta, h.unit, signed=True)})"
    st.markdown(f"**{h.label}**  \n{fmt_value(h.value, h.unit)}{delta}", help=h.help or None)
    st.caption(f"existing system: {fmt_value(h.baseline, h.unit)}")


def render(m) -> None:
    """The chosen option in words, eight cards in two rows of four, then the remaining figures on one line."""
    st.markdown(f"**{m.label}, {m.count} panel{'s' if m.count != 1 else ''}** against the existing system")
    cards = [*m.headline, *m.more][:8]
    rest = [*m.headline, *m.more][8:]
    for row in (cards[:4], cards[4:8]):
        for col, h in zip(st.columns(4), row, strict=False):
            with col:
                _card(h, m.scenario.tariff.years)
    if rest:
        for col, h in zip(st.columns(len(rest)), rest, strict=True):
            with col:
                _line(h)
