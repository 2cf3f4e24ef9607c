"""Power converters: charge controllers, microinverters and the inverter-charger.

Each converter turns module-side DC power into output power with an efficiency and a limit.
Output above a limit is **clipped**: it is counted on the module side (DC energy never converted).
Conversion losses are counted explicitly (input converted minus output), never as a remainder.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np


@dataclass(frozen=True)
class Converted:
    """One converter group's result, step means in W."""

    out_w: np.ndarray  # power delivered at the converter's output
    loss_w: np.ndarray  # conversion loss on the converted part (input converted − output)
    clipped_w: np.ndarray  # module-side power above the limit, never converted


def _limit(p_module_w: np.ndarray, efficiency: float, output_limit_w: np.ndarray | float,
           input_limit_w: np.ndarray | float = np.inf) -> Converted:
    p = np.maximum(np.asarray(p_module_w, dtype=float), 0.0)
    accepted = np.minimum(np.minimum(p, np.asarray(input_limit_w, dtype=float)),
                          np.asarray(output_limit_w, dtype=float) / efficiency)
    out = accepted * efficiency
    return Converted(out_w=out, loss_w=accepted - out, clipped_w=p - accepted)


def controller_output(p_module_w: np.ndarray, *, efficiency: float, max_charge_current_a: float,
                      battery_nominal_v: float, max_input_current_a: float | None = None,
                      vmp_string_v: np.ndarray | None = None, strings: int = 1) -> Converted:
    """An MPPT charge controller: efficiency, and output limited to its rated charge current.

    Parameters
    ----------
    p_module_w : array-like
        DC power of the array at its maximum-power point, W (step means).
    efficiency : float
        Conversion efficiency, 0…1.
    max_charge_current_a : float
        Rated output (charge) current, A; × ``battery_nominal_v`` gives the output limit, W.
    battery_nominal_v : float
        Nominal battery voltage, V.
    max_input_current_a : float, optional
        Rated PV input current, A. With ``vmp_string_v`` it limits the input to ``max_input_current_a × Vmp``.
    vmp_string_v : array-like, optional
        The string's maximum-power voltage per step, V.
    strings : int, default 1
        Strings in parallel (kept for the callers; the input limit is per controller).

    Returns
    -------
    Converted
        Output, conversion loss and clipped power, W. Clipped power is counted on the module side.

    Notes
    -----
    A controller draws no more than its rated input current: the operating point moves off the maximum-power
    point and the rest is clipped. Both limits are common practice (controller datasheets).
    """
    output_limit = max_charge_current_a * battery_nominal_v
    input_limit: np.ndarray | float = np.inf
    if max_input_current_a is not None and vmp_string_v is not None:
        input_limit = max_input_current_a * np.maximum(np.asarray(vmp_string_v, dtype=float), 0.0)
    return _limit(p_module_w, efficiency, output_limit, input_limit)


def microinverter_output(p_module_w: np.ndarray, *, modules: int, efficiency: float, ac_rating_w: float,
                         max_dc_input_w: float, inputs: int = 1) -> Converted:
    """``modules`` identical modules on microinverters with ``inputs`` modules each.

    Parameters
    ----------
    p_module_w : array-like
        DC power of ONE module at its maximum-power point, W (step means).
    modules : int
        Modules in all.
    efficiency : float
        Conversion efficiency DC to AC, 0…1.
    ac_rating_w : float
        Continuous AC output of one unit, W.
    max_dc_input_w : float
        Largest DC input of one unit, all its inputs together, W.
    inputs : int, default 1
        Modules per unit; a last, partly filled unit has the same limits for fewer modules.

    Returns
    -------
    Converted
        Output (AC), conversion loss and clipped power of the whole group, W.

    Notes
    -----
    Clipping at the AC rating and the DC input limit follows the datasheet limits (common practice).
    """
    p = np.maximum(np.asarray(p_module_w, dtype=float), 0.0)
    full, rest = divmod(int(modules), int(inputs))
    groups = [(full, inputs)] + ([(1, rest)] if rest else [])
    out = np.zeros_like(p)
    loss = np.zeros_like(p)
    clipped = np.zeros_like(p)
    for units, per_unit in groups:
        if units == 0:
            continue
        unit = _limit(p * per_unit, efficiency, ac_rating_w, max_dc_input_w)
        out += units * unit.out_w
        loss += units * unit.loss_w
        clipped += units * unit.clipped_w
    return Converted(out_w=out, loss_w=loss, clipped_w=clipped)


@dataclass(frozen=True)
class InverterCurve:
    """The inverter-charger's inverting direction as a table of AC output against DC input.

    Both directions interpolate the same table, so DC→AC and AC→DC are exact inverses and every
    loss is counted once.
    """

    ac_w: np.ndarray
    dc_w: np.ndarray

    @property
    def rating_w(self) -> float:
        """Continuous AC rating, W."""
        return float(self.ac_w[-1])

    def dc_for_ac(self, p_ac_w):
        """DC input (W) that gives the AC output ``p_ac_w`` (W)."""
        return np.interp(p_ac_w, self.ac_w, self.dc_w)

    def ac_for_dc(self, p_dc_w):
        """AC output (W) from the DC input ``p_dc_w`` (W)."""
        return np.interp(p_dc_w, self.dc_w, self.ac_w)


def inverter_curve(rating_w: float, efficiency: float | tuple[tuple[float, float], ...],
                   points: int = 201) -> InverterCurve:
    """Tabulate DC input against AC output of the inverter-charger, from 0 to its rating.

    Parameters
    ----------
    rating_w : float
        Continuous AC output rating, W.
    efficiency : float or sequence of (float, float)
        A constant, or a part-load curve ``[(load_fraction, efficiency), …]`` (AC output over rating),
        interpolated linearly and held flat beyond its ends — the usual datasheet form.
    points : int, default 201
        Rows of the table.

    Returns
    -------
    InverterCurve
        AC output and DC input, W, both rising strictly, so that either can be interpolated from the other.

    References
    ----------
    Dobos, A. P., "PVWatts Version 5 Manual", NREL/TP-6A20-62641 (2014), for the shape of a part-load curve;
    ``tests/test_conversion.py`` holds the tabulated curve to :func:`pvlib.inverter.pvwatts`.
    """
    ac = np.linspace(0.0, float(rating_w), points)
    if isinstance(efficiency, int | float):
        eta = np.full_like(ac, float(efficiency))
    else:
        fracs = np.array([p[0] for p in efficiency], dtype=float)
        effs = np.array([p[1] for p in efficiency], dtype=float)
        eta = np.interp(ac / float(rating_w), fracs, effs)
    dc = np.divide(ac, eta, out=np.zeros_like(ac), where=eta > 0)
    # The table must rise strictly for the inverse to exist; a very steep part-load curve can break that.
    dc = np.maximum.accumulate(dc + np.arange(points) * 1e-12)
    return InverterCurve(ac_w=ac, dc_w=dc)


def efficiency_at(curve: InverterCurve, p_ac_w):
    """Efficiency of the inverter-charger at the given AC output.

    Parameters
    ----------
    curve : InverterCurve
        The tabulated curve (:func:`inverter_curve`).
    p_ac_w : array-like
        AC output, W.

    Returns
    -------
    numpy.ndarray
        AC out / DC in, 0…1 (0 at zero output).
    """
    p_ac_w = np.asarray(p_ac_w, dtype=float)
    dc = curve.dc_for_ac(p_ac_w)
    return np.divide(p_ac_w, dc, out=np.zeros_like(p_ac_w), where=dc > 0)


#: The wait after the grid returns before a grid-following inverter produces again, per grid code (s).
#: IEEE 1547-2018 §4.10.3 (enter service): default delay 300 s, adjustable 0–600 s (from memory);
#: EN 50549-1:2019 §4.10 (connection and starting to generate): default observation time 60 s (from memory).
RECONNECT_DELAY_S = {"ieee1547_2018": 300.0, "en50549_1": 60.0}
