"""What an expansion pays back: annual saving, payback, NPV, IRR and levelised cost of the added energy.

A leaf module: plain numbers in, a small record out. Conventions (all common practice in project appraisal):

* Year 0 carries the investment (a negative cash flow); years 1…N carry the saving of that year.
* The saving of year ``t`` is the first year's energy figures × ``(1 − degradation)^(t−1)`` (module output
  falls each year) priced at the first year's tariff × ``(1 + escalation)^(t−1)``:
  ``saving_t = (import_avoided_kwh · p_import + export_added_kwh · p_export) · ((1 − d)(1 + e))^(t−1)``.
* Discounting at the nominal discount rate ``r``: a cash flow in year ``t`` is worth ``CF_t / (1 + r)^t`` today.
* NPV = Σ CF_t / (1 + r)^t; IRR = the rate at which the NPV is zero. Both follow the definitions of
  numpy-financial (``npv``, ``irr``), which the tests use as the reference implementation.
* Payback: the time at which the cumulative (simple) or cumulative discounted saving first equals the
  investment, with each year's saving spread evenly over its twelve months; ``None`` when that does not
  happen within the analysis period.
* Levelised cost of the added energy (LCOE-style, e.g. Short, Packey & Holt, "A manual for the economic
  evaluation of energy efficiency and renewable energy technologies", NREL/TP-462-5173, 1995):
  investment / Σ_t E_t / (1 + r)^t, where ``E_t`` is the added energy that replaces grid import or is sold
  (no running costs are modelled).
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import asdict, dataclass

import numpy as np

MONTHS_PER_YEAR = 12


@dataclass(frozen=True)
class Economics:
    """The money side of one option against the existing system (amounts in ``currency``)."""

    currency: str
    investment: float
    import_avoided_kwh: float  # first year
    export_added_kwh: float  # first year, paid export only
    annual_saving: float  # first year
    simple_payback_years: float | None
    simple_payback_months: float | None
    discounted_payback_years: float | None
    discounted_payback_months: float | None
    npv: float
    irr: float | None
    lcoe_per_kwh: float | None  # levelised cost of the added energy
    years: int
    discount_pct: float
    cash_flows: tuple[float, ...]  # year 0 (investment, negative) … year N

    def to_dict(self) -> dict:
        out = asdict(self)
        out["cash_flows"] = list(self.cash_flows)
        return out


def npv(rate: float, cash_flows: Sequence[float] | np.ndarray) -> float:
    """Net present value of cash flows at the end of years 0, 1, 2, …: Σ CF_t / (1 + rate)^t."""
    cf = np.asarray(cash_flows, dtype=float)
    t = np.arange(len(cf))
    return float(np.sum(cf / (1.0 + rate) ** t))


def irr(cash_flows: Sequence[float] | np.ndarray) -> float | None:
    """Internal rate of return: the rate > −1 at which :func:`npv` is zero.

    Solved as the real roots of the polynomial Σ CF_t x^t with x = 1 / (1 + rate), as numpy-financial
    does; of several valid roots the one closest to zero is returned. ``None`` when no real rate exists
    (for example when the saving never covers the investment in any sense: all flows of one sign).
    """
    cf = np.asarray(cash_flows, dtype=float)
    if cf.size < 2 or not (np.any(cf > 0) and np.any(cf < 0)):
        return None
    # np.roots wants the highest power first: CF_N x^N + … + CF_0.
    roots = np.roots(cf[::-1])
    real = roots[(np.abs(roots.imag) < 1e-10) & (roots.real > 0)].real
    if real.size == 0:
        return None
    rates = 1.0 / real - 1.0
    return float(rates[np.argmin(np.abs(rates))])


def payback_months(investment: float, yearly_savings: Sequence[float]) -> float | None:
    """Months until the cumulative saving reaches the investment, each year's saving spread over 12 months.

    ``None`` when it is not reached within the years given (or the saving is not positive).
    """
    if investment <= 0:
        return 0.0
    cumulative = 0.0
    for year, saving in enumerate(yearly_savings):
        if saving > 0 and cumulative + saving >= investment:
            return float((year + (investment - cumulative) / saving) * MONTHS_PER_YEAR)
        cumulative += saving
    return None


def yearly_factors(years: int, *, degradation_pct_per_year: float, escalation_pct: float) -> np.ndarray:
    """Energy and price factors of years 1…N: ``((1 − d)(1 + e))^(t−1)`` (returned as energy, money pairs)."""
    t = np.arange(years, dtype=float)
    energy = (1.0 - degradation_pct_per_year / 100.0) ** t
    price = (1.0 + escalation_pct / 100.0) ** t
    return np.vstack([energy, price])


def appraise(*, investment: float, import_avoided_kwh: float, export_added_kwh: float,
             import_price_per_kwh: float, export_price_per_kwh: float, escalation_pct: float,
             discount_pct: float, years: int, degradation_pct_per_year: float,
             currency: str = "") -> Economics:
    """Annual saving, paybacks, NPV, IRR and levelised cost for one option (see the module docstring).

    ``import_avoided_kwh`` and ``export_added_kwh`` are the first year's differences from the existing
    system; ``export_added_kwh`` counts paid (allowed) export only. A negative ``import_avoided_kwh`` (the
    option imports more) is kept: it is a cost.
    """
    energy_f, price_f = yearly_factors(years, degradation_pct_per_year=degradation_pct_per_year,
                                       escalation_pct=escalation_pct)
    first_saving = import_avoided_kwh * import_price_per_kwh + export_added_kwh * export_price_per_kwh
    savings = first_saving * energy_f * price_f
    flows = np.concatenate([[-float(investment)], savings])
    r = discount_pct / 100.0
    discount = (1.0 + r) ** -np.arange(1, years + 1, dtype=float)
    simple = payback_months(investment, savings)
    discounted = payback_months(investment, savings * discount)
    added_energy = (import_avoided_kwh + export_added_kwh) * energy_f
    discounted_energy = float(np.sum(added_energy * discount))
    lcoe = investment / discounted_energy if discounted_energy > 1e-9 else None
    return Economics(
        currency=currency, investment=float(investment), import_avoided_kwh=float(import_avoided_kwh),
        export_added_kwh=float(export_added_kwh), annual_saving=float(first_saving),
        simple_payback_years=None if simple is None else simple / MONTHS_PER_YEAR, simple_payback_months=simple,
        discounted_payback_years=None if discounted is None else discounted / MONTHS_PER_YEAR,
        discounted_payback_months=discounted, npv=npv(r, flows), irr=irr(flows), lcoe_per_kwh=lcoe,
        years=int(years), discount_pct=float(discount_pct), cash_flows=tuple(float(x) for x in flows))


