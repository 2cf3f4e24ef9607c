"""Rank valid designs by NPV (ties: more added self-consumed energy) and say in plain words why the best win."""

from __future__ import annotations

from core.analyses.design.evaluate import DesignResult

#: NPVs closer than this are a tie, decided by added self-consumed energy (currency).
NPV_TIE = 0.5
KINDS = ("overall", "dc", "ac")


def _key(r: DesignResult) -> tuple:
    # Rounded NPV first (ties within NPV_TIE), then more self-consumed energy, then less energy unserved in outages
    # (backed-up microinverters keep running in an outage), then fewer modules, then the id.
    return (-round(r.npv / NPV_TIE), -round(r.added_self_consumed_kwh, 3), round(r.added["unserved_kwh"], 3),
            r.candidate.new_modules, r.id)


def ranked(results: list[DesignResult]) -> list[DesignResult]:
    """Valid designs best first; the invalid ones after them in their enumeration order."""
    valid = sorted((r for r in results if r.valid), key=_key)
    return valid + [r for r in results if not r.valid]


def best_of(results: list[DesignResult]) -> dict[str, DesignResult | None]:
    """The best valid design overall, with a DC part only and with an AC part only (None where there is none)."""
    order = [r for r in ranked(results) if r.valid]
    return {"overall": order[0] if order else None,
            "dc": next((r for r in order if r.candidate.coupling == "dc"), None),
            "ac": next((r for r in order if r.candidate.coupling == "ac"), None)}


def _money(x: float, cur: str) -> str:
    return f"{x:,.0f} {cur}"


def reason(best: DesignResult, runner: DesignResult | None, kind: str) -> str:
    """Why ``best`` is the best of its kind: what it adds, what it costs, whether it pays, why it beats the next."""
    cur = best.economics.currency
    e = best.economics
    what = {"overall": "Best design", "dc": "Best DC-coupled design", "ac": "Best AC-coupled design"}[kind]
    text = (f"{what} ({best.id}): {best.candidate.words()}. It costs {_money(best.cost.total, cur)} and adds "
            f"{best.added['self_consumed_kwh']:,.0f} kWh a year of self-consumed PV, saving "
            f"{_money(e.annual_saving, cur)} in the first year")
    if e.npv >= 0:
        pay = ("" if e.simple_payback_years is None else f", paying back in {e.simple_payback_years:.1f} years")
        text += f"{pay}; NPV {_money(e.npv, cur)} over {e.years} years."
    else:
        text += (f"; it does not pay: NPV {_money(e.npv, cur)} over {e.years} years"
                 + ("" if e.simple_payback_years is None else f" (simple payback {e.simple_payback_years:.1f} years)")
                 + ". It is the least bad valid choice of its kind, not a recommendation to buy.")
    if runner is not None:
        d_npv = e.npv - runner.economics.npv
        d_kwh = best.added["self_consumed_kwh"] - runner.added["self_consumed_kwh"]
        if d_npv > NPV_TIE:
            text += (f" It beats the runner-up ({runner.id}: {runner.candidate.words()}) by {_money(d_npv, cur)} of "
                     "NPV" + (f" although it adds {-d_kwh:,.0f} kWh less." if d_kwh < -0.5 else "."))
        else:
            d_unserved = runner.added["unserved_kwh"] - best.added["unserved_kwh"]
            if d_kwh > 0.5:
                more = f"adds {d_kwh:,.0f} kWh more self-consumed energy"
            elif d_unserved > 0.05:
                more = f"adds as much energy, and leaves {d_unserved:.1f} kWh a year less unserved in outages"
            else:
                more = "adds as much energy; it comes first by fewer modules or by its place in the list"
            text += f" It ties the runner-up ({runner.id}: {runner.candidate.words()}) on NPV and {more}."
    return text


def reasons(results: list[DesignResult]) -> dict[str, str]:
    """A plain-words reason for each best design (and a sentence where a kind has no valid design)."""
    order = [r for r in ranked(results) if r.valid]
    out = {}
    for kind in KINDS:
        pool = [r for r in order if kind == "overall" or r.candidate.coupling == kind]
        if not pool:
            label = {"overall": "design", "dc": "DC-coupled design", "ac": "AC-coupled design"}[kind]
            tried = [r for r in results if kind == "overall" or r.candidate.coupling == kind]
            fails = sorted({i for r in tried for i in r.failed_checks})
            out[kind] = (f"No valid {label}: all {len(tried)} tried fail a check ({', '.join(fails) or 'none tried'})."
                         if tried else f"No {label} was tried (no candidate converter or no room).")
            continue
        out[kind] = reason(pool[0], pool[1] if len(pool) > 1 else None, kind)
    return out


def cost_energy_front(results: list[DesignResult]) -> set[str]:
    """Ids of the valid designs on the best front of cost against added self-consumed energy: no other valid
    design costs as little or less and adds as much or more, with one of the two strictly better."""
    valid = [r for r in results if r.valid]
    front = set()
    for r in valid:
        c, e = r.cost.total, r.added_self_consumed_kwh
        if not any((o.cost.total <= c and o.added_self_consumed_kwh >= e)
                   and (o.cost.total < c or o.added_self_consumed_kwh > e) for o in valid):
            front.add(r.id)
    return front
