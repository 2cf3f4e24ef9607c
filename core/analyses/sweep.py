"""Sweep the expansion: panel count 0…N × tilts × azimuths × coupling, computed together.

Not a loop of full runs: the site (weather, sun, loads) is prepared once, each orientation's module output is
computed once (:class:`core.simulate.OrientationCache`), each variant's converter outputs are a few array
operations, and the variants go through the engine in batches in one compiled call each
(:func:`core.model.dispatch.dispatch_many`). Each variant is reduced at once to a row of figures, so memory stays
bounded at any time step. The result is a tidy table for heatmaps (one row per option × tilt × azimuth × count).

The figures are those of compare, computed the same way (:func:`core.model.metrics.year_totals` and
:func:`core.model.metrics.delta`); each cell also runs the design checks on its year, carries its validity (the
rule ids it breaks, :mod:`core.analyses.validity`) and its economics. :func:`sweep_summary` points only at cells
that pass.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Iterable, Sequence
from dataclasses import dataclass
from functools import cached_property

import numpy as np
import pandas as pd

from core.analyses.checks import run_checks
from core.analyses.checks import same_check as _same_check
from core.analyses.checks.words import rule_words
from core.analyses.compare import added_modules, option_economics, priced_scenario
from core.analyses.options import (
    EXPANSION_ARRAY,
    OPTION_LABELS,
    Layout,
    Option,
    applicable_options,
    layout_of,
    with_option,
)
from core.analyses.validity import failed_rules
from core.errors import InputError
from core.model import dispatch, metrics
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

#: Columns of the sweep table, in order: where the cell is, the new modules simulated, its difference from the
#: existing system (:data:`core.model.metrics.DELTA_KEYS`: kWh a year unless named otherwise), whether it may be
#: recommended (``valid``; ``failed_checks`` lists the rule ids it breaks, comma-separated, empty when valid) and
#: its economics (``investment`` and ``npv`` in the tariff's currency, ``irr`` 0…1, payback in years; NaN where
#: there is none).
COLUMNS = (
    "option", "count", "tilt_deg", "azimuth_deg", "modules", *metrics.DELTA_KEYS, "valid", "failed_checks",
    "investment", "npv", "irr", "simple_payback_years",
)
#: Bytes of engine output and inputs per batch (the engine's flows are 27 rows per step and variant). One
#: buffer of this size is made per sweep and reused batch after batch (docs/performance.md).
DEFAULT_BATCH_BYTES = 64e6
_SOURCE_KEYS = ("dc_out_w", "dc_loss_w", "ac_backed_out_w", "ac_backed_loss_w", "ac_grid_out_w", "ac_grid_loss_w")


def _source_rows(s: SourcePower) -> dict[str, np.ndarray]:
    return {"dc_out_w": s.dc.out_w, "dc_loss_w": s.dc.loss_w, "ac_backed_out_w": s.ac_backed.out_w,
            "ac_backed_loss_w": s.ac_backed.loss_w, "ac_grid_out_w": s.ac_grid.out_w,
            "ac_grid_loss_w": s.ac_grid.loss_w}


def engine_columns(flows: np.ndarray, s: SourcePower, site: SiteData) -> dict[str, np.ndarray]:
    """The per-step columns :func:`core.model.metrics.year_totals` reads, by name: the engine's flows (named by
    :data:`core.model.dispatch.FLOWS`), the site's loads and the sources' potentials and outputs."""
    columns = dict(zip(dispatch.FLOWS, flows, strict=True))
    columns.update(load_backed_w=site.load_backed_w, load_grid_only_w=site.load_grid_only_w, grid_up=site.grid_up,
                   pv_potential_dc_w=s.potential_dc_w, pv_potential_ac_w=s.potential_ac_w,
                   clipped_dc_w=s.clipped_dc_w, clipped_ac_w=s.clipped_ac_w, ac_backed_out_w=s.ac_backed.out_w,
                   ac_grid_out_w=s.ac_grid.out_w)
    return columns


@dataclass(frozen=True)
class _CellYear:
    """What the design checks read from a simulated year, for one sweep cell (no full per-step table)."""

    scenario: Scenario
    site: SiteData
    sources: SourcePower
    results: metrics.YearTotals

    @cached_property
    def steps(self) -> pd.DataFrame:
        """The per-step columns the checks read (made once per cell, on first use)."""
        site, s = self.site, self.sources
        return pd.DataFrame({"ac_backed_out_w": s.ac_backed.out_w, "ac_grid_out_w": s.ac_grid.out_w,
                             "load_backed_w": site.load_backed_w, "load_grid_only_w": site.load_grid_only_w,
                             "grid_up": site.grid_up}, index=site.index, copy=False)


def _row(sc: Scenario, option: str, layout: Layout, cell: _CellYear | None, base: _CellYear, base_checks: list,
         cache: OrientationCache, with_checks: bool) -> dict:
    """One cell of the table: the option at this layout against the existing system (``cell`` None: count 0)."""
    out = {"option": Option(option).value, "count": layout.count, "tilt_deg": layout.tilt_deg, "azimuth_deg": layout.azimuth_deg}
    if cell is None:  # count 0: the existing system itself
        out.update(modules=0, **metrics.delta(base.results, base.results), valid=True, failed_checks="",
                   investment=0.0, npv=0.0, irr=math.nan, simple_payback_years=math.nan)
        return out
    expansion = cell.sources.per_array_dc_w.get(EXPANSION_ARRAY)
    potential = 0.0 if expansion is None else float(np.sum(expansion) * cell.site.dt_h / 1000.0)
    usable = sc.battery.usable_kwh if sc.battery else 0.0
    d = metrics.delta(base.results, cell.results, expansion_potential_kwh=potential, usable_kwh=usable)
    checks = []
    if with_checks:
        found = run_checks(cell.scenario, cell, cache=cache, option=option)
        checks = [c for c in found if not any(_same_check(c, b) for b in base_checks)]
    rules = failed_rules(checks, d["exported_uncontrolled_kwh"])
    modules = added_modules(cell.scenario, sc)
    e = option_economics(priced_scenario(sc, modules), option, d)
    out.update(modules=modules, **d, valid=not rules, failed_checks=", ".join(rules), investment=e.investment,
               npv=e.npv, irr=math.nan if e.irr is None else e.irr,
               simple_payback_years=math.nan if e.simple_payback_years is None else e.simple_payback_years)
    return out


def sweep(sc: Scenario, *, counts: Iterable[int] | None = None, tilts: Sequence[float] | None = None,
          azimuths: Sequence[float] | None = None, options: Sequence[str] | None = None,
          site: SiteData | None = None, cache: OrientationCache | None = None,
          progress: Callable[[float, str], None] | None = None,
          batch_bytes: float = DEFAULT_BATCH_BYTES, checks: bool = True) -> pd.DataFrame:
    """Every combination of count × tilt × azimuth × option, as a table (see :data:`COLUMNS`).

    Defaults: counts 0 … twice the ``[expansion]`` count (at least 0 … 4), the expansion's tilt and azimuth,
    and every applicable option other than the baseline. Count 0 is the existing system (all deltas zero).
    Each cell runs the design checks on its year, as compare does (``checks=False`` leaves them out: then only
    uncontrolled export makes a cell invalid), and is priced for the modules it simulates.
    ``progress(fraction, message)`` is called after each batch.
    """
    lay = layout_of(sc)
    counts = sorted({int(c) for c in (range(0, max(2 * lay.count, 4) + 1) if counts is None else counts)})
    if any(c < 0 for c in counts):
        raise InputError("panel counts must be 0 or more", where="counts", hint="e.g. 0 to 8")
    tilts = [float(t) for t in (tilts if tilts is not None else [lay.tilt_deg])]
    azimuths = [float(a) for a in (azimuths if azimuths is not None else [lay.azimuth_deg])]
    available = [o for o in applicable_options(sc) if o != Option.BASELINE]
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

    def run(variants: list[tuple[Scenario, SourcePower]]) -> list[_CellYear]:
        k = len(variants)
        if not buffers or buffers["flows"].shape[0] < k:
            size = max(k, min(batch, len(plan) or 1))
            buffers.update({key: np.empty((size, n)) for key in _SOURCE_KEYS},
                           flows=np.empty((size, len(dispatch.FLOWS), n)))
        for i, (_, s) in enumerate(variants):
            for key, row in _source_rows(s).items():
                buffers[key][i] = row
        flows = dispatch.dispatch_many(site.load_backed_w, site.load_grid_only_w, site.grid_up,
                                       {key: buffers[key][:k] for key in _SOURCE_KEYS}, params,
                                       out=buffers["flows"][:k], charge_window=window)
        return [_CellYear(scenario=sc_v, site=site, sources=s,
                          results=metrics.year_totals(engine_columns(flows[i], s, site), dt_h=site.dt_h,
                                                      initial_wh=params.initial_wh))
                for i, (sc_v, s) in enumerate(variants)]

    plan = [(o, Layout(c, t, a)) for o in options for t in tilts for a in azimuths for c in counts]
    base = run([(sc, source_power(sc, site, cache))])[0]
    base_checks = run_checks(sc, base, cache=cache, option=Option.BASELINE) if checks else []
    rows: list[dict] = []
    pending: list[tuple[str, Layout, Scenario, SourcePower]] = []
    done = 0

    def flush() -> None:
        nonlocal done
        cells = run([(sc_v, s) for _, _, sc_v, s in pending])
        for (option, layout, _, _), cell in zip(pending, cells, strict=True):
            rows.append(_row(sc, option, layout, cell, base, base_checks, cache, checks))
        done += len(pending)
        pending.clear()
        if progress:
            progress(done / max(len(plan), 1), f"{done} of {len(plan)} variants")

    for option, layout in plan:
        if layout.count == 0:
            rows.append(_row(sc, option, layout, None, base, base_checks, cache, checks))
            done += 1
            continue
        sc_v = with_option(sc, option, layout)
        pending.append((option, layout, sc_v, source_power(sc_v, site, cache)))
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


# ------------------------------------------------------------------------------------------------ summary
def rule_counts(table: pd.DataFrame) -> dict[str, int]:
    """How many cells break each rule (ids from ``failed_checks``), most often broken first."""
    counts: dict[str, int] = {}
    for text in table["failed_checks"]:
        for rule in filter(None, str(text).split(", ")):
            counts[rule] = counts.get(rule, 0) + 1
    return dict(sorted(counts.items(), key=lambda kv: (-kv[1], kv[0])))


def _where(row, axis: str, several_options: bool) -> str:
    what = f"{int(row['count'])} panel{'s' if int(row['count']) != 1 else ''}"
    where = f"{axis.split('_')[0]} {row[axis]:.0f}°"
    return f"{what} at {where}" + (f" ({OPTION_LABELS[row['option']]})" if several_options else "")


def sweep_summary(table: pd.DataFrame, *, axis: str = "azimuth_deg", currency: str = "") -> str:
    """The sweep in plain words, pointing only at valid cells: the best on money (NPV) and on energy (added
    self-consumed energy), what was set aside and for which rules — or that no setting passes."""
    added = table[table["count"] > 0]
    if not len(added):
        return "No panels are added in this sweep."
    several = table["option"].nunique() > 1
    valid = added[added["valid"].astype(bool)]
    rules = rule_counts(added)
    set_aside = (f"{len(added) - len(valid)} of {len(added)} settings with panels added are set aside: "
                 + "; ".join(f"{rule_words(rule)} in {n}" for rule, n in rules.items()) + ".") if rules else ""
    if not len(valid):
        return (f"No setting in this sweep passes, so none is recommended. {set_aside} "
                "A cell that breaks a rule (a failing design check, or uncontrolled export into a grid that may not "
                "be fed) cannot be recommended however much it adds.")
    money = valid.loc[valid["npv"].idxmax()]
    energy = valid.loc[valid["self_consumed_added_kwh"].idxmax()]
    cur = f" {currency}" if currency else ""
    text = (f"Best that passes, on money: {_where(money, axis, several)}, NPV {money['npv']:,.0f}{cur} "
            f"({money['self_consumed_added_kwh']:,.0f} kWh/yr more self-consumed)"
            + ("; it does not pay: no setting that passes has an NPV above zero. " if money["npv"] < 0 else ". "))
    text += (f"On energy: {_where(energy, axis, several)}, {energy['self_consumed_added_kwh']:,.0f} kWh/yr more "
             f"self-consumed (NPV {energy['npv']:,.0f}{cur}).")
    top = added.loc[added["self_consumed_added_kwh"].idxmax()]
    if not bool(top["valid"]) and top["self_consumed_added_kwh"] > energy["self_consumed_added_kwh"]:
        text += (f" More would come from {_where(top, axis, several)} ({top['self_consumed_added_kwh']:,.0f} kWh/yr), "
                 "but it breaks: " + ", ".join(rule_words(r) for r in filter(None, str(top["failed_checks"]).split(", ")))
                 + ".")
    return text + (f" {set_aside}" if set_aside else "")
