"""The command line: ``python -m core SUBCOMMAND …`` (also installed as ``secondroof``).

Exit codes: 0 ok, 2 bad input (one line on stderr naming the place), 1 internal error.
"""

from __future__ import annotations

import argparse
import dataclasses
import json
import sys
from collections.abc import Callable, Sequence
from pathlib import Path

from core.cli_io import (
    DEVICE_ERRNOS,
    Terminated,
    catch_termination,
    quiet_stdout,
    report_warnings,
    restore_handlers,
    site_warnings,
)
from core.errors import InputError

EXIT_OK, EXIT_INTERNAL, EXIT_BAD_INPUT = 0, 1, 2


class _Parser(argparse.ArgumentParser):
    """argparse that reports usage errors as bad input (exit 2, one line) instead of printing usage."""

    def error(self, message: str):  # noqa: D401 - argparse's signature
        raise InputError(message, where="command line", hint=f"see '{self.prog} --help'")


def stderr_progress(label: str) -> Callable[[float, str], None]:
    """A progress bar on stderr (tqdm) for long work; callers pass it only when stderr is a terminal."""
    import shutil

    from tqdm import tqdm

    # a pseudo-terminal that reports no size would get an empty bar, or none at all (tqdm hides bars below the
    # last row)
    size = shutil.get_terminal_size((80, 24))
    bar = tqdm(total=100, desc=f"{label}: {'starting':<28}", file=sys.stderr, leave=True,
               ncols=size.columns, nrows=size.lines,
               bar_format="{desc} {percentage:3.0f}%|{bar}|")

    def report(fraction: float, what: str) -> None:
        bar.n = round(min(max(fraction, 0.0), 1.0) * 100)
        bar.set_description_str(f"{label}: {what[:28]:<28}", refresh=False)
        bar.refresh()
        if fraction >= 1.0:
            bar.close()
    return report


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
def _cmd_simulate(args) -> int:
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


def _cmd_report(args) -> int:
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
    layout = _layout_from_args(sc, args) if sc.expansion is not None else None
    progress = stderr_progress("report") if sys.stderr.isatty() else None
    rep = scenario_report(sc, option=args.option, layout=layout, progress=progress)
    if html_out is not None:
        write_atomic(Path(html_out), rep.html.encode("utf-8"))
        print(f"{sc.name}: report of '{rep.option}' against the existing system written to {html_out}")
    if csv_out is not None:
        write_steps_csv(rep.simulation, csv_out, inputs=[Path(args.scenario)])
        print(f"{sc.name}: step-by-step results of '{rep.option}' written to {csv_out}")
    return EXIT_OK


def _cmd_inspect_load(args) -> int:
    from core.model.loads import inspect_load_summary

    summary = inspect_load_summary(args.file, timezone=args.timezone, unit=args.unit, column=args.column)
    report_warnings(summary.get("warnings") or ())
    if args.json:
        print(json.dumps(summary, indent=2, default=str))
    else:
        for key, value in summary.items():
            print(f"{key:>16}: {value}")
    return EXIT_OK


def _cmd_calibrate(args) -> int:
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


def _layout_from_args(sc, args):
    from core.analyses.options import Layout, layout_of

    base = layout_of(sc)
    count = base.count if args.count is None else args.count
    tilt = base.tilt_deg if args.tilt is None else args.tilt
    azimuth = base.azimuth_deg if args.azimuth is None else args.azimuth
    if count < 0:
        raise InputError(f"--count {count} is negative", where="command line", hint="give a panel count of 0 or more")
    if not 0.0 <= tilt <= 90.0:
        raise InputError(f"--tilt {tilt:g} is outside 0…90", where="command line", hint="degrees from horizontal")
    if not 0.0 <= azimuth <= 360.0:
        raise InputError(f"--azimuth {azimuth:g} is outside 0…360", where="command line",
                         hint="degrees clockwise from north: 180 = south, 270 = west")
    return Layout(int(count), float(tilt), float(azimuth))


def format_comparison(comparison: dict) -> str:
    """The options side by side (kWh a year without decimals, money without decimals) and the verdict."""
    import textwrap

    short = {"baseline": "Existing", "ac_backed_up": "AC backed-up", "ac_grid": "AC grid side", "dc": "DC-coupled"}
    opts = comparison["options"]
    keys = [k for k in ("baseline", "ac_backed_up", "ac_grid", "dc") if k in opts]
    cur = comparison["currency"]
    rows = [
        ("Loads supplied from PV, added", lambda o: o["delta"]["to_loads_added_kwh"], "kWh"),
        ("Grid import saved", lambda o: o["delta"]["grid_import_saved_kwh"], "kWh"),
        ("Self-consumed PV added", lambda o: o["delta"]["self_consumed_added_kwh"], "kWh"),
        ("New panels' potential", lambda o: o["delta"]["expansion_potential_kwh"], "kWh"),
        ("Curtailed added (DC)", lambda o: o["delta"]["curtailed_dc_added_kwh"], "kWh"),
        ("Curtailed added (AC)", lambda o: o["delta"]["curtailed_ac_added_kwh"], "kWh"),
        ("Clipped added", lambda o: o["delta"]["clipped_added_kwh"], "kWh"),
        ("Battery discharge added", lambda o: o["delta"]["battery_discharge_added_kwh"], "kWh"),
        ("Conversion losses added", lambda o: o["delta"]["conversion_losses_added_kwh"], "kWh"),
        ("Unserved in outages added", lambda o: o["delta"]["unserved_added_kwh"], "kWh"),
        ("Uncontrolled export", lambda o: o["delta"]["exported_uncontrolled_kwh"], "kWh"),
        ("  in hours", lambda o: o["delta"]["exported_uncontrolled_hours"], "h"),
        ("Grid import", lambda o: o["simulate"]["energy_kwh"]["grid_import"], "kWh"),
        ("Investment", lambda o: o["economics"] and o["economics"]["investment"], cur),
        ("First-year saving", lambda o: o["economics"] and o["economics"]["annual_saving"], cur),
        ("Simple payback", lambda o: o["economics"] and o["economics"]["simple_payback_years"], "years"),
        ("Discounted payback", lambda o: o["economics"] and o["economics"]["discounted_payback_years"], "years"),
        ("NPV", lambda o: o["economics"] and o["economics"]["npv"], cur),
        ("IRR", lambda o: o["economics"] and o["economics"]["irr"], "%"),
    ]
    width = max(len(r[0]) + len(r[2]) + 3 for r in rows)
    col = 14
    lines = [f"{'':<{width}}" + "".join(f"{short[k]:>{col}}" for k in keys)]
    for name, get, unit in rows:
        cells = []
        for k in keys:
            v = get(opts[k])
            if v is None or (k == "baseline" and name != "Grid import"):
                cells.append(f"{'—':>{col}}")
            elif unit == "%":
                cells.append(f"{v * 100:>{col - 2}.1f} %")
            elif unit == "years":
                cells.append(f"{v:>{col}.1f}")
            else:
                cells.append(f"{0.0 if abs(v) < 0.5 else v:>{col}.0f}")
        lines.append(f"{name + ' (' + unit + ')':<{width}}" + "".join(cells))
    # whether each option may be recommended (the verdict names the rules it breaks)
    lines.append(f"{'Passes every rule':<{width}}" + "".join(
        f"{'—' if k == 'baseline' else ('yes' if opts[k].get('valid', True) else 'no'):>{col}}" for k in keys))
    lines.append("")
    for reason in comparison["verdict"]["reasons"] or [comparison["verdict"]["text"]]:
        lines += textwrap.wrap(reason, width=100, initial_indent="- ", subsequent_indent="  ")
    return "\n".join(lines)


def _cmd_compare(args) -> int:
    from core.analyses.compare import compare
    from core.scenario import load_scenario

    sc = load_scenario(args.scenario)
    if sc.expansion is None:
        raise InputError("the scenario has no [expansion] section", file=args.scenario, where="expansion",
                         hint="add [expansion] with module, count, tilt_deg, azimuth_deg and a microinverter "
                              "and/or a controller")
    layout = _layout_from_args(sc, args)
    if args.export_control is not None:
        from core.scenario import AC_CONTROL_MODES

        if args.export_control not in AC_CONTROL_MODES:
            raise InputError(f"--export-control {args.export_control!r} is not a mode the engine knows",
                             where="command line", hint=f"one of {', '.join(AC_CONTROL_MODES)}")
        sc = sc.replace(grid=dataclasses.replace(sc.grid, ac_export_control=args.export_control))
    progress = stderr_progress("compare") if sys.stderr.isatty() else None
    comparison = compare(sc, layout, progress=progress)
    if sc.design is not None:  # the verdict names the design to pick and only fixes the search has checked
        from core.analyses.design import search
        from core.analyses.design_verdict import with_design

        found = search(sc, site=comparison.options["baseline"].simulation.site, cache=None,
                       progress=stderr_progress("design search") if progress else None)
        comparison = with_design(comparison, found)
    out = comparison.to_dict()
    if args.draws is None or args.draws > 0:
        from core.analyses.outage_draws import options_spread

        spread, sentence = options_spread(comparison, draws=args.draws,
                                          progress=stderr_progress("outage years") if progress else None)
        if spread:
            out["outages"] = spread
            out["verdict"]["reasons"].append(sentence)
            out["verdict"]["text"] = f"{out['verdict']['text']} {sentence}"
    out["warnings"] = report_warnings(site_warnings(comparison))
    if args.json:
        print(json.dumps(out, indent=2))
    else:
        from core.analyses.options import dc_layout_note, restring_note

        print(f"{sc.name}: {layout.count} panel{'s' if layout.count != 1 else ''} at {layout.tilt_deg:g}° tilt, {layout.azimuth_deg:g}° azimuth\n")
        e = sc.expansion
        note = None if "dc" not in out["options"] or e is None else (
            restring_note(sc, layout.count) if e.restring else dc_layout_note(layout.count, e.modules_per_string))
        if note:
            print(note + "\n")
        print(format_comparison(out))
    return EXIT_OK


def _cmd_design(args) -> int:
    from core.analyses.design import search, write_best
    from core.analyses.design.report import format_search
    from core.scenario import load_scenario

    sc = load_scenario(args.scenario)
    if args.top is not None and args.top < 1:
        raise InputError(f"--top {args.top} is below 1", where="command line", hint="give how many designs to show")
    progress = stderr_progress("design") if sys.stderr.isatty() else None
    result = search(sc, progress=progress)
    written = write_best(result, args.write_best) if args.write_best else []
    if args.json:
        print(json.dumps(result.to_dict(top=args.top), indent=2))
    else:
        print(format_search(result, top=args.top or 10))
    for path in written:
        print(f"wrote {path}", file=sys.stderr)
    return EXIT_OK


def _cmd_check(args) -> int:
    from core.analyses.checks import CAUTION_ESTIMATE, check_options
    from core.analyses.compare import compare
    from core.scenario import load_scenario

    sc = load_scenario(args.scenario)
    progress = stderr_progress("check") if sys.stderr.isatty() else None
    sims = None
    if sc.expansion is not None:
        comparison = compare(sc, progress=progress)
        sims = {k: v.simulation for k, v in comparison.options.items()}
        report_warnings(site_warnings(comparison))
    checks = [c for group in check_options(sc, sims=sims).values() for c in group]
    if args.json:
        print(json.dumps([c.to_dict() for c in checks], indent=2))
        return EXIT_OK
    from core.analyses.options import OPTION_LABELS

    print(f"{sc.name}: design checks\n")
    marks = {"pass": "ok  ", "warn": "WARN", "fail": "FAIL"}
    current = None
    for c in checks:
        if c.option != current:
            current = c.option
            print(f"-- {OPTION_LABELS.get(c.option, c.option)}" + (" (what the expansion changes)"
                                                                  if c.option != "baseline" else ""))
        print(f"[{marks[c.status]}] {c.id}: {c.sentence}\n        source: {c.source}")
    cautions = list(dict.fromkeys(c.caution for c in checks if c.caution and c.status != "pass"))
    print("\nCautions:")
    for text in [*cautions, CAUTION_ESTIMATE]:
        print(f"  - {text}")
    return EXIT_OK


def _cmd_resolution(args) -> int:
    from core.analyses.options import Layout, layout_of
    from core.analyses.resolution import resolution_check
    from core.scenario import load_scenario

    sc = load_scenario(args.scenario)
    base = layout_of(sc)
    layout = Layout(count=base.count if args.count is None else args.count,
                    tilt_deg=base.tilt_deg if args.tilt is None else args.tilt,
                    azimuth_deg=base.azimuth_deg if args.azimuth is None else args.azimuth)
    progress = stderr_progress("resolution") if sys.stderr.isatty() else None
    result = resolution_check(sc, args.option, layout, progress=progress)
    warnings = report_warnings(result.warnings)
    if args.json:
        print(json.dumps({**result.to_dict(), "warnings": warnings}, indent=2))
        return EXIT_OK
    rows = [("AC-coupled surplus over the loads", "ac_surplus_kwh", "kWh"),
            ("  in hours", "ac_surplus_hours", "h"), ("  largest step", "ac_surplus_peak_w", "W")]
    print(f"{sc.name}: {result.option}, step {result.native_step_s} s against 3600 s\n")
    print(f"{'':36}{'native':>10}{'hourly':>10}{'hidden':>10}")
    for label, key, unit in rows:
        print(f"{label + ' (' + unit + ')':36}{result.native_surplus[key]:>10.0f}{result.hourly_surplus[key]:>10.0f}"
              f"{result.native_surplus[key] - result.hourly_surplus[key]:>10.0f}")
    for key, label in (("exported_uncontrolled", "Uncontrolled export (kWh)"), ("curtailed", "Curtailed (kWh)")):
        n, h = result.native.energy_kwh[key], result.hourly.energy_kwh[key]
        print(f"{label:36}{n:>10.0f}{h:>10.0f}{n - h:>10.0f}")
    print(f"\n{result.sentence}")
    return EXIT_OK


def _cmd_spacing(args) -> int:
    from core.analyses.checks.spacing import min_row_gap, parse_window

    window = parse_window(args.window)
    gap = min_row_gap(args.latitude, args.tilt, args.length, azimuth_deg=args.azimuth, window_h=window)
    if args.json:
        print(json.dumps(gap.to_dict(), indent=2))
    else:
        print(f"Rows of {gap.length_m:g} m tilted {gap.tilt_deg:g}° facing {gap.azimuth_deg:g}° at latitude "
              f"{gap.latitude:g}°:\n"
              f"  clear gap between rows  {gap.gap_m:.2f} m\n"
              f"  pitch (row to row)      {gap.pitch_m:.2f} m\n"
              f"unshaded on the winter solstice from {window[0]:g} to {window[1]:g} h solar time; the longest shadow "
              f"falls at {gap.worst_solar_hour:.2f} h (sun {gap.sun_elevation_deg:.1f}° high).\n"
              "Ballast and roof loads need a structural check.")
    return EXIT_OK


_EPILOG = {
    "simulate": "The step: [simulation] step_s when the scenario sets it; else the weather's own step (hourly for a\n"
                "TMY file), or the finer of weather and load when both are finer than an hour. Loads are averaged\n"
                "and weather interpolated to it; it is never finer than one minute. The output names it.\n\n"
                "example:\n  python -m core simulate sample_sites/maple_hollow/scenario.toml --json",
    "report": "examples:\n  python -m core report sample_sites/maple_hollow/scenario.toml --out maple.html\n"
              "  python -m core report sample_sites/maple_hollow/scenario.toml --option dc --out maple.html "
              "--csv maple_steps.csv",
    "inspect-load": "example:\n  python -m core inspect-load meter.csv --timezone Europe/Berlin --json",
    "compare": "example:\n  python -m core compare sample_sites/maple_hollow/scenario.toml --count 4 --tilt 20 "
               "--azimuth 255 --json",
    "design": "example:\n  python -m core design sample_sites/maple_hollow/scenario.toml --top 5 --write-best designs/",
    "check": "example:\n  python -m core check sample_sites/maple_hollow/scenario.toml",
    "spacing": "example:\n  python -m core spacing --latitude 41 --tilt 10 --length 1.7 --window 10-14 --json",
    "calibrate": "example:\n  python -m core calibrate sample_sites/maple_hollow/scenario.toml --write calibrated.toml",
    "resolution": "example:\n  python -m core resolution sample_sites/maple_hollow/scenario.toml --option ac_backed_up",
}


def build_parser() -> argparse.ArgumentParser:
    parser = _Parser(prog="python -m core", description="secondroof: year-long what-if simulation of adding "
                     "AC- or DC-coupled panels to a zero-export hybrid PV system.",
                     epilog="example:\n  python -m core simulate sample_sites/maple_hollow/scenario.toml",
                     formatter_class=argparse.RawDescriptionHelpFormatter)
    sub = parser.add_subparsers(dest="command", required=True, parser_class=_Parser)

    def add(name: str, helptext: str, func) -> argparse.ArgumentParser:
        p = sub.add_parser(name, help=helptext, description=helptext, epilog=_EPILOG.get(name),
                           formatter_class=argparse.RawDescriptionHelpFormatter)
        p.set_defaults(func=func)
        return p

    p = add("simulate", "simulate a scenario's year and print its energy balance", _cmd_simulate)
    p.add_argument("scenario", help="scenario file (TOML)")
    p.add_argument("--json", action="store_true", help="print one JSON object")
    p.add_argument("--steps-csv", metavar="PATH", help="write the step-by-step results as CSV")
    p.add_argument("--draws", type=int, metavar="N",
                   help="independent random-outage years for the outage statistics (default: the scenario's "
                        "grid.random_outages.draws; 0 skips them)")

    p = add("report", "write the standalone HTML report (and the step-by-step CSV) of one option against the "
            "existing system", _cmd_report)
    p.add_argument("scenario", help="scenario file (TOML)")
    p.add_argument("--out", required=True, metavar="FILE", help="the report, FILE.html (or FILE.csv for the "
                   "step-by-step results only)")
    p.add_argument("--csv", metavar="FILE", help="also write the step-by-step results as CSV")
    p.add_argument("--option", choices=["baseline", "ac_backed_up", "ac_grid", "dc"],
                   help="the option to report (default: the scenario's [expansion] coupling, else the first one)")
    p.add_argument("--count", type=int, help="panels added (default: the scenario's)")
    p.add_argument("--tilt", type=float, help="tilt of the new panels, degrees")
    p.add_argument("--azimuth", type=float, help="azimuth of the new panels, degrees (180 = south)")

    p = add("inspect-load", "explain what the importer makes of a measured load file", _cmd_inspect_load)
    p.add_argument("file", help="load CSV")
    p.add_argument("--timezone", help="IANA time zone of naive timestamps, e.g. Europe/Berlin")
    p.add_argument("--unit", help="W, kW, Wh, kWh or kWh_register (default: decided from the file)")
    p.add_argument("--column", help="the column to read (default: found by header)")
    p.add_argument("--json", action="store_true", help="print one JSON object")

    p = add("compare", "compare the existing system with the expansion AC-coupled (either side) and DC-coupled",
            _cmd_compare)
    p.add_argument("scenario", help="scenario file (TOML) with an [expansion] section")
    p.add_argument("--count", type=int, help="number of new panels (default: the scenario's)")
    p.add_argument("--tilt", type=float, help="tilt of the new panels, degrees (default: the scenario's)")
    p.add_argument("--azimuth", type=float, help="azimuth of the new panels, degrees, 180 = south (default: the "
                   "scenario's)")
    p.add_argument("--export-control", metavar="MODE",
                   help="how AC-coupled output is held back, e.g. none or limiter (default: the scenario's "
                        "grid.ac_export_control)")
    p.add_argument("--draws", type=int, metavar="N", help="random-outage years per option for the outage spread "
                   "(default: the scenario's grid.random_outages.draws; 0 skips it)")
    p.add_argument("--json", action="store_true", help="print one JSON object")

    p = add("design", "search every DC and AC arrangement the roof faces allow; rank the valid ones by NPV",
            _cmd_design)
    p.add_argument("scenario", help="scenario file (TOML) with [design] and [[faces]], or an [expansion]")
    p.add_argument("--top", type=int, help="show the N best valid designs (default: 10; in JSON all designs)")
    p.add_argument("--write-best", metavar="DIR", help="write the best designs as scenario files into DIR")
    p.add_argument("--json", action="store_true", help="print one JSON object")

    p = add("check", "design checks with cautions for the existing system and each expansion option", _cmd_check)
    p.add_argument("scenario", help="scenario file (TOML)")
    p.add_argument("--json", action="store_true", help="print a JSON list of checks")

    p = add("resolution", "what an hourly model hides: the same option at the load's own step and hourly",
            _cmd_resolution)
    p.add_argument("scenario", help="scenario file (TOML)")
    p.add_argument("--option", choices=["ac_backed_up", "ac_grid", "dc"],
                   help="the option to look at (default: the first AC-coupled one)")
    p.add_argument("--count", type=int, help="panels added (default: the scenario's)")
    p.add_argument("--tilt", type=float, help="tilt of the new panels, degrees")
    p.add_argument("--azimuth", type=float, help="azimuth of the new panels, degrees (180 = south)")
    p.add_argument("--json", action="store_true", help="print one JSON object")

    p = add("spacing", "clear gap between tilted rows for no shading on the winter solstice", _cmd_spacing)
    p.add_argument("--latitude", type=float, required=True, help="degrees north (negative south)")
    p.add_argument("--tilt", type=float, required=True, help="row tilt, degrees from horizontal")
    p.add_argument("--length", type=float, required=True, help="row slant length up the tilt, m (e.g. 1.7)")
    p.add_argument("--azimuth", type=float, help="way the rows face, degrees (default: towards the equator)")
    p.add_argument("--window", default="10-14", help="design window in solar hours (default 10-14)")
    p.add_argument("--json", action="store_true", help="print one JSON object (gap_m, pitch_m, …)")

    p = add("calibrate", "fit the existing arrays' losses, the standing draw and the base load to the monitoring "
            "export named in [measured]", _cmd_calibrate)
    p.add_argument("scenario", help="scenario file (TOML) with a [measured] section")
    p.add_argument("--json", action="store_true", help="print one JSON object")
    p.add_argument("--write", metavar="PATH", help="write the calibrated scenario (a copy) to PATH")

    return parser


def _one_line(text: str) -> str:
    """Messages quote file contents and library errors; newlines in them would break the one-line promise."""
    return " ".join(str(text).split())


def main(argv: Sequence[str] | None = None) -> int:
    args = None
    previous = catch_termination()
    try:
        if sys.stdout is None:  # started with stdout closed: nothing could be shown, so nothing is done
            if sys.stderr is not None:
                print("error: standard output is closed; nothing can be printed (run the command with an output "
                      "or redirect it to a file)", file=sys.stderr)
            return EXIT_BAD_INPUT
        args = build_parser().parse_args(argv)
        code = args.func(args)
        sys.stdout.flush()  # a full device is found here, not at exit where it would go unreported
        return code
    except InputError as exc:
        scenario = getattr(args, "scenario", None)
        if exc.file is None and scenario and exc.where and exc.where != "command line":
            # A key of the scenario found wrong while simulating (e.g. a monthly figure the sky cannot give).
            exc = InputError(exc.message, file=scenario, where=exc.where, hint=exc.hint)
        print(_one_line(f"error: {exc}"), file=sys.stderr)
        return EXIT_BAD_INPUT
    except (KeyboardInterrupt, Terminated):
        print("interrupted", file=sys.stderr)
        return EXIT_INTERNAL
    except BrokenPipeError:
        return EXIT_OK
    except OSError as exc:
        if exc.errno not in DEVICE_ERRNOS:
            print(_one_line(f"internal error: {type(exc).__name__}: {exc} (please report this with the input that "
                            "caused it)"), file=sys.stderr)
            return EXIT_INTERNAL
        print(_one_line(f"error: cannot write the output: {exc.strerror or exc} (the output device or disk; free "
                        "some space or write elsewhere)"), file=sys.stderr)
        quiet_stdout()
        return EXIT_BAD_INPUT
    except Exception as exc:  # an internal error: say so in one line, never a traceback
        print(_one_line(f"internal error: {type(exc).__name__}: {exc} (please report this with the input that "
                        "caused it)"), file=sys.stderr)
        return EXIT_INTERNAL
    finally:
        restore_handlers(previous)


if __name__ == "__main__":
    sys.exit(main())
