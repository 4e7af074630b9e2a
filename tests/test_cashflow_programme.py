"""Tests of a programme's phasing, grants, fuel tax and financing against hand-built cash flows.

The case is the invented two-vehicle, three-year class of ``test_cashflow.py``; every number
below is worked out on paper in the comments. The loan checks use the annuity's closed form
``A = P r / (1 - (1 + r)^-n)`` (Brealey, Myers & Allen, *Principles of Corporate Finance*,
annuities; from memory) and numpy-financial's ``pmt`` and ``fv`` (a reference library).
"""

from __future__ import annotations

from dataclasses import replace

import numpy as np
import numpy_financial as npf
import pytest
from numpy.testing import assert_allclose

from workbench.models import economics as econ

H = 3
ACTIVE = np.array([0.0, 1.0, 1.0, 1.0])


def _baseline(tax_per_j: float = 0.0) -> econ.ClassLine:
    # fuel 2e7 m x 3000 J/m x 2e-8 = 1200, +10 %/year; carbon 400; upkeep 1000
    return econ.ClassLine(
        count=2, active=ACTIVE, km_per_year=1e7, km_per_year_nominal=1e7,
        parts=(econ.EnergyPart(3000.0, 2e-8, 0.10, 0.0, tax_per_j=tax_per_j),),
        tailpipe_co2e_per_m=2e-4, catalyst_cost=np.zeros(H + 1), upkeep_per_year=500.0,
        tank_inspection_cost=0.0, tank_inspection_interval=0, converts=False,
        conversion_cost=0.0, downtime_days=0.0, daily_revenue=0.0, remaining_life_years=6,
        nox_mass=np.array([0.0, 10.0, 10.0, 10.0]))


def _converted(**kw) -> econ.ClassLine:
    # fuel 990, carbon 320, upkeep 1200, catalysts 10 a year; inspections 2 x 50 every 2 years;
    # capital 2 x 3000 = 6000, downtime 2 x 2 days x 100 = 400
    line = econ.ClassLine(
        count=2, active=ACTIVE, km_per_year=1e7, km_per_year_nominal=1e7,
        parts=(econ.EnergyPart(3300.0, 1.5e-8, 0.0, 0.0),), tailpipe_co2e_per_m=1.6e-4,
        catalyst_cost=np.array([0.0, 10.0, 10.0, 10.0]), upkeep_per_year=600.0,
        tank_inspection_cost=50.0, tank_inspection_interval=2, converts=True,
        conversion_cost=3000.0, downtime_days=2.0, daily_revenue=100.0,
        remaining_life_years=6, nox_mass=np.array([0.0, 4.0, 4.0, 4.0]))
    return replace(line, **kw)


def _money(gas: econ.ClassLine, *, base: econ.ClassLine | None = None, rate: float = 0.05,
           **option) -> econ.Money:
    options = {"base": econ.OptionLines([base or _baseline()], 0.0, 0.0),
               "gas": econ.OptionLines([gas], 1000.0, 200.0, **option)}
    return econ.programme_money(options, baseline="base", rate=rate, carbon_price=0.1,
                                horizon=H, n=1)


def test_converted_share_and_cohorts_by_hand():
    s = np.array([0.5, 0.5, 0.0, 0.0])
    assert_allclose(econ.converted_share(s, H), [0.0, 0.5, 1.0, 1.0])
    assert_allclose(econ.converted_share(None, H), [0.0, 1.0, 1.0, 1.0])
    # a quantity of age 1, 2, 3: half the fleet at each age, the second half a year later
    assert_allclose(econ.cohorts([0.0, 1.0, 2.0, 3.0], s), [0.0, 0.5, 1.5, 2.5])


def test_phased_class_against_a_hand_built_cash_flow():
    # phasing [0.5, 0.5]: converted share f = 0, 0.5, 1, 1.
    # Year 0: capital 3000, downtime 200, programme 1000 -> 4200.
    # Year 1: capital 3000, downtime 200; converted half 0.5 x (990 + 320 + 1200) = 1255,
    #   catalysts of the first cohort 0.5 x 10 = 5; the other half as the baseline
    #   0.5 x 2600 = 1300; programme upkeep 200 -> 5960.
    # Year 2: 2510, catalysts 10, inspection of the first cohort (its year 2) 50, upkeep 200
    #   -> 2770. Year 3: the second cohort's inspection instead -> 2770.
    # Residual: 3000 (1 - 3/6) + 3000 (1 - 2/5) = 1500 + 1800 = 3300.
    m = _money(_converted(phasing=np.array([0.5, 0.5, 0.0, 0.0]), before=_baseline()))
    assert_allclose(m.costs["gas"][0], [4200.0, 5960.0, 2770.0, 2770.0], rtol=1e-12)
    assert_allclose(m.residual["gas"][0], [0.0, 0.0, 0.0, 3300.0], rtol=1e-12)
    assert_allclose(m.capital["gas"][0], [4000.0, 3000.0, 0.0, 0.0], rtol=1e-12)
    # CO2e: converted 2e7 x 1.6e-4 = 3200 kg a year, baseline 4000; NOx 4 and 10 kg
    assert_allclose(m.co2e["gas"][0], [0.0, 3600.0, 3200.0, 3200.0], rtol=1e-12)
    assert_allclose(m.nox["gas"], [0.0, 7.0, 4.0, 4.0], rtol=1e-12)


def test_all_in_year_zero_equals_no_phasing():
    whole = _money(_converted())
    phased = _money(_converted(phasing=np.array([1.0, 0.0, 0.0, 0.0]), before=_baseline()))
    for key in ("costs", "residual", "co2e", "carbon"):
        assert_allclose(getattr(phased, key)["gas"], getattr(whole, key)["gas"], rtol=1e-12)


def test_phased_line_without_its_line_before_is_refused():
    with pytest.raises(ValueError, match="before"):
        _money(_converted(phasing=np.array([0.5, 0.5, 0.0, 0.0])))


def test_grants_fall_in_the_year_paid():
    # per vehicle 500 x 2 + 20 % of 6000 = 2200, in each conversion year by its share;
    # programme grant 300 in year 0. Phased [0.5, 0.5]: 1100 + 300 in year 0, 1100 in year 1.
    m = _money(_converted(grant_per_vehicle=500.0, grant_share=0.2,
                          phasing=np.array([0.5, 0.5, 0.0, 0.0]), before=_baseline()),
               programme_grant=300.0)
    assert_allclose(m.grants["gas"][0], [1400.0, 1100.0, 0.0, 0.0], rtol=1e-12)
    assert_allclose(m.costs["gas"][0], [4200.0 - 1400.0, 5960.0 - 1100.0, 2770.0, 2770.0],
                    rtol=1e-12)
    # the grant does not lower the kit's residual value
    assert_allclose(m.residual["gas"][0, -1], 3300.0, rtol=1e-12)


def test_fuel_tax_escalates_with_its_price():
    # 2e7 m x 3000 J/m x 5e-9 = 300 in year 1, +10 %: 330, 363
    m = _money(_converted(), base=_baseline(tax_per_j=5e-9))
    assert_allclose(m.tax["base"][0], [0.0, 300.0, 330.0, 363.0], rtol=1e-12)
    assert_allclose(m.costs["base"][0], [0.0, 2900.0, 3050.0, 3215.0], rtol=1e-12)
    assert_allclose(m.tax["gas"][0], 0.0, atol=0)


def test_annuity_against_the_closed_form_and_numpy_financial():
    p, r, n = 1000.0, 0.06, 5
    repay, balance = econ.loan_schedule(np.array([[p, 0, 0, 0, 0, 0, 0, 0]]), r, n)
    a = p * r / (1.0 - (1.0 + r) ** -n)  # closed form, 237.3964 (from memory: A/P 6 % 5 y)
    assert_allclose(a, -npf.pmt(r, n, p), rtol=1e-12)
    assert_allclose(repay[0], [0.0, a, a, a, a, a, 0.0, 0.0], rtol=1e-12)
    assert_allclose(balance, 0.0, atol=1e-9)  # repaid within the horizon


def test_balance_left_at_the_horizon():
    p, r, n = 1000.0, 0.06, 5
    repay, balance = econ.loan_schedule(np.array([p, 0.0, 0.0, 0.0]), r, n)
    a = -npf.pmt(r, n, p)
    # after 3 repayments: numpy-financial's future value, and the PV of the 2 still due
    assert_allclose(balance, -npf.fv(r, 3, -a, p), rtol=1e-12)
    assert_allclose(balance, a * (1.0 - (1.0 + r) ** -2) / r, rtol=1e-12)
    assert_allclose(repay[0], [0.0, a, a, a], rtol=1e-12)


def test_interest_free_loan_repays_in_equal_parts():
    repay, balance = econ.loan_schedule(np.array([0.0, 800.0, 0.0, 0.0]), 0.0, 4)
    assert_allclose(repay[0], [0.0, 0.0, 200.0, 200.0])
    assert_allclose(balance, 400.0)


def test_a_loan_at_the_discount_rate_leaves_the_npv_unchanged():
    # settled at the horizon, every loan's repayments are worth its principal at its own rate
    gas = _converted(phasing=np.array([0.5, 0.5, 0.0, 0.0]), before=_baseline())
    upfront = econ.npv_draws(_money(gas), "gas", "base").npv
    loan = econ.Loan(share=0.8, rate=0.05, term_years=5)
    financed = _money(gas, loan=loan)
    assert_allclose(econ.npv_draws(financed, "gas", "base").npv, upfront, rtol=1e-12)
    # year 0 pays 20 % of its 4000 capital upfront (and the 200 downtime)
    assert financed.costs["gas"][0, 0] == pytest.approx(0.2 * 4000.0 + 200.0)
    assert financed.loan_balance["gas"][0] > 0.0
    # a cheaper loan than the discount rate raises the NPV
    cheap = _money(gas, loan=econ.Loan(share=0.8, rate=0.01, term_years=5))
    assert econ.npv_draws(cheap, "gas", "base").npv[0] > upfront[0]
