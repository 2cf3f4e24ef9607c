"""The command line: ``python -m core SUBCOMMAND …`` (also installed as ``secondroof``).

Exit codes: 0 ok, 2 bad input (one line on stderr naming the place), 1 internal error.
"""

from __future__ import annotations

import argparse
import json
import sys
from collections.abc import Callable, Sequence
from pathlib import Path

from core.errors import InputError

EXIT_OK, EXIT_INTERNAL, EXIT_BAD_INPUT = 0, 1, 2


class _Parser(argparse.ArgumentParser):
    """argparse that reports usage errors as bad input (exit 2, one line) instead of printing usage."""

    def error(self, message: str):  # noqa: D401 - argparse's signature
        raise InputError(message, where="command line", hint=f"see '{self.prog} --help'")


def stderr_progress(label: str) -> Callable[[float, str], None]:
    """A progress line on stderr for long work; silent when stderr is not a terminal and work is short."""
    def report(fraction: float, what: str) -> None:
        bar = "#" * int(fraction * 30)
        sys.stderr.write(f"\r{label}: [{bar:<30}] {fraction * 100:3.0f}% {what:<24}")
        if fraction >= 1.0:
            sys.stderr.write("\n")
        sys.stderr.flush()
    return report


# ------------------------------------------------------------------------------------------- formatting
def format_year_table(result: dict) -> str:
    """A readable table of the year's figures (kWh without decimals, ratios as % with one decimal)."""
    e = result["energy_kwh"]
    rows = [
        ("Load", e["load"]), ("  served", e["load_served"]), ("  unserved", e["unserved"]),
        ("PV potential (module DC)", e["pv_potential"]), ("  DC-coupled arrays", e["pv_potential_dc"]),
        ("  AC-coupled arrays", e["pv_potential_ac"]), ("Harvested", e["harvested"]),
        ("Curtailed", e["curtailed"]), ("  DC-coupled", e["curtailed_dc"]), ("  AC-coupled", e["curtailed_ac"]),
        ("Clipped", e["clipped"]), ("Exported", e["exported"]), ("  uncontrolled", e["exported_uncontrolled"]),
        ("Grid import", e["grid_import"]), ("  standing draw", e["grid_import_standing"]),
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
              f"Hours: export {h['export']:.0f} h (uncontrolled {h['export_uncontrolled']:.0f} h), "
              f"outage {h['outage']:.0f} h, unserved {h['unserved']:.0f} h",
              f"Battery: {result['battery']['equivalent_full_cycles']:.0f} equivalent full cycles",
              f"Weather: GHI {result['weather']['ghi_kwh_m2']:.0f} kWh/m² ({result['weather']['source']})"]
    return "\n".join(lines)


# ------------------------------------------------------------------------------------------- subcommands
def _cmd_simulate(args) -> int:
    from core.scenario import load_scenario
    from core.simulate import simulate

    sc = load_scenario(args.scenario)
    progress = stderr_progress("simulate") if sys.stderr.isatty() else None
    sim = simulate(sc, progress=progress)
    out = sim.results.to_dict()
    if args.steps_csv:
        from core.report import write_steps_csv

        write_steps_csv(sim, args.steps_csv, inputs=[Path(args.scenario)])
    if args.json:
        print(json.dumps({"name": sc.name, **out}, indent=2))
    else:
        print(f"{sc.name}\n")
        print(format_year_table(out))
    return EXIT_OK


def _cmd_inspect_load(args) -> int:
    from core.loads import inspect_load_summary

    summary = inspect_load_summary(args.file, timezone=args.timezone, unit=args.unit, column=args.column)
    if args.json:
        print(json.dumps(summary, indent=2, default=str))
    else:
        for key, value in summary.items():
            print(f"{key:>16}: {value}")
    return EXIT_OK


_EPILOG = {
    "simulate": "example:\n  python -m core simulate sample_sites/maple_hollow/scenario.toml --json",
    "inspect-load": "example:\n  python -m core inspect-load meter.csv --timezone Europe/Berlin --json",
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

    p = add("inspect-load", "explain what the importer makes of a measured load file", _cmd_inspect_load)
    p.add_argument("file", help="load CSV")
    p.add_argument("--timezone", help="IANA time zone of naive timestamps, e.g. Europe/Berlin")
    p.add_argument("--unit", help="W, kW, Wh, kWh or kWh_register (default: decided from the file)")
    p.add_argument("--column", help="the column to read (default: found by header)")
    p.add_argument("--json", action="store_true", help="print one JSON object")

    return parser


def main(argv: Sequence[str] | None = None) -> int:
    try:
        args = build_parser().parse_args(argv)
        return args.func(args)
    except InputError as exc:
        print(f"error: {exc}", file=sys.stderr)
        return EXIT_BAD_INPUT
    except KeyboardInterrupt:
        print("interrupted", file=sys.stderr)
        return EXIT_INTERNAL
    except BrokenPipeError:
        return EXIT_OK
    except Exception as exc:  # an internal error: say so in one line, never a traceback
        print(f"internal error: {type(exc).__name__}: {exc} (please report this with the input that caused it)",
              file=sys.stderr)
        return EXIT_INTERNAL


if __name__ == "__main__":
    sys.exit(main())
