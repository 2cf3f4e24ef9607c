"""The benchmark's reference: one scenario's year as a practitioner would write it by hand.

Per scenario, every array gets a fresh :class:`pvlib.modelchain.ModelChain` run configured like our chain
(PVWatts DC, SAPM cell temperature with the mount's parameter set, Perez transposition, physical AOI
modifier, no spectral or lumped losses in pvlib; the array's ``losses_pct`` applied afterwards), then the
project's converter rules (``core.model.conversion``) and the project's dispatch rules as a plain Python loop
over the steps (``core.model.dispatch.dispatch(..., compiled=False)``), then the year's totals with numpy.

What is shared between scenarios is what a hand-written study would also read only once: the weather
table, the loads, the outage mask and the site's location (``Shared``, built from ``prepare_site``).
"""

from __future__ import annotations

import time
from dataclasses import dataclass

import numpy as np
import pandas as pd
import pvlib
from pvlib.location import Location
from pvlib.modelchain import ModelChain
from pvlib.pvsystem import Array as PvlibArray
from pvlib.pvsystem import FixedMount, PVSystem

from core.model import conversion, dispatch, pv
from core.scenario import Array, Scenario
from core.simulate import SiteData, dispatch_params


@dataclass(frozen=True)
class Shared:
    """Read once per study: weather (pvlib's column names, labelled at interval midpoints), loads, outages."""

    weather: pd.DataFrame
    location: Location
    load_backed_w: np.ndarray
    load_grid_only_w: np.ndarray
    grid_up: np.ndarray
    dt_h: float


def shared_inputs(sc: Scenario, site: SiteData) -> Shared:
    """The site's weather with its timestamps moved to interval midpoints, where our chain puts the sun too."""
    data = site.weather.data[["ghi", "dni", "dhi", "temp_air", "wind_speed", "pressure"]]
    weather = data.set_axis(site.index + pd.Timedelta(seconds=site.step_s / 2))
    offset_h = site.index.tz.utcoffset(None).total_seconds() / 3600.0
    location = Location(site.latitude, site.longitude, tz=offset_h, altitude=sc.site.altitude_m)
    return Shared(weather=weather, location=location, load_backed_w=site.load_backed_w,
                  load_grid_only_w=site.load_grid_only_w, grid_up=site.grid_up, dt_h=site.dt_h)


def modelchain_array(sc: Scenario, array: Array, shared: Shared) -> tuple[np.ndarray, np.ndarray]:
    """(array DC power W after its losses, one module's Vmp V) from a fresh ModelChain run."""
    m = sc.modules[array.module]
    n = array.module_count
    temperature = pvlib.temperature.TEMPERATURE_MODEL_PARAMETERS["sapm"][pv.MOUNT_TO_SAPM[array.mount]]
    system = PVSystem(
        arrays=[PvlibArray(FixedMount(array.tilt_deg, array.azimuth_deg), albedo=0.2,
                           module_parameters={"pdc0": m.pmax_w * n, "gamma_pdc": m.gamma_pmax_pct_per_c / 100.0},
                           temperature_model_parameters=temperature)],
        inverter_parameters={"pdc0": m.pmax_w * n})
    mc = ModelChain(system, shared.location, dc_model="pvwatts", ac_model="pvwatts", aoi_model="physical",
                    spectral_model="no_loss", temperature_model="sapm", transposition_model="perez",
                    losses_model="no_loss")
    mc.run_model(shared.weather)
    dc = np.nan_to_num(np.asarray(mc.results.dc, dtype=float)).clip(min=0.0) * (1.0 - array.losses_pct / 100.0)
    g_eff = np.nan_to_num(np.asarray(mc.results.effective_irradiance, dtype=float)).clip(min=0.0)
    t_cell = np.nan_to_num(np.asarray(mc.results.cell_temperature, dtype=float))
    vmp = pv.module_voltages(g_eff, t_cell, voc_v=m.voc_v, vmp_v=m.vmp_v, isc_a=m.isc_a, imp_a=m.imp_a,
                             beta_voc_pct_per_c=m.beta_voc_pct_per_c,
                             alpha_isc_pct_per_c=m.alpha_isc_pct_per_c)["vmp_v"]
    return dc, vmp


@dataclass(frozen=True)
class ReferenceYear:
    figures: dict[str, float]  # kWh a year
    flows: np.ndarray  # the plain loop's flows (len(FLOWS), steps)
    inputs: dispatch.DispatchInputs
    params: dispatch.DispatchParams
    seconds_pv: float  # ModelChain runs
    seconds_loop: float  # the plain dispatch loop
    seconds: float  # the whole scenario


def reference_year(sc: Scenario, shared: Shared) -> ReferenceYear:
    """One scenario's year, by hand: ModelChain per array, converters, the plain step loop, year totals."""
    t0 = time.perf_counter()
    n = len(shared.load_backed_w)
    potential_dc = np.zeros(n)
    potential_ac = np.zeros(n)
    by_controller: dict[str, list[tuple[Array, np.ndarray, np.ndarray]]] = {}
    ac = {"backed_up": [], "grid": []}
    per_array = {}
    for array in sc.arrays:
        dc_w, vmp_v = modelchain_array(sc, array, shared)
        per_array[array.name] = dc_w
        if array.coupling == "dc":
            by_controller.setdefault(array.controller, []).append((array, dc_w, vmp_v))
            potential_dc += dc_w
        else:
            mi = sc.microinverters[array.microinverter]
            ac[array.side].append(conversion.microinverter_output(
                dc_w / array.module_count, modules=array.module_count, efficiency=mi.efficiency,
                ac_rating_w=mi.ac_rating_w, max_dc_input_w=mi.max_dc_input_w, inputs=mi.inputs))
            potential_ac += dc_w
    t_pv = time.perf_counter()
    dc_parts = []
    for name, members in by_controller.items():
        c = sc.controllers[name]
        first, _, vmp_v = members[0]
        dc_parts.append(conversion.controller_output(
            sum(w for _, w, _ in members), efficiency=c.efficiency, max_charge_current_a=c.max_charge_current_a,
            battery_nominal_v=sc.battery.nominal_v, max_input_current_a=c.max_input_current_a,
            vmp_string_v=vmp_v * first.modules_per_string))

    def total(parts, attr):
        return sum((getattr(p, attr) for p in parts), np.zeros(n))

    params = dispatch_params(sc, shared.dt_h)
    inputs = dispatch.DispatchInputs(
        load_backed_w=shared.load_backed_w, load_grid_only_w=shared.load_grid_only_w,
        dc_out_w=total(dc_parts, "out_w"), dc_loss_w=total(dc_parts, "loss_w"),
        ac_backed_out_w=total(ac["backed_up"], "out_w"), ac_backed_loss_w=total(ac["backed_up"], "loss_w"),
        ac_grid_out_w=total(ac["grid"], "out_w"), ac_grid_loss_w=total(ac["grid"], "loss_w"), grid_up=shared.grid_up)
    t_loop = time.perf_counter()
    result = dispatch.dispatch(inputs, params, compiled=False)
    t_loop = time.perf_counter() - t_loop
    k = shared.dt_h / 1000.0
    clipped = total(dc_parts, "clipped_w") + total(ac["backed_up"], "clipped_w") + total(ac["grid"], "clipped_w")
    curtailed = result["curtailed_dc_w"] + result["curtailed_ac_backed_w"] + result["curtailed_ac_grid_w"]
    potential = float((potential_dc + potential_ac).sum() * k)
    figures = {
        "pv_potential": potential,
        "expansion_potential": float(per_array.get("expansion", np.zeros(1)).sum() * k),
        "clipped": float(clipped.sum() * k),
        "curtailed": float(curtailed.sum() * k),
        "harvested": potential - float(curtailed.sum() * k) - float(clipped.sum() * k),
        "grid_import": float(result["grid_import_w"].sum() * k),
        "exported_uncontrolled": float(result["export_uncontrolled_w"].sum() * k),
        "unserved": float(result["unserved_w"].sum() * k),
    }
    return ReferenceYear(figures=figures, flows=result.flows, inputs=inputs, params=params,
                         seconds_pv=t_pv - t0, seconds_loop=t_loop, seconds=time.perf_counter() - t0)
