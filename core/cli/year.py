"""Subcommands about one scenario's year: ``simulate``, ``report``, ``inspect-load`` and ``calibrate``."""

from __future__ import annotations

import json
import sys
from pathlib import Path

from core.cli.common import EXIT_OK, layout_from_args, stderr_progress
from core.cli_io import report_warnings
from core.errors import InputError


# ------------------------------------------------------------------------------------------- formatting
def format_year_table(result: dict) -> str:
    """A readable table of the year's figures (kWh without decimals, ratios as % with one decimal)."""
    e = result["energy_kwh"]
    rows = [
        ("Load", e["load"]), ("  served", e["load_served"]),
        ("  unserved backed-up (a failure)", e["unserved_backed_up"]),
        ("  grid-only shed in outages (by design)", e["shed_grid_only"]),
        ("Loads supplied from PV", e["loads_from_pv"]),
        ("PV potential (module DC)", e["pv_potential"]), ("  DC-coupled arrays", e["pv_potential_dc"]),
        ("  AC-coupled arrays", e["pv_potential_ac"]), ("Harvested", e["harvested"]),
        ("Curtailed", e["curtailed"]), ("  DC-coupled", e["curtailed_dc"]), ("  AC-coupled", e["curtailed_ac"]),
        ("    by the export limiter", e["curtailed_limiter"]),
        ("    by frequency-watt (off-grid)", e["curtailed_frequency_watt"]),
        ("    relay open", e["curtailed_relay"]), ("    waiting to reconnect", e["reconnect_wait"]),
        ("Clipped", e["clipped"]), ("Exported", e["exported"]), ("  uncontrolled", e["exported_uncontrolled"]),
        ("Grid import", e["grid_import"]), ("  while the standing draw was held", e["grid_import_standing"]),
        ("Battery charge", e["battery_charge"]), ("Battery discharge", e["battery_discharge"]),
        ("Losses", e["losses"]), ("Stored change", e["stored_change"]),
    ]
    width = max(len(r[0]) for r in rows)
    lines = [f"{'Year':<{width}}  {'kWh':>9}"]
    lines += [f"{name:<{width}}  {value:>9.0f}" for name, value in rows]
    lines.append(f"{'Balance error':<{width}}  {e['balance_error']:>9.2e}")

    def pct(x):
        return "—" if x is None else f"{x * 100:.1f} %"
    r, h = result["ratios"], result["hours"]
    lines += ["", f"Self-consumption {pct(r['self_consumption'])}   Self-sufficiency {pct(r['self_sufficiency'])}"
              f"   PV utilisation {pct(r['pv_utilisation'])}",
              f"Load served {pct(r.get('load_served_share'))}   unserved {pct(r.get('load_unserved_share'))}",
              f"Hours: export {h['export']:.0f} h (uncontrolled {h['export_uncontrolled']:.0f} h), "
              f"outage {h['outage']:.0f} h, backed-up loads unserved {h['unserved_backed_up']:.0f} h",
              f"Battery: {result['battery']['equivalent_full_cycles']:.0f} equivalent full cycles",
              f"Weather: GHI {result['weather']['ghi_kwh_m2']:.0f} kWh/m² ({result['weather']['source']})"]
    m = result.get("money")
    if m:
        cur = m["currency"]
        lines += [f"Money: import {m['import_cost']:,.0f} {cur}, fixed charges {m['fixed_charges']:,.0f} {cur}, "
                  f"export credit {m['export_credit']:,.0f} {cur}",
                  f"The standing draw causes {m['standing_draw_kwh']:,.0f} kWh of import a year "
                  f"({m['standing_draw_cost']:,.0f} {cur}), the idle draw {m['idle_kwh']:,.0f} kWh "
                  f"({m['idle_cost']:,.0f} {cur}): each is this year minus the same year without it"]
    o = result.get("outages")
    if o and o.get("draws", 0) > 1:
        u = o["unserved_backed_up_kwh"]
        lines.append(f"Outages over {o['draws']} random years: backed-up load unserved P50 {u['p50']:.1f} kWh, "
                     f"P90 {u['p90']:.1f} kWh, worst {u['worst']:.1f} kWh")
    return "\n".join(lines)


# ------------------------------------------------------------------------------------------- subcommands
def cmd_simulate(args) -> int:
    from core.scenario import load_scenario
    from core.simulate import simulate

    if args.steps_csv is not None and not args.steps_csv.strip():
        raise InputError("--steps-csv needs a file name", where="command line",
                         hint="e.g. --steps-csv steps.csv, or leave the option out")
    sc = load_scenario(args.scenario)
    if args.steps_csv:  # refuse a bad output name before the year is simulated
        from core.present.report import check_output_path

        check_output_path(args.steps_csv, sc, inputs=[Path(args.scenario)])
    progress = stderr_progress("simulate") if sys.stderr.isatty() else None
    sim = simulate(sc, progress=progress)
    out = sim.results.to_dict()
    from core.analyses.outage_draws import outage_draws
    from core.analyses.running_costs import charge_window_value, money, outage_figures

    if args.draws is not None and args.draws < 0:
        raise InputError(f"--draws {args.draws} is below 0", where="--draws", hint="give 0 or more outage years")
    draws = None if args.draws == 0 else outage_draws(
        sc, sim.site, sim.sources, draws=args.draws, progress=stderr_progress("outage years") if progress else None)
    out["outages"] = outage_figures(sim, draws)
    out["money"] = money(sim)
    out["charge_window"] = charge_window_value(sim)
    if args.steps_csv:
        from core.present.report import write_steps_csv

        write_steps_csv(sim, args.steps_csv, inputs=[Path(args.scenario)])
    from core.face_arrays import array_breakdown, step_note

    warnings = report_warnings(sim.site.warnings)
    if args.json:
        print(json.dumps({"name": sc.name, **out, "step_s": sim.site.step_s, "arrays": array_breakdown(sim),
                          "warnings": warnings}, indent=2))
    else:
        step = sim.site.step_s
        print(f"{sc.name}: one year at {step // 60}-minute steps\n" if step % 60 == 0 else f"{sc.name}\n")
        print(format_year_table(out))
        print(step_note(sim.site.step_s, sim.site.weather.source))
    return EXIT_OK


def cmd_report(args) -> int:
    from core.files import write_atomic
    from core.present.report import check_output_path, write_steps_csv
    from core.present.scenario_report import scenario_report
    from core.scenario import load_scenario

    sc = load_scenario(args.scenario)
    html_out = None if args.out.lower().endswith(".csv") else args.out
    csv_out = args.out if html_out is None else args.csv
    if html_out is not None and not html_out.lower().endswith((".html", ".htm")):
        raise InputError(f"--out {args.out!r} is neither .html nor .csv", where="command line",
                         hint="name the report FILE.html, or FILE.csv for the step-by-step results")
    for path in filter(None, (html_out, csv_out)):  # refuse a bad output name before the year is simulated
        check_output_path(path, sc, inputs=[Path(args.scenario)])
    layout = layout_from_args(sc, args) if sc.expansion is not None else None
    progress = stderr_progress("report") if sys.stderr.isatty() else None
    rep = scenario_report(sc, option=args.option, layout=layout, progress=progress)
    if html_out is not None:
        write_atomic(Path(html_out), rep.html.encode("utf-8"))
        print(f"{sc.name}: report of '{rep.option}' against the existing system written to {html_out}")
    if csv_out is not None:
        write_steps_csv(rep.simulation, csv_out, inputs=[Path(args.scenario)])
        print(f"{sc.name}: step-by-step results of '{rep.option}' written to {csv_out}")
    return EXIT_OK


def cmd_inspect_load(args) -> int:
    from core.model.loads import inspect_load_summary

    summary = inspect_load_summary(args.file, timezone=args.timezone, unit=args.unit, column=args.column)
    report_warnings(summary.get("warnings") or ())
    if args.json:
        print(json.dumps(summary, indent=2, default=str))
    else:
        for key, value in summary.items():
            print(f"{key:>16}: {value}")
    return EXIT_OK


def cmd_calibrate(args) -> int:
    from core.analyses.calibration import calibrate, write_calibrated
    from core.present.calibration_text import format_calibration
    from core.scenario import load_scenario

    sc = load_scenario(args.scenario)
    cal = calibrate(sc, progress=stderr_progress("calibrate") if sys.stderr.isatty() else None)
    if args.write:
        write_calibrated(cal.calibrated, args.write, [args.scenario, *sc.data_files().values()])
    out = cal.to_dict()
    print(json.dumps(out, indent=2) if args.json else format_calibration(out, sc.name))
    if args.write and not args.json:
        print(f"\nCalibrated scenario written to {args.write}")
    return EXIT_OK
