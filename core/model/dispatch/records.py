"""The engine's records: the flows it writes, its parameters and inputs, and the row indices generated from them.

Indices are ``IntEnum`` members generated from the lists (:data:`FLOWS`, the fields of
:class:`DispatchParams`, :data:`LOADS`, :data:`SOURCES`), which the compiled kernel reads as constants.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass, fields
from enum import IntEnum
from typing import Any

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
    # The parts of unserved_w: backed-up load not served (a failure) and grid-only load shed by design.
    "unserved_backed_up_w", "shed_grid_only_w",
    # Where AC-coupled output was held back (module side; parts of curtailed_ac_backed_w + curtailed_ac_grid_w):
    "curtailed_limiter_w",  # an export limiter while grid-tied
    "curtailed_fw_w",  # frequency-watt response while the backed-up side runs off-grid (outage or islanded)
    "curtailed_relay_w",  # the SOC relay has opened the microinverter circuit
    "curtailed_wait_w",  # microinverters waiting their reconnect delay after an interruption or the relay
    "islanded",  # 1.0 while the backed-up side runs off-grid with the grid up (ac_control = "islanded")
)
_F = {name: i for i, name in enumerate(FLOWS)}


def _index_enum(name: str, names: Sequence[str]) -> Any:
    """An IntEnum of ``names`` numbered from 0. Typed ``Any``: its members are generated at run time from a list,
    which a static checker cannot see."""
    return IntEnum(name, {n: i for i, n in enumerate(names)})


#: Row indices of the flows, generated from FLOWS (``Flow.soc_wh`` is 0): the compiled kernel reads them as
#: constants, and a flow added to FLOWS gets its index without anyone keeping a second list in step.
Flow = _index_enum("Flow", FLOWS)


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
Param = _index_enum("Param", _PARAM_NAMES)


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
Load = _index_enum("Load", LOADS)
Source = _index_enum("Source", SOURCES)


@dataclass(frozen=True)
class DispatchResult:
    flows: np.ndarray  # shape (len(FLOWS), steps)

    def __getitem__(self, name: str) -> np.ndarray:
        return self.flows[_F[name]]
