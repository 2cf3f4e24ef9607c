"""The PV array chain for one module at one orientation: plane-of-array irradiance, angle-of-incidence loss,
cell temperature, DC power and the module's operating voltages and currents.

Pure functions over numpy/pandas in pvlib's style. The result of :func:`module_output` does not depend on how many
modules an array has; array DC power is ``n_modules * p_dc_w`` (done by the caller), so changing a panel count does
not recompute irradiance.

Conventions: powers in W (interval means), irradiance in W/m2, temperatures in C, angles in degrees, surface
azimuth clockwise from north (180 = south, pvlib's convention), tilt from horizontal.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass
from typing import TYPE_CHECKING

import numpy as np
import pandas as pd
import pvlib

from core.errors import InputError

if TYPE_CHECKING:  # the geometry is passed in; only its attributes are used
    from core.model.solar import SolarGeometry

#: Mount name -> SAPM temperature-model parameter set (King et al. 2004, SAND2004-3535, Table 1, as shipped in
#: ``pvlib.temperature.TEMPERATURE_MODEL_PARAMETERS["sapm"]``). "rack": an open rack with free air flow behind
#: the module, using the glass/polymer-backsheet set because most modules on home roofs have a backsheet.
#: "flush": mounted close to the roof with little air gap, using the close-roof-mount glass/glass set -- the
#: only close-mount set King et al. give.
MOUNT_TO_SAPM = {"rack": "open_rack_glass_polymer", "flush": "close_mount_glass_glass"}

_IAM_MODELS = ("physical", "ashrae", "martin_ruiz", "none")


@dataclass(frozen=True)
class ModuleOutput:
    """ONE module at one orientation, per interval of the weather index.

    ``p_dc_w``: module DC power after array losses (``losses_pct``) and shading, W (interval mean).
    ``poa_w_m2``: plane-of-array global irradiance reaching the module (after shading, before AOI loss).
    ``t_cell_c``: SAPM cell temperature. Voltages and currents at the module's maximum power point and its
    open-circuit/short-circuit points, corrected for cell temperature and irradiance (zero when dark).
    """

    p_dc_w: np.ndarray
    poa_w_m2: np.ndarray
    t_cell_c: np.ndarray
    voc_v: np.ndarray
    vmp_v: np.ndarray
    isc_a: np.ndarray
    imp_a: np.ndarray


def poa_irradiance(weather_df: pd.DataFrame, geometry: SolarGeometry, tilt_deg: float, azimuth_deg: float, *,
                   albedo: float = 0.2) -> pd.DataFrame:
    """Plane-of-array irradiance by the Perez et al. (1990) transposition model.

    :func:`pvlib.irradiance.get_total_irradiance` with ``model="perez"``, the extraterrestrial irradiance and
    relative air mass from ``geometry`` (apparent zenith, as pvlib's ModelChain does), and a ground-reflected part
    from ``albedo``. Columns (W/m2 unless stated): ``poa_global``, ``poa_direct``, ``poa_diffuse`` (sky + ground),
    ``poa_circumsolar``, ``poa_isotropic``, ``poa_horizon``, ``poa_ground_diffuse``, ``aoi_deg``. NaN (night) -> 0.
    The tilt is kept in ``attrs["tilt_deg"]`` for :func:`effective_irradiance`.
    """
    _check_orientation(tilt_deg, azimuth_deg)
    if not 0.0 <= float(albedo) <= 1.0:
        raise InputError(f"albedo {albedo!r} is outside 0..1", where="albedo", hint="typical ground: 0.2")
    zenith = np.asarray(geometry.apparent_zenith_deg, dtype=float)
    azimuth = np.asarray(geometry.azimuth_deg, dtype=float)
    irr = pvlib.irradiance.get_total_irradiance(
        tilt_deg, azimuth_deg, zenith, azimuth,
        dni=weather_df["dni"].to_numpy(dtype=float), ghi=weather_df["ghi"].to_numpy(dtype=float),
        dhi=weather_df["dhi"].to_numpy(dtype=float), dni_extra=np.asarray(geometry.dni_extra_w_m2, dtype=float),
        airmass=np.asarray(geometry.airmass_relative, dtype=float), albedo=albedo, model="perez",
        diffuse_components=True)
    aoi = np.asarray(pvlib.irradiance.aoi(tilt_deg, azimuth_deg, zenith, azimuth), dtype=float)

    def col(name: str) -> np.ndarray:
        return np.nan_to_num(np.asarray(irr[name], dtype=float), nan=0.0).clip(min=0.0)

    out = pd.DataFrame({
        "poa_direct": col("poa_direct"),
        "poa_circumsolar": col("poa_circumsolar"),
        "poa_isotropic": col("poa_isotropic"),
        "poa_horizon": np.nan_to_num(np.asarray(irr["poa_horizon"], dtype=float), nan=0.0),
        "poa_ground_diffuse": col("poa_ground_diffuse"),
        "aoi_deg": aoi,
    }, index=weather_df.index)
    # Perez horizon brightening can be slightly negative; keep the diffuse sum non-negative.
    out["poa_diffuse"] = (out["poa_circumsolar"] + out["poa_isotropic"] + out["poa_horizon"]
                          + out["poa_ground_diffuse"]).clip(lower=0.0)
    out["poa_global"] = out["poa_direct"] + out["poa_diffuse"]
    out.attrs["tilt_deg"] = float(tilt_deg)
    return out[["poa_global", "poa_direct", "poa_diffuse", "poa_circumsolar", "poa_isotropic", "poa_horizon",
                "poa_ground_diffuse", "aoi_deg"]]


def diffuse_iam_factors(iam_model: str, tilt_deg: float) -> dict[str, float]:
    """Marion's diffuse incidence-angle modifiers of a tilted plane: keys ``sky``, ``horizon``, ``ground``.

    The IAM function integrated over the sky dome, the horizon band and the ground as seen from the plane
    (Marion, Solar Energy 147 (2017) 344-348, :func:`pvlib.iam.marion_diffuse`). They depend on the tilt and the
    IAM model only, so one computation serves every azimuth; NaN (a plane that sees none of a region) -> 0.
    """
    if iam_model == "none":
        return {"sky": 1.0, "horizon": 1.0, "ground": 1.0}
    if iam_model not in ("physical", "ashrae", "martin_ruiz"):
        raise InputError(f"unknown angle-of-incidence model {iam_model!r}", where="iam_model",
                         hint=f"use one of {', '.join(_IAM_MODELS)}")
    raw = pvlib.iam.marion_diffuse(iam_model, float(tilt_deg))
    return {k: float(np.nan_to_num(v, nan=0.0)) for k, v in raw.items()}


def effective_irradiance(poa_df: pd.DataFrame, *, iam_model: str = "physical",
                         diffuse_iam: str | float | Mapping[str, float] = "marion",
                         tilt_deg: float | None = None) -> np.ndarray:
    """Irradiance that reaches the cells after reflection losses at the module surface, W/m2.

    Direct (beam) irradiance is weighted by the incidence-angle modifier at its angle of incidence: ``"physical"``
    = :func:`pvlib.iam.physical` (De Soto et al. 2006, Fresnel/Snell with glass absorption; pvlib defaults n=1.526,
    K=4/m, L=2 mm), or ``"ashrae"``, ``"martin_ruiz"`` (pvlib defaults), or ``"none"``.

    ``diffuse_iam``: ``"marion"`` integrates the same IAM function over the sky dome, the horizon band and the
    ground (Marion, Solar Energy 147 (2017) 344-348, :func:`pvlib.iam.marion_diffuse`) for the isotropic, horizon
    and ground-reflected parts, while the Perez circumsolar part is treated like beam; the same three factors may
    be passed as a mapping from :func:`diffuse_iam_factors` computed once per tilt; a number is a constant
    modifier for all of the diffuse (1.0 = no diffuse loss, as pvlib's ModelChain does).
    """
    aoi = poa_df["aoi_deg"].to_numpy(dtype=float)
    direct = poa_df["poa_direct"].to_numpy(dtype=float)
    if iam_model == "none":
        beam_iam = np.ones_like(aoi)
    elif iam_model in ("physical", "ashrae", "martin_ruiz"):
        func = getattr(pvlib.iam, iam_model)
        beam_iam = np.nan_to_num(np.asarray(func(np.clip(aoi, 0.0, 90.0)), dtype=float), nan=0.0)
        beam_iam = np.where(aoi >= 90.0, 0.0, beam_iam)
    else:
        raise InputError(f"unknown angle-of-incidence model {iam_model!r}", where="iam_model",
                         hint=f"use one of {', '.join(_IAM_MODELS)}")
    if isinstance(diffuse_iam, str | Mapping):
        if isinstance(diffuse_iam, Mapping):
            iam_d = {k: float(diffuse_iam[k]) for k in ("sky", "horizon", "ground")}
        elif diffuse_iam != "marion":
            raise InputError(f"unknown diffuse IAM {diffuse_iam!r}", where="diffuse_iam",
                             hint="use 'marion' or a number between 0 and 1")
        else:
            tilt = tilt_deg if tilt_deg is not None else poa_df.attrs.get("tilt_deg")
            if tilt is None:
                raise ValueError("effective_irradiance with diffuse_iam='marion' needs tilt_deg")
            iam_d = diffuse_iam_factors(iam_model, float(tilt))
        diffuse = (poa_df["poa_circumsolar"].to_numpy(dtype=float) * beam_iam
                   + poa_df["poa_isotropic"].to_numpy(dtype=float) * iam_d["sky"]
                   + poa_df["poa_horizon"].to_numpy(dtype=float) * iam_d["horizon"]
                   + poa_df["poa_ground_diffuse"].to_numpy(dtype=float) * iam_d["ground"])
    else:
        factor = float(diffuse_iam)
        if not 0.0 <= factor <= 1.0:
            raise InputError(f"diffuse IAM {factor!r} is outside 0..1", where="diffuse_iam",
                             hint="use a number between 0 and 1, or 'marion'")
        diffuse = poa_df["poa_diffuse"].to_numpy(dtype=float) * factor
    return np.clip(direct * beam_iam + np.maximum(diffuse, 0.0), 0.0, None)


def cell_temperature(poa_global_w_m2, temp_air_c, wind_speed_m_s, mount: str) -> np.ndarray:
    """Cell temperature by the Sandia (SAPM) model, C.

    King, Boyson & Kratochvil, "Photovoltaic Array Performance Model", SAND2004-3535 (2004), eqs. 11-12:
    ``T_module = E * exp(a + b * WS) + T_air`` and ``T_cell = T_module + E / 1000 * dT``, via
    :func:`pvlib.temperature.sapm_cell`. ``mount`` selects the parameter set (:data:`MOUNT_TO_SAPM`):
    ``"rack"`` -> ``open_rack_glass_polymer`` (a=-3.56, b=-0.075, dT=3), ``"flush"`` -> ``close_mount_glass_glass``
    (a=-2.98, b=-0.0471, dT=1).
    """
    if mount not in MOUNT_TO_SAPM:
        raise InputError(f"unknown mount {mount!r}", where="mount",
                         hint=f"use one of {', '.join(repr(m) for m in MOUNT_TO_SAPM)}")
    params = pvlib.temperature.TEMPERATURE_MODEL_PARAMETERS["sapm"][MOUNT_TO_SAPM[mount]]
    return np.asarray(pvlib.temperature.sapm_cell(
        np.asarray(poa_global_w_m2, dtype=float), np.asarray(temp_air_c, dtype=float),
        np.asarray(wind_speed_m_s, dtype=float), params["a"], params["b"], params["deltaT"]), dtype=float)


def module_dc_power_w(effective_irradiance_w_m2, cell_temp_c, pmax_w: float, gamma_pmax_pct_per_c: float) -> np.ndarray:
    """Module DC power by the PVWatts model (Dobos 2014, NREL/TP-6A20-62641), W.

    ``P = Pmax * G_eff / 1000 * (1 + gamma * (T_cell - 25 C))`` via :func:`pvlib.pvsystem.pvwatts_dc`;
    ``gamma_pmax_pct_per_c`` in %/C as on datasheets (e.g. -0.35).
    """
    return np.asarray(pvlib.pvsystem.pvwatts_dc(
        np.asarray(effective_irradiance_w_m2, dtype=float), np.asarray(cell_temp_c, dtype=float),
        pdc0=float(pmax_w), gamma_pdc=float(gamma_pmax_pct_per_c) / 100.0), dtype=float)


def module_voltages(effective_irradiance_w_m2, cell_temp_c, *, voc_v: float, vmp_v: float, isc_a: float,
                    imp_a: float, beta_voc_pct_per_c: float, alpha_isc_pct_per_c: float) -> dict[str, np.ndarray]:
    """Module Voc, Vmp, Isc, Imp at the operating conditions (keys ``voc_v``, ``vmp_v``, ``isc_a``, ``imp_a``).

    Voltages: datasheet STC values corrected linearly for cell temperature with the Voc coefficient,
    ``V = V_STC * (1 + beta * (T_cell - 25))`` (the form of NEC 690.7(A)(1); applying beta to Vmp too is common
    practice). Currents: STC values scaled by ``G_eff / 1000`` and corrected with the Isc coefficient alpha (applied
    to Imp as well, common practice). The logarithmic dependence of voltage on irradiance is neglected; when there
    is no light (``G_eff <= 0``) all four are zero.
    """
    g = np.asarray(effective_irradiance_w_m2, dtype=float)
    dt_c = np.asarray(cell_temp_c, dtype=float) - 25.0
    lit = g > 0.0
    v_factor = np.where(lit, 1.0 + float(beta_voc_pct_per_c) / 100.0 * dt_c, 0.0)
    i_factor = np.where(lit, g / 1000.0 * (1.0 + float(alpha_isc_pct_per_c) / 100.0 * dt_c), 0.0)
    return {"voc_v": float(voc_v) * v_factor, "vmp_v": float(vmp_v) * v_factor,
            "isc_a": float(isc_a) * i_factor, "imp_a": float(imp_a) * i_factor}


def module_output(weather_df: pd.DataFrame, geometry: SolarGeometry, *, tilt_deg: float, azimuth_deg: float,
                  mount: str, losses_pct: float, pmax_w: float, vmp_v: float, imp_a: float, voc_v: float,
                  isc_a: float, gamma_pmax_pct_per_c: float, beta_voc_pct_per_c: float, alpha_isc_pct_per_c: float,
                  shading_loss=None, albedo: float = 0.2, iam_model: str = "physical",
                  diffuse_iam: str | float | Mapping[str, float] = "marion") -> ModuleOutput:
    """The whole chain for ONE module at one orientation (count-independent; cache it per orientation).

    Perez POA (:func:`poa_irradiance`) -> optional shading of the beam -> AOI loss (:func:`effective_irradiance`)
    -> SAPM cell temperature from the POA global (:func:`cell_temperature`) -> PVWatts DC power
    (:func:`module_dc_power_w`) -> array losses: ``p_dc_w = P * (1 - losses_pct / 100)`` (wiring, mismatch,
    soiling, ... lumped) -> voltages and currents (:func:`module_voltages`).

    ``shading_loss``: None, or a fraction 0..1 (scalar or per-interval array) of the *direct* POA irradiance
    blocked, e.g. the shaded fraction of a row from :func:`pvlib.shading.shaded_fraction1d`; diffuse light is
    taken as unshaded (a simple linear beam-shading model).
    """
    losses = float(losses_pct)
    if not 0.0 <= losses < 100.0:
        raise InputError(f"losses_pct {losses_pct!r} is outside 0..100", where="losses_pct",
                         hint="lumped array losses in percent, typically 3 to 15")
    if not float(pmax_w) > 0.0:
        raise InputError(f"pmax_w {pmax_w!r} must be positive", where="pmax_w", hint="the module's STC power in W")
    poa = poa_irradiance(weather_df, geometry, tilt_deg, azimuth_deg, albedo=albedo)
    if shading_loss is not None:
        shade = np.broadcast_to(np.asarray(shading_loss, dtype=float), (len(poa),))
        if not np.all(np.isfinite(shade)) or shade.min() < 0.0 or shade.max() > 1.0:
            raise InputError("shading loss must be a fraction between 0 and 1", where="shading_loss",
                             hint="pass the shaded fraction of the direct irradiance per interval")
        poa = poa.assign(poa_direct=poa["poa_direct"] * (1.0 - shade))
        poa = poa.assign(poa_global=poa["poa_direct"] + poa["poa_diffuse"])
        poa.attrs["tilt_deg"] = float(tilt_deg)
    g_eff = effective_irradiance(poa, iam_model=iam_model, diffuse_iam=diffuse_iam, tilt_deg=tilt_deg)
    poa_global = poa["poa_global"].to_numpy(dtype=float)
    t_cell = cell_temperature(poa_global, weather_df["temp_air"].to_numpy(dtype=float),
                              weather_df["wind_speed"].to_numpy(dtype=float), mount)
    p_dc = module_dc_power_w(g_eff, t_cell, pmax_w, gamma_pmax_pct_per_c) * (1.0 - losses / 100.0)
    volts = module_voltages(g_eff, t_cell, voc_v=voc_v, vmp_v=vmp_v, isc_a=isc_a, imp_a=imp_a,
                            beta_voc_pct_per_c=beta_voc_pct_per_c, alpha_isc_pct_per_c=alpha_isc_pct_per_c)
    return ModuleOutput(p_dc_w=np.clip(p_dc, 0.0, None), poa_w_m2=poa_global, t_cell_c=t_cell, **volts)


def _check_orientation(tilt_deg: float, azimuth_deg: float) -> None:
    for key, value, low, high, hint in (
            ("tilt_deg", tilt_deg, 0.0, 90.0, "degrees from horizontal: 0 = flat, 90 = vertical"),
            ("azimuth_deg", azimuth_deg, 0.0, 360.0, "degrees clockwise from north: 180 = south, 90 = east")):
        try:
            number = float(value)
        except (TypeError, ValueError):
            raise InputError(f"{value!r} is not a number", where=key, hint=hint) from None
        if not np.isfinite(number) or not low <= number <= high:
            raise InputError(f"{number!r} is outside {low:g}..{high:g}", where=key, hint=hint)


def row_shaded_fraction(zenith_deg, sun_azimuth_deg, *, tilt_deg: float, azimuth_deg: float, length_m: float,
                        pitch_m: float) -> np.ndarray:
    """Shaded share of a row's slant length by the row in front, from :func:`pvlib.shading.shaded_fraction1d`
    (fixed tilt: the rows' axis runs at ``azimuth − 90°``, rotated by the tilt); 0 when the sun is down."""
    zen = np.asarray(zenith_deg, dtype=float)
    sf = pvlib.shading.shaded_fraction1d(zen, np.asarray(sun_azimuth_deg, dtype=float),
                                         axis_azimuth=(azimuth_deg - 90.0) % 360.0, shaded_row_rotation=tilt_deg,
                                         collector_width=length_m, pitch=pitch_m)
    return np.where(zen < 90.0, np.nan_to_num(np.asarray(sf, dtype=float), nan=0.0), 0.0)
