"""Row spacing of tilted panels: the clear gap that keeps the next row unshaded, and the shading loss at a pitch.

Geometry (flat roof or ground, rows of slant length ``L`` tilted ``β`` facing azimuth ``γ``): the top edge of a
row stands ``h = L · sin β`` above its foot. With the sun at elevation ``α`` and azimuth ``γs``, that edge's
shadow reaches ``h · cos(γs − γ) / tan α`` behind it, measured at right angles to the rows. The **clear gap**
(from the back of one row to the front of the next) must be at least the longest such shadow over the design
window; the **pitch** (row to row) is the gap plus the row's depth ``L · cos β``.

The design day is the winter solstice (declination −23.44° north of the equator, +23.44° south; obliquity of
the ecliptic, from memory); the window is in solar time (default 10:00–14:00, common practice). Sun angles
from the declination and hour angle (Duffie & Beckman, "Solar Engineering of Thermal Processes", §1.6).

The annual loss at a chosen pitch uses :func:`pvlib.shading.shaded_fraction1d` (Anderson & Jensen 2024) for
the shaded share of the row and a linear beam-shading model (the shaded share of the direct irradiance is lost).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from core.analyses.checks.common import CAUTION_STRUCTURE, Check, Status, array_words
from core.errors import InputError
from core.model.pv import row_shaded_fraction  # noqa: F401 - the physics lives in the PV leaf

#: Obliquity of the ecliptic: the sun's declination at the solstices, degrees (from memory).
SOLSTICE_DECLINATION_DEG = 23.44
DEFAULT_WINDOW_H = (10.0, 14.0)
#: Annual shading loss above which the spacing check warns (our own choice).
SHADING_LOSS_WARN = 0.01


@dataclass(frozen=True)
class RowGap:
    """The rule's answer, lengths in metres."""

    gap_m: float  # clear gap between rows
    pitch_m: float  # row to row: gap + row depth
    depth_m: float  # horizontal depth of one row, L · cos β
    height_m: float  # height of the top edge, L · sin β
    worst_solar_hour: float  # solar time of the longest shadow in the window
    sun_elevation_deg: float  # at that time
    sun_azimuth_deg: float
    latitude: float
    tilt_deg: float
    length_m: float
    azimuth_deg: float
    window_h: tuple[float, float]

    def to_dict(self) -> dict:
        return {"gap_m": self.gap_m, "pitch_m": self.pitch_m, "depth_m": self.depth_m, "height_m": self.height_m,
                "worst_solar_hour": self.worst_solar_hour, "sun_elevation_deg": self.sun_elevation_deg,
                "sun_azimuth_deg": self.sun_azimuth_deg, "latitude": self.latitude, "tilt_deg": self.tilt_deg,
                "length_m": self.length_m, "azimuth_deg": self.azimuth_deg, "window_h": list(self.window_h)}


def winter_solstice_declination_deg(latitude: float) -> float:
    """The sun's declination on the local winter solstice: −23.44° in the north (and on the equator), +23.44° south."""
    return -SOLSTICE_DECLINATION_DEG if latitude >= 0 else SOLSTICE_DECLINATION_DEG


def sun_angles_deg(latitude: float, declination_deg: float, hour_angle_deg):
    """Sun elevation and azimuth (clockwise from north), degrees, from latitude, declination and hour angle
    (negative in the morning). Duffie & Beckman §1.6: ``sin α = cos φ cos δ cos ω + sin φ sin δ``;
    azimuth ``= 180° + atan2(sin ω, cos ω sin φ − tan δ cos φ)``."""
    phi, dec, w = np.radians(latitude), np.radians(declination_deg), np.radians(np.asarray(hour_angle_deg, float))
    elevation = np.degrees(np.arcsin(np.cos(phi) * np.cos(dec) * np.cos(w) + np.sin(phi) * np.sin(dec)))
    azimuth = (180.0 + np.degrees(np.arctan2(np.sin(w), np.cos(w) * np.sin(phi) - np.tan(dec) * np.cos(phi)))) % 360.0
    return elevation, azimuth


def shadow_reach_m(height_m: float, elevation_deg, sun_azimuth_deg, row_azimuth_deg: float):
    """How far behind a row its top edge's shadow reaches, at right angles to the row, m (0 when the sun is
    behind the rows; infinite when it is at or below the horizon)."""
    elev = np.asarray(elevation_deg, dtype=float)
    facing = np.cos(np.radians(np.asarray(sun_azimuth_deg, dtype=float) - row_azimuth_deg))
    with np.errstate(divide="ignore", invalid="ignore"):
        reach = np.where(elev > 0.0, height_m * facing / np.tan(np.radians(np.maximum(elev, 1e-9))), np.inf)
    return np.maximum(reach, 0.0)


def equator_facing_azimuth_deg(latitude: float) -> float:
    return 180.0 if latitude >= 0 else 0.0


def parse_window(text: str) -> tuple[float, float]:
    """``"10-14"`` or ``"9.5-14.5"`` (solar hours) → (10.0, 14.0)."""
    try:
        start, end = (float(x) for x in str(text).split("-"))
    except ValueError:
        raise InputError(f"window {text!r} is not two hours joined by '-'", where="--window",
                         hint="write it as START-END in solar hours, e.g. 10-14") from None
    if not 0.0 <= start < end <= 24.0:
        raise InputError(f"window {text!r} is not a span of solar hours", where="--window",
                         hint="START must be before END, both between 0 and 24, e.g. 10-14")
    return start, end


def min_row_gap(latitude: float, tilt_deg: float, length_m: float, *, azimuth_deg: float | None = None,
                window_h: tuple[float, float] = DEFAULT_WINDOW_H, step_min: float = 1.0) -> RowGap:
    """The smallest clear gap between rows that leaves them unshaded on the winter solstice during the window.

    ``azimuth_deg`` is the way the rows face (default: towards the equator); the window is in solar time.
    Raises InputError where the sun stays at or below the horizon during the window (no gap is enough).
    """
    for name, value in (("latitude", latitude), ("tilt", tilt_deg), ("length", length_m), ("azimuth", azimuth_deg)):
        if value is not None and not math.isfinite(value):
            raise InputError(f"{name} {value!r} is not a finite number", where=name, hint="give a number")
    if azimuth_deg is not None and not 0.0 <= azimuth_deg <= 360.0:
        raise InputError(f"azimuth {azimuth_deg!r} is outside 0…360", where="azimuth",
                         hint="degrees clockwise from north: 180 = south")
    if not -90.0 <= latitude <= 90.0:
        raise InputError(f"latitude {latitude!r} is outside −90…90", where="latitude", hint="degrees north")
    if not 0.0 <= tilt_deg <= 90.0:
        raise InputError(f"tilt {tilt_deg!r} is outside 0…90", where="tilt", hint="degrees from horizontal")
    if not length_m > 0.0:
        raise InputError(f"row length {length_m!r} must be positive", where="length",
                         hint="the panel's slant length up the tilt, in metres, e.g. 1.7")
    start, end = window_h
    if not 0.0 <= start < end <= 24.0:
        raise InputError(f"window {window_h!r} is not a span of solar hours", where="window",
                         hint="START before END, both between 0 and 24")
    facing = equator_facing_azimuth_deg(latitude) if azimuth_deg is None else float(azimuth_deg)
    hours = np.unique(np.append(np.arange(start, end, step_min / 60.0), end))
    elevation, sun_az = sun_angles_deg(latitude, winter_solstice_declination_deg(latitude), 15.0 * (hours - 12.0))
    if np.any(elevation <= 0.0):
        raise InputError(f"at latitude {latitude:g}° the sun is below the horizon during part of the window "
                         f"{start:g}–{end:g} h on the winter solstice", where="window",
                         hint="choose a shorter window around noon (e.g. 11-13)")
    height = length_m * np.sin(np.radians(tilt_deg))
    depth = length_m * np.cos(np.radians(tilt_deg))
    reach = shadow_reach_m(height, elevation, sun_az, facing)
    i = int(np.argmax(reach))
    gap = float(reach[i])
    return RowGap(gap_m=gap, pitch_m=gap + float(depth), depth_m=float(depth), height_m=float(height),
                  worst_solar_hour=float(hours[i]), sun_elevation_deg=float(elevation[i]),
                  sun_azimuth_deg=float(sun_az[i]), latitude=float(latitude), tilt_deg=float(tilt_deg),
                  length_m=float(length_m), azimuth_deg=facing, window_h=(float(start), float(end)))


def annual_shading_loss(poa_direct_w_m2, poa_global_w_m2, zenith_deg, sun_azimuth_deg, *, tilt_deg: float,
                        azimuth_deg: float, length_m: float, pitch_m: float) -> float:
    """Share (0…1) of the year's plane-of-array irradiance lost to the row in front: Σ E_direct · f_shaded / Σ E."""
    sf = row_shaded_fraction(zenith_deg, sun_azimuth_deg, tilt_deg=tilt_deg, azimuth_deg=azimuth_deg,
                             length_m=length_m, pitch_m=pitch_m)
    total = float(np.sum(poa_global_w_m2))
    return float(np.sum(np.asarray(poa_direct_w_m2, dtype=float) * sf)) / total if total > 0 else 0.0


def spacing_checks(sc, sim=None) -> list[Check]:
    """For every array (and the expansion) with a ``row_pitch_m``: the gap at that pitch against the rule, and —
    with a simulation's weather — the annual shading loss."""
    checks = []
    for a in sc.arrays:
        if a.row_pitch_m is None or a.module_count <= 0:
            continue
        length = sc.modules[a.module].length_m
        try:
            rule = min_row_gap(sc.site.latitude, a.tilt_deg, length, azimuth_deg=a.azimuth_deg)
        except InputError as exc:  # polar sites: the sun is down on the winter solstice, no gap is enough
            checks.append(Check(
                id="spacing.rows", status="warn", value=None, limit=None, unit="m",
                sentence=f"{array_words(a.name)}: the winter-solstice spacing rule does not apply here ({exc.message}); "
                         "the rows shade each other whenever the sun is low, and the simulation counts that loss.",
                source="solar geometry (Duffie & Beckman §1.6); design window: common practice",
                caution=CAUTION_STRUCTURE, subject=f"array {a.name}"))
            continue
        gap = a.row_pitch_m - rule.depth_m
        loss = None
        if sim is not None:
            from core.model.pv import poa_irradiance

            geo = sim.site.geometry
            poa = poa_irradiance(sim.site.weather.data, geo, a.tilt_deg, a.azimuth_deg)
            loss = annual_shading_loss(poa["poa_direct"].to_numpy(), poa["poa_global"].to_numpy(),
                                       geo.apparent_zenith_deg, geo.azimuth_deg, tilt_deg=a.tilt_deg,
                                       azimuth_deg=a.azimuth_deg, length_m=length, pitch_m=a.row_pitch_m)
        short = gap < rule.gap_m - 1e-9
        status: Status = "warn" if short or (loss is not None and loss > SHADING_LOSS_WARN) else "pass"
        lost = "" if loss is None else f"; over the year the row in front takes {loss * 100:.1f} % of the irradiance"
        checks.append(Check(
            id="spacing.rows", status=status, value=round(gap, 3), limit=round(rule.gap_m, 3), unit="m",
            sentence=(f"{array_words(a.name)}: rows of {length:.2f} m at {a.tilt_deg:.0f}° on a {a.row_pitch_m:.2f} m pitch "
                      f"leave a {gap:.2f} m clear gap; {rule.gap_m:.2f} m (pitch {rule.pitch_m:.2f} m) keeps them "
                      f"unshaded on the winter solstice from {rule.window_h[0]:g}:00 to {rule.window_h[1]:g}:00 solar "
                      f"time{lost}."),
            source="solar geometry (Duffie & Beckman §1.6); pvlib.shading.shaded_fraction1d; design window: common "
                   "practice",
            caution=CAUTION_STRUCTURE, subject=f"array {a.name}"))
    return checks
