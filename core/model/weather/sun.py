"""Sun helpers shared by the readers, the resampler and the monthly generator: position, Erbs split, clear sky."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pvlib


def sun_at_midpoints(index: pd.DatetimeIndex, step_s: int, latitude: float, longitude: float,
                     altitude_m: float, pressure_pa=None, temp_air_c=None) -> pd.DataFrame:
    """Solar position (pvlib SPA, ``nrel_numpy``) at the interval midpoints of ``index``.

    The returned frame carries ``index`` (interval starts), not the midpoints.
    """
    mid = index + pd.Timedelta(seconds=step_s / 2)
    pressure = pvlib.atmosphere.alt2pres(altitude_m) if pressure_pa is None else np.asarray(pressure_pa, float)
    temperature = 12.0 if temp_air_c is None else np.asarray(temp_air_c, float)
    pos = pvlib.solarposition.get_solarposition(mid, latitude, longitude, altitude=altitude_m,
                                                pressure=pressure, method="nrel_numpy", temperature=temperature)
    pos.index = index
    return pos


def erbs_split(ghi_w_m2, zenith_deg, index: pd.DatetimeIndex) -> tuple[np.ndarray, np.ndarray]:
    """DNI and DHI (W/m2) from GHI by Erbs, Klein & Duffie, Solar Energy 28 (1982) 293-302.

    ``zenith_deg`` is the true (not refraction-corrected) zenith, as pvlib asks. Closure holds by construction:
    ``dhi + dni * cos(zenith) == ghi`` (when the sun is too low pvlib puts all of GHI into DHI).
    """
    ghi = np.asarray(ghi_w_m2, float)
    out = pvlib.irradiance.erbs(ghi, np.asarray(zenith_deg, float), index.day_of_year.to_numpy())
    dni = np.nan_to_num(np.asarray(out["dni"], float), nan=0.0)
    dhi = np.nan_to_num(np.asarray(out["dhi"], float), nan=0.0)
    return np.maximum(dni, 0.0), np.clip(dhi, 0.0, ghi)


def clearsky_ghi(index: pd.DatetimeIndex, step_s: int, latitude: float, longitude: float, altitude_m: float,
                 solpos: pd.DataFrame | None = None) -> np.ndarray:
    """Clear-sky GHI (W/m2) at the interval midpoints: Ineichen & Perez (2002) with the Linke turbidity climatology
    that pvlib ships (Remund et al. 2003, ``LinkeTurbidities.h5``; read from disk, no network)."""
    if solpos is None:
        solpos = sun_at_midpoints(index, step_s, latitude, longitude, altitude_m)
    mid = index + pd.Timedelta(seconds=step_s / 2)
    linke = pvlib.clearsky.lookup_linke_turbidity(mid, latitude, longitude).to_numpy()
    apparent = solpos["apparent_zenith"].to_numpy()
    am_rel = pvlib.atmosphere.get_relative_airmass(apparent)
    am_abs = pvlib.atmosphere.get_absolute_airmass(am_rel, pvlib.atmosphere.alt2pres(altitude_m))
    dni_extra = pvlib.irradiance.get_extra_radiation(mid).to_numpy()
    with np.errstate(over="ignore", invalid="ignore", divide="ignore"):  # night rows give NaN/inf, zeroed below
        cs = pvlib.clearsky.ineichen(apparent, am_abs, linke, altitude=altitude_m, dni_extra=dni_extra)
    return np.nan_to_num(np.asarray(cs["ghi"], float), nan=0.0).clip(min=0.0)


