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
    """Net present value of yearly cash flows: Σ CF_t / (1 + rate)^t.

    Parameters
    ----------
    rate : float
        Discount rate per year, as a fraction (0.04 for 4 %).
    cash_flows : array-like
        Cash flows at the end of years 0, 1, 2, … (year 0 undiscounted), in any currency.

    Returns
    -------
    float
        The net present value, in the currency of the cash flows.

    References
    ----------
    Follows ``numpy_financial.npv``, the reference implementation in ``tests/test_economics.py``.
    """
    cf = np.asarray(cash_flows, dtype=float)
    t = np.arange(len(cf))
    return float(np.sum(cf / (1.0 + rate) ** t))


def irr(cash_flows: Sequence[float] | np.ndarray) -> float | None:
    """Internal rate of return: the rate > −1 at which :func:`npv` is zero.

    Parameters
    ----------
    cash_flows : array-like
        Cash flows at the end of years 0, 1, 2, …, in any currency.

    Returns
    -------
    float or None
        The rate per year as a fraction; of several valid rates the one closest to zero. ``None`` when no
        real rate exists (for example when all flows have one sign).

    Notes
    -----
    Solved as the real roots of the polynomial Σ CF_t x^t with x = 1 / (1 + rate), as numpy-financial does.

    References
    ----------
    ``numpy_financial.irr``, the reference implementation in ``tests/test_economics.py``.
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
    """Months until the cumulative saving reaches the investment.

    Parameters
    ----------
    investment : float
        The investment, in the currency of the savings.
    yearly_savings : array-like
        The saving of years 1, 2, …, each spread evenly over its twelve months.

    Returns
    -------
    float or None
        Months (0 for no investment); ``None`` when the investment is not recovered within the years given.

    Notes
    -----
    Simple payback on undiscounted savings, discounted payback on discounted ones (common practice in project
    appraisal).
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
    """Energy and price factors of years 1…N.

    Parameters
    ----------
    years : int
        Years of the analysis.
    degradation_pct_per_year : float
        Yearly loss of PV output, %.
    escalation_pct : float
        Yearly rise of energy prices, %.

    Returns
    -------
    numpy.ndarray
        Shape (2, years): row 0 the energy factor ``(1 − d)^(t−1)``, row 1 the price factor ``(1 + e)^(t−1)``.
    """
    t = np.arange(years, dtype=float)
    energy = (1.0 - degradation_pct_per_year / 100.0) ** t
    price = (1.0 + escalation_pct / 100.0) ** t
    return np.vstack([energy, price])


def appraise(*, investment: float, import_avoided_kwh: float, export_added_kwh: float,
             import_price_per_kwh: float, export_price_per_kwh: float, escalation_pct: float,
             discount_pct: float, years: int, degradation_pct_per_year: float,
             currency: str = "") -> Economics:
    """Annual saving, paybacks, NPV, IRR and levelised cost of one option against the existing system.

    Parameters
    ----------
    investment : float
        Cost of the option, in ``currency``.
    import_avoided_kwh : float
        First-year grid import avoided, kWh; negative when the option imports more (a cost).
    export_added_kwh : float
        First-year paid (allowed) export added, kWh.
    import_price_per_kwh, export_price_per_kwh : float
        First-year prices, currency per kWh.
    escalation_pct : float
        Yearly rise of the prices, %.
    discount_pct : float
        Discount rate, % per year.
    years : int
        Years of the analysis.
    degradation_pct_per_year : float
        Yearly loss of PV output, %.
    currency : str, optional
        The currency's code or symbol, carried into the result.

    Returns
    -------
    Economics
        The figures, and the cash flows of years 0…N.

    References
    ----------
    The conventions in the module docstring; levelised cost after Short, Packey & Holt, NREL/TP-462-5173 (1995).
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


