"""Thermochemistry against handbook values.

Tolerances: the handbooks' numbers rest on JANAF-era thermochemical data, Cantera's on the
NASA/GRI polynomials; heating values of the same species differ by about 0.1 % between such
databases, flame temperatures by about 10 K.
"""

from __future__ import annotations

import numpy as np
import pytest
from numpy.testing import assert_allclose

from workbench.core.errors import InputError
from workbench.core.fuels import load_fuel
from workbench.models.combustion import (
    air_composition,
    air_molar_mass,
    exhaust,
    flame_state,
    flame_table,
    fuel_sheet,
)

# Turns, An Introduction to Combustion, 3rd ed. (2012), Appendix B, Table B.1 (from memory):
# HHV and LHV at 298.15 K [kJ/kg] and adiabatic flame temperature at phi = 1, 298 K, 1 atm [K].
TURNS_B1 = {
    "methane": (55_528, 50_016, 2226),
    "ethane": (51_901, 47_489, 2259),
    "propane": (50_368, 46_357, 2267),
    "n-butane": (49_546, 45_742, 2270),
}


@pytest.mark.parametrize("fuel", sorted(TURNS_B1))
def test_heating_values_and_flame_temperature_against_turns_table_b1(fuel):
    hhv, lhv, t_ad = TURNS_B1[fuel]
    sheet = fuel_sheet(fuel)
    assert_allclose(sheet.hhv_mass / 1e3, hhv, rtol=2e-3)
    assert_allclose(sheet.lhv_mass / 1e3, lhv, rtol=2e-3)
    # Turns' flame temperatures include dissociation, as Cantera's HP equilibrium does.
    assert_allclose(flame_state(fuel).temperature, t_ad, atol=12)


# Cengel & Boles, Thermodynamics: An Engineering Approach, 8th ed. (2015), Table A-27
# (from memory): HHV, LHV [kJ/kg] of gaseous fuels.
CENGEL_A27 = {"methane": (55_530, 50_050), "ethane": (51_900, 47_520),
              "hydrogen": (141_800, 120_000)}


@pytest.mark.parametrize("fuel", sorted(CENGEL_A27))
def test_heating_values_against_cengel_table_a27(fuel):
    hhv, lhv = CENGEL_A27[fuel]
    sheet = fuel_sheet(fuel)
    assert_allclose(sheet.hhv_mass / 1e3, hhv, rtol=3e-3)  # the table prints 4 figures
    assert_allclose(sheet.lhv_mass / 1e3, lhv, rtol=3e-3)


def test_stoichiometric_afr_with_21_79_air():
    # (A/F)st = (x + y/4) * 4.76 * MW_air / MW_fuel (Turns 3rd ed., eq. 2.32, with 28.85
    # kg/kmol air): CH4 2*4.76*28.85/16.04 = 17.12, C3H8 5*4.76*28.85/44.10 = 15.57.
    assert_allclose(fuel_sheet("methane").stoich_afr_mass, 17.12, rtol=1e-3)
    assert_allclose(fuel_sheet("propane").stoich_afr_mass, 15.57, rtol=1e-3)
    assert_allclose(fuel_sheet("methane").stoich_afr_mole, 2 * 4.7619, rtol=1e-4)


def test_stoichiometric_afr_with_dry_air_against_heywood():
    # Heywood, Internal Combustion Engine Fundamentals (1988), Appendix D, Table D.4 (from
    # memory): (A/F)s methane 17.23, propane 15.67, isooctane 15.13, with dry air of
    # 28.96 kg/kmol and 3.773 N2 per O2. The table prints 4 figures.
    assert_allclose(fuel_sheet("methane", air="dry").stoich_afr_mass, 17.23, rtol=2e-3)
    assert_allclose(fuel_sheet("propane", air="dry").stoich_afr_mass, 15.67, rtol=2e-3)
    assert_allclose(fuel_sheet("isooctane", air="dry").stoich_afr_mass, 15.13, rtol=2e-3)


def test_air_model_21_79():
    # Common practice, no source: 3.76 mol N2 per mol O2, 4.76 mol air, 28.84 kg/kmol with
    # molar masses 32 and 28; Cantera's atomic weights (O2 31.998, N2 28.014) give 28.85.
    x = air_composition("21/79")
    assert_allclose(x["N2"] / x["O2"], 3.76, atol=0.002)
    assert_allclose(1 / x["O2"], 4.76, atol=0.002)
    assert_allclose(0.21 * 32 + 0.79 * 28, 28.84)
    assert_allclose(air_molar_mass("21/79"), 28.84, rtol=5e-4)
    # Standard dry air 28.9647 kg/kmol (U.S. Standard Atmosphere 1976, from memory)
    assert_allclose(air_molar_mass("dry"), 28.9647, rtol=2e-4)


# IPCC 2006 Guidelines for National Greenhouse Gas Inventories, Vol. 2, ch. 1, Table 1.4
# (from memory): default CO2 emission factors [kg/TJ, NCV basis] with their 95 % interval.
IPCC_TABLE_1_4 = {
    "natural-gas": (56_100, 54_300, 58_300),
    "lpg": (63_100, 61_600, 65_600),
    "gasoline": (69_300, 67_500, 73_000),
    "diesel": (74_100, 72_600, 74_800),
}


@pytest.mark.parametrize("fuel", sorted(IPCC_TABLE_1_4))
def test_co2_per_mj_inside_ipcc_default_intervals(fuel):
    _, lower, upper = IPCC_TABLE_1_4[fuel]
    g_per_mj = fuel_sheet(fuel).co2_per_energy * 1e9  # kg/TJ == g/GJ; /1000 -> g/MJ
    assert lower / 1000 <= g_per_mj <= upper / 1000


def test_pseudo_component_reproduces_its_measured_lhv_and_carbon():
    # The file gives LHV 43.1 MJ/kg and 86.2 % carbon; CO2 = 0.862 * 44.009 / 12.011.
    sheet = fuel_sheet("diesel")
    assert_allclose(sheet.lhv_mass, 43.1e6, rtol=1e-9)
    assert_allclose(sheet.co2_mass, 0.862 * 44.0095 / 12.011, rtol=1e-3)


def test_gas_volume_values_and_wobbe_of_methane():
    # Methane at 15 °C, 101.325 kPa: gross CV about 37.7 MJ/m3, Wobbe about 50.7 MJ/m3 (ISO
    # 6976 tables, real gas, from memory); the ideal-gas values here sit within 0.5 %.
    sheet = fuel_sheet("methane")
    assert_allclose(sheet.hhv_volume / 1e6, 37.71, rtol=5e-3)
    assert_allclose(sheet.wobbe_index / 1e6, 50.72, rtol=5e-3)
    assert np.isnan(fuel_sheet("diesel").wobbe_index)


def test_exhaust_dew_point_and_conservation():
    # Stoichiometric methane flue gas condenses below about 59 °C at 1 atm: common practice
    # (condensing-boiler design), no source.
    ex = exhaust("methane", 1.0)
    assert_allclose(ex.dew_point - 273.15, 59.0, atol=1.0)
    assert_allclose(ex.mole_fractions["H2O"], 2 / (1 + 2 + 7.52), rtol=1e-3)
    # Lean: O2 left over; rich: CO and H2 appear and elements are conserved.
    assert exhaust("propane", 1.3).mole_fractions["O2"] > 0
    rich = exhaust("propane", 0.9)
    x = rich.mole_fractions
    c = x["CO2"] + x["CO"]
    h = 2 * x["H2O"] + 2 * x["H2"]
    assert_allclose(h / c, 8 / 3, rtol=1e-9)
    assert_allclose(x["CO"] * x["H2O"] / (x["CO2"] * x["H2"]), 3.5, rtol=1e-9)


def test_flame_table_is_vectorised_and_peaks_slightly_rich():
    phis = np.linspace(0.7, 1.4, 8)
    table = flame_table("methane", phis)
    assert list(table["phi"]) == list(phis)
    assert_allclose(table["flame_temperature_k"][2],
                    flame_state("methane", phis[2]).temperature, rtol=1e-12)
    # Common practice, no source: the flame temperature peaks just rich of stoichiometric.
    fine = flame_table("methane", np.linspace(0.95, 1.15, 21))
    peak = fine["phi"][fine["flame_temperature_k"].idxmax()]
    assert 1.0 < peak < 1.1


def test_higher_pressure_and_preheat_raise_the_flame_temperature():
    base = flame_state("propane").temperature
    assert flame_state("propane", p=20e5).temperature > base  # less dissociation
    assert flame_state("propane", t_unburnt=700).temperature > base
    diluted = flame_state("propane", t_unburnt=700, dilution=0.1).temperature
    assert diluted < flame_state("propane", t_unburnt=700).temperature


def test_flame_inputs_are_checked():
    with pytest.raises(InputError, match="phi"):
        flame_state("propane", 0.0)
    with pytest.raises(InputError, match="pressure"):
        flame_state("propane", p=-1)
    with pytest.raises(InputError, match="air"):
        fuel_sheet("propane", air="moist")
    with pytest.raises(InputError, match="lambda"):
        exhaust("propane", -1)


def test_fuel_mass_fraction_counts_only_the_fuel():
    # Natural gas carries N2 and CO2 of its own; the fuel share of the charge is
    # 1 / (1 + AFR_st / phi) whatever species the fuel contains.
    sheet = fuel_sheet("natural-gas")
    state = flame_state("natural-gas", 0.9)
    assert_allclose(state.fuel_mass_fraction, 1 / (1 + sheet.stoich_afr_mass / 0.9), rtol=1e-12)
    diluted = flame_state("natural-gas", 0.9, dilution=0.2)
    assert_allclose(diluted.fuel_mass_fraction, 0.8 * state.fuel_mass_fraction, rtol=1e-12)


def test_fuel_object_is_hashable_and_caches():
    fuel = load_fuel("lpg")
    assert fuel_sheet(fuel) is fuel_sheet(fuel)
