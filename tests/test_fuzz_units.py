"""Fuzz the quantity and price grammar of ``workbench.core.units``.

Random text built from numbers, units, operators and stray characters either reads as a
finite number or ends in one ``InputError`` naming the field; a valid number and unit always
reads back as the number times the unit's size (float rounding only, rtol 1e-12).
Common practice, no source.
"""

from __future__ import annotations

import math

import pytest
from fuzzing import QUANTITY_TEXT, check_error
from hypothesis import event, given
from hypothesis import strategies as st

from workbench.core.errors import InputError
from workbench.core.units import MAX_NUMBER, parse_price, parse_quantity

pytestmark = pytest.mark.timeout(60)

DIMENSIONS = ["[length]", "[]", "[currency]", "[currency] / [time]", "[time]", "[power]",
              "[mass] / [length]", "[temperature]", "[currency] / [mass]", "L/km"]
UNITS = {  # unit text -> dimension it is read against
    "km": "[length]", "m": "[length]", "mi": "[length]", "%": "[]", "percent": "[]",
    "month": "[time]", "year": "[time]", "day": "[time]", "kW": "[power]", "W": "[power]",
    "g/km": "[mass] / [length]", "L/100 km": "L/km", "L per 100 km": "L/km", "bar": "[pressure]",
    "per year": "[currency] / [time]", "per t": "[currency] / [mass]", "kg/m3": "[density]",
    "m³": "[volume]", "(5.660 lb)": "[mass]", "kWh": "[energy]", "MJ/kg": "[energy] / [mass]",
}
PRICE_UNITS = ["L", "m3", "US_gallon", "kg", "lb", "Sm3", "Nm3", "GJ", "kWh", "therm", "MMBtu",
               "GGE", "DGE", "GLE", "DLE", "1000 L", "(5.660 lb)", "dm3", "t"]
FINITE = st.floats(min_value=-MAX_NUMBER, max_value=MAX_NUMBER, allow_nan=False)


def _read(call):
    try:
        value = call()
    except InputError as exc:
        check_error(exc)
        assert exc.where == "field.key"
        event("refused with one InputError line")
        return None
    event("accepted")
    return value


@given(QUANTITY_TEXT, st.sampled_from(DIMENSIONS))
def test_any_text_is_a_finite_quantity_or_one_line(text, dimension):
    value = _read(lambda: parse_quantity(text, dimension, where="field.key", currency="KBD"))
    assert value is None or math.isfinite(value)


@given(QUANTITY_TEXT)
def test_any_text_is_a_price_or_one_line(text):
    price = _read(lambda: parse_price(text, where="field.key", currency="KBD"))
    assert price is None or (math.isfinite(price.value) and price.value >= 0)


@given(st.one_of(st.floats(), st.integers(), st.booleans(), st.none(), st.lists(st.integers()),
                 st.dictionaries(st.sampled_from(["value", "per", "currency", "x"]),
                                 st.floats() | st.text(max_size=8))),
       st.sampled_from(DIMENSIONS))
def test_wrong_types_are_one_line(value, dimension):
    _read(lambda: parse_quantity(value, dimension, where="field.key"))
    _read(lambda: parse_price(value, where="field.key"))


@given(FINITE, st.sampled_from(sorted(UNITS)))
def test_valid_quantities_read_back(number, unit):
    dimension = UNITS[unit]
    size = parse_quantity(f"1 {unit}", dimension, where="q")
    value = parse_quantity(f"{number!r} {unit}", dimension, where="q")
    assert math.isclose(value, number * size, rel_tol=1e-12, abs_tol=1e-300)


@given(st.floats(min_value=0, max_value=MAX_NUMBER), st.sampled_from(PRICE_UNITS),
       st.sampled_from([" per ", "/", " / "]))
def test_valid_prices_read_back(number, unit, per):
    size = parse_price(f"1 per {unit}", where="p").value
    price = parse_price(f"{number!r}{per}{unit}", where="p")
    assert math.isclose(price.value, number * size, rel_tol=1e-12, abs_tol=1e-300)
