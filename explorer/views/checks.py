"""Design checks: pass / warn / fail in plain words, with the safety cautions they carry."""

from __future__ import annotations

import html

import streamlit as st

from core.present.cautions import distinct_cautions
from core.present.figures import STATUS_COLOURS
from core.present.safety import SAFETY_CAUTIONS

_WORD = {"pass": "PASS", "warn": "WARN", "fail": "FAIL"}
_ORDER = {"fail": 0, "warn": 1, "pass": 2}


def badge(status: str) -> str:
    """A small coloured label in words (colour is never the only cue)."""
    colour = STATUS_COLOURS.get(status, "#555555")
    return (f'<span style="background:{colour};color:white;font-weight:700;padding:1px 7px;border-radius:4px;'
            f'font-size:0.8em">{_WORD.get(status, status.upper())}</span>')


def line(c) -> str:
    figures = ""
    if c.value is not None and c.limit is not None:
        figures = f" <span style='color:#555'>({c.value:,.1f} {html.escape(c.unit)} against {c.limit:,.1f} " \
                  f"{html.escape(c.unit)})</span>"
    subject = html.escape(c.subject or c.id)
    return (f"{badge(c.status)} <b>{subject}</b> — {html.escape(c.sentence)}{figures}<br>"
            f"<span style='color:#666;font-size:0.85em'>Source: {html.escape(c.source)}</span>")


def render(m) -> None:
    """Two groups, each flagged first: what the new panels change or add, and the existing system as it is."""
    st.markdown(f"**With the new panels** ({m.label}, {m.count} panel{'s' if m.count != 1 else ''}): the checks "
                "they add or whose outcome they change")
    if m.count > 0 and not m.changed_checks:
        st.caption("The new panels change no check's outcome.")
    elif m.changed_checks:
        group(m.changed_checks)
    else:
        st.caption("No panels are added.")
    st.markdown("**The existing system as it is**")
    group(m.existing_checks, empty="No design checks apply to the existing system.")
    # the cautions of every flagged check, each clause once and none the safety notes below already say
    flagged = [c.caution for c in (*m.changed_checks, *m.existing_checks) if c.status != "pass" and c.caution]
    if flagged:
        st.markdown("**Cautions that come with the flagged checks**")
        new = distinct_cautions(flagged, already=SAFETY_CAUTIONS)
        if new:
            st.warning("\n".join(f"- {s}" for s in new) + "\n\nAnd the safety notes at the foot of the page.")
        else:
            st.caption("They are among the safety notes at the foot of the page.")


def group(checks, empty: str = "No design checks apply to this setting.") -> None:
    if not checks:
        st.info(empty)
        return
    ordered = sorted(checks, key=lambda c: _ORDER.get(c.status, 3))
    counts = {s: sum(c.status == s for c in checks) for s in ("fail", "warn", "pass")}
    st.markdown(" &nbsp; ".join(f"{badge(s)} {n}" for s, n in counts.items()), unsafe_allow_html=True)
    flagged = [c for c in ordered if c.status != "pass"]
    passed = [c for c in ordered if c.status == "pass"]
    for c in flagged:
        st.markdown(line(c), unsafe_allow_html=True)
    if not flagged:
        st.success("Every check here passes.")
    if passed:
        with st.expander(f"Passed checks ({len(passed)})"):
            for c in passed:
                st.markdown(line(c), unsafe_allow_html=True)
