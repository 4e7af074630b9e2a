"""A dual-fuel option in a study: two fuels priced, their shares, fuel use and CO2e.

The test study is the demo (invented) with one candidate that converts the shuttle buses to
``dual-fuel-ci`` (diesel pilot plus natural gas or LPG). The reference values are worked out
here from the fuel files' numbers and closed forms, never from the code under test.
"""

from __future__ import annotations

import numpy as np
import pytest
from numpy.testing import assert_allclose

from workbench.core.errors import InputError
from workbench.core.fuels import load_fuel
from workbench.core.paths import DATA
from workbench.io.maps import read_map
from workbench.study.runner import run
from workbench.study.studyfile import read_study

pytestmark = pytest.mark.slow

#: Atomic masses [kg/kmol] (IUPAC 2021 abridged standard atomic weights, from memory).
M_C, M_H, M_N, M_O = 12.011, 1.008, 14.007, 15.999
CO2, CH4 = M_C + 2 * M_O, M_C + 4 * M_H
#: GWP-100 of fossil methane (IPCC AR6 WG1 Table 7.15, from memory).
GWP_CH4 = 29.8
#: Lower heating values [MJ/kg] of the natural gas's burnable species (Heywood 1988,
#: Appendix D, from memory): methane, ethane, propane, n-butane.
LHV = {"CH4": 50.0, "C2H6": 47.5, "C3H8": 46.4, "C4H10,n-butane": 45.7}
#: Substitution curve of the kind as the docs state it: gas 0 below 20 % load, linear to
#: 60 % at 60 % load (docs/study-file.md, conversion kinds); 3 % of the gas slips.
SHARE_MAX, LOAD_LOW, LOAD_HIGH, SLIP = 0.6, 0.2, 0.6, 0.03


def _dual_buses(remove: tuple[str, ...] = ("prices.lpg", "escalation.lpg", "upstream.lpg"),
                **extra):
    study = read_study("demo")
    cand = {"id": "dual-bus", "name": "Dual-fuel buses", "fuel": "natural-gas",
            "classes": ["bus"], "conversion": "dual-fuel-ci", "conversion_cost": 15000,
            **extra}
    # the dual-fuel buses first, the demo's natural-gas candidate kept; LPG then unused
    return study.with_values({"candidates": [cand, study.data["candidates"][1]],
                              "programme.monte_carlo_draws": 0}, remove=remove)


@pytest.fixture(scope="module")
def dual():
    return run(_dual_buses(), draws=0)


def _gas():
    """Natural gas of the fuel file: mole fractions, molar mass, carbon and LHV by hand."""
    x = load_fuel("natural-gas").mole_fractions
    atoms = {"CH4": (1, 4, 0, 0), "C2H6": (2, 6, 0, 0), "C3H8": (3, 8, 0, 0),
             "C4H10,n-butane": (4, 10, 0, 0), "N2": (0, 0, 2, 0), "CO2": (1, 0, 0, 2)}
    mass = {s: a[0] * M_C + a[1] * M_H + a[2] * M_N + a[3] * M_O for s, a in atoms.items()}
    molar = sum(x[s] * mass[s] for s in atoms)
    co2_per_kg = sum(x[s] * atoms[s][0] for s in atoms) * CO2 / molar
    lhv = sum(x[s] * mass[s] * LHV[s] for s in LHV) / molar  # [MJ/kg], mass-weighted
    return x["CH4"] * CH4 / molar, co2_per_kg, lhv


def test_gas_share_is_the_curve_weighted_over_the_duty_histogram(dual):
    # By hand: each operating-point cell's fuel energy (brake work over brake efficiency),
    # the curve at its load on the bus map's full-load torque.
    op = dual.operating_points.query("candidate == 'dual-bus' and vehicle_class == 'bus'")
    emap = read_map(DATA / "maps" / "bus-ci-4.5l.csv")
    omega = op["engine_speed_rpm"].to_numpy() * 2 * np.pi / 60
    torque = op["torque_nm"].to_numpy()
    load = torque / np.interp(omega, emap.speed, emap.full_load_torque)
    sigma = SHARE_MAX * np.clip((load - LOAD_LOW) / (LOAD_HIGH - LOAD_LOW), 0.0, 1.0)
    fuel = torque * omega * op["hours"].to_numpy() / op["brake_efficiency"].to_numpy()
    fu = dual.fuel_use.set_index(["candidate", "vehicle_class", "role"])
    share = fu.loc[("dual-bus", "bus", "gas"), "energy_share"]
    # 2e-3: the run weights each cell by the map's fuel power at its centre, which below the
    # lowest torque row (idling) follows the map's idle rule rather than work / efficiency
    assert_allclose(share, np.sum(sigma * fuel) / np.sum(fuel), rtol=2e-3)
    assert_allclose(fu.loc[("dual-bus", "bus", "pilot"), "energy_share"], 1 - share, rtol=1e-12)
    assert 0.2 < share < SHARE_MAX  # an urban bus: well below the high-load share


def test_slipped_gas_is_the_only_energy_penalty(dual):
    # Each cell's efficiency is the diesel's times (1 - sigma slip), so over the duty
    # E_dual (1 - s slip) = E_diesel (closed form; binning of the histogram: rtol 2e-3).
    fu = dual.fuel_use.set_index(["candidate", "vehicle_class", "role"])
    share = fu.loc[("dual-bus", "bus", "gas"), "energy_share"]
    total = (fu.loc[("dual-bus", "bus", "gas"), "fuel_energy_mj_per_km"]
             + fu.loc[("dual-bus", "bus", "pilot"), "fuel_energy_mj_per_km"])
    diesel = fu.loc[("today", "bus", "fuel"), "fuel_energy_mj_per_km"]
    assert_allclose(total * (1 - share * SLIP), diesel, rtol=2e-3)
    pk = dual.per_km.set_index(["candidate", "vehicle_class"]).loc[("dual-bus", "bus")]
    assert_allclose(pk["fuel_energy_mj_per_km"], total, rtol=1e-12)
    assert pk["fuel"] == "natural-gas/diesel"


def test_fuel_use_and_co2e_of_each_fuel_by_hand(dual):
    fu = dual.fuel_use.set_index(["candidate", "vehicle_class", "role"])
    gas, pilot = fu.loc[("dual-bus", "bus", "gas")], fu.loc[("dual-bus", "bus", "pilot")]
    ch4_share, co2_per_kg, lhv = _gas()
    # gas: kg from its energy and the species' LHV (0.5 %: handbook LHVs to 3 figures)
    assert_allclose(gas["fuel_kg_per_100km"], gas["fuel_energy_mj_per_km"] / lhv * 100,
                    rtol=5e-3)
    m_gas = gas["fuel_kg_per_100km"] / 100  # [kg/km]
    ch4 = SLIP * ch4_share * m_gas  # [kg/km] slipped unburnt
    assert_allclose(gas["ch4_g_per_km"], ch4 * 1e3, rtol=1e-4)
    # carbon balance: the slipped methane's carbon leaves as CH4, not as CO2
    assert_allclose(gas["co2_ttw_g_per_km"], (m_gas * co2_per_kg - ch4 * CO2 / CH4) * 1e3,
                    rtol=1e-4)
    assert_allclose(gas["co2e_ttw_g_per_km"],
                    gas["co2_ttw_g_per_km"] + GWP_CH4 * gas["ch4_g_per_km"], rtol=1e-9)
    # pilot diesel: the file's LHV 43.1 MJ/kg, density 835 kg/m3, carbon 0.862
    m_d = pilot["fuel_energy_mj_per_km"] / 43.1  # [kg/km]
    assert_allclose(pilot["fuel_kg_per_100km"], m_d * 100, rtol=1e-9)
    assert_allclose(pilot["fuel_l_per_100km"], m_d / 0.835 * 100, rtol=1e-9)
    assert_allclose(pilot["co2_ttw_g_per_km"], m_d * 0.862 * CO2 / M_C * 1e3, rtol=1e-4)
    assert pilot["ch4_g_per_km"] == 0.0
    # well to wheel: each fuel's upstream from the demo's [upstream] (g/MJ)
    assert_allclose(gas["co2e_wtw_g_per_km"],
                    gas["co2e_ttw_g_per_km"] + 13.0 * gas["fuel_energy_mj_per_km"], rtol=1e-9)
    assert_allclose(pilot["co2e_wtw_g_per_km"],
                    pilot["co2e_ttw_g_per_km"] + 17.5 * pilot["fuel_energy_mj_per_km"],
                    rtol=1e-9)
    pk = dual.per_km.set_index(["candidate", "vehicle_class"]).loc[("dual-bus", "bus")]
    assert_allclose(pk["co2e_wtw_g_per_km"],
                    gas["co2e_wtw_g_per_km"] + pilot["co2e_wtw_g_per_km"], rtol=1e-9)
    assert np.isnan(pk["fuel_l_per_100km"])  # litres of two fuels do not add


def test_both_fuels_are_priced_with_the_carbon_on_both(dual):
    # Year-1 fuel cost per km by hand: diesel 1.49 per L, natural gas 1.38 per kg (the demo's
    # modes), carbon 55 per t on the well-to-wheel CO2e of both fuels.
    fu = dual.fuel_use.set_index(["candidate", "vehicle_class", "role"])
    gas, pilot = fu.loc[("dual-bus", "bus", "gas")], fu.loc[("dual-bus", "bus", "pilot")]
    fuel = (gas["fuel_kg_per_100km"] / 100 * 1.38 + pilot["fuel_l_per_100km"] / 100 * 1.49)
    carbon = 55e-6 * (gas["co2e_wtw_g_per_km"] + pilot["co2e_wtw_g_per_km"])
    pk = dual.per_km.set_index(["candidate", "vehicle_class"]).loc[("dual-bus", "bus")]
    assert_allclose(pk["cost_fuel_per_km"], fuel + carbon, rtol=1e-9)


def test_the_defaults_table_lists_the_dual_fuel_defaults_with_sources(dual):
    d = dual.defaults.query("candidate == 'dual-bus' and vehicle_class == 'bus'")
    assert not d["quantity"].duplicated().any()  # each default once
    rows = dict(zip(d["quantity"], d["value"], strict=True))
    assert rows["pilot fuel"] == "diesel"
    assert rows["methane slip"] == "3.00%"
    assert "20 %" in rows["gas substitution curve"] and "60 %" in rows["gas substitution curve"]
    share = dual.fuel_use.query("candidate == 'dual-bus' and role == 'gas'")["energy_share"]
    assert rows["gas energy share on the duty"] == f"{share.iloc[0] * 100:.1f}"
    assert "engine-out NOx, dual fuel" in rows
    assert all(d["source"].str.len() > 0)
    assert dual.notices.empty  # a diesel map converted by its own kind: nothing to warn


def test_a_given_slip_and_curve_are_inputs_not_defaults():
    res = run(_dual_buses(methane_slip="2 %", gas_substitution={
        "share_max": "50 %", "load_low": "10 %", "load_high": "50 %"}), draws=0)
    d = res.defaults.query("candidate == 'dual-bus'")
    assert not {"methane slip", "methane slip of the gas", "gas substitution curve",
                "gas share at high load"} & set(d["quantity"])
    # the kit's curve by hand over the duty histogram, as in the default-curve test
    op = res.operating_points.query("candidate == 'dual-bus' and vehicle_class == 'bus'")
    emap = read_map(DATA / "maps" / "bus-ci-4.5l.csv")
    omega = op["engine_speed_rpm"].to_numpy() * 2 * np.pi / 60
    torque = op["torque_nm"].to_numpy()
    load = torque / np.interp(omega, emap.speed, emap.full_load_torque)
    sigma = 0.5 * np.clip((load - 0.1) / (0.5 - 0.1), 0.0, 1.0)
    fuel = torque * omega * op["hours"].to_numpy() / op["brake_efficiency"].to_numpy()
    fu = res.fuel_use.set_index(["candidate", "vehicle_class", "role"])
    assert_allclose(fu.loc[("dual-bus", "bus", "gas"), "energy_share"],
                    np.sum(sigma * fuel) / np.sum(fuel), rtol=2e-3)


def test_lpg_as_the_gas_slips_no_methane_and_keeps_the_diesel_energy():
    # LPG has no methane: no slip, so the map is the diesel's and so is the energy (exact).
    res = run(_dual_buses(fuel="lpg", remove=()), draws=0)
    fu = res.fuel_use.set_index(["candidate", "vehicle_class", "role"])
    total = (fu.loc[("dual-bus", "bus", "gas"), "fuel_energy_mj_per_km"]
             + fu.loc[("dual-bus", "bus", "pilot"), "fuel_energy_mj_per_km"])
    assert_allclose(total, fu.loc[("today", "bus", "fuel"), "fuel_energy_mj_per_km"],
                    rtol=1e-12)
    assert fu.loc[("dual-bus", "bus", "gas"), "ch4_g_per_km"] == 0.0


def test_the_monte_carlo_draws_both_fuel_prices():
    # A dual-fuel NPV moves with the natural-gas price (the demo's triangular distribution);
    # with a few draws, no draw equals the nominal NPV and the spread is positive.
    res = run(_dual_buses(), draws=64)
    npv = res.monte_carlo.query("candidate == 'dual-bus'")["npv_vs_baseline"].to_numpy()
    assert npv.size == 64 and np.std(npv) > 0
    assert "prices.natural-gas" in set(res.tornado.query("candidate == 'dual-bus'")["input"])


# --- bad input: one line each, naming the key --------------------------------------------


def test_a_missing_pilot_price_names_the_key_to_add():
    # n-dodecane (the library's diesel surrogate) as the pilot: the demo prices no such fuel
    with pytest.raises(InputError) as err:
        _dual_buses(pilot_fuel="n-dodecane")
    assert err.value.where == "prices.n-dodecane"
    assert "pilot fuel of candidates[0]" in err.value.message
    assert "n-dodecane = " in err.value.message and "\n" not in str(err.value)


def test_a_missing_diesel_price_names_the_key_to_add():
    with pytest.raises(InputError) as err:
        _dual_buses(remove=("prices.lpg", "escalation.lpg", "upstream.lpg", "prices.diesel"))
    assert err.value.where == "prices.diesel" and "diesel = " in err.value.message


@pytest.mark.parametrize(("extra", "where", "words"), [
    ({"fuel": "gasoline"}, "candidates[0].fuel", "burns a gas"),
    ({"pilot_fuel": "natural-gas"}, "candidates[0].pilot_fuel", "diesel-like pilot"),
    ({"conversion": "dedicated-si", "pilot_fuel": "diesel"}, "candidates[0].pilot_fuel",
     "dual-fuel-ci"),
    ({"conversion": "dedicated-si", "gas_substitution": {"share_max": "50 %"}},
     "candidates[0].gas_substitution", "dual-fuel-ci"),
    ({"gas_substitution": "60 %"}, "candidates[0].gas_substitution", "give a table"),
    ({"gas_substitution": {"share": "50 %"}}, "candidates[0].gas_substitution.share",
     "unknown key"),
    ({"gas_substitution": {"share_max": "100 %"}}, "candidates[0].gas_substitution.share_max",
     "less than 100 %"),
    ({"gas_substitution": {"load_low": "70 %"}}, "candidates[0].gas_substitution.load_low",
     "must rise"),
    ({"gas_substitution": {"load_high": "12 rpm"}},
     "candidates[0].gas_substitution.load_high", ""),
])
def test_bad_dual_fuel_options_are_refused_in_one_line(extra, where, words):
    with pytest.raises(InputError) as err:
        _dual_buses(**extra)
    assert err.value.where == where and words in err.value.message
    assert "\n" not in str(err.value)
