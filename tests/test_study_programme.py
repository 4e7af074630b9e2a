"""A study's phased conversions, grants, fuel tax, loans and refuelling stations.

Runs the invented demo study (no Monte Carlo) with one key added at a time and checks the
change against arithmetic done by hand on the study's own numbers (the demo's inputs are
invented; the relations checked are closed forms: a grant in year 0 moves the NPV by itself, a
loan at the discount rate settled at the horizon moves it by nothing, an annuity factor).
"""

from __future__ import annotations

import numpy as np
import pytest
from numpy.testing import assert_allclose

from workbench.core.errors import InputError
from workbench.models import economics as econ
from workbench.study import read_study, run

#: The demo's vans with no phasing (the shipped demo phases them over two years).
WHOLE = {"candidates[1].phasing": {"van": [1.0]}}


@pytest.fixture(scope="module")
def demo():
    return read_study("demo").with_values({"programme.discount_rate": "7 %", **WHOLE})


def _npv(result, option: str) -> float:
    return float(result.candidates.set_index("candidate").at[option, "npv_vs_baseline"])


def _years(result, table: str, option: str, column: str) -> np.ndarray:
    t = getattr(result, table)
    return t[t.candidate == option][column].to_numpy(float)


def test_phased_vans_move_half_their_capital_a_year(demo):
    # 210 vans x 9800 capital: half (1,029,000) moves from year 0 to year 1
    whole = run(demo, draws=0)
    phased = run(demo.with_values({"candidates[1].phasing": {"van": [0.5, 0.5]}}), draws=0)
    diff = (_years(phased, "programme_years", "cng-fleet", "capital")
            - _years(whole, "programme_years", "cng-fleet", "capital"))
    assert_allclose(diff[:2], [-1_029_000.0, 1_029_000.0], rtol=1e-12)
    assert_allclose(diff[2:], 0.0, atol=1e-6)
    rows = phased.phasing[(phased.phasing.candidate == "cng-fleet")
                          & (phased.phasing.vehicle_class == "van")]
    assert_allclose(rows.vehicles_converted.to_numpy()[:3], [105.0, 105.0, 0.0])
    assert_allclose(rows.running_converted_share.to_numpy()[:3], [0.0, 0.5, 1.0])
    # counts that add up to the class are the same phasing
    counted = run(demo.with_values({"candidates[1].phasing": {"van": [105, 105]}}), draws=0)
    assert _npv(counted, "cng-fleet") == pytest.approx(_npv(phased, "cng-fleet"), rel=1e-12)
    # the fleet's energy in year 1 is half the vans' diesel, half their gas
    fy = phased.fleet_years
    assert not np.allclose(fy[fy.candidate == "cng-fleet"].fuel_energy_gj.to_numpy()[1],
                           whole.fleet_years[whole.fleet_years.candidate
                                             == "cng-fleet"].fuel_energy_gj.to_numpy()[1])


def test_grant_in_year_zero_adds_itself_to_the_npv(demo):
    # 640 taxis x 500 received in year 0 (undiscounted): the NPV rises by 320,000
    base = _npv(run(demo, draws=0), "lpg-taxis")
    granted = run(demo.with_value("candidates[0].grant", 500), draws=0)
    assert _npv(granted, "lpg-taxis") - base == pytest.approx(320_000.0, rel=1e-9)
    # a 10 % share of the conversion cost (nominal 2500 x 640 = 1.6 M): 160,000
    share = run(demo.with_value("candidates[0].grant", "10 %"), draws=0)
    assert _npv(share, "lpg-taxis") - base == pytest.approx(160_000.0, rel=1e-9)
    # a programme grant of 40 % of the 180,000 programme capital: 72,000
    prog = run(demo.with_value("candidates[0].programme_grant", "40 %"), draws=0)
    assert _npv(prog, "lpg-taxis") - base == pytest.approx(72_000.0, rel=1e-9)


def test_fuel_tax_moves_the_npv_by_the_tax_revenue_change(demo):
    base = _npv(run(demo, draws=0), "lpg-taxis")
    taxed = run(demo.with_value("fuel_tax", {"lpg": "0.10 per L"}), draws=0)
    row = taxed.funding.set_index("candidate").loc["lpg-taxis"]
    # the operator pays what the public client gains
    assert row.fuel_tax_change_pv > 0
    assert _npv(taxed, "lpg-taxis") - base == pytest.approx(-row.fuel_tax_change_pv, rel=1e-9)
    assert row.npv_vs_baseline == pytest.approx(_npv(taxed, "lpg-taxis"), rel=1e-12)


def test_loan_at_the_discount_rate_leaves_the_npv(demo):
    base = run(demo, draws=0)
    loan = {"share": "80 %", "rate": "7 %", "term_years": 5}
    financed = run(demo.with_value("candidates[1].loan", loan), draws=0)
    assert _npv(financed, "cng-fleet") == pytest.approx(_npv(base, "cng-fleet"), rel=1e-9)
    cheap = run(demo.with_value("candidates[1].loan", {**loan, "rate": "2 %"}), draws=0)
    assert _npv(cheap, "cng-fleet") > _npv(base, "cng-fleet")
    # a 10-year loan on an 8-year horizon leaves a balance, settled in the last year
    long = run(demo.with_value("candidates[1].loan", {**loan, "term_years": 10}), draws=0)
    row = long.funding.set_index("candidate").loc["cng-fleet"]
    assert row.loan_balance_at_horizon > 0
    assert _npv(long, "cng-fleet") == pytest.approx(_npv(base, "cng-fleet"), rel=1e-9)


def test_depot_station_capital_and_upkeep(demo):
    base = _npv(run(demo, draws=0), "cng-fleet")
    station = {"window": "8 h", "compressor_cost": 900, "storage_cost": 4000,
               "dispenser_cost": 40000, "upkeep_share": "4 %"}
    r = run(demo.with_value("candidates[1].station", station), draws=0)
    row = r.stations.set_index("candidate").loc["cng-fleet"]
    capital = (900 * row.compressor_kg_per_h + 4000 * row.buffer_m3
               + 40000 * row.dispensers)
    assert row.capital == pytest.approx(capital, rel=1e-12)
    assert row.upkeep_per_year == pytest.approx(0.04 * capital, rel=1e-12)
    # compressor: the day's gas within the 8 h window
    assert row.compressor_kg_per_h == pytest.approx(row.daily_fuel_kg / 8.0, rel=1e-12)
    # capital in year 0, upkeep in years 1..8: annuity factor at 7 % over 8 years
    pv = capital + 0.04 * capital * float(econ.annuity_factor(0.07, 8))
    assert _npv(r, "cng-fleet") - base == pytest.approx(-pv, rel=1e-9)


def test_off_depot_station_costs_lost_hours(demo):
    base = _npv(run(demo, draws=0), "lpg-taxis")
    station = {"location": "off-depot", "detour": "15 min", "hour_cost": 25}
    r = run(demo.with_value("candidates[0].station", station), draws=0)
    row = r.stations.set_index("candidate").loc["lpg-taxis"]
    # 640 taxis x 85,000 km / 450 km per fill x 0.25 h = 30,222 h a year
    assert row.lost_hours_per_year == pytest.approx(640 * 85000 / 450 * 0.25, rel=1e-12)
    assert row.capital == 0.0
    # taxis run years 1..6 of the 8 (remaining life 6)
    pv = row.lost_time_cost_per_year * float(econ.annuity_factor(0.07, 6))
    assert _npv(r, "lpg-taxis") - base == pytest.approx(-pv, rel=1e-9)


def test_lpg_depot_station_tank_and_dispensers(demo):
    station = {"window": "10 h", "storage_cost": 1500, "dispenser_cost": 30000,
               "autonomy_days": 5, "fill_limit": "80 %"}
    r = run(demo.with_value("candidates[0].station", station), draws=0)
    row = r.stations.set_index("candidate").loc["lpg-taxis"]
    # tank: 5 days of the day's litres at an 80 % fill limit
    assert row.tank_m3 == pytest.approx(5 * row.daily_fuel_l / 1e3 / 0.8, rel=1e-12)
    # 640 taxis x 85,000 km / 365 days / 450 km per fill
    assert row.fills_per_day == pytest.approx(640 * 85000 / 365 / 450, rel=1e-12)
    # dispensers: pumping at 40 L/min plus 5 min a fill, over the 10 h window
    busy = row.daily_fuel_l / 40.0 + row.fills_per_day * 5.0  # [min]
    assert row.dispensers == int(np.ceil(busy / 600.0))
    assert row.capital == pytest.approx(1500 * row.tank_m3 + 30000 * row.dispensers,
                                        rel=1e-12)


@pytest.mark.parametrize(("changes", "message"), [
    ({"candidates[1].phasing": {"van": [0.5, 0.4]}}, r"phasing.van: shares add up to 0.9"),
    ({"candidates[1].phasing": {"van": [100, 100]}}, r"counts add up to 200, not the class"),
    ({"candidates[1].phasing": "soon"}, r"phasing: must be a list of shares"),
    ({"candidates[1].phasing": {"van": [0.5, -0.5, 1.0]}}, r"must be 0 or more"),
    ({"candidates[1].phasing": {"taxi": [0.1] * 10}}, r"the class runs 6 more years"),
    ({"programme.horizon_years": 1, "candidates[1].phasing": {"van": [0.5, 0.5]}},
     r"within a 1-year horizon"),
    ({"baseline.phasing": [1.0]}, r"baseline.phasing: the baseline converts nothing"),
    ({"candidates[0].grant": "120 %"}, r"grant: must be at most 100 %"),
    ({"candidates[0].grant": -5}, r"grant: must be at least 0"),
    ({"candidates[0].grant": {"kind": "uniform", "low": 1, "high": 2}},
     r"cannot carry a distribution"),
    ({"candidates[1].loan": {"share": "80 %", "rate": "6 %"}}, r"loan.term_years: is required"),
    ({"candidates[1].loan": {"share": 2, "rate": "6 %", "term_years": 5}},
     r"loan.share: must be at most 100 %"),
    ({"candidates[1].loan": {"share": "80 %", "rate": "6 %", "term_years": 5, "x": 1}},
     r"loan.x: unknown key"),
    ({"fuel_tax": {"diesel": "0.4 per kWh"}}, r"fuel_tax.diesel: .* add the heating value"),
    ({"fuel_tax": {"hydrogen": "0.4 per kg"}}, r"fuel_tax.hydrogen: names no fuel"),
    ({"candidates[1].station": {"detour": "10 min"}}, r'station.detour: applies to location'),
    ({"candidates[1].station": {"location": "roof"}}, r"unknown station location"),
    ({"candidates[1].station": {"storage_pressure": "150 bar"}},
     r"storage_pressure: must be above fill_pressure"),
    ({"candidates[1].station": {"window": "0 h"}}, r"station.window: must be at least"),
])
def test_bad_programme_inputs_are_one_line(demo, changes, message):
    with pytest.raises(InputError, match=message) as err:
        demo.with_values(changes)
    assert "\n" not in str(err.value)


def test_a_station_serves_one_fuel():
    study = read_study("demo").with_values({
        "candidates[1].fuel": {"taxi": "lpg", "van": "natural-gas", "bus": "natural-gas"},
        "candidates[1].conversion": {"taxi": "bi-fuel-si", "van": "dedicated-si",
                                     "bus": "dedicated-si"}})
    with pytest.raises(InputError, match="a station dispenses one fuel"):
        study.with_value("candidates[1].station", {})


def test_a_station_for_a_liquid_fuel_is_refused():
    study = read_study("demo").with_values(
        {"candidates[0].fuel": "gasoline", "candidates[0].conversion": "none"},
        remove=("prices.lpg", "escalation.lpg", "upstream.lpg"))
    with pytest.raises(InputError, match="gasoline is stored liquid: leave station out"):
        study.with_value("candidates[0].station", {})
