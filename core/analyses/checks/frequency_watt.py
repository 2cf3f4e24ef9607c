"""Frequency-watt compatibility: in an outage, can the inverter-charger curtail the backed-up microinverters by
raising its frequency, before they trip?

In an outage the inverter-charger forms the grid. When the battery is full and the loads are small, the
microinverters' surplus has nowhere to go; the inverter-charger raises its frequency and the microinverters
reduce their output along their over-frequency droop (frequency-watt). If the needed reduction lies beyond
the microinverters' over-frequency trip, they disconnect instead (all at once, and they return only after
their reconnection delay); if the inverter-charger cannot raise its frequency far enough for either, the
surplus cannot be shed and the battery is pushed past its charge limit or the inverter-charger shuts down.

Presets (all *from memory*; editable per microinverter with ``fw_start_hz``, ``fw_droop_pct``, ``trip_hz``):

* IEEE 1547-2018 frequency-droop defaults: dead band 0.036 Hz above 60 Hz, droop 5 %
  (100 % of power per 5 % of nominal frequency = 3 Hz), output zero at 63.036 Hz; over-frequency trip OF1
  61.2 Hz (clearing 300 s — the one that matters for a shift held for minutes).
* EN 50549-1:2019 LFSM-O: from 50.2 Hz, droop 5 % (≡ 40 % of the reference power per Hz), zero at 52.7 Hz;
  over-frequency protection 51.5 Hz (settings vary by country, typically 51.5–52 Hz).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from core.analyses.checks.common import CAUTION_BATTERY, CAUTION_MICRO, Check
from core.scenario import Microinverter, Scenario

#: Output (as a share of the rating) below which a microinverter counts as not producing (our own choice).
PRODUCING_SHARE = 0.01


@dataclass(frozen=True)
class FrequencyWatt:
    """An over-frequency droop: full output up to ``start_hz``, then falling by 100 % per ``droop_pct`` % of
    ``nominal_hz``; disconnection at ``trip_hz``."""

    name: str
    nominal_hz: float
    start_hz: float
    droop_pct: float
    trip_hz: float

    @property
    def zero_hz(self) -> float:
        """Frequency at which the droop reaches zero output."""
        return self.start_hz + self.droop_pct / 100.0 * self.nominal_hz


PRESETS = {
    "ieee1547_2018": FrequencyWatt("IEEE 1547-2018", nominal_hz=60.0, start_hz=60.036, droop_pct=5.0, trip_hz=61.2),
    "en50549_1": FrequencyWatt("EN 50549-1:2019", nominal_hz=50.0, start_hz=50.2, droop_pct=5.0, trip_hz=51.5),
}


def frequency_watt_of(mi: Microinverter) -> FrequencyWatt:
    """The microinverter's droop: its grid code's preset with any of its own settings in place."""
    p = PRESETS[mi.grid_code]
    return FrequencyWatt(name=p.name, nominal_hz=p.nominal_hz,
                         start_hz=p.start_hz if mi.fw_start_hz is None else mi.fw_start_hz,
                         droop_pct=p.droop_pct if mi.fw_droop_pct is None else mi.fw_droop_pct,
                         trip_hz=p.trip_hz if mi.trip_hz is None else mi.trip_hz)


def output_fraction(frequency_hz, fw: FrequencyWatt):
    """Output as a fraction of the power before the event, along the droop alone (no trip):
    ``1 − (f − f_start) / (droop · f_nominal)``, clipped to 0…1."""
    f = np.asarray(frequency_hz, dtype=float)
    out = np.clip(1.0 - (f - fw.start_hz) / (fw.droop_pct / 100.0 * fw.nominal_hz), 0.0, 1.0)
    return float(out) if out.ndim == 0 else out


def frequency_for_reduction_hz(reduction: float, fw: FrequencyWatt) -> float:
    """The frequency at which the droop has cut the output by ``reduction`` (0…1)."""
    return fw.start_hz + float(np.clip(reduction, 0.0, 1.0)) * fw.droop_pct / 100.0 * fw.nominal_hz


def required_reduction(ac_backed_out_w: np.ndarray | None, load_backed_w: np.ndarray | None,
                       rating_w: float) -> float:
    """The largest share of the backed-up microinverters' output that must be shed with the battery full:
    ``max((H_acb − L_b) / H_acb)`` over producing steps; 1 (all of it) when no simulation is given."""
    if ac_backed_out_w is None or load_backed_w is None:
        return 1.0
    acb = np.asarray(ac_backed_out_w, dtype=float)
    lb = np.asarray(load_backed_w, dtype=float)
    on = acb > PRODUCING_SHARE * rating_w
    if not on.any():
        return 0.0
    return float(np.clip((acb[on] - lb[on]) / acb[on], 0.0, 1.0).max())


def frequency_watt_checks(sc: Scenario, sim=None) -> list[Check]:
    backed = [a for a in sc.arrays if a.coupling == "ac" and a.side == "backed_up" and a.module_count > 0]
    if not backed:
        return []
    from core.analyses.checks.ac_coupling import ac_coupled_rating_w

    rating = ac_coupled_rating_w(sc, "backed_up")
    if sim is None:
        need = required_reduction(None, None, rating)
        basis = "all of it (the loads may be near zero; no simulation given)"
    else:
        need = required_reduction(sim.steps["ac_backed_out_w"].to_numpy(), sim.steps["load_backed_w"].to_numpy(),
                                  rating)
        basis = "the worst step of the simulated year, with the battery full"
    f_max = sc.inverter_charger.islanded_max_hz
    checks = []
    for name in dict.fromkeys(a.microinverter for a in backed):
        fw = frequency_watt_of(sc.microinverters[name])
        f_need = frequency_for_reduction_hz(need, fw)
        head = (f"In an outage with the battery full, {need * 100:.0f} % of the backed-up microinverters' output must "
                f"be shed ({basis}); {name} ({fw.name}: droop from {fw.start_hz:.3f} Hz, {fw.droop_pct:.1f} %, zero at "
                f"{fw.zero_hz:.2f} Hz, trip at {fw.trip_hz:.2f} Hz) needs {f_need:.2f} Hz for that")
        source = f"{fw.name} over-frequency defaults (from memory); inverter-charger islanded frequency range"
        limit = fw.trip_hz if f_max is None else min(fw.trip_hz, f_max)
        if f_max is None:
            status = "warn"
            what = ("; the inverter-charger's highest islanded frequency is not given (inverter_charger."
                    "islanded_max_hz), so whether it can do this is unknown.")
        elif f_need < fw.trip_hz and f_need <= f_max:
            status = "pass"
            what = f", which the inverter-charger reaches (up to {f_max:.2f} Hz) before the trip."
        elif f_max >= fw.trip_hz:
            status = "warn"
            what = (f", beyond the trip: the inverter-charger (up to {f_max:.2f} Hz) makes them disconnect instead, "
                    "so their output stops all at once and returns only after their reconnection delay.")
        else:
            status = "fail"
            reach = 1.0 - output_fraction(f_max, fw)
            what = (f"; the inverter-charger reaches only {f_max:.2f} Hz, shedding {reach * 100:.0f} % and never "
                    "tripping them: the rest of the surplus has nowhere to go. Fewer backed-up microinverters, "
                    "grid-side placement, or settings that match are needed.")
        checks.append(Check(
            id="frequency_watt.curtailment", status=status, value=round(f_need, 3), limit=round(limit, 3), unit="Hz",
            sentence=head + what, source=source,
            caution=CAUTION_BATTERY + " " + CAUTION_MICRO, subject=f"microinverter {name}"))
    return checks
