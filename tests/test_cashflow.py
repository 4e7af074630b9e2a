"""Tests of workbench.models.economics.cashflow against a cash flow built by hand.

The case is invented (two vehicles, three years) so that every number below can be worked out
on paper; the comments show the arithmetic. Conventions checked are the glossary's: year 0 is
the conversion year, year 1 is at today's prices, residual value straight line at the horizon.
"""

from __future__ import annotations

from dataclasses import replace

import numpy as np
import numpy_financial as npf
import pytest
from numpy.testing import assert_allclose

from workbench.models import economics as econ

H = 3
ACTIVE = np.array([0.0, 1.0, 1.0, 1.0])  # runs in years 1..3


def _baseline(price_per_j: float | np.ndarray = 2e-8) -> econ.ClassLine:
    return econ.ClassLine(
        count=2, active=ACTIVE, km_per_year=1e7, km_per_year_nominal=1e7,
        parts=(econ.EnergyPart(3000.0, price_per_j, 0.10, 0.0),), tailpipe_co2e_per_m=2e-4,
        catalyst_cost=np.zeros(H + 1), upkeep_per_year=500.0,
        tank_inspection_cost=0.0, tank_inspection_interval=0, converts=False,
        conversion_cost=0.0, downtime_days=0.0, daily_revenue=0.0, remaining_life_years=6,
        nox_mass=np.array([0.0, 10.0, 10.0, 10.0]))


def _converted() -> econ.ClassLine:
    return econ.ClassLine(
        count=2, active=ACTIVE, km_per_year=1e7, km_per_year_nominal=1e7,
        parts=(econ.EnergyPart(3300.0, 1.5e-8, 0.0, 0.0),), tailpipe_co2e_per_m=1.6e-4,
        catalyst_cost=np.array([0.0, 10.0, 10.0, 10.0]), upkeep_per_year=600.0,
        tank_inspection_cost=50.0,
        tank_inspection_interval=2, converts=True, conversion_cost=3000.0, downtime_days=2.0,
        daily_revenue=100.0, remaining_life_years=6, nox_mass=np.array([0.0, 4.0, 4.0, 4.0]))


def _money(price: float | np.ndarray = 2e-8, n: int = 1) -> econ.Money:
    options = {
        "base": econ.OptionLines([_baseline(price)], 0.0, 0.0),
        "gas": econ.OptionLines([_converted()], 1000.0, 200.0),
    }
    return econ.programme_money(options, baseline="base", rate=0.05, carbon_price=0.1,
                                horizon=H, n=n)


def test_baseline_costs_by_hand():
    # 2 vehicles x 1e7 m = 2e7 m a year; x 3000 J/m = 6e10 J; x 2e-8 /J = 1200 in year 1,
    # then +10 % a year: 1320, 1452. Carbon 2e7 m x 2e-4 kg/m = 4000 kg x 0.1 = 400 a year.
    # Upkeep 2 x 500 = 1000 a year. Year 0 buys nothing.
    m = _money()
    assert_allclose(m.costs["base"][0], [0.0, 2600.0, 2720.0, 2852.0], rtol=1e-12)
    assert_allclose(m.carbon["base"][0], [0.0, 400.0, 400.0, 400.0], rtol=1e-12)
    assert_allclose(m.co2e["base"][0], [0.0, 4000.0, 4000.0, 4000.0], rtol=1e-12)
    assert_allclose(m.km[0], [0.0, 2e7, 2e7, 2e7], rtol=1e-12)
    assert_allclose(m.residual["base"][0], 0.0, atol=0)


def test_converted_option_by_hand():
    # Year 0: conversion 2 x 3000 = 6000, downtime 2 days x 100 x 2 = 400, programme 1000.
    # Years 1-3: fuel 2e7 x 3300 x 1.5e-8 = 990; carbon 2e7 x 1.6e-4 = 3200 kg -> 320;
    # upkeep 1200; catalysts 10; programme upkeep 200 -> 2720; year 2 adds the tank
    # inspections (every 2 years) 2 x 50 = 100.
    # Residual at year 3 of a 6-year life: 6000 x (1 - 3/6) = 3000.
    m = _money()
    assert_allclose(m.costs["gas"][0], [7400.0, 2720.0, 2820.0, 2720.0], rtol=1e-12)
    assert_allclose(m.residual["gas"][0], [0.0, 0.0, 0.0, 3000.0], rtol=1e-12)
    assert_allclose(m.cash["gas"][0], [-7400.0, -2720.0, -2820.0, 280.0], rtol=1e-12)


def test_draws_run_along_the_first_axis():
    # Second draw: the baseline's price doubled, so its fuel doubles: 2400, 2640, 2904.
    m = _money(np.array([2e-8, 4e-8]), n=2)
    assert m.costs["base"].shape == (2, H + 1)
    assert_allclose(m.costs["base"][1], [0.0, 3800.0, 4040.0, 4304.0], rtol=1e-12)
    assert_allclose(m.costs["gas"][0], m.costs["gas"][1], rtol=0)


def test_physics_draws_interpolate_each_response():
    # Nominal 3000 J/m; the response gives 2800 J/m at x = 0 and 3400 J/m at x = 1, so a
    # draw at x = 0.5 is 3100 J/m (linear), one at x = 2 is held at 3400 (end value).
    r = econ.Response("a", np.array([0.0, 1.0]), np.array([2800.0, 3400.0]),
                      np.array([1e-4, 1e-4]), np.zeros((2, H + 1)))
    e, t, c = econ.physics_draws(3000.0, 1e-4, np.zeros(H + 1), [r],
                                 {"a": np.array([0.5, 2.0])}, 2)
    assert_allclose(e[:, 0], [3100.0, 3400.0], rtol=1e-12)
    assert_allclose(t[:, 0], 1e-4, rtol=1e-12)
    assert c.shape == (2, H + 1)


# --- the money definitions (docs/glossary.md, "Money definitions"), on the same case --------
# Discount factors at 5 %: 1/1.05, 1/1.05**2, 1/1.05**3 written out by hand below.
# Net cost without carbon (costs - carbon - residual):
#   baseline [0, 2600 - 400, 2720 - 400, 2852 - 400]            = [0, 2200, 2320, 2452]
#   gas      [7400, 2720 - 320, 2820 - 320, 2720 - 320 - 3000]  = [7400, 2400, 2500, -600]
#   extra    = [7400, 200, 180, -3052]
EXTRA_PV = 7400 + 200 / 1.05 + 180 / 1.05**2 - 3052 / 1.05**3
ANNUITY_3 = 1 / 1.05 + 1 / 1.05**2 + 1 / 1.05**3


def test_npv_and_payback_by_hand():
    # Cash: gas [-7400, -2720, -2820, 3000 - 2720], baseline [0, -2600, -2720, -2852];
    # difference [-7400, -120, -100, 3132]: still negative at the horizon, so no payback.
    c = econ.compare(_money(), "gas", "base")
    assert_allclose(c.npv, [-7400 - 120 / 1.05 - 100 / 1.05**2 + 3132 / 1.05**3], rtol=1e-12)
    assert np.isnan(c.simple_payback[0]) and np.isnan(c.discounted_payback[0])


def test_abatement_cost_uses_the_npv_net_cost_without_carbon_payments():
    # CO2e avoided 4000 - 3200 = 800 kg in each of years 1-3 (2400 kg over the programme).
    c = econ.compare(_money(), "gas", "base")
    assert_allclose(c.co2e_avoided, [2400.0], rtol=1e-12)
    assert_allclose(c.cost_per_kg_co2e_avoided, [EXTRA_PV / (800 * ANNUITY_3)], rtol=1e-12)
    # NOx avoided 10 - 4 = 6 kg a year: the same net cost over the discounted NOx.
    assert_allclose(c.nox_avoided, [18.0], rtol=1e-12)
    assert_allclose(c.cost_per_kg_nox_avoided, [EXTRA_PV / (6 * ANNUITY_3)], rtol=1e-12)


def test_a_raised_emission_is_a_negative_avoided_and_no_abatement_cost():
    # The baseline against the gas option: it emits 800 kg a year more.
    c = econ.compare(_money(), "base", "gas")
    assert_allclose(c.co2e_avoided, [-2400.0], rtol=1e-12)
    assert np.isnan(c.cost_per_kg_co2e_avoided[0])


def test_levelised_cost_credits_the_residual():
    # PV of (costs - residual) of the gas option over PV of 2e7 m a year in years 1-3.
    pv_cost = 7400 + 2720 / 1.05 + 2820 / 1.05**2 + (2720 - 3000) / 1.05**3
    assert_allclose(econ.levelised_cost_per_m(_money(), "gas"), [pv_cost / (2e7 * ANNUITY_3)],
                    rtol=1e-12)


def test_first_year_cost_per_km_by_item():
    # Fuel 3300 J/m x 1.5e-8 /J + carbon 1.6e-4 kg/m x 0.1 /kg. Upkeep 600 a vehicle-year,
    # catalysts 30 over 2 vehicles and 3 years = 5, one inspection of 50 in 3 years. Capital:
    # conversion 3000 + downtime 2 x 100, times the capital recovery factor
    # r (1+r)^n / ((1+r)^n - 1) at 5 % over the 6-year life; all per 1e7 m a year.
    out = econ.cost_per_m(_converted(), rate=0.05, carbon_price=0.1)
    assert_allclose(out["fuel"], 3300 * 1.5e-8 + 1.6e-4 * 0.1, rtol=1e-12)
    assert_allclose(out["upkeep"], (600 + 30 / 2 / 3 + 50 / 3) / 1e7, rtol=1e-12)
    assert_allclose(out["capital"], 3200 * 0.05 * 1.05**6 / (1.05**6 - 1) / 1e7, rtol=1e-12)


# --- several energy carriers on one class line (a dual-fuel engine), upstream by year -------
# Invented: the two vehicles above burn 1200 J/m of diesel (pilot) and 2400 J/m of gas.
# Diesel 2.5e-8 /J escalating 4 %, upstream 2e-8 kg/J; gas 1.2e-8 /J escalating 2 %, upstream
# 1e-8 kg/J; tailpipe (both fuels' CO2 and the slipped methane) 1.7e-4 kg/m.
DIESEL = econ.EnergyPart(1200.0, 2.5e-8, 0.04, 2e-8)
GAS = econ.EnergyPart(2400.0, 1.2e-8, 0.02, 1e-8)


def _two_fuel(*parts: econ.EnergyPart) -> econ.ClassLine:
    return econ.ClassLine(
        count=2, active=ACTIVE, km_per_year=1e7, km_per_year_nominal=1e7,
        parts=parts or (DIESEL, GAS), tailpipe_co2e_per_m=1.7e-4, catalyst_cost=np.zeros(H + 1),
        upkeep_per_year=0.0, tank_inspection_cost=0.0, tank_inspection_interval=0,
        converts=True, conversion_cost=3000.0, downtime_days=0.0, daily_revenue=0.0,
        remaining_life_years=6, nox_mass=np.zeros(H + 1))


def _two_fuel_money(line: econ.ClassLine, n: int = 1) -> econ.Money:
    options = {"base": econ.OptionLines([_baseline()], 0.0, 0.0),
               "dual": econ.OptionLines([line], 0.0, 0.0)}
    return econ.programme_money(options, baseline="base", rate=0.05, carbon_price=0.1,
                                horizon=H, n=n)


def test_two_fuel_class_line_against_a_hand_built_cash_flow():
    # Reference: the cash flow written out with numpy below, its NPV with numpy-financial's
    # npv (values[0] undiscounted, as year 0 here), so neither comes from the code under test.
    years = np.arange(H + 1)
    km = 2e7 * ACTIVE  # 2 vehicles x 1e7 m in years 1-3
    grow = np.maximum(years - 1, 0)  # today's price in year 1 (glossary: escalation)
    fuel = km * (1200 * 2.5e-8 * 1.04**grow + 2400 * 1.2e-8 * 1.02**grow)
    co2e = km * (1.7e-4 + 2e-8 * 1200 + 1e-8 * 2400)  # tailpipe + each fuel's upstream
    cost = fuel + 0.1 * co2e
    cost[0] += 2 * 3000  # conversion capital in year 0
    residual = np.array([0.0, 0.0, 0.0, 6000 * (1 - 3 / 6)])  # straight line, 6-year life
    base_cash = -np.array([0.0, 2600.0, 2720.0, 2852.0])  # test_baseline_costs_by_hand
    m = _two_fuel_money(_two_fuel())
    assert_allclose(m.costs["dual"][0], cost, rtol=1e-12)
    assert_allclose(m.co2e["dual"][0], co2e, rtol=1e-12)
    assert_allclose(m.carbon["dual"][0], 0.1 * co2e, rtol=1e-12)
    c = econ.compare(m, "dual", "base")
    assert_allclose(c.npv, [npf.npv(0.05, residual - cost - base_cash)], rtol=1e-12)
    # year 1, per metre: both fuels at today's prices plus carbon on the well-to-wheel CO2e
    assert_allclose(econ.co2e_per_m(_two_fuel()), 1.7e-4 + 2.4e-5 + 2.4e-5, rtol=1e-12)
    assert_allclose(econ.cost_per_m(_two_fuel(), rate=0.05, carbon_price=0.1)["fuel"],
                    1200 * 2.5e-8 + 2400 * 1.2e-8 + 0.1 * (1.7e-4 + 4.8e-5), rtol=1e-12)


def test_one_part_split_in_two_gives_the_same_money():
    # The same carrier bought as two halves must cost and emit what it does whole (linearity).
    half = econ.EnergyPart(600.0, 2.5e-8, 0.04, 2e-8)
    whole = _two_fuel_money(_two_fuel(econ.EnergyPart(1200.0, 2.5e-8, 0.04, 2e-8)))
    split = _two_fuel_money(_two_fuel(half, half))
    assert_allclose(split.costs["dual"], whole.costs["dual"], rtol=1e-12)
    assert_allclose(split.co2e["dual"], whole.co2e["dual"], rtol=1e-12)


# A grid-like upstream path, falling by year (invented): year 0 unused, 3e-8, 2e-8, 1e-8 kg/J.
PATH = np.array([4e-8, 3e-8, 2e-8, 1e-8])


@pytest.mark.parametrize("n", [1, 2, H + 1])  # n = H + 1: a 1-D path must still read by year
def test_upstream_path_by_year(n):
    # CO2e by hand: km (tailpipe + path_t x 1200 + 1e-8 x 2400), the gas per draw as before.
    gas_path = econ.EnergyPart(1200.0, 2.5e-8, 0.04, PATH, upstream_by_year=True)
    m = _two_fuel_money(_two_fuel(gas_path, GAS), n=n)
    co2e = 2e7 * ACTIVE * (1.7e-4 + PATH * 1200 + 1e-8 * 2400)
    assert m.co2e["dual"].shape == (n, H + 1)
    assert_allclose(m.co2e["dual"], np.broadcast_to(co2e, (n, H + 1)), rtol=1e-12)
    # the year-1 CO2e per metre takes the path's year-1 value
    assert_allclose(econ.co2e_per_m(_two_fuel(gas_path, GAS)),
                    1.7e-4 + 3e-8 * 1200 + 1e-8 * 2400, rtol=1e-12)


def test_upstream_path_per_draw_and_year():
    # (n, H+1): draw 2 has twice draw 1's path, so its upstream CO2e of that part doubles.
    paths = np.stack([PATH, 2 * PATH])
    m = _two_fuel_money(_two_fuel(econ.EnergyPart(1200.0, 2.5e-8, 0.04, paths), GAS), n=2)
    km = 2e7 * ACTIVE
    assert_allclose(m.co2e["dual"][1] - m.co2e["dual"][0], km * PATH * 1200, rtol=1e-12)


def test_upstream_path_of_the_wrong_length_is_refused():
    bad = econ.EnergyPart(1200.0, 2.5e-8, 0.04, PATH[:3], upstream_by_year=True)
    with pytest.raises(ValueError, match="shape"):
        _two_fuel_money(_two_fuel(bad, GAS), n=2)


def test_physics_draws_interpolate_each_carrier():
    # Two carriers: the response gives (1000, 2000) J/m at x = 0 and (1400, 2400) at x = 1
    # around nominal (1200, 2200); a draw at x = 0.5 is (1200, 2200) (linear).
    r = econ.Response("a", np.array([0.0, 1.0]), np.array([[1000.0, 2000.0], [1400.0, 2400.0]]),
                      np.array([1e-4, 1e-4]), np.zeros((2, H + 1)))
    e, _, _ = econ.physics_draws(np.array([1200.0, 2200.0]), 1e-4, np.zeros(H + 1), [r],
                                 {"a": np.array([0.5, 1.0])}, 2)
    assert_allclose(e, [[1200.0, 2200.0], [1400.0, 2400.0]], rtol=1e-12)


# --- new vehicles instead of a conversion (any drive) ---------------------------------------
# Invented: the two vehicles are sold for 4000 each in year 0 and replaced by new ones at
# 30000 each; the class's remaining life ends in year 2, so the new vehicles are sold then, for
# 18000 each. They buy 1000 J/m at 5e-8 /J (grid electricity, say), no tailpipe CO2e, upstream
# 1e-7 kg/J in year 1 falling by 2e-8 a year.
ACTIVE_2 = np.array([0.0, 1.0, 1.0, 0.0])  # runs in years 1..2 (remaining life 2)
GRID = econ.EnergyPart(1000.0, 5e-8, 0.0, np.array([1e-7, 1e-7, 8e-8, 6e-8]),
                       upstream_by_year=True)


def _new_vehicles(**money: float) -> econ.ClassLine:
    bought = {"purchase_price": 30000.0, "resale_value": 18000.0, "old_vehicle_sale": 4000.0,
              **money}
    return econ.ClassLine(
        count=2, active=ACTIVE_2, km_per_year=1e7, km_per_year_nominal=1e7, parts=(GRID,),
        tailpipe_co2e_per_m=0.0, catalyst_cost=np.zeros(H + 1), upkeep_per_year=300.0,
        tank_inspection_cost=0.0, tank_inspection_interval=0, converts=True,
        conversion_cost=1000.0, downtime_days=0.0, daily_revenue=0.0, remaining_life_years=2,
        nox_mass=np.zeros(H + 1), new_vehicle=econ.NewVehicle(**bought))


def test_new_vehicle_line_against_a_hand_built_cash_flow():
    # By hand: year 0 buys 2 x 30000 new vehicles, sells 2 x 4000 old ones and spends 2 x 1000
    # on chargers (the line's capital): 60000 - 8000 + 2000 = 54000. Years 1-2: grid energy
    # 2e7 m x 1000 J/m x 5e-8 /J = 1000; carbon 2e7 x 1000 x u_t x 0.1 = 200 (year 1), 160
    # (year 2); upkeep 2 x 300 = 600. Year 3: the class has left the programme.
    # The new vehicles are resold in year 2, the class's last year: 2 x 18000 = 36000; the
    # chargers' capital has no value left after the 2-year remaining life (straight line).
    options = {"base": econ.OptionLines([_baseline()], 0.0, 0.0),
               "new": econ.OptionLines([_new_vehicles()], 0.0, 0.0)}
    m = econ.programme_money(options, baseline="base", rate=0.05, carbon_price=0.1,
                             horizon=H, n=1)
    cost = np.array([54000.0, 1000.0 + 200.0 + 600.0, 1000.0 + 160.0 + 600.0, 0.0])
    residual = np.array([0.0, 0.0, 36000.0, 0.0])
    assert_allclose(m.costs["new"][0], cost, rtol=1e-12)
    assert_allclose(m.residual["new"][0], residual, rtol=1e-12)
    assert_allclose(m.co2e["new"][0], [0.0, 2000.0, 1600.0, 0.0], rtol=1e-12)
    base_cash = -np.array([0.0, 2600.0, 2720.0, 2852.0])  # test_baseline_costs_by_hand
    # NPV by numpy-financial (values[0] undiscounted, as year 0 here)
    assert_allclose(econ.compare(m, "new", "base").npv,
                    [npf.npv(0.05, residual - cost - base_cash)], rtol=1e-12)
    assert econ.sold_year(ACTIVE_2) == 2 and econ.sold_year(ACTIVE) == 3
    assert econ.sold_year(np.zeros(H + 1)) == H  # a class that never runs: at the horizon


def test_new_vehicle_sale_and_resale_move_money_one_for_one():
    # Each KBD of old-vehicle sale is one less in year 0; each KBD of resale one more in the
    # year of sale, per vehicle (linearity of the line, no source needed).
    def money(**kw: float) -> econ.Money:
        options = {"base": econ.OptionLines([_baseline()], 0.0, 0.0),
                   "new": econ.OptionLines([_new_vehicles(**kw)], 0.0, 0.0)}
        return econ.programme_money(options, baseline="base", rate=0.05, carbon_price=0.1,
                                    horizon=H, n=1)

    ref = money()
    assert_allclose(money(old_vehicle_sale=5000.0).costs["new"][0] - ref.costs["new"][0],
                    [-2000.0, 0.0, 0.0, 0.0], atol=1e-9)
    assert_allclose(money(resale_value=0.0).residual["new"][0], 0.0, atol=0)


def test_first_year_capital_per_km_of_new_vehicles():
    # Capital per km: chargers 1000 over the 2-year life, plus the purchase less the old
    # vehicle's sale less the resale discounted from year 2, as a level payment over 2 years
    # (capital recovery factor r (1+r)^n / ((1+r)^n - 1)); per 1e7 m a year.
    crf = 0.05 * 1.05**2 / (1.05**2 - 1)
    net = 30000 - 4000 - 18000 / 1.05**2
    out = econ.cost_per_m(_new_vehicles(), rate=0.05, carbon_price=0.1)
    assert_allclose(out["capital"], (1000 * crf + net * crf) / 1e7, rtol=1e-12)
    assert_allclose(out["fuel"], 1000 * 5e-8 + 0.1 * 1e-7 * 1000, rtol=1e-12)  # year 1


def test_new_vehicles_bought_by_phases_with_a_grant_share():
    # Half the class replaced in year 0 and half in year 1 (phasing), a 20 % grant share: by
    # hand, year j capital (30000 - 4000) x 2 x 0.5 + chargers 1000 x 2 x 0.5 = 27000, grants
    # 20 % of the price and of the chargers, (30000 + 1000) x 2 x 0.5 x 0.2 = 6200; so 20800
    # paid in each of years 0 and 1 on top of the running costs.
    line = replace(_new_vehicles(), phasing=np.array([0.5, 0.5, 0.0, 0.0]), before=_baseline(),
                   grant_share=0.2)
    options = {"base": econ.OptionLines([_baseline()], 0.0, 0.0),
               "new": econ.OptionLines([line], 0.0, 0.0)}
    m = econ.programme_money(options, baseline="base", rate=0.05, carbon_price=0.1,
                             horizon=H, n=1)
    assert_allclose(m.capital["new"][0][:2] - m.grants["new"][0][:2], [20800.0, 20800.0],
                    rtol=1e-12)
    assert_allclose(m.grants["new"][0], [6200.0, 6200.0, 0.0, 0.0], rtol=1e-12)
    assert_allclose(m.residual["new"][0], [0.0, 0.0, 36000.0, 0.0], rtol=1e-12)  # all resold
