"""Economics against numpy-financial (the reference library) and hand-worked cash flows."""

from __future__ import annotations

import numpy as np
import numpy_financial as npf
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from core.model.economics import appraise, irr, npv, payback_months

approx = pytest.approx


def test_irr_of_the_numpy_documentation_example():
    # numpy(-financial) documentation example: irr([-100, 39, 59, 55, 20]) ≈ 0.2809 (from memory).
    assert irr([-100, 39, 59, 55, 20]) == approx(0.2809, abs=5e-5)
    # … and the same as the reference library to machine precision.
    assert irr([-100, 39, 59, 55, 20]) == approx(npf.irr([-100, 39, 59, 55, 20]), rel=1e-12)


@pytest.mark.parametrize("flows", [[-100, 0, 0, 74], [-100, 100, 0, 7], [-5, 10.5, 1, -8, 1], [-1000] + [120] * 15])
def test_irr_matches_numpy_financial(flows):
    # Reference: numpy_financial.irr (its own documentation examples and a level annuity).
    assert irr(flows) == approx(npf.irr(flows), abs=1e-10)


def test_irr_is_none_when_no_rate_exists():
    assert irr([-100, -5, -5]) is None
    assert irr([100, 5]) is None


@settings(max_examples=60, deadline=None)
@given(st.lists(st.floats(-1e4, 1e4), min_size=2, max_size=25), st.floats(-0.5, 0.5))
def test_npv_matches_numpy_financial(flows, rate):
    # numpy_financial.npv discounts the first value as year 0, as ours does.
    assert npv(rate, flows) == approx(npf.npv(rate, flows), rel=1e-9, abs=1e-6)


def test_level_saving_by_hand():
    # Investment 1000; 500 kWh of import avoided a year at 0.20 → 100 a year; no escalation, no degradation.
    # Simple payback 1000 / 100 = 10 years = 120 months; with no discounting the same, NPV = 20 × 100 − 1000 = 1000;
    # levelised cost = 1000 / (20 × 500 kWh) = 0.10 per kWh.
    e = appraise(investment=1000, import_avoided_kwh=500, export_added_kwh=0, import_price_per_kwh=0.2,
                 export_price_per_kwh=0.0, escalation_pct=0, discount_pct=0, years=20, degradation_pct_per_year=0)
    assert e.annual_saving == approx(100.0)
    assert e.simple_payback_years == approx(10.0)
    assert e.simple_payback_months == approx(120.0)
    assert e.discounted_payback_months == approx(120.0)
    assert e.npv == approx(1000.0)
    assert e.lcoe_per_kwh == approx(0.10)
    # IRR of −1000 then 20 × 100: the reference library's answer.
    assert e.irr == approx(npf.irr([-1000] + [100] * 20), abs=1e-10)


def test_payback_inside_a_year_is_spread_over_its_months():
    # 150 against 100 a year: the first year pays 100, the remaining 50 take half of the second year → 18 months.
    assert payback_months(150, [100, 100, 100]) == approx(18.0)
    assert payback_months(500, [100, 100, 100]) is None


def test_escalation_degradation_and_discounting_against_numpy_financial():
    # Year t saving = (400 kWh × 0.30 + 100 kWh × 0.05) × (0.995 × 1.025)^(t−1), written out here independently.
    years = 15
    first = 400 * 0.30 + 100 * 0.05
    flows = [-1200.0] + [first * (0.995 * 1.025) ** (t - 1) for t in range(1, years + 1)]
    e = appraise(investment=1200, import_avoided_kwh=400, export_added_kwh=100, import_price_per_kwh=0.30,
                 export_price_per_kwh=0.05, escalation_pct=2.5, discount_pct=4.0, years=years,
                 degradation_pct_per_year=0.5, currency="EUR")
    np.testing.assert_allclose(e.cash_flows, flows, rtol=1e-12)
    assert e.npv == approx(npf.npv(0.04, flows), rel=1e-10)
    assert e.irr == approx(npf.irr(flows), abs=1e-10)
    # Discounting makes the payback later, never earlier.
    assert e.discounted_payback_months > e.simple_payback_months
    # The NPV is zero at the IRR (definition).
    assert npf.npv(e.irr, flows) == approx(0.0, abs=1e-6)
    # Levelised cost: investment over the discounted added energy.
    energy = sum(500 * 0.995 ** (t - 1) / 1.04**t for t in range(1, years + 1))
    assert e.lcoe_per_kwh == approx(1200 / energy, rel=1e-12)
    assert e.to_dict()["currency"] == "EUR"


def test_an_option_that_never_pays_back():
    e = appraise(investment=5000, import_avoided_kwh=10, export_added_kwh=0, import_price_per_kwh=0.1,
                 export_price_per_kwh=0, escalation_pct=0, discount_pct=5, years=10, degradation_pct_per_year=0)
    assert e.simple_payback_months is None and e.discounted_payback_years is None
    assert e.npv < 0
