"""The battery's charge and discharge limits within a time step: charge acceptance and the kinetic battery model.

Plain functions of numbers (energies in Wh, powers in W, times in hours), written so that the compiled engine
(:mod:`core.model.dispatch`) can call them inline; they are the engine's battery physics, kept apart so that
each can be read and tested on its own.
"""

from __future__ import annotations

import math


def charge_limit_w(e, dt, eta, ch_max, usable, taper_wh, end_fraction):
    """Mean bus-side power the battery accepts over a step that starts with ``e`` Wh stored.

    Acceptance is ``ch_max`` up to ``taper_wh`` and falls linearly with the stored energy to
    ``end_fraction × ch_max`` at ``usable`` (the constant-current then constant-voltage charge of a lithium
    battery, its current tail drawn as a straight line in the SOC). Charging at the limit, the stored energy
    follows ``dE/dt = η · P(E)``, integrated exactly over the step, so the taper does not depend on the step.
    """
    if ch_max <= 0.0 or dt <= 0.0:
        return 0.0
    if e < taper_wh:
        t_cc = (taper_wh - e) / (eta * ch_max)  # hours at full power before the knee
        if t_cc >= dt or taper_wh >= usable:
            return ch_max
        e_knee = taper_wh
        t_left = dt - t_cc
    else:
        e_knee = e
        t_left = dt
    slope = ch_max * (1.0 - end_fraction) / max(usable - taper_wh, 1e-9)  # W per Wh above the knee
    if slope <= 0.0:
        return ch_max
    e_star = taper_wh + ch_max / slope  # where acceptance would reach zero
    e_end = e_star - (e_star - e_knee) * math.exp(-eta * slope * t_left)
    return max(0.0, (e_end - e) / (eta * dt))


def kibam_limits_w(e, q1, dt, c, k, usable):
    """Largest mean discharge and charge power (stored side, W) over a step of the kinetic battery model.

    Manwell & McGowan, "Lead acid battery storage model for hybrid energy systems", Solar Energy 50 (1993)
    399–405: the charge ``e`` sits in an available well ``q1`` and a bound well ``e − q1`` that exchange charge
    at rate ``k``; with ``x = exp(−kΔt)`` and ``d = 1 − x + c(kΔt − 1 + x)`` the largest discharge that leaves
    the available well empty at the step's end is ``(k q1 x + e k c (1 − x)) / d`` and the largest charge
    that fills it is ``(k c Q − k q1 x − e k c (1 − x)) / d``.
    """
    x = math.exp(-k * dt)
    d = 1.0 - x + c * (k * dt - 1.0 + x)
    discharge = (k * q1 * x + e * k * c * (1.0 - x)) / d
    charge = (k * c * usable - k * q1 * x - e * k * c * (1.0 - x)) / d
    return max(0.0, discharge), max(0.0, charge)


def kibam_available_wh(e, q1, p, dt, c, k):
    """The available well after a step of mean stored-side power ``p`` (W, discharge positive) from ``e``, ``q1``."""
    x = math.exp(-k * dt)
    return q1 * x + (e * k * c - p) * (1.0 - x) / k - p * c * (k * dt - 1.0 + x) / k
