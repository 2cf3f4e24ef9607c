"""Work the benchmark runs in a fresh process, so that its time or its memory is its own.

``python tests/bench/bench_child.py compile``
    first calls of the compiled engine (one variant, then the parallel batch): with an empty
    ``NUMBA_CACHE_DIR`` this is numba's compile, with a filled one the load from the disk cache.
``python tests/bench/bench_child.py year STEP_S SCENARIO``
    one year of the scenario's AC-coupled expansion at ``STEP_S`` from nothing (site, orientations,
    engine, figures), with the peak resident memory of the process (``VmHWM``, else ``ru_maxrss``).
``python tests/bench/bench_child.py profile slider|minute SCENARIO``
    cProfile of the explorer's page update on a count change, or of the one-minute year (docs/performance.md).

The first two print one JSON line on stdout.
"""

from __future__ import annotations

import json
import resource
import sys
import time


def _rss_peak_mb() -> float:
    """Peak resident memory of this process, MB.

    Linux's ``VmHWM`` belongs to the address space made at exec, so it is this run's own; ``ru_maxrss`` can carry
    the parent's peak over a vfork + exec (as Python's subprocess does), so it is only the fallback elsewhere.
    """
    try:
        with open("/proc/self/status") as f:
            for line in f:
                if line.startswith("VmHWM:"):
                    return int(line.split()[1]) / 1024.0  # kB
    except OSError:
        pass
    scale = 1024.0 * 1024.0 if sys.platform == "darwin" else 1024.0  # bytes on macOS, KiB on Linux
    return resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / scale


def _tiny_case(n: int = 48):
    import numpy as np

    from core.model.conversion import inverter_curve
    from core.model.dispatch import DispatchInputs, DispatchParams

    rng = np.random.default_rng(0)
    curve = inverter_curve(3000.0, 0.93)
    params = DispatchParams(
        dt_h=1.0, usable_wh=5000.0, initial_wh=2500.0, reserve_wh=1000.0, floor_wh=250.0, charge_max_w=3000.0,
        discharge_max_w=3000.0, roundtrip_efficiency=0.9, inverter_ac_w=curve.ac_w, inverter_dc_w=curve.dc_w,
        charger_rating_w=2000.0, charger_efficiency=0.93, idle_w=20.0, standing_draw_w=30.0, metering_site=True,
        export_allowed=False, export_limit_w=0.0, limiter=False, recharge_reserve_from_grid=True)
    a = {k: rng.uniform(0.0, 1000.0, n) for k in ("lb", "lg", "dc", "acb", "acg")}
    inputs = DispatchInputs(load_backed_w=a["lb"], load_grid_only_w=a["lg"], dc_out_w=a["dc"], dc_loss_w=a["dc"] * 0.03,
                            ac_backed_out_w=a["acb"], ac_backed_loss_w=a["acb"] * 0.04, ac_grid_out_w=a["acg"],
                            ac_grid_loss_w=a["acg"] * 0.04, grid_up=np.ones(n, dtype=bool))
    return inputs, params


def warm_engine() -> None:
    """Call both compiled entry points once (compile or load from the disk cache)."""
    import numpy as np

    from core.model.dispatch import dispatch, dispatch_many

    inputs, params = _tiny_case()
    dispatch(inputs, params)
    sources = {k: np.stack([getattr(inputs, k)] * 2) for k in (
        "dc_out_w", "dc_loss_w", "ac_backed_out_w", "ac_backed_loss_w", "ac_grid_out_w", "ac_grid_loss_w")}
    dispatch_many(inputs.load_backed_w, inputs.load_grid_only_w, inputs.grid_up, sources, params)


def first_calls() -> dict:
    t = time.perf_counter()
    import numpy as np

    from core.model.dispatch import dispatch, dispatch_many
    t_import = time.perf_counter() - t
    inputs, params = _tiny_case()
    t = time.perf_counter()
    dispatch(inputs, params)
    t_one = time.perf_counter() - t
    sources = {k: np.stack([getattr(inputs, k)] * 2) for k in (
        "dc_out_w", "dc_loss_w", "ac_backed_out_w", "ac_backed_loss_w", "ac_grid_out_w", "ac_grid_loss_w")}
    t = time.perf_counter()
    dispatch_many(inputs.load_backed_w, inputs.load_grid_only_w, inputs.grid_up, sources, params)
    t_many = time.perf_counter() - t
    return {"import_s": t_import, "dispatch_s": t_one, "dispatch_many_s": t_many}


def year(step_s: int, scenario_path: str) -> dict:
    import dataclasses

    from core.analyses.options import with_option
    from core.scenario import load_scenario
    from core.simulate import OrientationCache, prepare_site, simulate

    warm_engine()
    sc = load_scenario(scenario_path)
    sc = dataclasses.replace(sc, simulation=dataclasses.replace(sc.simulation, step_s=step_s))
    option = with_option(sc, "ac_backed_up")
    before = _rss_peak_mb()
    t = time.perf_counter()
    site = prepare_site(option)
    t_site = time.perf_counter() - t
    sim = simulate(option, site, OrientationCache())
    seconds = time.perf_counter() - t
    return {"step_s": step_s, "steps": len(sim.steps), "seconds": seconds, "site_s": t_site,
            "rss_before_mb": before, "peak_mb": _rss_peak_mb(),
            "balance_error_kwh": sim.results.energy_kwh["balance_error"]}


def page_update(sc, count: int, site, cache, option: str = "ac_backed_up"):
    """What ``core`` does for the explorer's page when the panel-count slider moves (the page's own caches
    keep the site and the orientations): every option side by side with their design checks, the page model
    and the figures and tables the views draw (those of every tab, though the page draws only the shown one)."""
    import dataclasses

    from core.analyses.compare import compare
    from core.analyses.options import Layout
    from core.present.figures import ac_surplus_duration, outage_events, surplus_by_month_hour, typical_day
    from explorer.page_model import build_page_model

    e = sc.expansion
    layout = Layout(count, e.tilt_deg, e.azimuth_deg)
    comparison = compare(sc, layout, site=site, cache=cache)
    model = build_page_model(dataclasses.replace(sc, expansion=dataclasses.replace(e, count=count)), option,
                             comparison)
    sim = model.sim
    usable_wh = sc.battery.usable_kwh * 1000.0 if sc.battery else 0.0
    typical_day(sim.steps, 6, usable_wh=usable_wh)
    surplus_by_month_hour(sim.steps)
    ac_surplus_duration(sim.steps, site.daylight, site.dt_h)
    outage_events(sim.steps, site.dt_h, usable_wh)
    return comparison


def profile(what: str, scenario_path: str, top: int = 25) -> str:
    """cProfile of the slider's page update (warm caches) or of the one-minute year, heaviest first."""
    import cProfile
    import dataclasses
    import io
    import pstats

    from core.analyses.options import with_option
    from core.scenario import load_scenario
    from core.simulate import OrientationCache, prepare_site, simulate

    warm_engine()
    sc = load_scenario(scenario_path)
    prof = cProfile.Profile()
    if what == "slider":
        site, cache = prepare_site(sc), OrientationCache()
        page_update(sc, sc.expansion.count, site, cache)
        prof.enable()
        for count in range(1, 11):
            page_update(sc, count, site, cache)
        prof.disable()
    elif what == "minute":
        sc = dataclasses.replace(sc, simulation=dataclasses.replace(sc.simulation, step_s=60))
        option = with_option(sc, "ac_backed_up")
        prof.enable()
        simulate(option)
        prof.disable()
    else:
        raise SystemExit(f"profile what? 'slider' or 'minute', not {what!r}")
    text = io.StringIO()
    pstats.Stats(prof, stream=text).sort_stats("cumulative").print_stats(top)
    return text.getvalue()


def write_big_load(path: str, years: int = 10) -> dict:
    """Write ``years`` of one-minute mean power (our own daily shape with gamma noise, seeded) as a plain CSV."""
    import numpy as np
    import pandas as pd

    index = pd.date_range("2015-01-01", periods=years * 365 * 1440, freq="min")
    rng = np.random.default_rng(1)  # random-number seed
    power = 300 + 200 * np.sin(np.arange(len(index)) * 2 * np.pi / 1440) ** 2 + rng.gamma(2.0, 60.0, len(index))
    with open(path, "w", encoding="utf-8") as fh:
        fh.write("timestamp,power_w\n")
        pd.DataFrame({"t": index.strftime("%Y-%m-%d %H:%M"), "w": np.round(power, 1)}).to_csv(
            fh, header=False, index=False)
    return {"rows": len(index), "mean_w": float(np.round(power, 1).mean())}


def big_load(path: str) -> dict:
    """Read a big load file from nothing in this fresh process: seconds and peak memory."""
    from core.model.loads import read_load_csv

    before = _rss_peak_mb()
    t = time.perf_counter()
    measured = read_load_csv(path, timezone="Europe/Berlin")
    seconds = time.perf_counter() - t
    return {"seconds": seconds, "peak_mb": _rss_peak_mb(), "rss_before_mb": before,
            "cells": int(measured.power_w.size), "mean_w": float(measured.power_w.mean())}


def main(argv: list[str]) -> int:
    if argv[:1] == ["compile"]:
        out = first_calls()
    elif argv[:1] == ["year"] and len(argv) == 3:
        out = year(int(argv[1]), argv[2])
    elif argv[:1] == ["write_big_load"] and len(argv) == 2:
        out = write_big_load(argv[1])
    elif argv[:1] == ["big_load"] and len(argv) == 2:
        out = big_load(argv[1])
    elif argv[:1] == ["profile"] and len(argv) == 3:
        print(profile(argv[1], argv[2]))
        return 0
    else:
        print(__doc__, file=sys.stderr)
        return 2
    print(json.dumps(out))
    return 0


if __name__ == "__main__":
    raise SystemExit(main(sys.argv[1:]))
