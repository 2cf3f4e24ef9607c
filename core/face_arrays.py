"""Arrays on a roof face with a layout and surroundings: per-substring shading, strings from I-V curves, and
the loss chain from the potential in the plane of the array to delivered energy.

Orchestration (like :mod:`core.simulate`, which calls it): it composes the leaves :mod:`core.model.pv`,
:mod:`core.model.shading` and :mod:`core.model.iv`. Modules of the arrays that name a face fill the face's layout
in the order the arrays are listed, row by row from the lowest (or front) row, left to right; a DC array's strings
take consecutive positions.

The loss chain per step multiplies the potential ``n * Pmax * POA / 1000`` (POA without horizon or shading) by the
shares kept after the horizon, the obstacles, the rows in front, the other losses (reflection at the glass, the
array's ``losses_pct``), temperature and, for strings, manufacturing mismatch; what each stage takes is its loss.
The last stage is the array's DC power itself, so the chain closes exactly.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from core.errors import InputError
from core.model import iv, pv, shading
from core.scenario import Array, Scenario
from core.scenario.schema import Face

#: Obstacle shadows are traced at most this often (s); finer steps take the nearest trace.
SHADE_STEP_S = 300
#: Names of the losses before the converter, in the chain's order.
DC_LOSSES = ("horizon", "obstacles", "row_shading", "other", "temperature", "mismatch")


def face_of(sc: Scenario, array: Array) -> Face | None:
    """The array's face when it has a layout or surroundings that shade (else None: today's model applies)."""
    if array.face is None:
        return None
    face = next((f for f in sc.faces if f.name == array.face), None)
    if face is None:
        return None
    racked = face.mount == "rack" and face.row_pitch_m is not None and (face.rows or 1) > 1
    if face.rows is None and face.columns is None and not face.horizon and not face.obstacles and not racked:
        return None
    return face


def placement(sc: Scenario, array: Array) -> tuple[int, int]:
    """(first position, layout size) of the array's modules on its face; bad input when they do not fit."""
    i_face = next(i for i, f in enumerate(sc.faces) if f.name == array.face)
    face = sc.faces[i_face]
    on_face = [a for a in sc.arrays if a.face == array.face]
    total = sum(a.module_count for a in on_face)
    size = (face.rows or 1) * (face.columns or max(total, face.max_modules, 1))
    if total > size:
        raise InputError(f"the arrays on face {face.name!r} have {total} modules, but its layout holds {size}",
                         where=f"faces[{i_face}].rows", hint="give the face enough rows × columns for its modules")
    first = 0
    for a in on_face:
        if a.name == array.name:
            break
        first += a.module_count
    return first, size


def layout_for(face: Face, module, size: int) -> shading.FaceLayout:
    rows = face.rows or 1
    cells = module.cells_in_series or iv.estimate_cells_in_series(module.voc_v)
    pitch = face.row_pitch_m if face.mount == "rack" and rows > 1 else None
    return shading.FaceLayout(tilt_deg=face.tilt_deg, azimuth_deg=face.azimuth_deg, rows=rows,
                              columns=size // rows, length_m=module.length_m, width_m=module.width_m,
                              portrait=face.module_orientation == "portrait", bypass_diodes=face.bypass_diodes,
                              blocks=max(1, cells // face.bypass_diodes // 2), row_pitch_m=pitch)


@dataclass(frozen=True)
class FacePower:
    """One face array's DC power (W per step) and, for microinverters, each module's; the chain's yearly losses."""

    p_dc_w: np.ndarray
    per_module_w: np.ndarray | None  # (modules, steps) on microinverters, else None
    poa_wh: float
    losses_wh: dict[str, float]


def _safe(num, den):
    num, den = np.asarray(num, float), np.asarray(den, float)
    return np.divide(num, den, out=np.zeros(np.broadcast(num, den).shape), where=den > 0)


def chain_losses(e0_w: np.ndarray, shares: dict[str, np.ndarray], final_w: np.ndarray, dt_h: float) -> dict[str, float]:
    """Yearly loss (Wh) of each stage: the power before it times one minus the share it keeps; the last stage
    ends on ``final_w`` so that potential − losses = final exactly."""
    names = list(shares)
    level = np.asarray(e0_w, float)
    out = {}
    for i, name in enumerate(names):
        nxt = np.asarray(final_w, float) if i == len(names) - 1 else level * shares[name]
        out[name] = float((level - nxt).sum() * dt_h)
        level = nxt
    return out


def face_array_power(site, sc: Scenario, array: Array, mo: pv.ModuleOutput, diffuse_iam: dict,
                     shade_cache: dict | None = None) -> FacePower:
    """DC power of an array on a face with its shading, from the unshaded module output ``mo`` (same orientation).

    ``shade_cache``: a dict kept by the caller where the face's block shading (the same for every array and option
    on it) is computed once per site and layout."""
    shade_cache = {} if shade_cache is None else shade_cache
    face = face_of(sc, array)
    if face is None:
        raise ValueError(f"array {array.name!r} has no face with a layout or shading; call this only for one that has")
    m = sc.modules[array.module]
    first, size = placement(sc, array)
    lay = layout_for(face, m, size)
    n = array.module_count
    geo = site.geometry
    zen, az = geo.apparent_zenith_deg, geo.azimuth_deg
    poa = pv.poa_irradiance(site.weather.data, geo, face.tilt_deg, face.azimuth_deg)
    zero = dict(poa_isotropic=0.0, poa_horizon=0.0, poa_ground_diffuse=0.0)
    beam_eff = pv.effective_irradiance(poa.assign(**zero), diffuse_iam=diffuse_iam, tilt_deg=face.tilt_deg)
    iso = poa["poa_isotropic"].to_numpy() * diffuse_iam["sky"]
    band = poa["poa_horizon"].to_numpy() * diffuse_iam["horizon"]
    ground = poa["poa_ground_diffuse"].to_numpy() * diffuse_iam["ground"]
    # No profile: nothing blocks (the beam the file gives at sunrise and sunset stays, as for any other array).
    vis = shading.beam_visible(zen, az, face.horizon).astype(float) if face.horizon else np.ones(len(zen))
    sky = shading.face_sky_factors(lay, face.horizon, face.obstacles)
    g_h = beam_eff * vis + iso * sky["sky_horizon"] + band * sky["band_horizon"] + ground
    g_ho = beam_eff * vis + iso * sky["sky"] + band * sky["band"] + ground
    poa0 = poa["poa_global"].to_numpy()
    # The same sum as pv.poa_irradiance's poa_global (its diffuse part kept non-negative), with the horizon applied.
    poa_h = poa["poa_direct"].to_numpy() * vis + np.maximum(
        poa["poa_circumsolar"].to_numpy() * vis + poa["poa_isotropic"].to_numpy() * sky["sky_horizon"]
        + poa["poa_horizon"].to_numpy() * sky["band_horizon"] + poa["poa_ground_diffuse"].to_numpy(), 0.0)
    t_cell = mo.t_cell_c
    base = pv.module_dc_power_w(g_ho, t_cell, m.pmax_w, m.gamma_pmax_pct_per_c).clip(min=0.0) * (
        1.0 - array.losses_pct / 100.0)

    # Substring beam shares of this array's modules, only on the steps where a shadow falls.
    mine = slice(first, first + n)
    lit = (beam_eff * vis > 0.0)
    idx = np.flatnonzero(lit)
    obst = np.ones((len(idx), n, lay.bypass_diodes))
    rows = np.ones_like(obst)
    key = (site.key, face, lay)
    if key not in shade_cache:
        whole_o = whole_r = None
        if face.obstacles and len(idx):
            # Shadows move about a degree in five minutes: finer steps take the shade of the nearest 5-minute mark.
            k = max(1, SHADE_STEP_S // site.step_s)
            near = np.clip(np.rint(idx / k).astype(np.int64) * k, 0, len(zen) - 1)
            marks, which = np.unique(near, return_inverse=True)
            whole_o = shading.substring_beam_factor(shading.obstacle_block_shade(zen[marks], az[marks], lay,
                                                                                 face.obstacles))[which.ravel()]
        if lay.row_pitch_m is not None and len(idx):
            whole_r = shading.substring_beam_factor(shading.row_block_shade(zen[idx], az[idx], lay))
        shade_cache[key] = (whole_o, whole_r)
    whole_o, whole_r = shade_cache[key]
    if whole_o is not None:
        obst = whole_o[:, mine]
    if whole_r is not None:
        rows = whole_r[:, mine]
    both = np.minimum(obst, rows)
    model = iv.fit_module(voc_v=m.voc_v, isc_a=m.isc_a, vmp_v=m.vmp_v, imp_a=m.imp_a,
                          alpha_isc_pct_per_c=m.alpha_isc_pct_per_c, beta_voc_pct_per_c=m.beta_voc_pct_per_c,
                          cells_in_series=m.cells_in_series)
    tracker = sc.simulation.mppt_tracker
    if array.coupling == "dc":
        # the scenario reader makes a DC-coupled array name its controller and its strings
        assert array.controller is not None and array.modules_per_string is not None and array.strings is not None
        c = sc.controllers[array.controller]
        groups = [list(range(s * array.modules_per_string, (s + 1) * array.modules_per_string))
                  for s in range(array.strings)]
        window = dict(v_min=c.mppt_min_v, v_max=c.mppt_max_v)
        mismatch = iv.STRING_MISMATCH
    else:
        assert array.microinverter is not None  # the scenario reader makes an AC-coupled array name its unit
        mi = sc.microinverters[array.microinverter]
        groups = [[k] for k in range(n)]
        window = dict(v_min=mi.mppt_min_v, v_max=mi.mppt_max_v)
        mismatch = 0.0

    def ratios(beam_share: np.ndarray) -> np.ndarray:
        """(groups, steps) power share of each string or module against its unshaded power."""
        out = np.ones((len(groups), len(zen)))
        out[:, ~lit] = 1.0
        if not len(idx):
            return out
        rest = (g_ho - beam_eff * vis)[idx]
        for gi, members in enumerate(groups):
            share = beam_share[:, members, :].reshape(len(idx), -1)
            shaded = np.any(share < 1.0, axis=1)
            if not shaded.any():
                continue
            sub_g = rest[shaded, None] + (beam_eff * vis)[idx][shaded, None] * share[shaded]
            out[gi, idx[shaded]] = iv.shaded_ratio(model, sub_g, g_ho[idx][shaded], t_cell[idx][shaded],
                                                   diodes=lay.bypass_diodes, tracker=tracker, **window)
        return out

    r_obst = ratios(obst)
    r_both = r_obst if whole_r is None else ratios(both)  # no rows in front: the same patterns
    size_of = np.array([len(g) for g in groups], float)[:, None]
    mean_obst = (r_obst * size_of).sum(axis=0) / n
    mean_both = (r_both * size_of).sum(axis=0) / n
    p_dc = n * base * mean_both * (1.0 - mismatch)
    per_module = None
    if array.coupling == "ac":
        per_module = base[None, :] * r_both
    e0 = n * m.pmax_w * poa0 / 1000.0
    f_temp = 1.0 + m.gamma_pmax_pct_per_c / 100.0 * (t_cell - 25.0)
    shares = {"horizon": _safe(poa_h, poa0), "obstacles": _safe(g_ho, g_h) * mean_obst,
              "row_shading": _safe(mean_both, mean_obst), "other": _safe(g_h, poa_h) * (1 - array.losses_pct / 100),
              "temperature": f_temp, "mismatch": np.full(len(zen), 1.0 - mismatch)}
    return FacePower(p_dc_w=p_dc, per_module_w=per_module, poa_wh=float(e0.sum() * site.dt_h),
                     losses_wh=chain_losses(e0, shares, p_dc, site.dt_h))


def plain_array_losses(site, sc: Scenario, array: Array, mo: pv.ModuleOutput) -> tuple[float, dict[str, float]]:
    """(poa Wh, losses Wh) of an array without face shading: the old row shading (if any), other, temperature."""
    m = sc.modules[array.module]
    n = array.module_count
    poa0 = mo.poa_w_m2
    if array.row_pitch_m is not None:
        poa0 = pv.poa_irradiance(site.weather.data, site.geometry, array.tilt_deg, array.azimuth_deg)[
            "poa_global"].to_numpy()
    e0 = n * m.pmax_w * poa0 / 1000.0
    f_temp = 1.0 + m.gamma_pmax_pct_per_c / 100.0 * (mo.t_cell_c - 25.0)
    final = mo.p_dc_w * n
    shares = {"horizon": np.ones_like(e0), "obstacles": np.ones_like(e0), "row_shading": _safe(mo.poa_w_m2, poa0),
              "other": _safe(final, e0 * _safe(mo.poa_w_m2, poa0) * f_temp), "temperature": f_temp,
              "mismatch": np.ones_like(e0)}
    return float(e0.sum() * site.dt_h), chain_losses(e0, shares, final, site.dt_h)


def array_breakdown(sim) -> list[dict]:
    """Per array (kWh for the year): the potential in its plane, each loss from there to the energy delivered, its
    module DC and delivered energy. A converter's clipping, conversion loss and curtailment are split among the
    arrays it serves in proportion to their power in each step. Keys as ``simulate --json`` gives them."""
    sc, src, steps, dt = sim.scenario, sim.sources, sim.steps, sim.site.dt_h
    n = len(steps)
    groups = {"dc": ("curtailed_dc_w", "controller_loss_w"), "backed_up": ("curtailed_ac_backed_w",
                                                                           "ac_backed_conversion_loss_w"),
              "grid": ("curtailed_ac_grid_w", "ac_grid_conversion_loss_w")}
    group_of = {a.name: ("dc" if a.coupling == "dc" else a.side) for a in sc.arrays}
    accepted = {a.name: src.per_array_dc_w[a.name] - src.per_array_clipped_w.get(a.name, np.zeros(n))
                for a in sc.arrays}
    totals = {g: sum((accepted[a] for a, k in group_of.items() if k == g), np.zeros(n)) for g in groups}
    out = []
    for a in sc.arrays:
        g = group_of[a.name]
        share = np.divide(accepted[a.name], totals[g], out=np.zeros(n), where=totals[g] > 0)
        curt = float((steps[groups[g][0]].to_numpy() * share).sum() * dt)
        conv = float((steps[groups[g][1]].to_numpy() * share).sum() * dt)
        clip = float(src.per_array_clipped_w.get(a.name, np.zeros(n)).sum() * dt)
        dc = float(src.per_array_dc_w[a.name].sum() * dt)
        poa_wh, losses = src.per_array_chain.get(a.name, (dc, {k: 0.0 for k in DC_LOSSES}))
        kwh = {k: losses.get(k, 0.0) / 1000.0 for k in DC_LOSSES}
        kwh.update(clipping=clip / 1000.0, conversion=conv / 1000.0, curtailment=curt / 1000.0)
        out.append({"name": a.name, "face": a.face, "coupling": a.coupling if a.coupling == "dc" else f"ac_{a.side}",
                    "poa_kwh": poa_wh / 1000.0,
                    "losses_kwh": {k: kwh[k] for k in ("horizon", "obstacles", "row_shading", "mismatch",
                                                       "temperature", "clipping", "conversion", "curtailment",
                                                       "other")},
                    "dc_kwh": dc / 1000.0, "ac_kwh": (dc - clip - conv - curt) / 1000.0})
    return out


def step_note(step_s: int, weather_source: str) -> str:
    """One line that says at which step the year ran and how the sun inside each hour was made."""
    step = f"{step_s // 60} min" if step_s < 3600 else f"{step_s // 3600} h"
    if "synthetic" in weather_source:
        how = "synthetic minutes inside each hour of the weather file (each hour's mean kept)"
    elif "interpolated" in weather_source:
        how = "a smooth curve inside each hour of the weather file (each hour's mean kept)"
    else:
        how = "the weather file's own step"
    return f"Step: {step}; sunshine: {how}. Hourly is one choice away: [simulation] step_s = 3600."


def module_shade_hours(site, face: Face, module) -> tuple[shading.FaceLayout, np.ndarray]:
    """Hours a year each module position of a face has part of its cells in an obstacle's or a row's shadow (or
    the sun behind the horizon) while the sun is up and in front of the face: (layout, hours per module)."""
    size = (face.rows or 1) * (face.columns or max(face.max_modules, 1))
    lay = layout_for(face, module, size)
    geo = site.geometry
    zen, az = geo.apparent_zenith_deg, geo.azimuth_deg
    sun = shading.sun_vectors(zen, az)
    _, _, _, normal = shading.face_vectors(face.tilt_deg, face.azimuth_deg)
    up = (zen < 90.0) & (sun @ normal > 0.0) & (site.weather.data["dni"].to_numpy() > 0.0)
    idx = np.flatnonzero(up)
    dark = np.zeros((len(idx), lay.n_modules), dtype=bool)
    if face.obstacles:
        dark |= shading.obstacle_block_shade(zen[idx], az[idx], lay, face.obstacles).max(axis=(2, 3)) > 0.0
    if lay.row_pitch_m is not None:
        dark |= shading.row_block_shade(zen[idx], az[idx], lay).max(axis=(2, 3)) > 0.0
    if face.horizon:
        dark |= ~shading.beam_visible(zen[idx], az[idx], face.horizon)[:, None]
    return lay, dark.sum(axis=0) * site.dt_h
