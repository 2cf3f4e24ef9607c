"""The orchestrator: unpacks a scenario and composes the physics leaves in order (our ModelChain).

weather + site → solar geometry (once per site) → one module's output per orientation (cached) →
arrays × modules → converters → dispatch → metrics.

Work that does not depend on panel counts is kept apart so that a what-if that changes only a count
reuses it: :func:`core.site.prepare_site` (weather, sun, loads, outages) is computed once per site, and
:class:`OrientationCache` keeps one module's output per (module, tilt, azimuth, mount, losses).
"""

from __future__ import annotations

import dataclasses
from collections.abc import Callable
from dataclasses import dataclass, field

import numpy as np
import pandas as pd

from core import face_arrays
from core.model import conversion, dispatch, metrics, pv, tariff
from core.scenario import Array, Scenario
from core.site import (  # noqa: F401 - the per-site names are also reached through core.simulate
    STEPS_S,
    SiteData,
    load_weather,
    prepare_site,
    simulation_step_s,
    site_timezone,
)


class OrientationCache:
    """One module's output per orientation, computed once and reused for any panel count."""

    def __init__(self) -> None:
        self._store: dict[tuple, pv.ModuleOutput] = {}
        self._faces: dict[tuple, face_arrays.FacePower] = {}  # arrays on a shading face, by face and placement
        self._face_shade: dict[tuple, tuple] = {}  # a face's block shading per site and layout, for all its arrays
        self._chains: dict[tuple, tuple] = {}  # one module's loss chain (the output is kept so its id stays unique)
        self._diffuse_iam: dict[float, dict[str, float]] = {}  # Marion's factors per tilt, for every azimuth

    def __len__(self) -> int:
        return len(self._store)

    def module_output(self, site: SiteData, sc: Scenario, array: Array) -> pv.ModuleOutput:
        m = sc.modules[array.module]
        shaded_face = face_arrays.face_of(sc, array)
        if shaded_face is not None:  # the face's own model shades it; this is the open module at its orientation
            array = dataclasses.replace(array, row_pitch_m=None)
        # The module record itself (a frozen dataclass of numbers) is the key: equal fields, equal key.
        key = (site.key, m, array.tilt_deg, array.azimuth_deg, array.mount, array.losses_pct, array.row_pitch_m)
        if key not in self._store:
            tilt = float(array.tilt_deg)
            if tilt not in self._diffuse_iam:
                self._diffuse_iam[tilt] = pv.diffuse_iam_factors("physical", tilt)
            shading = None
            if array.row_pitch_m is not None:
                # Rows of one module in portrait: the row in front shades the direct beam (pvlib shaded_fraction1d).
                shading = pv.row_shaded_fraction(site.geometry.apparent_zenith_deg, site.geometry.azimuth_deg,
                                                 tilt_deg=array.tilt_deg, azimuth_deg=array.azimuth_deg,
                                                 length_m=m.length_m, pitch_m=array.row_pitch_m)
            self._store[key] = pv.module_output(
                site.weather.data, site.geometry, tilt_deg=array.tilt_deg, azimuth_deg=array.azimuth_deg,
                mount=array.mount, losses_pct=array.losses_pct, pmax_w=m.pmax_w, vmp_v=m.vmp_v, imp_a=m.imp_a,
                voc_v=m.voc_v, isc_a=m.isc_a, gamma_pmax_pct_per_c=m.gamma_pmax_pct_per_c,
                beta_voc_pct_per_c=m.beta_voc_pct_per_c, alpha_isc_pct_per_c=m.alpha_isc_pct_per_c,
                shading_loss=shading, iam_model="physical", diffuse_iam=self._diffuse_iam[tilt])
        return self._store[key]

    def plain_chain(self, site: SiteData, sc: Scenario, array: Array, mo: pv.ModuleOutput) -> tuple:
        """(poa Wh, losses Wh) of an array without face shading; computed for one module and scaled."""
        key = (id(mo), array.module, array.row_pitch_m, array.tilt_deg, array.azimuth_deg)
        if key not in self._chains:
            one = dataclasses.replace(array, coupling="ac", modules=1)
            self._chains[key] = (mo, face_arrays.plain_array_losses(site, sc, one, mo))
        poa, losses = self._chains[key][1]
        n = array.module_count
        return poa * n, {k: v * n for k, v in losses.items()}

    def face_power(self, site: SiteData, sc: Scenario, array: Array) -> face_arrays.FacePower | None:
        """An array on a face with a layout or surroundings: its shaded DC power (None for any other array)."""
        face = face_arrays.face_of(sc, array)
        if face is None:
            return None
        first, size = face_arrays.placement(sc, array)
        converter = sc.controllers[array.controller] if array.coupling == "dc" else sc.microinverters[array.microinverter]
        key = (site.key, sc.modules[array.module], face, first, size, array.coupling, array.modules_per_string,
               array.strings, array.modules, array.losses_pct, converter, sc.simulation.mppt_tracker)
        if key not in self._faces:
            mo = self.module_output(site, sc, array)
            self._faces[key] = face_arrays.face_array_power(site, sc, array, mo, self._diffuse_iam[float(face.tilt_deg)],
                                                            self._face_shade)
        return self._faces[key]


@dataclass(frozen=True)
class SourcePower:
    """Converter outputs of all arrays, grouped the way the engine sees them (W per step)."""

    potential_dc_w: np.ndarray
    potential_ac_w: np.ndarray
    clipped_dc_w: np.ndarray
    clipped_ac_w: np.ndarray
    dc: conversion.Converted
    ac_backed: conversion.Converted
    ac_grid: conversion.Converted
    per_array_dc_w: dict[str, np.ndarray]
    # Per array: module-side power clipped by its converter (W) and the yearly chain before it (poa_wh, losses_wh).
    per_array_clipped_w: dict[str, np.ndarray] = field(default_factory=dict)
    per_array_chain: dict[str, tuple[float, dict[str, float]]] = field(default_factory=dict)


def _sum(parts: list[conversion.Converted], n: int) -> conversion.Converted:
    zero = np.zeros(n)
    return conversion.Converted(out_w=sum((p.out_w for p in parts), zero), loss_w=sum((p.loss_w for p in parts), zero),
                                clipped_w=sum((p.clipped_w for p in parts), zero))


def source_power(sc: Scenario, site: SiteData, cache: OrientationCache) -> SourcePower:
    """Module DC per array, then through its converter: controllers (shared by their arrays) and microinverters."""
    n = len(site.index)
    per_array: dict[str, np.ndarray] = {}
    by_controller: dict[str, list[tuple[Array, pv.ModuleOutput]]] = {}
    ac_parts: dict[str, list[conversion.Converted]] = {"backed_up": [], "grid": []}
    potential_dc = np.zeros(n)
    potential_ac = np.zeros(n)
    clipped: dict[str, np.ndarray] = {}
    chain: dict[str, tuple[float, dict[str, float]]] = {}
    for array in sc.arrays:
        mo = cache.module_output(site, sc, array)
        fp = cache.face_power(site, sc, array)
        if fp is None:
            per_array[array.name] = mo.p_dc_w * array.module_count
            chain[array.name] = cache.plain_chain(site, sc, array, mo)
        else:
            per_array[array.name] = fp.p_dc_w
            chain[array.name] = (fp.poa_wh, fp.losses_wh)
        if array.coupling == "dc":
            by_controller.setdefault(array.controller, []).append((array, mo))
            potential_dc += per_array[array.name]
        else:
            mi = sc.microinverters[array.microinverter]
            limits = dict(efficiency=mi.efficiency, ac_rating_w=mi.ac_rating_w, max_dc_input_w=mi.max_dc_input_w)
            if fp is None or fp.per_module_w is None:
                part = conversion.microinverter_output(mo.p_dc_w, modules=array.module_count, inputs=mi.inputs,
                                                       **limits)
            else:  # shaded modules differ: each unit converts its own modules' power
                units = [fp.per_module_w[i:i + mi.inputs] for i in range(0, array.module_count, mi.inputs)]
                part = _sum([conversion.microinverter_output(u.mean(axis=0), modules=len(u), inputs=len(u), **limits)
                             for u in units], n)
            ac_parts[array.side].append(part)
            clipped[array.name] = part.clipped_w
            potential_ac += per_array[array.name]
    dc_parts = []
    for name, members in by_controller.items():
        c = sc.controllers[name]
        first, mo = members[0]
        total = sum(per_array[a.name] for a, _ in members)
        part = conversion.controller_output(
            total, efficiency=c.efficiency,
            max_charge_current_a=c.max_charge_current_a, battery_nominal_v=sc.battery.nominal_v,
            max_input_current_a=c.max_input_current_a, vmp_string_v=mo.vmp_v * first.modules_per_string)
        dc_parts.append(part)
        for a, _ in members:  # a shared controller's clipping, split in proportion to each array's power
            clipped[a.name] = part.clipped_w * np.divide(per_array[a.name], total, out=np.zeros(n), where=total > 0)
    dc = _sum(dc_parts, n)
    acb, acg = _sum(ac_parts["backed_up"], n), _sum(ac_parts["grid"], n)
    return SourcePower(potential_dc_w=potential_dc, potential_ac_w=potential_ac, clipped_dc_w=dc.clipped_w,
                       clipped_ac_w=acb.clipped_w + acg.clipped_w, dc=dc, ac_backed=acb, ac_grid=acg,
                       per_array_dc_w=per_array, per_array_clipped_w=clipped, per_array_chain=chain)


def reconnect_delay_s(sc: Scenario) -> float:
    """The longest reconnect delay among the scenario's microinverters (their own, else their grid code's)."""
    used = {a.microinverter for a in sc.arrays if a.coupling == "ac"}
    if sc.expansion is not None and sc.expansion.microinverter:
        used.add(sc.expansion.microinverter)
    delays = [m.reconnect_s if m.reconnect_s is not None else conversion.RECONNECT_DELAY_S[m.grid_code]
              for name, m in sc.microinverters.items() if name in used]
    return max(delays, default=0.0)


def dispatch_params(sc: Scenario, dt_h: float, **changes) -> dispatch.DispatchParams:
    """The engine's parameters from the scenario (``changes`` override fields, e.g. ``standing_draw_w=0``)."""
    b, ic, g = sc.battery, sc.inverter_charger, sc.grid
    usable = b.usable_kwh * 1000.0 if b else 0.0
    curve = conversion.inverter_curve(ic.rating_w, ic.efficiency)
    mode = g.ac_control_mode
    return dispatch.DispatchParams(
        dt_h=dt_h, usable_wh=usable, initial_wh=usable * (b.initial_pct if b else 0.0) / 100.0,
        reserve_wh=usable * (b.reserve_pct if b else 0.0) / 100.0, floor_wh=usable * (b.floor_pct if b else 0.0) / 100.0,
        charge_max_w=b.max_charge_a * b.nominal_v if b else 0.0,
        discharge_max_w=b.max_discharge_a * b.nominal_v if b else 0.0,
        roundtrip_efficiency=b.roundtrip_efficiency if b else 1.0,
        inverter_ac_w=curve.ac_w, inverter_dc_w=curve.dc_w,
        charger_rating_w=ic.rating_w if ic.charger_rating_w is None else ic.charger_rating_w,
        charger_efficiency=ic.charger_efficiency, idle_w=ic.idle_w, standing_draw_w=g.standing_draw_w,
        metering_site=g.metering == "site", export_allowed=g.export_allowed, export_limit_w=g.export_limit_w,
        limiter=mode == "limiter" or (mode == "islanded" and g.islanded_limiter),
        recharge_reserve_from_grid=g.recharge_reserve_from_grid,
        taper_start_wh=usable * b.taper_start_pct / 100.0 if b and b.taper_start_pct < 100.0 and b.model == "taper"
        else float("inf"),
        kibam_c=b.kibam_c if b and b.model == "kibam" else 0.0, kibam_k_per_h=b.kibam_k_per_h if b else 1.0,
        taper_end_fraction=b.taper_end_fraction if b else 0.0,
        discharge_taper_wh=usable * b.discharge_taper_pct / 100.0 if b else 0.0,
        ac_control=dispatch.AC_CONTROL_CODES[mode], relay_open_wh=usable * g.relay_open_pct / 100.0,
        relay_close_wh=usable * g.relay_close_pct / 100.0, reconnect_s=reconnect_delay_s(sc),
        charge_window_target_wh=usable * g.charge_window.target_pct / 100.0 if g.charge_window and b else 0.0,
    ) if not changes else dataclasses.replace(dispatch_params(sc, dt_h), **changes)


def charge_window(sc: Scenario, site: SiteData) -> np.ndarray:
    """1.0 in the steps inside the grid-charging window (local clock), else 0.0."""
    w = sc.grid.charge_window
    if w is None:
        return np.zeros(len(site.index))
    hour = np.asarray(tariff.local_clock(site.index, site.timezone).hour)
    return tariff.in_hours(hour, *w.hours).astype(float)


def import_prices(sc: Scenario, site: SiteData) -> np.ndarray:
    """The import price per kWh of every step under the scenario's tariff (time-of-use periods by local clock)."""
    t = sc.tariff
    return tariff.import_prices(tariff.local_clock(site.index, site.timezone), base_price=t.import_price_per_kwh,
                                periods=t.periods, holidays_country=t.holidays)


def dispatch_inputs(sc: Scenario, site: SiteData, sources: SourcePower) -> dispatch.DispatchInputs:
    return dispatch.DispatchInputs(
        load_backed_w=site.load_backed_w, load_grid_only_w=site.load_grid_only_w, dc_out_w=sources.dc.out_w,
        dc_loss_w=sources.dc.loss_w, ac_backed_out_w=sources.ac_backed.out_w, ac_backed_loss_w=sources.ac_backed.loss_w,
        ac_grid_out_w=sources.ac_grid.out_w, ac_grid_loss_w=sources.ac_grid.loss_w, grid_up=site.grid_up,
        charge_window=charge_window(sc, site))


@dataclass(frozen=True)
class SimulationResult:
    """One simulated year: the per-step table, the figures, and what the checks need."""

    scenario: Scenario
    site: SiteData
    steps: pd.DataFrame
    results: metrics.Results
    sources: SourcePower


def run(sc: Scenario, site: SiteData, sources: SourcePower, *, compiled: bool = True) -> SimulationResult:
    """Dispatch and figures for given source powers (the part a count-only change repeats)."""
    params = dispatch_params(sc, site.dt_h)
    flows = dispatch.dispatch(dispatch_inputs(sc, site, sources), params, compiled=compiled)
    # One block per column: a DataFrame built from one 2-D block plus columns added one by one costs more than
    # the engine itself on an hourly year (docs/performance.md). The engine's rows are this run's own; the
    # site's and the sources' arrays are copied so that editing the table never reaches the caches.
    columns = {name: flows.flows[i] for i, name in enumerate(dispatch.FLOWS)}
    shared = dict(
        load_backed_w=site.load_backed_w, load_grid_only_w=site.load_grid_only_w, grid_up=site.grid_up,
        pv_potential_dc_w=sources.potential_dc_w, pv_potential_ac_w=sources.potential_ac_w,
        clipped_dc_w=sources.clipped_dc_w, clipped_ac_w=sources.clipped_ac_w,
        dc_out_w=sources.dc.out_w, ac_backed_out_w=sources.ac_backed.out_w, ac_grid_out_w=sources.ac_grid.out_w,
        ghi_w_m2=site.weather.data["ghi"].to_numpy())
    columns.update({name: np.array(values, dtype=bool if name == "grid_up" else float)
                    for name, values in shared.items()})
    steps = pd.DataFrame(columns, index=site.index, copy=False)
    months = metrics.MonthGroups(site.index.month)
    ghi_kwh = columns["ghi_w_m2"] * (site.dt_h / 1000.0)
    weather_figures = {"ghi_kwh_m2": float(ghi_kwh.sum()), "source": site.weather.source,
                       "step_s": site.step_s, "months": [float(v) for v in months.sums(ghi_kwh)]}
    results = metrics.summarise_columns(columns, months=months, dt_h=site.dt_h, initial_wh=params.initial_wh,
                                        usable_wh=params.usable_wh, daylight=site.daylight, weather=weather_figures)
    return SimulationResult(scenario=sc, site=site, steps=steps, results=results, sources=sources)


def simulate(sc: Scenario, site: SiteData | None = None, cache: OrientationCache | None = None, *,
             progress: Callable[[float, str], None] | None = None, compiled: bool = True) -> SimulationResult:
    """Simulate the scenario's year. Pass ``site`` and ``cache`` to reuse earlier work."""
    if progress:
        progress(0.0, "weather and loads")
    site = site or prepare_site(sc)
    cache = cache if cache is not None else OrientationCache()
    if progress:
        progress(0.4, "PV arrays")
    sources = source_power(sc, site, cache)
    if progress:
        progress(0.7, "energy flows")
    out = run(sc, site, sources, compiled=compiled)
    if progress:
        progress(1.0, "done")
    return out
