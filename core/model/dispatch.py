"""The time-step energy-flow engine of a zero-export hybrid system (docs/design.md §4).

Powers are step means in W, energies in Wh, the step ``dt_h`` in hours. The engine takes the
converters' outputs (controllers on the DC bus, microinverters on the backed-up and the grid side of the
inverter-charger), the loads, whether the grid is up, and the plant's parameters, and returns every
flow of every step. The rules, in the order they apply each step:

*Grid up.* The controller holds grid power at its metering point at ``+standing_draw``. With site
metering it sees ``N = L_b + L_g − H_acb − H_acg``; with inverter metering ``N = L_b − H_acb`` and the
grid side ``L_g − H_acg`` flows outside its view.

1. The inverter-charger's idle draw is a DC-bus load: DC PV first, then the battery above the
   outage reserve, then the grid through the charger.
2. ``N > standing_draw``: the inverter delivers ``min(N − standing_draw, rating)`` from DC PV first,
   then the battery above the reserve. DC PV left over charges the battery; the rest is exported
   where export is allowed (export limit, inverter rating), else curtailed at the controllers.
3. ``N ≤ standing_draw``: the AC surplus ``S = standing_draw − N`` is absorbed by the charger into the
   battery first (AC-coupled PV cannot be throttled while grid-tied, so it has priority over DC PV); DC
   PV takes the charge room left; the rest of the DC PV is curtailed. What the charger cannot absorb
   lowers grid import; below zero it is export: allowed up to the limit, beyond that (or with zero
   export) a limiter curtails the microinverters (grid side first) and without one it is
   **uncontrolled export**.
4. Below the reserve, with ``recharge_reserve_from_grid``, the charger lifts the SOC back to the reserve.

*Grid down.* Grid-only loads are unserved and grid-side microinverters stop (anti-islanding). The
idle draw is met by DC PV or the battery above the floor, else the inverter-charger is off for the
step (backed-up loads unserved, backed-up microinverters stop). A deficit is met from DC PV, then the
battery down to the floor; the rest is unserved. A surplus is absorbed by the battery; the rest is
curtailed by frequency-watt response (AC) or at the controllers (DC).

*Battery.* Energy between 0 and the usable capacity; charge and discharge efficiencies are each the
square root of the round-trip efficiency; power limits are current × nominal voltage.

The step loop is a plain function over numpy arrays; when numba is installed it is compiled (and
cached on disk), and ``dispatch(..., compiled=False)`` runs the same code as plain Python.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

#: Names of the per-step flows, in the order of the engine's output rows (all W except ``soc_wh``).
FLOWS = (
    "soc_wh",  # stored energy at the end of the step
    "load_served_w", "unserved_w",
    "grid_import_w", "grid_import_standing_w", "export_allowed_w", "export_uncontrolled_w",
    "curtailed_dc_w", "curtailed_ac_backed_w", "curtailed_ac_grid_w",  # module side: DC never converted
    "controller_loss_w", "ac_backed_conversion_loss_w", "ac_grid_conversion_loss_w",  # losses on the harvested part
    "inverter_loss_w", "idle_w", "charger_loss_w",
    "battery_charge_w", "battery_discharge_w", "battery_loss_w",  # bus side of the battery
    "inverter_ac_w", "charger_ac_w",
    "pv_to_battery_w", "grid_to_battery_w",  # bus-side charge by origin
    "dc_used_w", "ac_backed_used_w", "ac_grid_used_w",  # converter outputs actually used
    "inverter_pv_dc_w",  # DC input of the inverter that came straight from DC PV
)
_F = {name: i for i, name in enumerate(FLOWS)}


@dataclass(frozen=True)
class DispatchParams:
    dt_h: float
    usable_wh: float
    initial_wh: float
    reserve_wh: float
    floor_wh: float
    charge_max_w: float  # into the battery, DC bus side
    discharge_max_w: float  # out of the battery, DC bus side
    roundtrip_efficiency: float
    inverter_ac_w: np.ndarray  # inverter table: AC output …
    inverter_dc_w: np.ndarray  # … against DC input
    charger_rating_w: float  # AC input
    charger_efficiency: float
    idle_w: float
    standing_draw_w: float
    metering_site: bool
    export_allowed: bool
    export_limit_w: float
    limiter: bool
    recharge_reserve_from_grid: bool


@dataclass(frozen=True)
class DispatchInputs:
    load_backed_w: np.ndarray
    load_grid_only_w: np.ndarray
    dc_out_w: np.ndarray  # controllers' output on the DC bus (after clipping)
    dc_loss_w: np.ndarray  # controllers' conversion loss belonging to that output
    ac_backed_out_w: np.ndarray  # microinverters on the backed-up side
    ac_backed_loss_w: np.ndarray
    ac_grid_out_w: np.ndarray  # microinverters on the grid side
    ac_grid_loss_w: np.ndarray
    grid_up: np.ndarray  # bool


@dataclass(frozen=True)
class DispatchResult:
    flows: np.ndarray  # shape (len(FLOWS), steps)

    def __getitem__(self, name: str) -> np.ndarray:
        return self.flows[_F[name]]


def _interp(x, xp, fp):
    """``np.interp`` for one number on a rising table, step for step as NumPy computes it.

    The same binary search, the same slope ``(fp[j+1] - fp[j]) / (xp[j+1] - xp[j])`` and the same
    ``slope * (x - xp[j]) + fp[j]``, ends held flat; written out because NumPy's general routine costs more
    than the rest of a step when it is called for one number (docs/performance.md).
    """
    if x != x:  # NaN passes through, as in NumPy
        return x
    last = xp.shape[0] - 1
    if x <= xp[0]:
        return fp[0]
    if x >= xp[last]:
        return fp[last]
    lo = 0
    hi = last
    while hi - lo > 1:  # xp[lo] <= x < xp[hi]
        mid = (lo + hi) >> 1
        if xp[mid] <= x:
            lo = mid
        else:
            hi = mid
    if xp[lo] == x:
        return fp[lo]
    slope = (fp[lo + 1] - fp[lo]) / (xp[lo + 1] - xp[lo])
    return slope * (x - xp[lo]) + fp[lo]


def _kernel(lb, lg, dco, dcl, abo, abl, ago, agl, up,
            dt, usable, e0, reserve, floor, ch_max, dis_max, rte, inv_ac, inv_dc,
            chg_rating, chg_eff, idle, sd, site, exp_ok, exp_lim, limiter, recharge, out):
    eta = math.sqrt(rte)
    rating = inv_ac[-1]
    e = e0
    for t in range(lb.shape[0]):
        dc = dco[t]
        acb = abo[t]
        acg = ago[t]
        # module-side power per unit of output, to count curtailment on the module side
        r_dc = 1.0 + dcl[t] / dc if dc > 0.0 else 1.0
        r_ab = 1.0 + abl[t] / acb if acb > 0.0 else 1.0
        r_ag = 1.0 + agl[t] / ago[t] if ago[t] > 0.0 else 1.0
        grid = up[t]
        low = reserve if grid else floor
        dis_room = max(0.0, min(dis_max, (e - low) * eta / dt))
        ch_room = max(0.0, min(ch_max, (usable - e) / (eta * dt)))
        chg_cap = chg_rating
        bat_in = 0.0
        bat_out = 0.0
        pv_to_bat = 0.0
        grid_to_bat = 0.0
        chg_ac = 0.0
        chg_dc = 0.0
        inv_p_ac = 0.0
        inv_p_dc = 0.0
        g = 0.0  # grid power at the site, import positive
        inv_pv = 0.0
        curt_ab = 0.0
        curt_ag = 0.0
        unserved = 0.0
        standing = 0.0
        if not grid:  # anti-islanding: grid-side microinverters stop
            curt_ag = acg * r_ag
            acg = 0.0

        # 1. idle draw: DC PV, then battery, then (grid up) the grid through the charger
        from_dc = min(idle, dc)
        need = idle - from_dc
        from_b = min(need, dis_room)
        need -= from_b
        on = True
        if need > 1e-12:
            if grid:
                ac = need / chg_eff
                chg_ac += ac
                chg_dc += need
                chg_cap = max(0.0, chg_cap - ac)
                g += ac
            else:
                on = False  # the inverter-charger cannot run: it is off for this step
        if on:
            dc_avail = dc - from_dc
            bat_out += from_b
            dis_room -= from_b
            # energy drawn for the idle load frees the same room for charging later in the step
            ch_room = max(0.0, min(ch_max, (usable - e + from_b / eta * dt) / (eta * dt)))
            idle_used = idle
        else:
            dc_avail = dc
            idle_used = 0.0
            curt_ab = acb * r_ab
            acb = 0.0

        if grid:
            if site:
                n = lb[t] + lg[t] - acb - acg
                outside = 0.0
            else:
                n = lb[t] - acb
                outside = lg[t] - acg
            if n > sd:
                want = min(n - sd, rating)
                dc_need = _interp(want, inv_ac, inv_dc)
                use_dc = min(dc_need, dc_avail)
                use_b = min(dc_need - use_dc, dis_room)
                if dc_need - use_dc - use_b > 1e-12:
                    inv_p_dc = use_dc + use_b
                    inv_p_ac = _interp(inv_p_dc, inv_dc, inv_ac)
                else:
                    inv_p_dc = dc_need
                    inv_p_ac = want
                    standing = sd
                dc_avail -= use_dc
                inv_pv += use_dc
                bat_out += use_b
                dis_room -= use_b
                g += n - inv_p_ac
            else:
                s = sd - n
                a = min(s, chg_cap, ch_room / chg_eff)
                a = max(a, 0.0)
                chg_ac += a
                chg_dc += a * chg_eff
                chg_cap -= a
                bat_in += a * chg_eff
                ch_room -= a * chg_eff
                from_pv = min(a, max(0.0, -n))  # the AC-coupled surplus over the loads; the rest is grid
                pv_to_bat += from_pv * chg_eff
                grid_to_bat += (a - from_pv) * chg_eff
                g += n + a
                if a >= s - 1e-12:
                    standing = sd
            # DC PV left over charges the battery
            c = min(dc_avail, ch_room)
            bat_in += c
            pv_to_bat += c
            ch_room -= c
            dc_avail -= c
            g += outside
            # DC PV still left over may be exported where export is allowed
            if exp_ok and dc_avail > 0.0:
                head = min(rating - inv_p_ac, g + exp_lim)
                if head > 0.0:
                    x_dc = min(dc_avail, _interp(head, inv_ac, inv_dc))
                    x_ac = _interp(x_dc + inv_p_dc, inv_dc, inv_ac) - inv_p_ac
                    inv_p_dc += x_dc
                    inv_p_ac += x_ac
                    dc_avail -= x_dc
                    inv_pv += x_dc
                    g -= x_ac
            # export policy at the site's connection point
            export = max(0.0, -g)
            allowed = min(export, exp_lim) if exp_ok else 0.0
            excess = export - allowed
            uncontrolled = excess
            if excess > 0.0 and limiter:  # curtail the microinverters, grid side first
                cut = min(excess, acg)
                acg -= cut
                curt_ag += cut * r_ag
                cut2 = min(excess - cut, acb)
                acb -= cut2
                curt_ab += cut2 * r_ab
                g += cut + cut2
                uncontrolled = excess - cut - cut2
            imp = max(0.0, g)
            # 4. lift the SOC back to the reserve from the grid
            e_after = e + (bat_in * eta - bat_out / eta) * dt
            if recharge and e_after < reserve:
                lift = min((reserve - e_after) / (eta * dt), ch_room, chg_cap * chg_eff)
                if lift > 0.0:
                    bat_in += lift
                    grid_to_bat += lift
                    chg_dc += lift
                    chg_ac += lift / chg_eff
                    imp += lift / chg_eff
            served = lb[t] + lg[t]
            out[_F_EXPORT_ALLOWED, t] = allowed
            out[_F_EXPORT_UNCONTROLLED, t] = uncontrolled
            out[_F_GRID_IMPORT, t] = imp
            out[_F_GRID_STANDING, t] = min(imp, standing)
        else:
            if on:
                n = lb[t] - acb
                if n > 0.0:
                    want = min(n, rating)
                    dc_need = _interp(want, inv_ac, inv_dc)
                    use_dc = min(dc_need, dc_avail)
                    use_b = min(dc_need - use_dc, dis_room)
                    inv_p_dc = use_dc + use_b
                    inv_p_ac = _interp(inv_p_dc, inv_dc, inv_ac)
                    dc_avail -= use_dc
                    inv_pv += use_dc
                    bat_out += use_b
                    dis_room -= use_b
                    unserved = n - inv_p_ac
                else:
                    s = -n
                    a = min(s, chg_cap, ch_room / chg_eff)
                    chg_ac += a
                    chg_dc += a * chg_eff
                    bat_in += a * chg_eff
                    pv_to_bat += a * chg_eff
                    ch_room -= a * chg_eff
                    cut = s - a  # frequency-watt curtailment of the backed-up microinverters
                    acb -= cut
                    curt_ab += cut * r_ab
            else:
                unserved = lb[t]
            c = min(dc_avail, ch_room)
            bat_in += c
            pv_to_bat += c
            dc_avail -= c
            served = lb[t] - unserved
            unserved += lg[t]
            out[_F_EXPORT_ALLOWED, t] = 0.0
            out[_F_EXPORT_UNCONTROLLED, t] = 0.0
            out[_F_GRID_IMPORT, t] = 0.0
            out[_F_GRID_STANDING, t] = 0.0

        curt_dc = dc_avail  # DC PV that nothing could take: the controllers back off
        e = e + (bat_in * eta - bat_out / eta) * dt
        e = min(max(e, 0.0), usable)
        out[_F_SOC, t] = e
        out[_F_SERVED, t] = served
        out[_F_UNSERVED, t] = unserved
        out[_F_CURT_DC, t] = curt_dc * r_dc
        out[_F_CURT_ACB, t] = curt_ab
        out[_F_CURT_ACG, t] = curt_ag
        out[_F_LOSS_DC, t] = (dc - curt_dc) * (r_dc - 1.0)
        out[_F_LOSS_ACB, t] = acb * (r_ab - 1.0)
        out[_F_LOSS_ACG, t] = acg * (r_ag - 1.0)
        out[_F_LOSS_INV, t] = inv_p_dc - inv_p_ac
        out[_F_IDLE, t] = idle_used
        out[_F_LOSS_CHG, t] = chg_ac - chg_dc
        out[_F_BAT_IN, t] = bat_in
        out[_F_BAT_OUT, t] = bat_out
        out[_F_LOSS_BAT, t] = bat_in * (1.0 - eta) + bat_out * (1.0 / eta - 1.0)
        out[_F_INV_AC, t] = inv_p_ac
        out[_F_CHG_AC, t] = chg_ac
        out[_F_PV_BAT, t] = pv_to_bat
        out[_F_GRID_BAT, t] = grid_to_bat
        out[_F_DC_USED, t] = dc - curt_dc
        out[_F_ACB_USED, t] = acb
        out[_F_ACG_USED, t] = acg
        out[_F_INV_PV, t] = inv_pv
    return out


# Row indices as module constants, so the compiled kernel sees plain integers.
(_F_SOC, _F_SERVED, _F_UNSERVED, _F_GRID_IMPORT, _F_GRID_STANDING, _F_EXPORT_ALLOWED, _F_EXPORT_UNCONTROLLED,
 _F_CURT_DC, _F_CURT_ACB, _F_CURT_ACG, _F_LOSS_DC, _F_LOSS_ACB, _F_LOSS_ACG, _F_LOSS_INV, _F_IDLE, _F_LOSS_CHG,
 _F_BAT_IN, _F_BAT_OUT, _F_LOSS_BAT, _F_INV_AC, _F_CHG_AC, _F_PV_BAT, _F_GRID_BAT, _F_DC_USED, _F_ACB_USED,
 _F_ACG_USED, _F_INV_PV) = range(len(FLOWS))

try:  # compiled when numba is available; the plain function stays reachable as _kernel
    import numba

    # Plain Python when called from Python (the plain loop), compiled inline into the compiled kernel.
    from numba.extending import register_jitable

    _interp = register_jitable(_interp)
    _compiled_kernel = numba.njit(cache=True, nogil=True)(_kernel)
except ImportError:  # pragma: no cover - numba is a declared dependency
    _compiled_kernel = _kernel


def _as_float(a, n: int) -> np.ndarray:
    arr = np.ascontiguousarray(np.broadcast_to(np.asarray(a, dtype=float), (n,)))
    return arr


def dispatch(inputs: DispatchInputs, params: DispatchParams, *, compiled: bool = True) -> DispatchResult:
    """Run the engine over all steps; see the module docstring for the rules."""
    n = int(np.asarray(inputs.load_backed_w).shape[0])
    args = [_as_float(getattr(inputs, name), n) for name in (
        "load_backed_w", "load_grid_only_w", "dc_out_w", "dc_loss_w", "ac_backed_out_w", "ac_backed_loss_w",
        "ac_grid_out_w", "ac_grid_loss_w")]
    up = np.ascontiguousarray(np.broadcast_to(np.asarray(inputs.grid_up, dtype=np.bool_), (n,)))
    p = params
    out = np.empty((len(FLOWS), n))  # the kernel writes every flow of every step
    kernel = _compiled_kernel if compiled else _kernel
    kernel(*args, up, float(p.dt_h), float(p.usable_wh), float(p.initial_wh), float(p.reserve_wh),
           float(p.floor_wh), float(p.charge_max_w), float(p.discharge_max_w), float(p.roundtrip_efficiency),
           np.ascontiguousarray(p.inverter_ac_w, dtype=float), np.ascontiguousarray(p.inverter_dc_w, dtype=float),
           float(p.charger_rating_w), float(p.charger_efficiency), float(p.idle_w), float(p.standing_draw_w),
           bool(p.metering_site), bool(p.export_allowed), float(p.export_limit_w), bool(p.limiter),
           bool(p.recharge_reserve_from_grid), out)
    return DispatchResult(flows=out)


def _batch(lb, lg, dco, dcl, abo, abl, ago, agl, up, dt, usable, e0, reserve, floor, ch_max, dis_max, rte,
           inv_ac, inv_dc, chg_rating, chg_eff, idle, sd, site, exp_ok, exp_lim, limiter, recharge, out):
    for i in _prange(dco.shape[0]):
        _step_loop(lb, lg, dco[i], dcl[i], abo[i], abl[i], ago[i], agl[i], up, dt, usable, e0, reserve, floor,
                   ch_max, dis_max, rte, inv_ac, inv_dc, chg_rating, chg_eff, idle, sd, site, exp_ok, exp_lim,
                   limiter, recharge, out[i])
    return out


try:
    _prange = numba.prange
    _step_loop = _compiled_kernel
    _compiled_batch = numba.njit(cache=True, parallel=True)(_batch)
except NameError:  # pragma: no cover - numba is a declared dependency
    _prange = range
    _step_loop = _kernel
    _compiled_batch = _batch


def dispatch_many(load_backed_w, load_grid_only_w, grid_up, sources: dict[str, np.ndarray], params: DispatchParams,
                  *, compiled: bool = True, out: np.ndarray | None = None) -> np.ndarray:
    """Run the engine for many source variants that share loads, grid and plant (a sweep).

    ``sources`` maps ``dc_out_w``, ``dc_loss_w``, ``ac_backed_out_w``, ``ac_backed_loss_w``,
    ``ac_grid_out_w`` and ``ac_grid_loss_w`` to arrays of shape (variants, steps). Returns the flows
    with shape (variants, len(FLOWS), steps); variant ``i`` equals ``dispatch`` on row ``i``.

    ``out``: an array of that shape (float64, C order) to write the flows into, e.g. one buffer reused
    batch after batch, so that a sweep does not fault in fresh memory for every batch (docs/performance.md).
    """
    lb = np.ascontiguousarray(load_backed_w, dtype=float)
    n = lb.shape[0]
    rows = [np.ascontiguousarray(np.asarray(sources[k], dtype=float).reshape(-1, n)) for k in (
        "dc_out_w", "dc_loss_w", "ac_backed_out_w", "ac_backed_loss_w", "ac_grid_out_w", "ac_grid_loss_w")]
    k = rows[0].shape[0]
    if out is None:
        out = np.empty((k, len(FLOWS), n))  # the kernel writes every flow of every step
    elif out.shape != (k, len(FLOWS), n) or out.dtype != np.float64 or not out.flags.c_contiguous:
        raise ValueError(f"out must be a C-ordered float64 array of shape {(k, len(FLOWS), n)}")
    p = params
    args = (lb, _as_float(load_grid_only_w, n), *rows,
            np.ascontiguousarray(np.broadcast_to(np.asarray(grid_up, dtype=np.bool_), (n,))),
            float(p.dt_h), float(p.usable_wh), float(p.initial_wh), float(p.reserve_wh), float(p.floor_wh),
            float(p.charge_max_w), float(p.discharge_max_w), float(p.roundtrip_efficiency),
            np.ascontiguousarray(p.inverter_ac_w, dtype=float), np.ascontiguousarray(p.inverter_dc_w, dtype=float),
            float(p.charger_rating_w), float(p.charger_efficiency), float(p.idle_w), float(p.standing_draw_w),
            bool(p.metering_site), bool(p.export_allowed), float(p.export_limit_w), bool(p.limiter),
            bool(p.recharge_reserve_from_grid), out)
    if compiled:
        _compiled_batch(*args)
    else:
        for i in range(k):
            _kernel(*args[:2], *(r[i] for r in rows), *args[8:-1], out[i])
    return out
