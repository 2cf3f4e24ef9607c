"""The calibration's findings as plain text for the command line (``python -m core calibrate``)."""

from __future__ import annotations

from typing import Any


def _pm(value, uncertainty, unit: str, digits: int) -> str:
    if value is None:
        return "not fitted"
    tail = "" if uncertainty is None else f" ± {uncertainty:.{digits}f}"
    return f"{value:.{digits}f}{tail} {unit}"


def _score(s: dict) -> str:
    if s["nmbe_pct"] is None:
        return f"too few periods ({s['periods']})"
    return f"NMBE {s['nmbe_pct']:+.1f} %, CV(RMSE) {s['cv_rmse_pct']:.1f} % ({s['periods']} periods)"


def format_calibration(result: dict[str, Any], name: str) -> str:
    """A short report of a calibration's JSON (:meth:`core.analyses.calibration.Calibration.to_dict`)."""
    f, rec, fit = result["fitted"], result["record"], result["fit"]
    lines = [f"{name}: calibration against {rec['file']}",
             f"Record: {rec['days']:.1f} days at {rec['interval_s'] // 60} min, {rec['start_utc'][:10]} to "
             f"{rec['end_utc'][:10]}; {rec['daytime_intervals']} daytime intervals",
             "Excluded intervals: " + ", ".join(f"{k} {v}" for k, v in result["excluded"].items())
             + f" (curtailment found by {', '.join(rec['curtailment_found_by']) or 'n/a'})", "", "Fitted:"]
    for array, a in f["arrays"].items():
        lines.append(f"  array {array!r}: losses {_pm(a['losses_pct'], a['uncertainty_pct'], '%', 1)} "
                     f"(scenario: {a['scenario_losses_pct']:.1f} %), from {a['days']} days")
    lines.append(f"  standing draw: {_pm(f['standing_draw_w'], f['standing_draw_uncertainty_w'], 'W', 0)}"
                 + (f", from {f['standing_draw_hours']:.0f} h" if f["standing_draw_w"] is not None else ""))
    lines.append(f"  base load: {_pm(f['base_load_w'], f['base_load_uncertainty_w'], 'W', 0)}"
                 + (f", from {f['base_load_hours']:.0f} h" if f["base_load_w"] is not None else ""))
    lines += ["", "Model against measurement (ASHRAE Guideline 14: monthly |NMBE| ≤ 5 %, CV(RMSE) ≤ 15 %; "
              "hourly ≤ 10 %, ≤ 30 %):"]
    for res in ("monthly", "hourly"):
        lines.append(f"  {res:<7} before: {_score(fit['before'][res])}")
        lines.append(f"  {'':<7} after:  {_score(fit['after'][res])}   [{fit['basis'][res]}]")
    lines.append("  meets Guideline 14 after the fit: " + ("yes" if fit["meets_guideline_14"] else "no")
                 + f" (judged on: {', '.join(fit['judged_on'])})")
    lines += [f"Note: {n}" for n in result["notes"]]
    return "\n".join(lines)
