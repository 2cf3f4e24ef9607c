"""Sweep the expansion: panel count 0…N × tilts × azimuths × coupling, computed together.

Not a loop of full runs: the site (weather, sun, loads) is prepared once, each orientation's module output is
computed once (:class:`core.simulate.OrientationCache`), each variant's converter outputs are a few array
operations, and the variants go through the engine in batches in one compiled call each
(:func:`core.model.dispatch.dispatch_many`). Each variant is reduced at once to a row of figures, so memory stays
bounded at any time step. The result is a tidy table for heatmaps (one row per option × tilt × azimuth × count).
"""

from __future__ import annotations

from collections.abc import Callable, Iterable, Sequence

import numpy as np
import pandas as pd

from core.analyses.options import Layout, applicable_options, layout_of, with_option
from core.model import dispatch
from core.scenario import Scenario
from core.simulate import (
    OrientationCache,
    SiteData,
    SourcePower,
    charge_window,
    dispatch_params,
    prepare_site,
    source_power,
)

#: Columns of the sweep table, in order. Energies in kWh a year; shares 0…1 of the new panels' module energy.
COLUMNS = (
    "option", "count", "tilt_deg", "azimuth_deg", "expansion_potential_kwh", "to_loads_added_kwh",
    "grid_import_saved_kwh", "self_consumed_added_kwh", "harvested_added_kwh", "curtailed_added_kwh",
    "clipped_added_kwh", "curtailed_share", "clipped_share", "uncontrolled_export_kwh", "uncontrolled_export_hours",
    "unserved_added_kwh", "battery_discharge_added_kwh",
)
#: Bytes of engine output and inputs per batch (the engine's flows are 27 rows per step and variant). One
#: buffer of this size is made per sweep and reused batch after batch (docs/performance.md).
DEFAULT_BATCH_BYTES = 64e6
_SOURCE_KEYS = ("dc_out_w", "dc_loss_w", "ac_backed_out_w", "ac_backed_loss_w", "ac_grid_out_w", "ac_grid_loss_w")
_F = {name: i for i, name in enumerate(dispatch.FLOWS)}


def _source_rows(s: SourcePower) -> dict[str, np.ndarray]:
    return {"dc_out_w": s.dc.out_w, "dc_loss_w": s.dc.loss_w, "ac_backed_out_w": s.ac_backed.out_w,
            "ac_backed_loss_w": s.ac_backed.loss_w, "ac_grid_out_w": s.ac_grid.out_w,
            "ac_grid_loss_w": s.ac_grid.loss_w}


def _figures(flows: np.ndarray, s: SourcePower, dt_h: float) -> dict[str, float]:
    """Year totals (kWh) and hours of one variant from its engine flows and source powers (as core.model.metrics)."""
    k = dt_h / 1000.0
    curtailed = flows[_F["curtailed_dc_w"]] + flows[_F["curtailed_acb_w"]] + flows[_F["curtailed_acg_w"]]
    potential = float((s.potential_dc_w + s.potential_ac_w).sum() * k)
    clipped = float((s.clipped_dc_w + s.clipped_ac_w).sum() * k)
    exported = float((flows[_F["export_allowed_w"]] + flows[_F["export_uncontrolled_w"]]).sum() * k)
    uncontrolled = flows[_F["export_uncontrolled_w"]]
    harvested = potential - float(curtailed.sum() * k) - clipped
    expansion = s.per_array_dc_w.get("expansion")
    return {
        "potential": potential, "clipped": clipped, "curtailed": float(curtailed.sum() * k), "harvested": harvested,
        "exported": exported, "grid_import": float(flows[_F["grid_import_w"]].sum() * k),
        "unserved": float(flows[_F["unserved_w"]].sum() * k),
        "battery_discharge": float(flows[_F["battery_discharge_w"]].sum() * k),
        "uncontrolled": float(uncontrolled.sum() * k), "uncontrolled_hours": float((uncontrolled > 1e-6).sum() * dt_h),
        "expansion_potential": 0.0 if expansion is None else float(np.sum(expansion) * k),
    }


def _row(option: str, layout: Layout, f: dict[str, float], base: dict[str, float]) -> dict:
    pot = f["expansion_potential"]
    curtailed = f["curtailed"] - base["curtailed"]
    clipped = f["clipped"] - base["clipped"]
    saved = base["grid_import"] - f["grid_import"]
    return {
        "option": option, "count": layout.count, "tilt_deg": layout.tilt_deg, "azimuth_deg": layout.azimuth_deg,
        "expansion_potential_kwh": pot, "to_loads_added_kwh": saved + base["unserved"] - f["unserved"],
        "grid_import_saved_kwh": saved,
        "self_consumed_added_kwh": (f["harvested"] - f["exported"]) - (base["harvested"] - base["exported"]),
        "harvested_added_kwh": f["harvested"] - base["harvested"], "curtailed_added_kwh": curtailed,
        "clipped_added_kwh": clipped, "curtailed_share": curtailed / pot if pot > 0 else 0.0,
        "clipped_share": clipped / pot if pot > 0 else 0.0, "uncontrolled_export_kwh": f["uncontrolled"],
        "uncontrolled_export_hours": f["uncontrolled_hours"], "unserved_added_kwh": f["unserved"] - base["unserved"],
        "battery_discharge_added_kwh": f["battery_discharge"] - base["battery_discharge"],
    }


def sweep(sc: Scenario, *, counts: Iterable[int] | None = None, tilts: Sequence[float] | None = None,
          azimuths: Sequence[float] | None = None, options: Sequence[str] | None = None,
          site: SiteData | None = None, cache: OrientationCache | None = None,
          progress: Callable[[float, str], None] | None = None,
          batch_bytes: float = DEFAULT_BATCH_BYTES) -> pd.DataFrame:
    """Every combination of count × tilt × azimuth × option, as a table (see :data:`COLUMNS`).

    Defaults: counts 0 … twice the ``[expansion]`` count (at least 0 … 4), the expansion's tilt and azimuth,
    and every applicable option other than the baseline. Count 0 is the existing system (all deltas zero).
    ``progress(fraction, message)`` is called after each batch.
    """
    lay = layout_of(sc)
    counts = sorted({int(c) for c in (range(0, max(2 * lay.count, 4) + 1) if counts is None else counts)})
    if any(c < 0 for c in counts):
        from core.errors import InputError

        raise InputError("panel counts must be 0 or more", where="counts", hint="e.g. 0 to 8")
    tilts = [float(t) for t in (tilts if tilts is not None else [lay.tilt_deg])]
    azimuths = [float(a) for a in (azimuths if azimuths is not None else [lay.azimuth_deg])]
    available = [o for o in applicable_options(sc) if o != "baseline"]
    options = [o for o in (options if options is not None else available) if o in available]
    site = site or prepare_site(sc)
    cache = cache if cache is not None else OrientationCache()
    params = dispatch_params(sc, site.dt_h)
    window = charge_window(sc, site)
    n = len(site.index)
    per_variant = (len(dispatch.FLOWS) + len(_SOURCE_KEYS)) * n * 8
    batch = max(1, int(batch_bytes // per_variant))
    # Buffers made once and reused by every batch (filled in place, no stacking, no fresh pages per batch).
    buffers: dict[str, np.ndarray] = {}

    def run(variants: list[tuple[str, Layout, SourcePower]]) -> list[dict[str, float]]:
        k = len(variants)
        if not buffers or buffers["flows"].shape[0] < k:
            size = max(k, min(batch, len(plan) or 1))
            buffers.update({key: np.empty((size, n)) for key in _SOURCE_KEYS},
                           flows=np.empty((size, len(dispatch.FLOWS), n)))
        for i, (_, _, s) in enumerate(variants):
            for key, row in _source_rows(s).items():
                buffers[key][i] = row
        flows = dispatch.dispatch_many(site.load_backed_w, site.load_grid_only_w, site.grid_up,
                                       {key: buffers[key][:k] for key in _SOURCE_KEYS}, params,
                                       out=buffers["flows"][:k], charge_window=window)
        return [_figures(flows[i], s, site.dt_h) for i, (_, _, s) in enumerate(variants)]

    plan = [(o, Layout(c, t, a)) for o in options for t in tilts for a in azimuths for c in counts]
    base = run([("baseline", Layout(0, 0.0, 0.0), source_power(sc, site, cache))])[0]
    rows: list[dict] = []
    pending: list[tuple[str, Layout, SourcePower]] = []
    done = 0

    def flush() -> None:
        nonlocal done
        for (option, layout, _), f in zip(pending, run(pending), strict=True):
            rows.append(_row(option, layout, f, base))
        done += len(pending)
        pending.clear()
        if progress:
            progress(done / max(len(plan), 1), f"{done} of {len(plan)} variants")

    for option, layout in plan:
        if layout.count == 0:
            rows.append(_row(option, layout, base, base))
            done += 1
            continue
        pending.append((option, layout, source_power(with_option(sc, option, layout), site, cache)))
        if len(pending) >= batch:
            flush()
    if pending:
        flush()
    if progress:
        progress(1.0, "sweep done")
    # Column by column: building from a list of row dicts goes through object arrays and is slower.
    table = (pd.DataFrame({c: [r[c] for r in rows] for c in COLUMNS}, columns=list(COLUMNS)) if rows
             else pd.DataFrame(rows, columns=list(COLUMNS)))
    return table.sort_values(["option", "tilt_deg", "azimuth_deg", "count"], kind="stable").reset_index(drop=True)
