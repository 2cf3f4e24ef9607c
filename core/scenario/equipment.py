"""The equipment sections of the scenario file: datasheet values of modules, the battery, the inverter-charger,
charge controllers and microinverters (one frozen dataclass each; see :mod:`core.scenario.schema`)."""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Literal

from core.scenario.fields import _num


@dataclass(frozen=True)
class Module:
    pmax_w: float = field(metadata=_num(1, 1000, lo_open=True))
    vmp_v: float = field(metadata=_num(1, 200))
    imp_a: float = field(metadata=_num(0.1, 50))
    voc_v: float = field(metadata=_num(1, 250))
    isc_a: float = field(metadata=_num(0.1, 50))
    gamma_pmax_pct_per_c: float = field(default=-0.35, metadata=_num(-1.5, 0))
    beta_voc_pct_per_c: float = field(default=-0.27, metadata=_num(-1.5, 0))
    alpha_isc_pct_per_c: float = field(default=0.05, metadata=_num(0, 0.5))
    length_m: float = field(default=1.7, metadata=_num(0.2, 4))
    width_m: float = field(default=1.1, metadata=_num(0.2, 3))
    cells_in_series: int | None = field(default=None, metadata=_num(1, 300))  # None = estimated from voc_v
    price: float | None = field(default=None, metadata=_num(0, 1e6))  # per unit, in the tariff's currency


@dataclass(frozen=True)
class Battery:
    usable_kwh: float = field(metadata=_num(0, 2000))
    nominal_v: float = field(default=48.0, metadata=_num(6, 1500, lo_open=True))
    max_charge_a: float = field(default=100.0, metadata=_num(0, 10000))
    max_discharge_a: float = field(default=100.0, metadata=_num(0, 10000))
    roundtrip_efficiency: float = field(default=0.92, metadata=_num(0.3, 1, lo_open=True))
    reserve_pct: float = field(default=30.0, metadata=_num(0, 100))
    floor_pct: float = field(default=5.0, metadata=_num(0, 100))
    initial_pct: float = field(default=50.0, metadata=_num(0, 100))
    # Charge acceptance (see core.model.dispatch): full charge power up to the knee, then falling to
    # taper_end_fraction of it at full; 100 turns the taper off. Defaults for LFP (from memory): the
    # constant-voltage phase begins near 90 % SOC and charging ends when the current falls to about 0.05 C.
    taper_start_pct: float = field(default=90.0, metadata=_num(0, 100))
    taper_end_fraction: float = field(default=0.05, metadata=_num(0, 1))
    # Below this SOC the discharge limit falls linearly to zero at empty (the cell voltage drops steeply near
    # empty; from memory, LFP holds its rated current down to a few percent). 0 turns it off.
    discharge_taper_pct: float = field(default=5.0, metadata=_num(0, 50))
    # "taper" above, or the kinetic battery model of Manwell & McGowan (1993): two wells of charge, the
    # available share kibam_c and the rate constant kibam_k_per_h between them (defaults from memory, of the
    # order fitted to lead-acid batteries; fit them to the battery's discharge curves at two rates).
    model: Literal["taper", "kibam"] = "taper"
    kibam_c: float = field(default=0.4, metadata=_num(0.01, 0.99))
    kibam_k_per_h: float = field(default=0.8, metadata=_num(0.001, 100, lo_open=True))


@dataclass(frozen=True)
class InverterCharger:
    rating_w: float = field(metadata=_num(0, 1e6, lo_open=True))
    # A number, or a part-load curve [[load_fraction, efficiency], ...].
    efficiency: float | tuple[tuple[float, float], ...] = field(default=0.93, metadata=_num(0, 1, lo_open=True))
    charger_rating_w: float | None = field(default=None, metadata=_num(0, 1e6))  # AC input; None = rating_w
    charger_efficiency: float = field(default=0.92, metadata=_num(0.3, 1, lo_open=True))
    idle_w: float = field(default=25.0, metadata=_num(0, 1000))
    # Time the backed-up side is without voltage when the grid fails and the inverter-charger takes over
    # (from memory: transfer-relay inverter-chargers state under 20 ms; online double conversion 0 ms).
    transfer_ms: float = field(default=20.0, metadata=_num(0, 10000))
    # Highest frequency the inverter-charger shifts its islanded output to, to curtail AC-coupled PV.
    islanded_max_hz: float | None = field(default=None, metadata=_num(45, 66))


@dataclass(frozen=True)
class Controller:
    max_pv_voltage_v: float = field(metadata=_num(10, 2000))
    mppt_min_v: float = field(metadata=_num(0, 2000))
    mppt_max_v: float = field(metadata=_num(0, 2000))
    max_input_current_a: float = field(metadata=_num(0, 500, lo_open=True))
    max_charge_current_a: float = field(metadata=_num(0, 1000, lo_open=True))
    efficiency: float = field(default=0.97, metadata=_num(0.3, 1, lo_open=True))
    battery_margin_v: float = field(default=5.0, metadata=_num(0, 100))  # PV must exceed battery V by this
    price: float | None = field(default=None, metadata=_num(0, 1e6))  # paid only when the design buys one


@dataclass(frozen=True)
class Microinverter:
    ac_rating_w: float = field(metadata=_num(0, 10000, lo_open=True))
    max_dc_input_w: float = field(metadata=_num(0, 10000, lo_open=True))
    mppt_min_v: float = field(metadata=_num(0, 1000))
    mppt_max_v: float = field(metadata=_num(0, 1000))
    max_input_voltage_v: float = field(metadata=_num(0, 1000, lo_open=True))
    max_input_current_a: float = field(metadata=_num(0, 100, lo_open=True))
    efficiency: float = field(default=0.96, metadata=_num(0.3, 1, lo_open=True))
    inputs: int = field(default=1, metadata=_num(1, 8))
    grid_code: Literal["ieee1547_2018", "en50549_1"] = "ieee1547_2018"
    fw_start_hz: float | None = field(default=None, metadata=_num(45, 66))  # overrides the grid code's default
    fw_droop_pct: float | None = field(default=None, metadata=_num(0.5, 20))
    trip_hz: float | None = field(default=None, metadata=_num(45, 66))
    # Wait after the grid (or the SOC relay) reconnects before producing; None = the grid code's default.
    reconnect_s: float | None = field(default=None, metadata=_num(0, 3600))
    price: float | None = field(default=None, metadata=_num(0, 1e6))  # per unit, in the tariff's currency
