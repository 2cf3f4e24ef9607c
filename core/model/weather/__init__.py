"""Weather for the simulation: read a weather file onto the nominal year, resample it, find a site's time zone,
or build a year from twelve monthly figures.

The package, one concern per module: ``frame`` (the :class:`Weather` record, value checks, placing rows on the
nominal year), ``read`` (the one entry point for files), ``fixed`` (EPW, TMY3, TMY2), ``generic_csv`` (our CSV
format), ``place`` (time zones), ``sun`` (sun position, Erbs split, clear sky), ``resample`` (another step),
``monthly`` (the twelve-numbers generator). The public names are imported here.

Every source ends up as a :class:`Weather`: interval-*start* times on ``core.timebase.NOMINAL_YEAR`` at a regular
step, in the site's fixed-offset standard time, with the columns

=============  ======  ====================================================
``ghi``        W/m2    global horizontal irradiance, mean over the interval
``dni``        W/m2    direct normal irradiance, mean over the interval
``dhi``        W/m2    diffuse horizontal irradiance, mean over the interval
``temp_air``   C       air (dry-bulb) temperature
``wind_speed`` m/s     wind speed
``pressure``   Pa      station pressure
=============  ======  ====================================================

Supported files (``fmt``):

* ``"epw"`` -- EnergyPlus weather files, read with :func:`pvlib.iotools.read_epw`. Values label the hour that
  *ends* at the stated hour (hour 1 = 00:00-01:00); pvlib already turns them into interval starts.
* ``"tmy3"`` -- NREL TMY3 CSV files (Wilcox & Marion 2008, NREL/TP-581-43156), read with
  :func:`pvlib.iotools.read_tmy3`. pvlib labels each row with the hour it *ends*; we move it to the start.
  Pressure is in mbar in the file and converted to Pa.
* ``"tmy2"`` -- NREL TMY2 fixed-width files (Marion & Urban 1995), read with :func:`pvlib.iotools.read_tmy2`,
  which already labels interval starts. Temperatures and wind speeds are stored in tenths and are scaled here.
* ``"csv"`` -- the project's own generic CSV format, described below.

A file's own years are ignored: every row is placed on the nominal year by month, day and time of day (29 February
is dropped), after converting the file's times to the site's standard time ``tz``. Missing DNI and DHI are derived
from GHI with the Erbs, Klein & Duffie (1982) correlation (:func:`pvlib.irradiance.erbs`); missing pressure comes from
the altitude with :func:`pvlib.atmosphere.alt2pres`. Either fact is stated in :attr:`Weather.source`.

Generic CSV format
------------------
* Plain comma-separated text: UTF-8 (with or without a byte-order mark), UTF-16 or Latin-1. Lines before the header that start with ``#`` are comments and are skipped.
* The first non-comment line is the header. Column names are matched without regard to case or surrounding spaces.
* ``timestamp`` (required): the **start** of each interval, ISO 8601, e.g. ``2023-01-01 00:00`` or
  ``2023-01-01T00:00-05:00``. Timestamps without a UTC offset are read as the site's *standard* time (no daylight
  saving); with an offset they may be in any zone. Any year may be used; 29 February rows are dropped.
* ``ghi`` (required), ``dni`` and ``dhi`` (optional, give both or neither): interval means in W/m2.
* ``temp_air`` (optional, C; default 20 C) and ``wind_speed`` (optional, m/s; default 1 m/s). The defaults are the
  ambient conditions of the NOCT test in IEC 61215 (20 C, 1 m/s), a conservative choice for cell temperature.
* ``pressure`` (optional, Pa; default from the altitude via ``alt2pres``).
* A regular step of 1 hour or a whole fraction of an hour (e.g. 1, 5, 10, 15, 30 min), covering a full year: exactly
  one row for every interval of a non-leap year. Other columns are ignored.

Example::

    timestamp,ghi,dni,dhi,temp_air,wind_speed
    2023-01-01 00:00,0,0,0,4.5,2.1
    2023-01-01 01:00,0,0,0,4.1,2.0
"""

from core.model.weather.frame import (
    DEFAULT_TEMP_AIR_C,
    DEFAULT_WIND_SPEED_M_S,
    WEATHER_COLUMNS,
    Weather,
)
from core.model.weather.monthly import monthly_weather
from core.model.weather.place import as_standard_tz, timezone_for
from core.model.weather.read import read_weather_file
from core.model.weather.resample import interpolate_weather
from core.model.weather.sun import clearsky_ghi, erbs_split, sun_at_midpoints

__all__ = [
    "DEFAULT_TEMP_AIR_C",
    "DEFAULT_WIND_SPEED_M_S",
    "WEATHER_COLUMNS",
    "Weather",
    "as_standard_tz",
    "clearsky_ghi",
    "erbs_split",
    "interpolate_weather",
    "monthly_weather",
    "read_weather_file",
    "sun_at_midpoints",
    "timezone_for",
]
