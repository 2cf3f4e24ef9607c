"""Which options may be recommended: one rule for the compare verdict, the sweep and its summary.

An option (or a sweep cell) is **valid** when it fails no design check and sends nothing into a grid that may not
take it. A zero-export connection forbids any export; above an export limit the excess is forbidden too. Energy
that leaves the site beyond what the connection allows is "uncontrolled export" (the engine's
``export_uncontrolled_w``), and an option with any of it cannot be recommended, however much it adds.
"""

from __future__ import annotations

from collections.abc import Iterable

#: Uncontrolled export below this counts as none (rounding of the engine's sums), kWh a year.
EXPORT_EPS_KWH = 1e-3
#: The rule id of uncontrolled export (the same id as the design check that reports it from a simulated year).
LEAK_RULE = "ac_coupling.uncontrolled_export"


def failed_rules(checks: Iterable, exported_uncontrolled_kwh: float) -> tuple[str, ...]:
    """Ids of the rules broken: every failing check (``status == "fail"``), then :data:`LEAK_RULE` when the year
    has uncontrolled export above :data:`EXPORT_EPS_KWH` — each id once, in that order."""
    ids = [c.id for c in checks if c.status == "fail"]
    if exported_uncontrolled_kwh > EXPORT_EPS_KWH:
        ids.append(LEAK_RULE)
    return tuple(dict.fromkeys(ids))


def why_set_aside(rules: Iterable[str], *, exported_uncontrolled_kwh: float | None = None,
                  exported_uncontrolled_hours: float | None = None) -> str:
    """The rules broken, in the options table's words: "uncontrolled export 344 kWh/yr in 120 h/yr" for a leak
    (just "uncontrolled export" without the figures), "fails check <id>" for a design check."""
    parts = []
    for rule in rules:
        if rule == LEAK_RULE:
            parts.append("uncontrolled export" if exported_uncontrolled_kwh is None else
                         f"uncontrolled export {exported_uncontrolled_kwh:,.0f} kWh/yr in "
                         f"{exported_uncontrolled_hours or 0.0:,.0f} h/yr")
        else:
            from core.analyses.checks.words import (
                rule_words,  # here: the checks import this module's threshold
            )

            parts.append(f"fails the rule: {rule_words(rule)}")
    return "; ".join(parts)
