"""The search in words and a table for the command line (kWh a year without decimals, money without decimals)."""

from __future__ import annotations

import textwrap

from core.analyses.design.search import SearchResult


def _cell(value, fmt: str) -> str:
    return "—" if value is None else format(value, fmt)


def format_search(result: SearchResult, top: int = 10) -> str:
    """The best ``top`` valid designs ranked, how many were invalid and why, and the reasons for the best."""
    cur = result.scenario.tariff.currency
    valid = result.valid
    invalid = [d for d in result.designs if not d.valid]
    lines = [f"{result.scenario.name}: {len(result.designs)} designs tried, {len(valid)} valid, "
             f"{len(invalid)} invalid\n"]
    head = f"{'rank':>4}  {'id':<6}{'kind':<7}{'new':>4}{'cost':>9}{'NPV':>9}{'payback':>9}{'self-used':>11}  design"
    units = f"{'':>4}  {'':<6}{'':<7}{'':>4}{cur:>9}{cur:>9}{'years':>9}{'kWh/yr':>11}"
    lines += [head, units]
    for i, d in enumerate(valid[:top], start=1):
        e = d.economics
        lines.append(f"{i:>4}  {d.id:<6}{d.candidate.coupling:<7}{d.candidate.new_modules:>4}{d.cost.total:>9.0f}"
                     f"{e.npv:>9.0f}{_cell(e.simple_payback_years, '.1f'):>9}{d.added_self_consumed_kwh:>11.0f}  "
                     f"{d.candidate.words()}")
    if not valid:
        lines.append("      (no valid design)")
    if invalid:
        counts: dict[str, int] = {}
        for d in invalid:
            for c in d.failed_checks:
                counts[c] = counts.get(c, 0) + 1
        lines += ["", "Invalid designs, by the check that fails (a design may fail several): "
                  + ", ".join(f"{k} {v}" for k, v in sorted(counts.items(), key=lambda kv: -kv[1]))]
    lines.append("")
    for kind in ("overall", "dc", "ac"):
        lines += textwrap.wrap(result.reasons[kind], width=110, initial_indent="- ", subsequent_indent="  ")
    lines += ["", "Estimates, not a design approval: DC strings carry dangerous voltages, and AC work and any "
              "grid-parallel generation must be done and signed off by licensed practitioners under local codes."]
    return "\n".join(lines)


#: Columns of :func:`design_frame` (energies kWh a year, money in the tariff's currency).
FRAME_COLUMNS = ("rank", "id", "kind", "new_modules", "design", "cost", "npv", "payback_years",
                 "self_consumed_added_kwh", "curtailed_added_kwh", "valid", "on_front", "why_invalid")


def design_frame(result: SearchResult, include_invalid: bool = False):
    """The ranked designs as a table (valid ones ranked 1…; invalid ones, when asked, with the failing rules)."""
    import pandas as pd

    from core.analyses.design.rank import cost_energy_front

    front = cost_energy_front(result.designs)
    rows = []
    rank = 0
    for d in result.designs:
        if not d.valid and not include_invalid:
            continue
        rank += d.valid
        e = d.economics
        rows.append({
            "rank": rank if d.valid else None, "id": d.id, "kind": d.candidate.coupling,
            "new_modules": d.candidate.new_modules, "design": d.candidate.words(), "cost": d.cost.total,
            "npv": None if e is None else e.npv, "payback_years": None if e is None else e.simple_payback_years,
            "self_consumed_added_kwh": d.added_self_consumed_kwh,
            "curtailed_added_kwh": None if d.added is None else d.added["curtailed_kwh"],
            "valid": d.valid, "on_front": d.id in front,
            "why_invalid": " ".join(d.reasons_invalid()),
        })
    return pd.DataFrame(rows, columns=list(FRAME_COLUMNS))


def search_summary(result: SearchResult, top: int = 10) -> dict:
    """The search in a few lines for a report: title, counts, the reasons for the best, the top valid designs."""
    cur = result.scenario.tariff.currency
    rows = []
    for i, d in enumerate(result.valid[:top], start=1):
        e = d.economics
        rows.append([str(i), d.id, d.candidate.words(), f"{d.cost.total:,.0f}", f"{e.npv:,.0f}",
                     "—" if e.simple_payback_years is None else f"{e.simple_payback_years:.1f}",
                     f"{d.added_self_consumed_kwh:,.0f}"])
    invalid = len(result.designs) - len(result.valid)
    return {"title": "Best layouts: the design search",
            "counts": f"{len(result.designs)} designs tried: {len(result.valid)} valid, simulated for the year and "
                      f"ranked by NPV; {invalid} fail a design check or send energy into the grid uncontrolled.",
            "reasons": [result.reasons[k] for k in ("overall", "dc", "ac")],
            "header": ["Rank", "Design", "What", f"Cost ({cur})", f"NPV ({cur})", "Simple payback (years)",
                       "Added self-consumed (kWh/yr)"],
            "rows": rows}
