"""The time-step energy-flow engine of a zero-export hybrid system (the energy rules of docs/design.md).

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
grid-up rules, with the limiter of rule 3 when ``limiter`` is set. ``AC_LIMITER`` is that limiter.

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

import numpy as np

from core.model.dispatch.kernel import (
    _batch,
    _compiled_batch,
    _compiled_kernel,
    _interp,
    _kernel,
    _plain_batch,
)
from core.model.dispatch.records import (
    _TABLES,
    AC_CONTROL_CODES,
    AC_ISLANDED,
    AC_LIMITER,
    AC_NONE,
    AC_RELAY,
    FLOWS,
    LOADS,
    SOURCES,
    DispatchInputs,
    DispatchParams,
    DispatchResult,
    Flow,
    Load,
    Param,
    Source,
)

__all__ = ["AC_CONTROL_CODES", "AC_ISLANDED", "AC_LIMITER", "AC_NONE", "AC_RELAY", "FLOWS", "LOADS", "SOURCES",
           "DispatchInputs", "DispatchParams", "DispatchResult", "Flow", "Load", "Param", "Source", "dispatch",
           "dispatch_many", "_batch", "_interp", "_kernel"]


def _rows(arrays, names, n: int) -> np.ndarray:
    """Named series (each broadcast to ``n`` steps) stacked as the rows of one C-ordered float array."""
    return np.ascontiguousarray(np.stack([np.broadcast_to(np.asarray(arrays[k], dtype=float), (n,)) for k in names]))


def _tables(p: DispatchParams) -> tuple[np.ndarray, np.ndarray]:
    """The inverter table (AC output against DC input) as two C-ordered float arrays, in the kernel's order."""
    inv_ac, inv_dc = (np.ascontiguousarray(getattr(p, name), dtype=float) for name in _TABLES)
    return inv_ac, inv_dc


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
