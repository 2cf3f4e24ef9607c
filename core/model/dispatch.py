"""The time-step energy-flow engine of a zero-export hybrid system (DESIGN.md §5).

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
4. Below the reserve, with ``recharge_reserve_from_grid``, the charger lifts the SOC back to the reserve;
   inside the charge window (``charge_window`` series), to the window's target.

*Holding AC output back* (``ac_control``, before the rules above): ``AC_RELAY`` opens the microinverter
circuit at ``relay_open_wh`` and closes it at ``relay_close_wh``; after every closing, and for grid-side
microinverters after every outage, the microinverters wait ``reconnect_s`` before producing.
``AC_ISLANDED`` keeps the backed-up side off-grid while DC PV and the battery above the reserve carry the
idle draw and the backed-up loads: that step follows the grid-down rules (frequency-watt curtailment, the
reserve as the lower limit) while the grid side keeps its grid; otherwise it connects and follows the
grid-up rules with no limiter. ``AC_LIMITER`` is the limiter of rule 3.

*Grid down.* Grid-only loads are unserved and grid-side microinverters stop (anti-islanding). The
idle draw is met by DC PV or the battery above the floor, else the inverter-charger is off for the
step (backed-up loads unserved, backed-up microinverters stop). A deficit is met from DC PV, then the
battery down to the floor; the rest is unserved. A surplus is absorbed by the battery; the rest is
curtailed by frequency-watt response (AC) or at the controllers (DC).

*Battery.* Energy between 0 and the usable capacity; charge and discharge efficiencies are each the
square root of the round-trip efficiency; power limits are current × nominal voltage, lowered by the
charge taper and the discharge limit near empty, or by the kinetic battery model
(:mod:`core.model.battery`).

The step loop is a plain function over numpy arrays; when numba is installed it is compiled (and
cached on disk), and ``dispatch(..., compiled=False)`` runs the same code as plain Python.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, fields
from enum import IntEnum

import numpy as np

from core.model.battery import charge_limit_w, kibam_available_wh, kibam_limits_w

#: Names of the per-step flows, in the order of the engine's output rows (all W except ``soc_wh``).
FLOWS = (
    "soc_wh",  # stored energy at the end of the step
    "load_served_w", "unserved_w",
    "grid_import_w", "grid_import_standing_w", "export_allowed_w", "export_uncontrolled_w",
    "curtailed_dc_w", "curtailed_acb_w", "curtailed_acg_w",  # module side: DC never converted
    "controller_loss_w", "ac_backed_conversion_loss_w", "ac_grid_conversion_loss_w",  # losses on the harvested part
    "inverter_loss_w", "idle_w", "charger_loss_w",
    "battery_charge_w", "battery_discharge_w", "battery_loss_w",  # bus side of the battery
    "inverter_ac_w", "charger_ac_w",
    "pv_to_battery_w", "grid_to_battery_w",  # bus-side charge by origin
    "dc_used_w", "ac_backed_used_w", "ac_grid_used_w",  # converter outputs actually used
    "inverter_pv_dc_w",  # DC input of the inverter that came straight from DC PV
    # The parts of unserved_w: backed-up load not served (a failure) and grid-only load shed by design.
    "unserved_backed_up_w", "shed_grid_only_w",
    # Where AC-coupled output was held back (module side; parts of curtailed_acb_w + curtailed_acg_w):
    "curtailed_limiter_w",  # an export limiter while grid-tied
    "curtailed_fw_w",  # frequency-watt response while the backed-up side runs off-grid (outage or islanded)
    "curtailed_relay_w",  # the SOC relay has opened the microinverter circuit
    "curtailed_wait_w",  # microinverters waiting their reconnect delay after an interruption or the relay
    "islanded",  # 1.0 while the backed-up side runs off-grid with the grid up (ac_control = "islanded")
)
_F = {name: i for i, name in enumerate(FLOWS)}

#: Row indices of the flows, generated from FLOWS (``Flow.soc_wh`` is 0): the compiled kernel reads them as
#: constants, and a flow added to FLOWS gets its index without anyone keeping a second list in step.
Flow = IntEnum("Flow", _F)


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
    # Charge acceptance: full power up to taper_start_wh, then falling linearly with the stored energy to
    # taper_end_fraction of it at full (inf: no taper); the discharge limit falls linearly to 0 below
    # discharge_taper_wh (0: none).
    taper_start_wh: float = math.inf
    taper_end_fraction: float = 0.05
    discharge_taper_wh: float = 0.0
    ac_control: int = 0  # AC_NONE, AC_LIMITER, AC_ISLANDED or AC_RELAY
    relay_open_wh: float = math.inf  # the relay opens at or above this stored energy …
    relay_close_wh: float = 0.0  # … and closes again at or below this one
    reconnect_s: float = 0.0  # microinverters wait this long after every reconnection before producing
    charge_window_target_wh: float = 0.0  # the grid lifts the battery to this inside the charge window
    # Kinetic battery model (Manwell & McGowan 1993): share of the charge in the available well (0: not used)
    # and the rate constant between the wells (per hour).
    kibam_c: float = 0.0
    kibam_k_per_h: float = 1.0

    def packed(self) -> np.ndarray:
        """The scalar parameters as one float array in the order of :data:`Param` (flags as 0.0 / 1.0)."""
        return np.array([float(getattr(self, name)) for name in _PARAM_NAMES])


#: The tables of DispatchParams, passed to the kernel as arrays of their own; every other field is a scalar.
_TABLES = ("inverter_ac_w", "inverter_dc_w")
#: Codes of ``ac_control`` (the scenario's ``grid.ac_control`` words, in this order).
AC_NONE, AC_LIMITER, AC_ISLANDED, AC_RELAY = range(4)
AC_CONTROL_CODES = {"none": AC_NONE, "limiter": AC_LIMITER, "islanded": AC_ISLANDED, "relay": AC_RELAY}

_PARAM_NAMES = tuple(f.name for f in fields(DispatchParams) if f.name not in _TABLES)
#: Positions of the scalar parameters in the packed record, generated from DispatchParams' fields.
Param = IntEnum("Param", {name: i for i, name in enumerate(_PARAM_NAMES)})


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
    charge_window: np.ndarray | float = 0.0  # 1.0 in steps inside the grid-charging window (local clock)


#: The per-step series: loads and the charge window (shared by the variants of a batch) and sources (one set
#: per variant), in the order of the rows the kernel reads them from.
LOADS = ("load_backed_w", "load_grid_only_w", "charge_window")
SOURCES = ("dc_out_w", "dc_loss_w", "ac_backed_out_w", "ac_backed_loss_w", "ac_grid_out_w", "ac_grid_loss_w")
Load = IntEnum("Load", {name: i for i, name in enumerate(LOADS)})
Source = IntEnum("Source", {name: i for i, name in enumerate(SOURCES)})


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
        out[Flow.curtailed_acb_w, t] = curt_ab
        out[Flow.curtailed_acg_w, t] = curt_ag
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


def _rows(arrays, names, n: int) -> np.ndarray:
    """Named series (each broadcast to ``n`` steps) stacked as the rows of one C-ordered float array."""
    return np.ascontiguousarray(np.stack([np.broadcast_to(np.asarray(arrays[k], dtype=float), (n,)) for k in names]))


def _tables(p: DispatchParams) -> tuple[np.ndarray, np.ndarray]:
    return tuple(np.ascontiguousarray(getattr(p, name), dtype=float) for name in _TABLES)


def dispatch(inputs: DispatchInputs, params: DispatchParams, *, compiled: bool = True) -> DispatchResult:
    """Run the engine over all steps; see the module docstring for the rules."""
    n = int(np.asarray(inputs.load_backed_w).shape[0])
    series = vars(inputs)
    up = np.ascontiguousarray(np.broadcast_to(np.asarray(inputs.grid_up, dtype=np.bool_), (n,)))
    out = np.empty((len(FLOWS), n))  # the kernel writes every flow of every step
    kernel = _compiled_kernel if compiled else _kernel
    kernel(_rows(series, LOADS, n), _rows(series, SOURCES, n), up, params.packed(), *_tables(params), out)
    return DispatchResult(flows=out)


def dispatch_many(load_backed_w, load_grid_only_w, grid_up, sources: dict[str, np.ndarray], params: DispatchParams,
                  *, compiled: bool = True, out: np.ndarray | None = None, charge_window=0.0) -> np.ndarray:
    """Run the engine for many variants that share loads and plant (a sweep, or many outage years).

    ``sources`` maps each name of :data:`SOURCES` to an array of shape (variants, steps) or (steps,) (the
    same for every variant); ``grid_up`` has shape (steps,) (shared) or (variants, steps). Returns the flows
    with shape (variants, len(FLOWS), steps); variant ``i`` equals ``dispatch`` on row ``i``.

    ``out``: an array of that shape (float64, C order) to write the flows into, e.g. one buffer reused
    batch after batch, so that a sweep does not fault in fresh memory for every batch (docs/performance.md).
    """
    lb = np.asarray(load_backed_w, dtype=float)
    n = lb.shape[0]
    up = np.ascontiguousarray(np.asarray(grid_up, dtype=np.bool_).reshape(-1, n))
    per_source = [np.asarray(sources[k], dtype=float).reshape(-1, n) for k in SOURCES]
    k = max([r.shape[0] for r in per_source] + [up.shape[0]])
    src = np.empty((k, len(SOURCES), n))
    for j, r in enumerate(per_source):
        src[:, j, :] = r
    if out is None:
        out = np.empty((k, len(FLOWS), n))  # the kernel writes every flow of every step
    elif out.shape != (k, len(FLOWS), n) or out.dtype != np.float64 or not out.flags.c_contiguous:
        raise ValueError(f"out must be a C-ordered float64 array of shape {(k, len(FLOWS), n)}")
    if up.shape[0] not in (1, k):
        raise ValueError(f"grid_up must have shape ({n},) or ({k}, {n})")
    loads = _rows({"load_backed_w": lb, "load_grid_only_w": load_grid_only_w, "charge_window": charge_window},
                  LOADS, n)
    args = (loads, src, up, params.packed(), *_tables(params), out)
    if compiled:
        _compiled_batch(*args)
    else:
        _plain_batch(*args)
    return out


def _plain_batch(loads, src, up, par, inv_ac, inv_dc, out):
    """:func:`_batch` as plain Python, the one-variant kernel plain too."""
    for i in range(src.shape[0]):
        _kernel(loads, src[i], up[0] if up.shape[0] == 1 else up[i], par, inv_ac, inv_dc, out[i])
    return out
