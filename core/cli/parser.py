"""The argument parser: every subcommand, its options and an example."""

from __future__ import annotations

import argparse

from core.cli.common import Parser
from core.cli.options import cmd_check, cmd_compare, cmd_design, cmd_resolution, cmd_spacing
from core.cli.year import cmd_calibrate, cmd_inspect_load, cmd_report, cmd_simulate

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
    parser = Parser(prog="python -m core", description="secondroof: year-long what-if simulation of adding "
                     "AC- or DC-coupled panels to a zero-export hybrid PV system.",
                     epilog="example:\n  python -m core simulate sample_sites/maple_hollow/scenario.toml",
                     formatter_class=argparse.RawDescriptionHelpFormatter)
    sub = parser.add_subparsers(dest="command", required=True, parser_class=Parser)

    def add(name: str, helptext: str, func) -> argparse.ArgumentParser:
        p = sub.add_parser(name, help=helptext, description=helptext, epilog=_EPILOG.get(name),
                           formatter_class=argparse.RawDescriptionHelpFormatter)
        p.set_defaults(func=func)
        return p

    p = add("simulate", "simulate a scenario's year and print its energy balance", cmd_simulate)
    p.add_argument("scenario", help="scenario file (TOML)")
    p.add_argument("--json", action="store_true", help="print one JSON object")
    p.add_argument("--steps-csv", metavar="PATH", help="write the step-by-step results as CSV")
    p.add_argument("--draws", type=int, metavar="N",
                   help="independent random-outage years for the outage statistics (default: the scenario's "
                        "grid.random_outages.draws; 0 skips them)")

    p = add("report", "write the standalone HTML report (and the step-by-step CSV) of one option against the "
            "existing system", cmd_report)
    p.add_argument("scenario", help="scenario file (TOML)")
    p.add_argument("--out", required=True, metavar="FILE", help="the report, FILE.html (or FILE.csv for the "
                   "step-by-step results only)")
    p.add_argument("--csv", metavar="FILE", help="also write the step-by-step results as CSV")
    p.add_argument("--option", choices=["baseline", "ac_backed_up", "ac_grid", "dc"],
                   help="the option to report (default: the scenario's [expansion] coupling, else the first one)")
    p.add_argument("--count", type=int, help="panels added (default: the scenario's)")
    p.add_argument("--tilt", type=float, help="tilt of the new panels, degrees")
    p.add_argument("--azimuth", type=float, help="azimuth of the new panels, degrees (180 = south)")

    p = add("inspect-load", "explain what the importer makes of a measured load file", cmd_inspect_load)
    p.add_argument("file", help="load CSV")
    p.add_argument("--timezone", help="IANA time zone of naive timestamps, e.g. Europe/Berlin")
    p.add_argument("--unit", help="W, kW, Wh, kWh or kWh_register (default: decided from the file)")
    p.add_argument("--column", help="the column to read (default: found by header)")
    p.add_argument("--json", action="store_true", help="print one JSON object")

    p = add("compare", "compare the existing system with the expansion AC-coupled (either side) and DC-coupled",
            cmd_compare)
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
            cmd_design)
    p.add_argument("scenario", help="scenario file (TOML) with [design] and [[faces]], or an [expansion]")
    p.add_argument("--top", type=int, help="show the N best valid designs (default: 10; in JSON all designs)")
    p.add_argument("--write-best", metavar="DIR", help="write the best designs as scenario files into DIR")
    p.add_argument("--json", action="store_true", help="print one JSON object")

    p = add("check", "design checks with cautions for the existing system and each expansion option", cmd_check)
    p.add_argument("scenario", help="scenario file (TOML)")
    p.add_argument("--json", action="store_true", help="print a JSON list of checks")

    p = add("resolution", "what an hourly model hides: the same option at the load's own step and hourly",
            cmd_resolution)
    p.add_argument("scenario", help="scenario file (TOML)")
    p.add_argument("--option", choices=["ac_backed_up", "ac_grid", "dc"],
                   help="the option to look at (default: the first AC-coupled one)")
    p.add_argument("--count", type=int, help="panels added (default: the scenario's)")
    p.add_argument("--tilt", type=float, help="tilt of the new panels, degrees")
    p.add_argument("--azimuth", type=float, help="azimuth of the new panels, degrees (180 = south)")
    p.add_argument("--json", action="store_true", help="print one JSON object")

    p = add("spacing", "clear gap between tilted rows for no shading on the winter solstice", cmd_spacing)
    p.add_argument("--latitude", type=float, required=True, help="degrees north (negative south)")
    p.add_argument("--tilt", type=float, required=True, help="row tilt, degrees from horizontal")
    p.add_argument("--length", type=float, required=True, help="row slant length up the tilt, m (e.g. 1.7)")
    p.add_argument("--azimuth", type=float, help="way the rows face, degrees (default: towards the equator)")
    p.add_argument("--window", default="10-14", help="design window in solar hours (default 10-14)")
    p.add_argument("--json", action="store_true", help="print one JSON object (gap_m, pitch_m, …)")

    p = add("calibrate", "fit the existing arrays' losses, the standing draw and the base load to the monitoring "
            "export named in [measured]", cmd_calibrate)
    p.add_argument("scenario", help="scenario file (TOML) with a [measured] section")
    p.add_argument("--json", action="store_true", help="print one JSON object")
    p.add_argument("--write", metavar="PATH", help="write the calibrated scenario (a copy) to PATH")

    return parser
