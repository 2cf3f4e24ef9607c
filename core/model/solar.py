"""Sun position and the orientation-independent sky geometry of a site, computed once per site.

Solar position by the NREL Solar Position Algorithm (Reda & Andreas, "Solar position algorithm for solar radiation
applications", Solar Energy 76 (2004) 577-589, NREL/TP-560-34302) as implemented in
:func:`pvlib.solarposition.get_solarposition` (``method="nrel_numpy"``). Values stand for a whole interval, so they
are evaluated at the interval *midpoint* (interval start + step/2) while the arrays stay labelled by the interval
starts of the weather index.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pandas as pd
import pvlib

from core.timebase import check_site

#: SPA's default difference between terrestrial and universal time (s); the Reda & Andreas example uses 67 s.
DEFAULT_DELTA_T_S = 67.0
#: Air temperature used for refraction when none is given (pvlib's default), C.
DEFAULT_TEMP_AIR_C = 12.0


@dataclass(frozen=True)
class SolarGeometry:
    """Sun geometry per interval of a weather index (all arrays aligned with ``index``, evaluated at midpoints).

    Angles in degrees; azimuth clockwise from north (180 = south); ``dni_extra_w_m2`` is the extraterrestrial
    normal irradiance (Spencer 1971); air masses after Kasten & Young (1989) on the apparent zenith, absolute
    air mass scaled by station pressure. Air masses are NaN when the sun is below the horizon.
    """

    index: pd.DatetimeIndex
    apparent_zenith_deg: np.ndarray
    zenith_deg: np.ndarray
    azimuth_deg: np.ndarray
    dni_extra_w_m2: np.ndarray
    airmass_relative: np.ndarray
    airmass_absolute: np.ndarray


def sun_position(times, latitude: float, longitude: float, altitude_m: float, pressure_pa, temp_air_c,
                 delta_t_s: float = DEFAULT_DELTA_T_S) -> pd.DataFrame:
    """Topocentric sun position at ``times`` by the NREL Solar Position Algorithm.

    Parameters
    ----------
    times : DatetimeIndex-like
        Time-zone-aware instants.
    latitude, longitude : float
        Degrees, north and east positive.
    altitude_m : float
        Height above sea level, m.
    pressure_pa : float or array-like
        Station pressure, Pa; sets the refraction correction. Scalar or aligned with ``times``.
    temp_air_c : float or array-like
        Air temperature, °C; sets the refraction correction. Scalar or aligned with ``times``.
    delta_t_s : float, default 67
        Difference between terrestrial and universal time, s.

    Returns
    -------
    pandas.DataFrame
        pvlib's frame: ``apparent_zenith``, ``zenith``, ``apparent_elevation``, ``elevation``, ``azimuth``
        (degrees; azimuth clockwise from north) and ``equation_of_time`` (minutes).

    Raises
    ------
    ValueError
        When ``times`` carry no time zone.

    References
    ----------
    Reda, I. and Andreas, A., "Solar position algorithm for solar radiation applications", Solar Energy 76
    (2004) 577-589, NREL/TP-560-34302; implemented by :func:`pvlib.solarposition.get_solarposition`
    (``method="nrel_numpy"``).
    """
    times = pd.DatetimeIndex(times)
    if times.tz is None:
        raise ValueError("sun_position needs time-zone-aware times")
    return pvlib.solarposition.get_solarposition(
        times, latitude, longitude, altitude=altitude_m, pressure=_as_values(pressure_pa),
        method="nrel_numpy", temperature=_as_values(temp_air_c), delta_t=delta_t_s)


def solar_geometry(index, latitude: float, longitude: float, altitude_m: float, *, pressure_pa=None,
                   temp_air_c=None, step_s: int | None = None,
                   delta_t_s: float = DEFAULT_DELTA_T_S, position: pd.DataFrame | None = None) -> SolarGeometry:
    """Sun geometry for every interval of ``index``, evaluated at the interval midpoints.

    Parameters
    ----------
    index : DatetimeIndex-like
        Interval starts, time-zone-aware, at a regular step.
    latitude, longitude : float
        Degrees, north and east positive.
    altitude_m : float
        Height above sea level, m.
    pressure_pa : float or array-like, optional
        Station pressure, Pa; :func:`pvlib.atmosphere.alt2pres` of the altitude when not given. May be aligned
        with ``index`` (a weather column).
    temp_air_c : float or array-like, optional
        Air temperature for refraction, °C; 12 °C when not given.
    step_s : int, optional
        The step, s; read from the index when not given.
    delta_t_s : float, default 67
        Difference between terrestrial and universal time, s.
    position : pandas.DataFrame, optional
        An SPA frame already computed for the same midpoints (any refraction settings). Only the refraction is
        then applied again for this pressure and temperature, which gives the same numbers as a full SPA run at a
        fraction of its cost.

    Returns
    -------
    SolarGeometry
        Zenith and azimuth (degrees), extraterrestrial normal irradiance (W/m²) and air masses per interval.

    Raises
    ------
    ValueError
        When the index is not regular, or ``position`` does not match it.

    References
    ----------
    Reda & Andreas (2004), eq. 42 for the refraction; Spencer (1971) for the extraterrestrial irradiance
    (:func:`pvlib.irradiance.get_extra_radiation`); Kasten & Young (1989) for the relative air mass.
    """
    index = pd.DatetimeIndex(index)
    check_site(latitude, longitude, altitude_m)
    if step_s is None:
        step_s = _index_step_s(index)
    pressure = pvlib.atmosphere.alt2pres(altitude_m) if pressure_pa is None else _as_values(pressure_pa)
    temperature = DEFAULT_TEMP_AIR_C if temp_air_c is None else _as_values(temp_air_c)
    midpoints = index + pd.Timedelta(seconds=step_s / 2)
    if position is None:
        pos = sun_position(midpoints, latitude, longitude, altitude_m, pressure, temperature, delta_t_s)
        apparent = pos["apparent_zenith"].to_numpy(dtype=float)
    else:
        if len(position) != len(index):
            raise ValueError("the given sun position does not match the index")
        pos = position
        apparent = apparent_zenith_deg(pos["elevation"].to_numpy(dtype=float), pressure, temperature)
    am_rel = np.asarray(pvlib.atmosphere.get_relative_airmass(apparent, model="kastenyoung1989"), dtype=float)
    am_abs = np.asarray(pvlib.atmosphere.get_absolute_airmass(am_rel, pressure), dtype=float)
    dni_extra = np.asarray(pvlib.irradiance.get_extra_radiation(midpoints), dtype=float)
    return SolarGeometry(index=index, apparent_zenith_deg=apparent, zenith_deg=pos["zenith"].to_numpy(dtype=float),
                         azimuth_deg=pos["azimuth"].to_numpy(dtype=float), dni_extra_w_m2=dni_extra,
                         airmass_relative=am_rel, airmass_absolute=am_abs)


def apparent_zenith_deg(elevation_deg, pressure_pa, temp_air_c, atmos_refract_deg: float = 0.5667) -> np.ndarray:
    """Refraction-corrected zenith from SPA's topocentric elevation without atmosphere.

    Parameters
    ----------
    elevation_deg : array-like
        Topocentric sun elevation without refraction, degrees.
    pressure_pa : float or array-like
        Station pressure, Pa.
    temp_air_c : float or array-like
        Air temperature, °C.
    atmos_refract_deg : float, default 0.5667
        Refraction at sunrise and sunset, degrees.

    Returns
    -------
    numpy.ndarray
        Apparent zenith, degrees.

    References
    ----------
    Reda & Andreas (2004), eqs. 42-44, via :func:`pvlib.spa.atmospheric_refraction_correction`.
    """
    e0 = np.asarray(elevation_deg, dtype=float)
    pressure_mbar = np.broadcast_to(np.asarray(pressure_pa, dtype=float) / 100.0, e0.shape)
    temperature = np.broadcast_to(np.asarray(temp_air_c, dtype=float), e0.shape)
    delta = pvlib.spa.atmospheric_refraction_correction(pressure_mbar, temperature, e0, atmos_refract_deg)
    return 90.0 - (e0 + np.asarray(delta, dtype=float))


def _as_values(value):
    if value is None or np.isscalar(value):
        return value
    return np.asarray(value, dtype=float)


def _index_step_s(index: pd.DatetimeIndex) -> int:
    if index.freq is not None:
        return int(pd.Timedelta(index.freq).total_seconds())
    if len(index) < 2:
        raise ValueError("cannot tell the time step of an index with fewer than two times; pass step_s")
    steps = np.unique(np.diff(index.as_unit("s").asi8))
    if len(steps) != 1:
        raise ValueError("the index is not regular; pass a regular interval-start index")
    return int(steps[0])
