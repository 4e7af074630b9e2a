"""Tests of workbench.core.units: the registry's trade units, price and quantity parsing."""

from __future__ import annotations

import numpy as np
import pytest
from numpy.testing import assert_allclose

from workbench.core.constants import MOLAR_VOLUME_STANDARD
from workbench.core.errors import InputError
from workbench.core.units import (
    DGE_NATURAL_GAS_MASS,
    GGE_NATURAL_GAS_MASS,
    NATURAL_GAS_LHV_AFDC,
    Price,
    parse_price,
    parse_quantity,
    price_per_energy,
    ureg,
)


def si(text: str) -> float:
    return float(ureg.parse_expression(text).to_base_units().magnitude)


# --- unit definitions --------------------------------------------------------------------------


def test_us_gallon_is_231_cubic_inches():
    # NIST SP 811 (2008), Appendix B.8: gallon (U.S.) = 231 in³ = 3.785 412 E-03 m³ (printed to 7
    # figures); with the inch exactly 0.0254 m that is 3.785 411 784 L exactly. Float rounding only.
    assert_allclose(si("1 US_gallon"), 3.785411784e-3, rtol=1e-15)
    assert_allclose(ureg.Quantity(1, "US_gallon").to("L").magnitude, 3.785411784, rtol=1e-15)


def test_pound_and_it_btu():
    # NIST SP 811, Appendix B.8: pound (avoirdupois) = 0.453 592 37 kg exactly; Btu_IT =
    # 1.055 056 E+03 J printed (exact definition 1055.055 852 62 J, from memory). Float rounding.
    assert_allclose(si("1 lb"), 0.45359237, rtol=1e-15)
    assert_allclose(si("1 Btu_it"), 1055.05585262, rtol=1e-12)
    # 1 Btu_IT/lb = 2.326 kJ/kg exactly (a consequence of the two exact definitions above).
    assert_allclose(si("1 Btu_it / lb"), 2326.0, rtol=1e-12)


def test_therms():
    # NIST SP 811, Appendix B.8: therm (EC) = 1.055 06 E+08 J (6 figures printed, so rtol is half
    # a unit in the last place, 5e-6); therm (U.S.) = 1.054 804 E+08 J (the defined value).
    assert_allclose(si("1 therm"), 1.05506e8, rtol=5e-6)
    assert_allclose(si("1 EC_therm"), 1.05506e8, rtol=5e-6)
    assert_allclose(si("1 US_therm"), 1.054804e8, rtol=1e-12)
    # MMBtu = 10 therm of IT Btu (common practice, no source): 1.055 055 852 62 GJ.
    assert_allclose(si("1 MMBtu"), 1.05505585262e9, rtol=1e-12)


def test_gallon_equivalents_follow_handbook_44():
    # NIST Handbook 44, Appendix D (from memory): GGE = 5.660 lb and DGE = 6.384 lb of natural
    # gas; the gasoline litre equivalent GLE is printed as 0.678 kg. Our energy units carry the
    # LHV of those masses at 20 160 Btu/lb (US DOE AFDC, from memory).
    assert_allclose(GGE_NATURAL_GAS_MASS, 5.660 * 0.45359237, rtol=1e-15)
    assert_allclose(DGE_NATURAL_GAS_MASS, 6.384 * 0.45359237, rtol=1e-15)
    assert_allclose(si("1 GGE") / NATURAL_GAS_LHV_AFDC, GGE_NATURAL_GAS_MASS, rtol=1e-12)
    assert_allclose(si("1 DGE") / NATURAL_GAS_LHV_AFDC, DGE_NATURAL_GAS_MASS, rtol=1e-12)
    # 0.678 kg is printed to 3 figures: half a unit in the last place is 0.0005/0.678 = 7.4e-4.
    assert_allclose(si("1 GLE") / NATURAL_GAS_LHV_AFDC, 0.678, rtol=7.4e-4)
    # A litre equivalent is the same reference fuel per litre: exactly 1/3.785 411 784 gallon.
    assert_allclose(si("1 GGE") / si("1 GLE"), 3.785411784, rtol=1e-12)
    assert_allclose(si("1 DGE") / si("1 DLE"), 3.785411784, rtol=1e-12)


def test_gallon_equivalents_match_the_fuels_they_stand_for():
    # US DOE AFDC fuel properties table (from memory): ultra-low-sulfur diesel LHV 128 488 Btu/gal;
    # gasoline 112 114 (E10) to 116 090 (E0) Btu/gal. DGE = 128 701 Btu: within 0.2 % of diesel.
    assert_allclose(ureg.Quantity(1, "DGE").to("Btu_it").magnitude, 128_488, rtol=2e-3)
    assert 112_114 < ureg.Quantity(1, "GGE").to("Btu_it").magnitude < 116_090
    # JEC well-to-wheels fuel properties (from memory): diesel 43.1 MJ/kg at 832 kg/m3, i.e.
    # 35.86 MJ/L; the DLE is 35.87 MJ. Tolerance 0.1 % = the rounding of 43.1 MJ/kg.
    assert_allclose(si("1 DLE"), 43.1e6 * 0.832, rtol=1e-3)


def test_standard_and_normal_cubic_metre():
    # CODATA 2018 molar volume of an ideal gas at 273.15 K, 101.325 kPa: 22.413 969 54 L/mol;
    # scaled by 288.15/273.15 (ideal gas) to the ISO 13443 reference conditions, 15 °C.
    assert_allclose(MOLAR_VOLUME_STANDARD, 22.41396954 * 288.15 / 273.15, rtol=1e-9)
    # 1 Nm3 (0 °C) holds 288.15/273.15 Sm3 of an ideal gas (common practice, no source).
    assert_allclose(ureg.Quantity(1, "Nm3").to("Sm3").magnitude, 288.15 / 273.15, rtol=1e-15)
    # A standard cubic metre is not a cubic metre: no silent conversion between them.
    with pytest.raises(Exception, match="Cannot convert"):
        ureg.Quantity(1, "Sm3").to("m**3")


# --- prices ------------------------------------------------------------------------------------

DIESEL_LHV = 43.1e6  # [J/kg] JEC well-to-wheels fuel properties, diesel (from memory)
DIESEL_DENSITY = 832.0  # [kg/m3] same source


def test_diesel_price_per_litre_to_per_gj_by_hand():
    # Hand computed: 1 L of diesel = 0.832 kg x 43.1 MJ/kg = 35.8592 MJ, so
    # 1.45 per L = 1.45 / 0.0358592 GJ = 40.43593 per GJ. Float rounding only.
    price = parse_price("1.45 /L", where="diesel.price")
    per_j = price_per_energy(price, lhv_mass=DIESEL_LHV, density=DIESEL_DENSITY)
    assert_allclose(per_j * 1e9, 1.45 / 0.0358592, rtol=1e-12)
    assert_allclose(per_j * 1e9, 40.43593, rtol=1e-6)


@pytest.mark.parametrize(
    "text",
    [
        "1.45 /L",
        "1.45/L",
        "1.45 per L",
        "1.45 per litre",
        "EUR 1.45 per L",
        "1.45 EUR/L",
        "1450 per m3",
        "1450 / m³",
        "1.45 per dm3",
        "1450 per 1000 L",
        f"{1.45 * 3.785411784!r} per US_gallon",
        f"{1.45 * 3.785411784!r} per gal",
    ],
)
def test_the_same_price_written_many_ways(text):
    # 1 m3 = 1000 L = 1 dm3 x 1000; US gallon = 3.785 411 784 L (NIST SP 811 App. B). Float only.
    price = parse_price(text, where="p", currency="EUR")
    assert price.basis == "liquid_volume"
    assert_allclose(price.value, 1450.0, rtol=1e-12)


def test_price_as_a_table():
    a = parse_price({"value": 1.45, "per": "L", "currency": "EUR"}, where="p")
    b = parse_price("EUR 1.45 per L", where="p")
    assert a.value == b.value and a.basis == b.basis and a.currency == b.currency == "EUR"


def test_energy_prices():
    lhv = 50.0e6
    # 12 per GJ is 1.2e-8 per J whatever the fuel (definition of the prefix G).
    assert_allclose(price_per_energy(parse_price("12 per GJ", where="p"), lhv_mass=lhv), 1.2e-8)
    # 1 kWh = 3.6 MJ exactly (SI). Per therm (EC) = 105.5056 MJ (pint default, SP 811 B.8).
    kwh = parse_price("0.036 per kWh", where="p")
    assert_allclose(price_per_energy(kwh, lhv_mass=lhv), 1e-8, rtol=1e-12)
    therm = parse_price("1.055056 per therm", where="p")
    assert_allclose(price_per_energy(therm, lhv_mass=lhv), 1e-8, rtol=1e-12)


def test_gross_energy_price_is_scaled_to_net():
    # Gas billed per kWh of gross calorific value: c_LHV = c_HHV x HHV / LHV (definition).
    hhv, lhv = 55.5e6, 50.0e6
    price = parse_price("0.036 per kWh HHV", where="p")
    assert price.heating_value == "HHV"
    assert_allclose(price_per_energy(price, lhv_mass=lhv, hhv_mass=hhv), 1e-8 * 1.11, rtol=1e-12)
    assert parse_price("0.036 per kWh GCV", where="p").heating_value == "HHV"
    assert parse_price("0.036 per kWh NCV", where="p").heating_value == "LHV"


def test_price_per_standard_cubic_metre_of_methane_by_hand():
    # Hand computed for methane, M = 16.043 kg/kmol, LHV 50.0 MJ/kg, ideal gas at 15 °C:
    # Vm = 8314.462618 x 288.15 / 101325 = 23.64483 m3/kmol; 1 Sm3 = 16.043/23.64483 = 0.678499
    # kg = 33.92497 MJ, so 1.1 per Sm3 = 32.4245 per GJ.
    price = parse_price("1.1 per Sm3", where="p")
    assert price.basis == "gas_volume"
    per_j = price_per_energy(price, lhv_mass=50.0e6, molar_mass=16.043)
    assert_allclose(per_j * 1e9, 32.4245, rtol=2e-6)  # 6 figures carried by hand
    # Per Nm3 (0 °C) the same money buys 288.15/273.15 times the gas (ideal gas).
    per_nm3 = price_per_energy(
        parse_price("1.1 per Nm3", where="p"), lhv_mass=50.0e6, molar_mass=16.043
    )
    assert_allclose(per_nm3, per_j * 273.15 / 288.15, rtol=1e-12)


def test_gge_price_for_afdc_gas_is_a_price_per_5_66_lb():
    # NIST Handbook 44 App. D (from memory): a CNG pump's GGE is 5.660 lb. For gas of the AFDC
    # LHV the energy unit and the mass definition must agree exactly.
    by_energy = price_per_energy(
        parse_price("2.80 per GGE", where="p"), lhv_mass=NATURAL_GAS_LHV_AFDC
    )
    by_mass = price_per_energy(
        parse_price("2.80 per (5.660 lb)", where="p"), lhv_mass=NATURAL_GAS_LHV_AFDC
    )
    assert_allclose(by_energy, by_mass, rtol=1e-12)


def test_price_conversion_is_vectorised_over_fuel_properties():
    lhv = np.array([43.1e6, 42.7e6, 46.0e6])
    rho = np.array([832.0, 745.0, 510.0])
    out = price_per_energy(parse_price("1.2 per L", where="p"), lhv_mass=lhv, density=rho)
    assert_allclose(out, 1.2 / 1e-3 / (rho * lhv), rtol=1e-12)


@pytest.mark.parametrize(
    ("text", "kwargs", "match"),
    [
        ("1.1 per L", {"lhv_mass": 47e6}, "not sold as a liquid"),  # CNG with no liquid density
        ("1.1 per m3", {"lhv_mass": 47e6}, "not sold as a liquid"),
        ("1.1 per Sm3", {"lhv_mass": 43e6, "density": 832.0}, "is a liquid"),  # diesel per Sm3
        ("0.04 per kWh HHV", {"lhv_mass": 47e6}, "HHV is not known"),
        ("1.1 per kg", {"lhv_mass": -1.0}, "must be positive"),
        ("1.1 per L", {"lhv_mass": 43e6, "density": np.nan}, "must be positive"),
    ],
)
def test_price_that_does_not_fit_the_fuel(text, kwargs, match):
    price = parse_price(text, where="candidates[1].fuel_price")
    with pytest.raises(InputError, match=match) as exc:
        price_per_energy(price, **kwargs)
    assert exc.value.where == "candidates[1].fuel_price"


@pytest.mark.parametrize(
    ("value", "match"),
    [
        ("1.45 per km", "cannot price fuel per"),
        ("1.45 per foo", "cannot read the unit"),
        ("per kWh", "<number> per <unit>"),
        ("1.45 per", "<number> per <unit>"),
        ("1.45", "<number> per <unit>"),
        ("-1.45 per L", "zero or positive"),
        ("1.45 USD/L", "study currency is EUR"),
        ("1.45 EUR USD per L", "more than one currency"),
        ("1.45 per kg HHV", "applies only to a price per energy"),
        ("1.45 per 0 L", "positive amount"),
        (1.45, "a price is a text"),
        ({"value": 1.45}, "exactly 'value', 'per'"),
        ({"value": 1.45, "per": "L", "unit": "x"}, "exactly 'value', 'per'"),
        ({"value": "1.45", "per": "L"}, "'value' must be a number"),
        ({"value": 1.45, "per": "L", "currency": "eur"}, "three-letter code"),
    ],
)
def test_bad_prices_name_where(value, match):
    with pytest.raises(InputError, match=match) as exc:
        parse_price(value, where="fuels.diesel.price", currency="EUR")
    assert str(exc.value).startswith("fuels.diesel.price: ")
    assert "\n" not in str(exc.value)


def test_price_is_frozen_and_keeps_the_text():
    price = parse_price("3.9 per US_gallon", where="p")
    assert isinstance(price, Price) and price.text == "3.9 per US_gallon"
    with pytest.raises(AttributeError):
        price.value = 0.0  # type: ignore[misc]


# --- quantities --------------------------------------------------------------------------------


@pytest.mark.parametrize(
    ("text", "dimension", "unit", "expected"),
    [
        ("15000 km", "[length]", None, 1.5e7),
        ("15000 km", "km", "km", 15000.0),
        ("8 %", "percent", None, 0.08),
        ("8 percent", "[]", None, 0.08),
        ("0.08", "dimensionless", None, 0.08),
        (0.08, "dimensionless", None, 0.08),
        ("18 month", "[time]", "year", 1.5),  # pint: month = year/12, Julian year 365.25 d
        ("250 bar", "[pressure]", None, 2.5e7),  # 1 bar = 1e5 Pa (SI brochure, table 8)
        ("250 bar", "bar", "MPa", 25.0),
        ("15 degC", "[temperature]", None, 288.15),  # ITS: T/K = t/°C + 273.15
        ("8.5 L/100 km", "L/km", None, 8.5e-8),  # L/(100 km), never (L/100)·km
        ("8.5 L per 100 km", "[area]", None, 8.5e-8),
        ("3500", "[currency]", None, 3500.0),
        ("3500 EUR", "[currency]", None, 3500.0),
        ("120 per year", "[currency] / [time]", "currency_unit / year", 120.0),
        ("120 EUR per year", "currency_unit / year", "currency_unit / year", 120.0),
    ],
)
def test_parse_quantity(text, dimension, unit, expected):
    value = parse_quantity(text, dimension, where="q", unit=unit, currency="EUR")
    assert isinstance(value, float)
    assert_allclose(value, expected, rtol=1e-12)


@pytest.mark.parametrize(
    ("text", "dimension", "match"),
    [
        ("15000", "[length]", "needs a unit"),
        ("5 kg", "[length]", "expected"),
        ("abc", "[length]", "must start with a number"),
        ("", "[length]", "must start with a number"),
        ("nan km", "[length]", "must start with a number"),
        ("1 foo", "[length]", "cannot read the unit"),
        ("3500 USD", "[currency]", "study currency is EUR"),
        (True, "dimensionless", "expected a number"),
        ("1e400 km", "[length]", "not a finite number"),
    ],
)
def test_bad_quantities_name_where(text, dimension, match):
    with pytest.raises(InputError, match=match) as exc:
        parse_quantity(text, dimension, where="duty.distance_per_year", currency="EUR")
    assert exc.value.where == "duty.distance_per_year"


def test_gas_price_agrees_with_the_fuel_sheet():
    # Consistency with workbench.models.combustion (not an outside reference): its LHV per
    # standard m3
    # (15 °C, 101.325 kPa, ideal gas) must give the same price per J as our Sm3 and molar mass.
    from workbench.core.fuels import load_fuel
    from workbench.models.combustion import fuel_sheet

    sheet = fuel_sheet(load_fuel("natural-gas"))
    per_j = price_per_energy(
        parse_price("1.1 per Sm3", where="p"), lhv_mass=sheet.lhv_mass, molar_mass=sheet.molar_mass
    )
    assert_allclose(per_j, 1.1 / sheet.lhv_volume, rtol=1e-9)  # R differs in the 10th figure


@pytest.mark.parametrize(
    ("text", "words"),
    [
        # pint's own parser evaluates these as Python arithmetic: a hang, a ZeroDivisionError,
        # and a silent sum (STACK-NOTES); the grammar refuses each in one line.
        ("9 ** 9 ** 9 km", "unexpected '\\*\\*'"),
        ("1 / 0 km", "must be a positive amount"),
        ("5 km + 3 m", "unexpected '\\+'"),
        ("450 (km", "bracket is not closed"),
        ("1 km((((km))))", "nested brackets"),
        ("1 m^9", "from 1 to 4"),
        ("1 1 km", "two numbers in a row"),
        ("1 km 3", "may only follow"),
        ("1 __class__", "not a unit"),
        ("1 nan", "not a unit"),
        ("1e16 km", "at most 1e\\+15"),
        ("1 " + "km*" * 100 + "km", "characters long"),
    ],
)
def test_the_grammar_refuses_arithmetic_and_excess(text, words):
    with pytest.raises(InputError, match=words) as exc:
        parse_quantity(text, "[length]", where="classes[0].range")
    assert exc.value.where == "classes[0].range" and "\n" not in str(exc.value)


@pytest.mark.parametrize(("value", "words"), [
    (float("nan"), "finite"), (float("inf"), "finite"), (10**400, "finite"), ([1], "expected"),
])
def test_typed_numbers_must_be_finite(value, words):
    with pytest.raises(InputError, match=words):
        parse_quantity(value, "[]", where="x")
