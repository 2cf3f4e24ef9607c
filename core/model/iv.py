"""Modules and strings under uneven irradiance: I-V curves with a bypass diode per substring.

Single-diode parameters are fitted to the datasheet's STC points by De Soto, Klein & Beckman, "Improvement and
validation of a model for photovoltaic array performance", Solar Energy 80 (2006) 78-88
(:func:`pvlib.ivtools.sdm.fit_desoto`) and moved to the operating irradiance and cell temperature with
:func:`pvlib.pvsystem.calcparams_desoto`. A substring (the cells behind one bypass diode) is the module's equivalent
circuit with its series voltage terms divided by the number of diodes; its curve comes from
:func:`pvlib.singlediode.bishop88` (Bishop, Solar Cells 25 (1988) 73-89) and its voltage never goes below the
bypass diode's ``-forward voltage``. Substrings in series share one current, so a string's voltage at a current is
the sum of its substrings' voltages.

The operating point: ``"global"`` is the highest power inside the converter's MPPT voltage window (a scanning
tracker); ``"local"`` is the first power maximum met when walking from open circuit towards short circuit (a
simple perturb-and-observe tracker that starts near Voc and sticks to the first hill). Where the window cuts the
curve, the converter works at the window's edge -- the best point it may reach.

The work is done only for shaded patterns and cached by pattern: substring irradiance relative to the unshaded
one (steps of 1 %), the unshaded irradiance (25 W/m2 bins) and cell temperature (2 C bins).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pvlib

from core.errors import InputError

#: Forward voltage of a bypass (Schottky) diode at module current, V (common practice, about 0.4-0.6 V; from
#: memory).
BYPASS_FORWARD_V = 0.5
#: Manufacturing mismatch between modules in one string, a share of its DC power (common practice, about
#: 1-2 %; from memory). Modules on their own microinverters have none beyond the module's own.
STRING_MISMATCH = 0.015
#: Typical open-circuit voltage of one crystalline-silicon cell at STC, V (common practice, 0.6-0.72 V).
CELL_VOC_V = 0.68
#: Cell counts in series that modules are built with (common practice).
COMMON_CELL_COUNTS = (32, 36, 40, 48, 54, 60, 66, 72, 78, 80, 96, 104, 108, 120, 132, 144)

_RATIO_STEP = 0.01
_G_BIN = 25.0
_T_BIN = 2.0
_N_CURRENT = 1000
_VD_FRACTIONS = np.concatenate([np.linspace(-0.04, 0.0, 12, endpoint=False),
                                1.0 - np.geomspace(1.0, 1e-4, 400)])


@dataclass(frozen=True)
class DiodeModel:
    """De Soto reference parameters of one module (pvlib's names) and its cells in series."""

    a_ref: float
    I_L_ref: float
    I_o_ref: float
    R_sh_ref: float
    R_s: float
    alpha_sc_a_per_c: float
    cells_in_series: int


def estimate_cells_in_series(voc_v: float) -> int:
    """Cells in series from the module's Voc: Voc / 0.68 V, snapped to the nearest common count (common practice)."""
    guess = float(voc_v) / CELL_VOC_V
    return int(min(COMMON_CELL_COUNTS, key=lambda n: abs(n - guess)))


def fit_module(*, voc_v: float, isc_a: float, vmp_v: float, imp_a: float, alpha_isc_pct_per_c: float,
               beta_voc_pct_per_c: float, cells_in_series: int | None = None) -> DiodeModel:
    """Single-diode parameters from the datasheet (De Soto et al. 2006, :func:`pvlib.ivtools.sdm.fit_desoto`)."""
    cells = int(cells_in_series) if cells_in_series else estimate_cells_in_series(voc_v)
    alpha = float(alpha_isc_pct_per_c) / 100.0 * float(isc_a)
    beta = float(beta_voc_pct_per_c) / 100.0 * float(voc_v)
    params = None
    # scipy's default root finder often stalls on De Soto's five equations; Levenberg-Marquardt is steadier.
    for method in ("lm", "hybr"):
        try:
            params, _ = pvlib.ivtools.sdm.fit_desoto(float(vmp_v), float(imp_a), float(voc_v), float(isc_a), alpha,
                                                     beta, cells, root_kwargs={"method": method})
        except (RuntimeError, ValueError, FloatingPointError):
            continue
        if all(np.isfinite(float(params[k])) and float(params[k]) > 0 for k in ("a_ref", "I_L_ref", "I_o_ref", "R_sh_ref")):
            break
        params = None
    if params is None:
        raise InputError("the single-diode model cannot be fitted to this datasheet (Voc, Isc, Vmp, Imp and the "
                         "temperature coefficients do not make a consistent curve)", where="module",
                         hint="check voc_v > vmp_v, isc_a > imp_a and the coefficients' signs; set cells_in_series")
    return DiodeModel(a_ref=float(params["a_ref"]), I_L_ref=float(params["I_L_ref"]),
                      I_o_ref=float(params["I_o_ref"]), R_sh_ref=float(params["R_sh_ref"]),
                      R_s=float(params["R_s"]), alpha_sc_a_per_c=alpha, cells_in_series=cells)


def operating_params(model: DiodeModel, g_eff_w_m2, t_cell_c):
    """(IL, I0, Rs, Rsh, nNsVth) of the whole module at the given effective irradiance and cell temperature."""
    g = np.maximum(np.asarray(g_eff_w_m2, float), 0.0)
    il, i0, rs, rsh, nvth = pvlib.pvsystem.calcparams_desoto(
        g, np.asarray(t_cell_c, float), model.alpha_sc_a_per_c, model.a_ref, model.I_L_ref, model.I_o_ref,
        model.R_sh_ref, model.R_s)
    shape = np.broadcast(g, np.asarray(t_cell_c, float)).shape
    return tuple(np.broadcast_to(np.asarray(x, float), shape) for x in (il, i0, rs, rsh, nvth))


def substring_voltages(model: DiodeModel, g_eff_w_m2, t_cell_c, currents_a, diodes: int,
                       forward_v: float = BYPASS_FORWARD_V) -> np.ndarray:
    """Voltage of substrings at the given currents (substrings, currents), bypass diode included.

    Each substring is 1/``diodes`` of the module in series (Rs, Rsh and the diode's thermal voltage divided); its
    curve is sampled with :func:`pvlib.singlediode.bishop88` over diode voltages up to open circuit and a little
    into reverse, then read at ``currents_a``; where the substring would need more reverse voltage than the bypass
    diode allows, the diode takes the current and the substring sits at ``-forward_v``.
    """
    il, i0, rs, rsh, nvth = operating_params(model, g_eff_w_m2, t_cell_c)
    il, i0 = np.atleast_1d(il), np.atleast_1d(i0)
    rs, rsh, nvth = (np.atleast_1d(x) / diodes for x in (rs, rsh, nvth))
    with np.errstate(divide="ignore", invalid="ignore"):
        vd_oc = np.where(il > 0, nvth * np.log1p(il / np.where(i0 > 0, i0, 1.0)), 0.0)
    vd = vd_oc[:, None] * _VD_FRACTIONS[None, :]
    vd[:, :12] = np.linspace(-forward_v - 0.5, 0.0, 12, endpoint=False)[None, :]
    i, v, _ = pvlib.singlediode.bishop88(vd, il[:, None], i0[:, None], rs[:, None], rsh[:, None], nvth[:, None])
    currents = np.asarray(currents_a, float)
    out = np.empty((len(il), len(currents)))
    for k in range(len(il)):
        ik, vk = i[k][::-1], v[k][::-1]  # current falls as the diode voltage rises: reverse to increasing
        out[k] = np.interp(currents, ik, vk, left=vk[0], right=-forward_v)
    return np.maximum(out, -forward_v)


def operating_point(currents_a: np.ndarray, volts: np.ndarray, *, v_min: float = 0.0, v_max: float = np.inf,
                    tracker: str = "global") -> tuple[np.ndarray, np.ndarray]:
    """Power and voltage where a converter works on each curve (rows of ``volts`` at ``currents_a``).

    ``global``: the highest power with the voltage inside [v_min, v_max]. ``local``: from the open-circuit end,
    climb while power rises and stop at the first maximum (inside the window). A parabola through the best grid
    point and its neighbours refines the power. No point in the window: zero.
    """
    if tracker not in ("global", "local"):
        raise ValueError(f"unknown tracker {tracker!r}")
    p = currents_a[None, :] * volts
    ok = (volts >= v_min) & (volts <= v_max) & (p > 0.0)
    masked = np.where(ok, p, -np.inf)
    if tracker == "global":
        best = np.argmax(masked, axis=1)
    else:
        start = np.argmax(ok, axis=1)
        nxt = np.concatenate([masked[:, 1:], np.full((len(p), 1), -np.inf)], axis=1)
        cols = np.arange(p.shape[1])[None, :]
        stop = (nxt < masked) & (cols >= start[:, None])
        best = np.argmax(stop, axis=1)
    rows = np.arange(len(p))
    p0 = masked[rows, best]
    lo, hi = np.maximum(best - 1, 0), np.minimum(best + 1, p.shape[1] - 1)
    pl, ph = masked[rows, lo], masked[rows, hi]
    inner = (best > 0) & (best < p.shape[1] - 1) & np.isfinite(pl) & np.isfinite(ph)
    with np.errstate(divide="ignore", invalid="ignore"):
        denom = pl - 2.0 * p0 + ph
        refined = np.where(inner & (denom < 0), p0 - 0.125 * (ph - pl) ** 2 / denom, p0)
    power = np.where(np.any(ok, axis=1), np.maximum(refined, p0), 0.0)
    return power, np.where(np.any(ok, axis=1), volts[rows, best], 0.0)


def pattern_power_w(model: DiodeModel, sub_g_w_m2: np.ndarray, t_cell_c, *, diodes: int, v_min: float = 0.0,
                    v_max: float = np.inf, tracker: str = "global",
                    forward_v: float = BYPASS_FORWARD_V) -> np.ndarray:
    """Power (W) of series-connected substrings at the converter's operating point, per pattern.

    ``sub_g_w_m2``: (patterns, substrings) effective irradiance of every substring in series (a module has
    ``diodes`` of them); ``t_cell_c``: one cell temperature per pattern. Identical substring states share one
    curve; a pattern's voltage is the sum of its substrings' curves.
    """
    g = np.atleast_2d(np.asarray(sub_g_w_m2, float))
    t = np.broadcast_to(np.asarray(t_cell_c, float), (len(g),))
    states = np.stack([np.repeat(t[:, None], g.shape[1], axis=1).ravel(), g.ravel()], axis=1)
    uniq, inverse = np.unique(states, axis=0, return_inverse=True)
    il_max = float(np.max(operating_params(model, uniq[:, 1], uniq[:, 0])[0], initial=0.0))
    if il_max <= 0.0:
        return np.zeros(len(g))
    currents = np.linspace(0.0, il_max * 1.001, _N_CURRENT)
    curves = substring_voltages(model, uniq[:, 1], uniq[:, 0], currents, diodes, forward_v)
    # The string's voltage at each current is the sum of its substrings' voltages (they share one current).
    volts = curves[inverse.reshape(g.shape)].sum(axis=1)
    power, _ = operating_point(currents, volts, v_min=v_min, v_max=v_max, tracker=tracker)
    return power


def shaded_ratio(model: DiodeModel, sub_g_w_m2: np.ndarray, g_ref_w_m2, t_cell_c, *, diodes: int,
                 v_min: float = 0.0, v_max: float = np.inf, tracker: str = "global") -> np.ndarray:
    """Per step: power of the substrings in series at the converter's point over their power if all saw
    ``g_ref_w_m2`` (unshaded, unconstrained maximum). 1 where the pattern is uniform (no I-V work); 0 in the dark.

    Patterns are rounded (1 % of the unshaded irradiance, 25 W/m2, 2 C) and each distinct one is solved once.
    """
    g = np.asarray(sub_g_w_m2, float)
    ref = np.asarray(g_ref_w_m2, float)
    t = np.asarray(t_cell_c, float)
    ratio = np.where(ref > 0.0, 1.0, 0.0)
    uneven = (ref > 1.0) & np.any(np.abs(g - ref[:, None]) > 1e-9 * np.maximum(ref[:, None], 1.0), axis=1)
    if not uneven.any():
        return ratio
    rel = np.rint(g[uneven] / ref[uneven, None] / _RATIO_STEP).astype(np.int64)
    g_bin = np.maximum(np.rint(ref[uneven] / _G_BIN), 1).astype(np.int64)
    t_bin = np.rint(t[uneven] / _T_BIN).astype(np.int64)
    keys = np.concatenate([rel, g_bin[:, None], t_bin[:, None]], axis=1)
    uniq, inverse = np.unique(keys, axis=0, return_inverse=True)
    g_ref_q = uniq[:, -2] * _G_BIN
    t_q = uniq[:, -1] * _T_BIN
    sub_q = uniq[:, :-2] * _RATIO_STEP * g_ref_q[:, None]
    out = np.empty(len(uniq))
    per_chunk = max(1, 4000 // sub_q.shape[1])  # patterns × substrings × currents stays a few tens of MB
    for chunk in range(0, len(uniq), per_chunk):
        sl = slice(chunk, chunk + per_chunk)
        shaded = pattern_power_w(model, sub_q[sl], t_q[sl], diodes=diodes, v_min=v_min, v_max=v_max,
                                 tracker=tracker)
        # Unshaded: every substring alike, i.e. the module's own maximum power point (pvlib) times the modules.
        params = operating_params(model, g_ref_q[sl], t_q[sl])
        plain = np.asarray(pvlib.pvsystem.max_power_point(*params, method="newton")["p_mp"], float) * sub_q.shape[1] / diodes
        with np.errstate(divide="ignore", invalid="ignore"):
            out[sl] = np.where(plain > 0, shaded / plain, 0.0)
    ratio[uneven] = np.clip(out[inverse.ravel()], 0.0, 1.0)
    return ratio
