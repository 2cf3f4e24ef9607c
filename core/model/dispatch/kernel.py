"""The step loop of the engine (the rules are in :mod:`core.model.dispatch`), compiled with numba when present.

``_kernel`` runs one variant's year; ``_batch`` runs many in parallel. Both are plain functions over numpy
arrays: ``compiled=False`` in the public functions runs the same code as plain Python.
"""

from __future__ import annotations

import math
from collections.abc import Callable
from typing import Any

from core.model.battery import charge_limit_w, kibam_available_wh, kibam_limits_w
from core.model.dispatch.interp import _interp
from core.model.dispatch.records import AC_ISLANDED, AC_LIMITER, AC_RELAY, Flow, Load, Param, Source


def _serve(want_ac, dc_avail, dis_room, inv_ac, inv_dc):
    """The inverter serves ``want_ac`` W of AC from DC PV first, then the battery (grid up or down alike).

    Returns ``(inverter DC input, inverter AC output, DC PV used, battery used, fully served)``; when DC PV and
    battery together fall short, the inverter delivers what their sum converts to.
    """
    dc_need = _interp(want_ac, inv_ac, inv_dc)
    use_dc = min(dc_need, dc_avail)
    use_b = min(dc_need - use_dc, dis_room)
    if dc_need - use_dc - use_b > 1e-12:
        p_dc = use_dc + use_b
        return p_dc, _interp(p_dc, inv_dc, inv_ac), use_dc, use_b, False
    return dc_need, want_ac, use_dc, use_b, True


def _kernel(loads, src, up, par, inv_ac, inv_dc, out):
    """One variant's year: ``loads`` rows as :data:`Load`, ``src`` rows as :data:`Source`, ``par`` as
    :data:`Param`; writes every row of ``out`` (:data:`Flow`) for every step."""
    dt = par[Param.dt_h]
    step_s = dt * 3600.0
    usable = par[Param.usable_wh]
    reserve = par[Param.reserve_wh]
    floor = par[Param.floor_wh]
    ch_max = par[Param.charge_max_w]
    dis_max = par[Param.discharge_max_w]
    chg_rating = par[Param.charger_rating_w]
    chg_eff = par[Param.charger_efficiency]
    idle = par[Param.idle_w]
    sd = par[Param.standing_draw_w]
    site = par[Param.metering_site] != 0.0
    exp_ok = par[Param.export_allowed] != 0.0
    exp_lim = par[Param.export_limit_w]
    mode = int(par[Param.ac_control])
    limiter = par[Param.limiter] != 0.0 or mode == AC_LIMITER
    recharge = par[Param.recharge_reserve_from_grid] != 0.0
    taper_wh = par[Param.taper_start_wh]
    end_fraction = par[Param.taper_end_fraction]
    dis_taper_wh = par[Param.discharge_taper_wh]
    relay_open = par[Param.relay_open_wh]
    relay_close = par[Param.relay_close_wh]
    reconnect_s = par[Param.reconnect_s]
    window_target = par[Param.charge_window_target_wh]
    eta = math.sqrt(par[Param.roundtrip_efficiency])
    rating = inv_ac[-1]
    lb_all = loads[Load.load_backed_w]
    lg_all = loads[Load.load_grid_only_w]
    window_all = loads[Load.charge_window]
    e = par[Param.initial_wh]
    kib_c = par[Param.kibam_c]
    kib_k = par[Param.kibam_k_per_h]
    kibam = 0.0 < kib_c < 1.0
    q1 = kib_c * e  # the wells start in balance
    relay_closed = True
    wait_ab = 0.0  # seconds the backed-up microinverters still wait before producing
    wait_ag = 0.0  # the same for the grid-side ones
    was_up = True
    for t in range(lb_all.shape[0]):
        lb = lb_all[t]
        lg = lg_all[t]
        dc = src[Source.dc_out_w, t]
        ac_backed = src[Source.ac_backed_out_w, t]
        ac_grid = src[Source.ac_grid_out_w, t]
        # module-side power per unit of output, to count curtailment on the module side
        r_dc = 1.0 + src[Source.dc_loss_w, t] / dc if dc > 0.0 else 1.0
        r_ab = 1.0 + src[Source.ac_backed_loss_w, t] / ac_backed if ac_backed > 0.0 else 1.0
        r_ag = 1.0 + src[Source.ac_grid_loss_w, t] / ac_grid if ac_grid > 0.0 else 1.0
        grid = up[t]
        curt_ab = 0.0
        curt_ag = 0.0
        curt_lim = 0.0
        curt_fw = 0.0
        curt_relay = 0.0
        curt_wait = 0.0
        if not grid:  # anti-islanding: grid-side microinverters stop
            curt_ag = ac_grid * r_ag
            ac_grid = 0.0
        elif not was_up:  # the grid is back: grid-side microinverters wait their reconnect delay
            wait_ag = reconnect_s
        was_up = grid
        if mode == AC_RELAY:  # hysteresis: open at the upper threshold, close at the lower one
            if relay_closed and e >= relay_open:
                relay_closed = False
            elif not relay_closed and e <= relay_close:
                relay_closed = True
                wait_ab = reconnect_s
                wait_ag = max(wait_ag, reconnect_s)
            if not relay_closed:
                curt_relay = ac_backed * r_ab + ac_grid * r_ag
                curt_ab += ac_backed * r_ab
                curt_ag += ac_grid * r_ag
                ac_backed = 0.0
                ac_grid = 0.0
        if wait_ab > 0.0:
            lost = ac_backed * min(1.0, wait_ab / step_s)
            ac_backed -= lost
            curt_ab += lost * r_ab
            curt_wait += lost * r_ab
            wait_ab = max(0.0, wait_ab - step_s)
        if wait_ag > 0.0 and grid:
            lost = ac_grid * min(1.0, wait_ag / step_s)
            ac_grid -= lost
            curt_ag += lost * r_ag
            curt_wait += lost * r_ag
            wait_ag = max(0.0, wait_ag - step_s)
        dis_lim = dis_max if e >= dis_taper_wh else dis_max * e / dis_taper_wh
        kib_ch = math.inf  # bus side
        if kibam:
            kib_dis, kib_ch_stored = kibam_limits_w(e, q1, dt, kib_c, kib_k, usable)
            dis_lim = min(dis_lim, kib_dis * eta)
            kib_ch = kib_ch_stored / eta
        # ac_control = "islanded": the backed-up side stays off-grid while DC PV and the battery above the
        # reserve carry the idle draw and the backed-up loads; otherwise it connects for the step.
        island = False
        if grid and mode == AC_ISLANDED and e > reserve:
            supply = dc + max(0.0, min(dis_lim, (e - reserve) * eta / dt))
            deficit = lb - ac_backed
            need = idle + (_interp(deficit, inv_ac, inv_dc) if deficit > 0.0 else 0.0)
            island = deficit <= rating and need <= supply
        bus_grid = grid and not island  # the backed-up side is connected to the grid
        low = reserve if grid else floor  # islanded with the grid up, the reserve is still kept
        dis_room = max(0.0, min(dis_lim, (e - low) * eta / dt))
        ch_room = max(0.0, min(charge_limit_w(e, dt, eta, ch_max, usable, taper_wh, end_fraction),
                               (usable - e) / (eta * dt), kib_ch))
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
        unserved = 0.0
        standing = 0.0

        # 1. idle draw: DC PV, then battery, then (grid up) the grid through the charger
        from_dc = min(idle, dc)
        need = idle - from_dc
        from_b = min(need, dis_room)
        need -= from_b
        on = True
        if need > 1e-12:
            if bus_grid:
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
            e_idle = e - from_b / eta * dt
            ch_room = max(0.0, min(charge_limit_w(e_idle, dt, eta, ch_max, usable, taper_wh, end_fraction),
                                   (usable - e_idle) / (eta * dt), kib_ch + from_b / (eta * eta)))
            idle_used = idle
        else:
            dc_avail = dc
            idle_used = 0.0
            curt_ab += ac_backed * r_ab
            ac_backed = 0.0

        if bus_grid:
            if site:
                n = lb + lg - ac_backed - ac_grid
                outside = 0.0
            else:
                n = lb - ac_backed
                outside = lg - ac_grid
            if n > sd:
                inv_p_dc, inv_p_ac, use_dc, use_b, full = _serve(min(n - sd, rating), dc_avail, dis_room,
                                                                 inv_ac, inv_dc)
                if full:
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
                cut = min(excess, ac_grid)
                ac_grid -= cut
                curt_ag += cut * r_ag
                cut2 = min(excess - cut, ac_backed)
                ac_backed -= cut2
                curt_ab += cut2 * r_ab
                curt_lim += cut * r_ag + cut2 * r_ab
                g += cut + cut2
                uncontrolled = excess - cut - cut2
            imp = max(0.0, g)
            # 4. lift the SOC from the grid: back to the reserve, and inside the charge window to its target
            e_after = e + (bat_in * eta - bat_out / eta) * dt
            target = reserve if recharge else 0.0
            if window_all[t] > 0.0 and window_target > target:
                target = window_target
            if e_after < target:
                lift = min((target - e_after) / (eta * dt), ch_room, chg_cap * chg_eff)
                if lift > 0.0:
                    bat_in += lift
                    grid_to_bat += lift
                    chg_dc += lift
                    chg_ac += lift / chg_eff
                    imp += lift / chg_eff
            served = lb + lg
            shed = 0.0
            out[Flow.islanded, t] = 0.0
        else:
            if on:
                n = lb - ac_backed
                if n > 0.0:
                    inv_p_dc, inv_p_ac, use_dc, use_b, full = _serve(min(n, rating), dc_avail, dis_room,
                                                                     inv_ac, inv_dc)
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
                    ac_backed -= cut
                    curt_ab += cut * r_ab
                    curt_fw += cut * r_ab
            else:
                unserved = lb
            c = min(dc_avail, ch_room)
            bat_in += c
            pv_to_bat += c
            dc_avail -= c
            served = lb - unserved
            allowed = 0.0
            uncontrolled = 0.0
            imp = 0.0
            if grid:  # islanded: the grid side still has the grid (its microinverters feed it directly)
                served += lg
                shed = 0.0
                imp = max(0.0, lg - ac_grid)
                export = max(0.0, ac_grid - lg)
                allowed = min(export, exp_lim) if exp_ok else 0.0
                uncontrolled = export - allowed
                out[Flow.islanded, t] = 1.0
            else:
                shed = lg
                out[Flow.islanded, t] = 0.0
            unserved += shed
        out[Flow.export_allowed_w, t] = allowed
        out[Flow.export_uncontrolled_w, t] = uncontrolled
        out[Flow.grid_import_w, t] = imp
        out[Flow.grid_import_standing_w, t] = min(imp, standing)

        curt_dc = dc_avail  # DC PV that nothing could take: the controllers back off
        e_start = e
        e = e + (bat_in * eta - bat_out / eta) * dt
        e = min(max(e, 0.0), usable)
        if kibam:  # the available well moves with the net flow; both wells stay inside their room
            q1 = kibam_available_wh(e_start, q1, bat_out / eta - bat_in * eta, dt, kib_c, kib_k)
            q1 = min(max(q1, e - (1.0 - kib_c) * usable, 0.0), e, kib_c * usable)
        out[Flow.soc_wh, t] = e
        out[Flow.load_served_w, t] = served
        out[Flow.unserved_w, t] = unserved
        out[Flow.unserved_backed_up_w, t] = unserved - shed
        out[Flow.shed_grid_only_w, t] = shed
        out[Flow.curtailed_limiter_w, t] = curt_lim
        out[Flow.curtailed_fw_w, t] = curt_fw
        out[Flow.curtailed_relay_w, t] = curt_relay
        out[Flow.curtailed_wait_w, t] = curt_wait
        out[Flow.curtailed_dc_w, t] = curt_dc * r_dc
        out[Flow.curtailed_ac_backed_w, t] = curt_ab
        out[Flow.curtailed_ac_grid_w, t] = curt_ag
        out[Flow.controller_loss_w, t] = (dc - curt_dc) * (r_dc - 1.0)
        out[Flow.ac_backed_conversion_loss_w, t] = ac_backed * (r_ab - 1.0)
        out[Flow.ac_grid_conversion_loss_w, t] = ac_grid * (r_ag - 1.0)
        out[Flow.inverter_loss_w, t] = inv_p_dc - inv_p_ac
        out[Flow.idle_w, t] = idle_used
        out[Flow.charger_loss_w, t] = chg_ac - chg_dc
        out[Flow.battery_charge_w, t] = bat_in
        out[Flow.battery_discharge_w, t] = bat_out
        out[Flow.battery_loss_w, t] = bat_in * (1.0 - eta) + bat_out * (1.0 / eta - 1.0)
        out[Flow.inverter_ac_w, t] = inv_p_ac
        out[Flow.charger_ac_w, t] = chg_ac
        out[Flow.pv_to_battery_w, t] = pv_to_bat
        out[Flow.grid_to_battery_w, t] = grid_to_bat
        out[Flow.dc_used_w, t] = dc - curt_dc
        out[Flow.ac_backed_used_w, t] = ac_backed
        out[Flow.ac_grid_used_w, t] = ac_grid
        out[Flow.inverter_pv_dc_w, t] = inv_pv
    return out


def _batch(loads, src, up, par, inv_ac, inv_dc, out):
    """Variant ``i`` has its sources ``src[i]`` and its grid ``up[i]`` (or ``up[0]``, shared by all)."""
    shared_up = up.shape[0] == 1
    for i in _prange(src.shape[0]):
        _step_loop(loads, src[i], up[0] if shared_up else up[i], par, inv_ac, inv_dc, out[i])
    return out


# Set below: numba's compiled dispatchers, or the plain functions when numba is missing.
_compiled_kernel: Callable[..., Any]
_compiled_batch: Callable[..., Any]
_step_loop: Callable[..., Any]
_prange: Callable[..., Any]

try:  # compiled when numba is available; the plain functions stay reachable as _kernel and _batch
    import numba

    # Plain Python when called from Python (the plain loop), compiled inline into the compiled kernel.
    from numba.extending import register_jitable

    _interp = register_jitable(_interp)
    _serve = register_jitable(_serve)
    charge_limit_w = register_jitable(charge_limit_w)
    kibam_limits_w = register_jitable(kibam_limits_w)
    kibam_available_wh = register_jitable(kibam_available_wh)
    _compiled_kernel = numba.njit(cache=True, nogil=True)(_kernel)
    _prange = numba.prange
    _step_loop = _compiled_kernel
    _compiled_batch = numba.njit(cache=True, parallel=True)(_batch)
except ImportError:  # pragma: no cover - numba is a declared dependency
    _compiled_kernel = _kernel
    _prange = range
    _step_loop = _kernel
    _compiled_batch = _batch


def _plain_batch(loads, src, up, par, inv_ac, inv_dc, out):
    """:func:`_batch` as plain Python, the one-variant kernel plain too."""
    for i in range(src.shape[0]):
        _kernel(loads, src[i], up[0] if up.shape[0] == 1 else up[i], par, inv_ac, inv_dc, out[i])
    return out
