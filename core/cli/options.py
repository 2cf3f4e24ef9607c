"""Subcommands that weigh the expansion: ``compare``, ``design``, ``check``, ``resolution`` and ``spacing``."""

from __future__ import annotations

import dataclasses
import json
import sys

from core.cli.common import EXIT_OK, layout_from_args, stderr_progress
from core.cli_io import report_warnings, site_warnings
from core.errors import InputError


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


def cmd_compare(args) -> int:
    from core.analyses.compare import compare
    from core.scenario import load_scenario

    sc = load_scenario(args.scenario)
    expansion = sc.expansion
    if expansion is None:
        raise InputError("the scenario has no [expansion] section", file=args.scenario, where="expansion",
                         hint="add [expansion] with module, count, tilt_deg, azimuth_deg and a microinverter "
                              "and/or a controller")
    layout = layout_from_args(sc, args)
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
        note = None if "dc" not in out["options"] else (
            restring_note(sc, layout.count) if expansion.restring else dc_layout_note(layout.count,
                                                                                     expansion.modules_per_string))
        if note:
            print(note + "\n")
        print(format_comparison(out))
    return EXIT_OK


def cmd_design(args) -> int:
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


def cmd_check(args) -> int:
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
    from core.analyses.options import OPTIONS, Option

    print(f"{sc.name}: design checks\n")
    marks = {"pass": "ok  ", "warn": "WARN", "fail": "FAIL"}
    current = None
    for c in checks:
        if c.option != current:
            current = c.option
            print(f"-- {Option(c.option).label if c.option in OPTIONS else c.option}" + (" (what the expansion changes)"
                                                                  if c.option != "baseline" else ""))
        print(f"[{marks[c.status]}] {c.id}: {c.sentence}\n        source: {c.source}")
    cautions = list(dict.fromkeys(c.caution for c in checks if c.caution and c.status != "pass"))
    print("\nCautions:")
    for text in [*cautions, CAUTION_ESTIMATE]:
        print(f"  - {text}")
    return EXIT_OK


def cmd_resolution(args) -> int:
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


def cmd_spacing(args) -> int:
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
