"""Units and prices at the boundary: one pint registry, trade units, text parsing.

The package keeps one :class:`pint.UnitRegistry`, :data:`ureg`, created once at import. Money is
its own dimension ``[currency]`` with the base unit ``currency_unit``; the study's currency code
(``EUR``, ``XCU`` …) is only a label and never converted. Inside the models everything is a plain
float or numpy array in SI; pint is used only here, to read what a user wrote.

Trade units added to pint's defaults
------------------------------------
``US_gallon``
    Alias of pint's ``gallon`` = 231 in³ = 3.785 411 784 L exactly (NIST SP 811, Appendix B.8).
``therm``, ``EC_therm``, ``US_therm``
    pint's defaults, kept: ``therm`` = ``EC_therm`` = 10⁵ Btu = 105.5056 MJ (NIST SP 811 B.8 prints
    1.055 06 E+08 J for the EC therm); ``US_therm`` = 105.4804 MJ (SP 811 B.8: 1.054 804 E+08 J).
    They differ by 0.024 %. UK and EU gas is billed in the EC therm, US gas in the US therm.
``MMBtu``
    10⁶ international-table Btu = 1055.055 852 62 MJ.
``standard_cubic_meter`` (``Sm3``)
    The amount of gas that fills 1 m³ at the standard reference conditions of ISO 13443: 15 °C
    (288.15 K) and 101.325 kPa. It is its own dimension ``[gas_std_volume]``, so a price per Sm3
    can never be confused with a price per m³ of liquid; :func:`price_per_energy` turns it into a
    price per kg with the gas's molar mass and its molar volume at those conditions.
``normal_cubic_meter`` (``Nm3``)
    1 m³ at 0 °C and 101.325 kPa (DIN 1343 "normal" conditions) = 288.15/273.15 Sm3 by the
    ideal-gas law; for natural gas the compressibility changes this ratio by under 0.05 %.
``gasoline_gallon_equivalent`` (``GGE``), ``diesel_gallon_equivalent`` (``DGE``)
    Energy units. NIST Handbook 44, Appendix D defines GGE as 5.660 lb of natural gas and DGE
    (for CNG) as 6.384 lb of natural gas (from memory; the 5.660 lb figure dates from NIST's 1994
    definition). Those masses were chosen to carry the lower heating value of one US gallon of
    gasoline or diesel at the natural-gas LHV the US DOE Alternative Fuels Data Center tabulates,
    20 160 Btu/lb = 46.892 MJ/kg (from memory). We therefore define
    GGE = 5.660 lb × 20 160 Btu/lb = 120.39 MJ (LHV) and DGE = 6.384 lb × 20 160 Btu/lb =
    135.79 MJ (LHV). For natural gas of exactly that LHV a price per GGE is a price per 5.660 lb;
    CNG pumps sell 5.660 lb whatever the gas's LHV, so for a gas of different LHV write the price
    per mass (``"3.9 per (5.660 lb)"``) to follow the pump exactly.
``gasoline_litre_equivalent`` (``GLE``), ``diesel_litre_equivalent`` (``DLE``)
    The energy of one litre of the same reference fuels: GGE/3.785 411 784 = 31.80 MJ and
    DGE/3.785 411 784 = 35.87 MJ (LHV). GLE is then 0.6782 kg of that gas, the 0.678 kg that
    Handbook 44 prints for the gasoline litre equivalent (from memory). The reference fuels they
    imply, at the densities of the JEC well-to-wheels fuel tables (from memory), are a gasoline of
    0.745 kg/L and 42.69 MJ/kg and a diesel of 0.832 kg/L and 43.11 MJ/kg.

Price text
----------
``"<number> [CODE] per <basis> [LHV|HHV]"`` or with ``/`` for ``per``; the code may also lead
(``"EUR 1.45 per L"``). The basis may carry a number (``"per 1000 L"``, ``"per (5.660 lb)"``).
A mapping ``{value = 1.45, per = "L"}`` (optionally ``currency``) is the same as ``"1.45 per L"``.

The grammar
-----------
Quantity and price text is read by hand, never evaluated: pint's own parser runs the text as
Python arithmetic ("9 ** 9 ** 9 km" hangs, "1 / 0 km" divides by zero, "5 km + 3 m" adds). A
number (sign, decimals, an exponent of at most three digits, at most :data:`MAX_NUMBER` in
size) is followed by a unit text that :func:`parse_unit` reads: unit names looked up one at a
time, ``*``, ``/`` or ``per``, brackets, small whole powers, and positive numbers only where a
group starts. ``docs/prices.md`` gives the grammar in full.
"""

from __future__ import annotations

import math
import re
from collections.abc import Mapping
from dataclasses import dataclass, field
from typing import Literal

import numpy as np
import pint
from numpy.typing import ArrayLike, NDArray

from workbench.core.cache import memoize
from workbench.core.constants import MOLAR_VOLUME_STANDARD, T_NORMAL, T_STANDARD
from workbench.core.errors import InputError
from workbench.core.values import read_number
from workbench.core.values import show as _show

__all__ = [
    "DGE_NATURAL_GAS_MASS",
    "GGE_NATURAL_GAS_MASS",
    "HEATING_VALUE_MARK",
    "NATURAL_GAS_LHV_AFDC",
    "Price",
    "parse_price",
    "parse_quantity",
    "price_per_energy",
    "ureg",
]

_POUND = 0.45359237  # [kg], exact (NIST SP 811 B.8)
_BTU_IT_PER_LB = 2326.0  # [J/kg per Btu_IT/lb], exact by the definition of the IT Btu
#: Mass of natural gas in one gasoline gallon equivalent, 5.660 lb [kg] (NIST Handbook 44 App. D).
GGE_NATURAL_GAS_MASS = 5.660 * _POUND
#: Mass of natural gas in one diesel gallon equivalent, 6.384 lb [kg] (NIST Handbook 44 App. D).
DGE_NATURAL_GAS_MASS = 6.384 * _POUND
#: Natural-gas LHV behind GGE and DGE, 20 160 Btu/lb [J/kg] (US DOE AFDC, from memory).
NATURAL_GAS_LHV_AFDC = 20_160 * _BTU_IT_PER_LB


def _build_registry() -> pint.UnitRegistry:
    reg = pint.UnitRegistry()
    gge = GGE_NATURAL_GAS_MASS * NATURAL_GAS_LHV_AFDC
    dge = DGE_NATURAL_GAS_MASS * NATURAL_GAS_LHV_AFDC
    for line in (
        "currency_unit = [currency]",
        "standard_cubic_meter = [gas_std_volume] = Sm3 = standard_cubic_metre",
        f"normal_cubic_meter = {T_STANDARD!r} / {T_NORMAL!r} * standard_cubic_meter = Nm3"
        " = normal_cubic_metre",
        "@alias gallon = US_gallon",
        "MMBtu = 1e6 * Btu_it = MMBTU",
        f"gasoline_gallon_equivalent = {gge!r} * joule = GGE",
        f"diesel_gallon_equivalent = {dge!r} * joule = DGE",
        "gasoline_litre_equivalent = gasoline_gallon_equivalent * liter / gallon = GLE"
        " = gasoline_liter_equivalent",
        "diesel_litre_equivalent = diesel_gallon_equivalent * liter / gallon = DLE"
        " = diesel_liter_equivalent",
    ):
        reg.define(line)
    return reg


#: The package's one unit registry.
ureg: pint.UnitRegistry = _build_registry()

#: Longest quantity or price text read [characters]; a quantity is a number and a unit.
MAX_TEXT_LENGTH = 200
#: Largest magnitude of a number a user types (1e15: a quadrillion of anything).
MAX_NUMBER = 1e15
#: Largest power a unit may be raised to (``m**3``, ``s**-2``).
MAX_UNIT_POWER = 4
_MAX_DEPTH = 3  # brackets nested in a unit text
_NUMBER = r"[-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d{1,3})?"
_CODE = re.compile(r"\b[A-Z]{3}\b")
#: A heating-value mark closing a price text ("per kWh HHV", "per GJ net").
HEATING_VALUE_MARK = re.compile(r"\s+(LHV|HHV|NCV|GCV|net|gross)\s*$", re.IGNORECASE)
_TOKEN = re.compile(
    r"\s*(?:(?P<number>(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d{1,3})?)|(?P<name>[A-Za-z_][A-Za-z_0-9]*)"
    r"|(?P<op>\*\*|\^|[*/()%·²³]))"
)
_POWER_NAME = re.compile(r"(mm|cm|dm|m|km|in|ft|yd)([23])")  # m3 = m**3, km2 = km**2
_BASES = "a volume (L, m3, US_gallon), a mass (kg, lb), a standard gas volume (Sm3, Nm3) or an energy (GJ, kWh, therm, MMBtu, GGE, DGE, GLE, DLE)"  # noqa: E501


def _number(text: str, where: str, whole: str) -> float:
    """A written number, finite and within :data:`MAX_NUMBER`."""
    value = float(text)
    if not math.isfinite(value) or abs(value) > MAX_NUMBER:
        raise InputError(where, f"{_show(whole)}: {text} is not a finite number of at most "
                         f"{MAX_NUMBER:.0e} in size")
    return value


@memoize(maxsize=1024)
def _named_unit(name: str) -> pint.Unit | None:
    """The registry's unit called ``name`` (one identifier; never an expression), or None."""
    m = _POWER_NAME.fullmatch(name)
    if m is not None and not ureg.parse_unit_name(name):
        return ureg.Unit(m.group(1)) ** int(m.group(2))
    if name == "dimensionless":
        return ureg.dimensionless
    found = ureg.parse_unit_name(name)  # (prefix, unit, suffix) readings; nothing is evaluated
    if not found:
        return None
    prefix, unit, _suffix = found[0]
    return ureg.Unit(prefix + unit)


class _UnitText:
    """Recursive-descent reader of a unit text; see :func:`parse_unit`."""

    def __init__(self, text: str, where: str, whole: str) -> None:
        self.text, self.where, self.whole = text, where, whole
        self.tokens: list[tuple[str, str]] = []
        pos = 0
        while pos < len(text):
            m = _TOKEN.match(text, pos)
            if m is None or m.end() == pos:
                if not text[pos:].strip():
                    break
                self.fail(f"unexpected {text[pos:].lstrip()[0]!r}")
            kind = m.lastgroup
            assert kind is not None
            self.tokens.append((kind, m.group(kind)))
            pos = m.end()
        self.i = 0

    def fail(self, why: str) -> None:
        raise InputError(self.where, f"cannot read the unit in {_show(self.whole)}: {why}; "
                         "write a number and a unit such as '15000 km', '8.5 L/100 km' or "
                         "'1.45 per L' (no arithmetic)")

    def peek(self) -> tuple[str, str] | None:
        return self.tokens[self.i] if self.i < len(self.tokens) else None

    def take(self) -> tuple[str, str]:
        tok = self.peek()
        if tok is None:
            self.fail("it ends too early")
        self.i += 1
        return tok  # type: ignore[return-value]

    def is_division(self, tok: tuple[str, str] | None) -> bool:
        return tok is not None and (tok == ("op", "/") or tok == ("name", "per"))

    def expression(self, depth: int) -> tuple[float, pint.Unit]:
        """``[/] factor {(* | / | per | space) factor}``; a leading number is a scale."""
        scale, unit = 1.0, ureg.dimensionless
        first = True
        while True:
            tok = self.peek()
            if tok is None or tok == ("op", ")"):
                if first:
                    self.fail("a unit is missing")
                return scale, unit
            divide = self.is_division(tok)
            if divide or tok in (("op", "*"), ("op", "·")):
                self.take()
            elif not first and tok[0] == "number":
                self.fail(f"a number ({tok[1]}) inside a unit may only follow '/' or '('")
            s, u = self.factor(depth, divide or first)
            scale, unit = (scale / s, unit / u) if divide else (scale * s, unit * u)
            first = False

    def factor(self, depth: int, number_allowed: bool) -> tuple[float, pint.Unit]:
        """``[number] atom [** power]``: a number only where a group may start."""
        scale = 1.0
        if self.peek() is not None and self.peek()[0] == "number":  # type: ignore[index]
            if not number_allowed:
                self.fail("a number inside a unit may only follow '/' or '('")
            scale = _number(self.take()[1], self.where, self.whole)
            if scale <= 0:
                self.fail(f"the number {scale:g} inside the unit must be a positive amount")
            if self.peek() is None or self.peek() == ("op", ")") or self.is_division(
                    self.peek()):
                return scale, ureg.dimensionless
        kind, value = self.take()
        if (kind, value) == ("op", "("):
            if depth >= _MAX_DEPTH:
                self.fail(f"more than {_MAX_DEPTH} nested brackets")
            s, unit = self.expression(depth + 1)
            if self.peek() != ("op", ")"):
                self.fail("a bracket is not closed")
            self.take()
            scale *= s
        elif (kind, value) == ("op", "%"):
            unit = ureg.percent
        elif kind == "name" and value != "per":
            named = _named_unit(value)
            if named is None:
                self.fail(f"{value!r} is not a unit the workbench knows")
            unit = named
        else:
            self.fail(f"unexpected {value!r}")
        if self.peek() in (("op", "²"), ("op", "³")):
            power = "2" if self.take()[1] == "²" else "3"
        elif self.peek() in (("op", "**"), ("op", "^")):
            self.take()
            kind, power = self.take()
            if kind != "number" or not power.isdigit() or not 1 <= int(power) <= MAX_UNIT_POWER:
                self.fail(f"a power must be a whole number from 1 to {MAX_UNIT_POWER}")
        else:
            return scale, unit
        return scale ** int(power), unit ** int(power)


def parse_unit(text: str, *, where: str, whole: str | None = None,
               leading_number: bool = True) -> pint.Quantity:
    """Read a unit text (``"km"``, ``"L/100 km"``, ``"kg/m3"``, ``"(5.660 lb)"``) strictly.

    The grammar has unit names from :data:`ureg`, ``%``, ``*``, ``/`` or ``per``, brackets
    (at most three deep), powers ``**`` or ``^`` from 1 to :data:`MAX_UNIT_POWER`, and positive
    numbers only where a group starts (``per 1000 L``, ``L/100 km``: the number and the unit
    after it are one divisor). Nothing is evaluated: pint is handed one unit name at a time.

    Parameters
    ----------
    text : str
        The unit as written.
    where : str
        Key path or field named in errors.
    whole : str, optional
        The full text the unit was cut from, quoted in errors.
    leading_number : bool
        Whether the text may start with a number (``"1000 L"`` after a price's ``per``); the
        unit after a quantity's own number may not (``"5 3 km"``).

    Returns
    -------
    pint.Quantity
        The unit with its numeric scale (``"1000 L"`` is 1000 litres).

    Raises
    ------
    InputError
        Text outside the grammar, an unknown unit, or a text longer than
        :data:`MAX_TEXT_LENGTH`.
    """
    whole = text if whole is None else whole
    if len(whole) > MAX_TEXT_LENGTH:
        raise InputError(where, f"is {len(whole)} characters long; a quantity is a number and a "
                         f"unit of at most {MAX_TEXT_LENGTH} characters")
    reader = _UnitText(text, where, whole)
    first = reader.peek()
    if not leading_number and first is not None and first[0] == "number":
        reader.fail("two numbers in a row")
    scale, unit = reader.expression(0)
    if reader.peek() is not None:
        reader.fail(f"unexpected {reader.peek()[1]!r}")  # type: ignore[index]
    return ureg.Quantity(scale, unit)


def _split_code(text: str, currency: str | None, where: str) -> tuple[str, str | None]:
    """Remove one currency code (three capitals that are not a unit) from ``text``."""
    codes = [m for m in _CODE.finditer(text) if m.group() not in ureg]
    if not codes:
        return text, None
    if len(codes) > 1:
        raise InputError(where, f"{_show(text)} has more than one currency code; write one at "
                         "most")
    code = codes[0].group()
    if currency is not None and code != currency:
        raise InputError(
            where, f"{_show(text)} is in {code} but the study currency is {currency}; convert "
            "it first"
        )
    m = codes[0]
    return (text[: m.start()] + " " + text[m.end() :]).strip(), code


def _quantity(text: str, where: str) -> pint.Quantity:
    """Read ``number [unit]``: the number by hand, the unit by :func:`parse_unit`."""
    if len(text) > MAX_TEXT_LENGTH:
        parse_unit(text, where=where)  # raises: too long
    m = re.fullmatch(rf"\s*({_NUMBER})(?![0-9.eE])\s*(.*?)\s*", text)
    if m is None:
        raise InputError(where, f"{_show(text)} must start with a number, e.g. '15000 km'")
    number = _number(m.group(1), where, text)
    if not m.group(2):
        return ureg.Quantity(number, ureg.dimensionless)
    unit = parse_unit(m.group(2), where=where, whole=text, leading_number=False)
    try:
        return ureg.Quantity(number * unit.magnitude, unit.units)
    except pint.errors.PintError as exc:
        raise InputError(where, f"cannot use the unit in {_show(text)} ({exc})") from None


@dataclass(frozen=True)
class Price:
    """A fuel price as written, reduced to SI on its own basis.

    Attributes
    ----------
    value : float
        Price per SI unit of the basis: [currency/m3] of liquid, [currency/kg],
        [currency/Sm3] of gas or [currency/J].
    basis : {"liquid_volume", "mass", "gas_volume", "energy"}
        What the price is per.
    heating_value : {"LHV", "HHV"}
        For an energy basis, whether the energy is net (LHV) or gross (HHV); "LHV" otherwise.
    currency : str or None
        The currency code written with the price, if any (a label only).
    text : str
        The price as the user wrote it, for reports.
    where : str
        Where it was written (key path), used in error messages.
    """

    value: float
    basis: Literal["liquid_volume", "mass", "gas_volume", "energy"]
    heating_value: Literal["LHV", "HHV"] = "LHV"
    currency: str | None = None
    text: str = ""
    where: str = field(default="price", compare=False)


def parse_quantity(
    text: str | float,
    expected_dimension: str,
    *,
    where: str,
    unit: str | None = None,
    currency: str | None = None,
) -> float:
    """Read a number with a unit, check its dimension and return it in SI (or in ``unit``).

    Parameters
    ----------
    text : str or float
        What the user wrote: ``"15000 km"``, ``"8 %"``, ``"18 month"``, ``"250 bar"``,
        ``"8.5 L/100 km"``, ``"15 degC"``. A bare number is accepted only for a dimensionless
        or a money quantity; money is written as a bare number, optionally with the currency
        code (``"3500 EUR"``, ``"120 per year"``).
    expected_dimension : str
        A pint dimension (``"[length]"``, ``"[currency] / [time]"``) or any unit expression
        of the wanted dimension (``"km"``, ``"bar"``, ``"percent"``, ``"currency_unit / year"``).
    where : str
        Key path or field label named in the error.
    unit : str, optional
        Return the value in this unit instead of SI base units (e.g. ``"year"``).
    currency : str, optional
        The study currency code; a different code in ``text`` is an error.

    Returns
    -------
    float
        The magnitude in SI base units ([m], [s], [Pa], [K], [currency] …), or in ``unit``.

    Raises
    ------
    InputError
        Unreadable text, missing unit, or a dimension other than ``expected_dimension``.

    Examples
    --------
    >>> parse_quantity("18 month", "[time]", where="x", unit="year")
    1.5
    """
    if isinstance(text, bool) or not isinstance(text, str | int | float):
        raise InputError(where, f"expected a number with a unit, got {_show(repr(text))}")
    if not isinstance(text, str):
        read_number(text, where)
    try:
        return _quantity_value(str(text), expected_dimension, unit, currency)
    except InputError as exc:
        raise InputError(where, exc.message) from None


@memoize(maxsize=4096)
def _quantity_value(text: str, expected_dimension: str, unit: str | None,
                    currency: str | None) -> float:
    """:func:`parse_quantity` without ``where`` (errors name ``input``), cached by its text."""
    where = "input"
    if "[" in expected_dimension:
        want = ureg.get_dimensionality(expected_dimension)
    else:
        want = parse_unit(expected_dimension, where=where).dimensionality
    body = text
    if want.get("[currency]", 0) != 0:
        body, _ = _split_code(body, currency, where)
    q = _quantity(body, where)
    try:
        if want.get("[currency]", 0) != 0 and q.dimensionality.get("[currency]", 0) == 0:
            q = q * ureg.currency_unit
        if q.dimensionality != want:
            if q.dimensionless:
                raise InputError(where, f"{_show(text)} needs a unit of {want}")
            raise InputError(where, f"{_show(text)} is {q.dimensionality}, expected {want}")
        out = q.to(unit) if unit is not None else q.to_base_units()
    except pint.errors.PintError as exc:
        raise InputError(where, f"cannot use the unit in {_show(text)} ({exc})") from None
    value = float(out.magnitude)
    if not math.isfinite(value):
        raise InputError(where, f"{_show(text)} is not a finite number")
    return value


def parse_price(
    text_or_mapping: str | Mapping[str, object], *, where: str, currency: str | None = None
) -> Price:
    """Read a fuel price written in any supported basis.

    Parameters
    ----------
    text_or_mapping : str or mapping
        ``"1.45 /L"``, ``"0.9 per kg"``, ``"12 per GJ"``, ``"0.04 per kWh HHV"``,
        ``"1.1 per Sm3"``, ``"3.9 per US_gallon"``, ``"2.8 per GGE"``, ``"EUR 1.45 per L"``,
        or a mapping ``{"value": 1.45, "per": "L"}`` with an optional ``"currency"`` key.
    where : str
        Key path named in errors (``"candidates[1].fuel_price"``).
    currency : str, optional
        The study currency code; a different code in the price is an error.

    Returns
    -------
    Price
        The price per SI unit of its basis.

    Raises
    ------
    InputError
        Unreadable text, a negative price, a basis that is not a volume, mass, standard gas
        volume or energy, or LHV/HHV on a basis that is not an energy.
    """
    if isinstance(text_or_mapping, Mapping):
        extra = set(text_or_mapping) - {"value", "per", "currency"}
        if extra or not {"value", "per"} <= set(text_or_mapping):
            raise InputError(
                where,
                "a price table needs exactly 'value', 'per' and optionally "
                f"'currency', e.g. {{value = 1.45, per = \"L\"}}; got "
                f"{sorted(text_or_mapping)}",
            )
        value, per = text_or_mapping["value"], text_or_mapping["per"]
        if (
            isinstance(value, bool)
            or not isinstance(value, int | float)
            or not isinstance(per, str)
        ):
            raise InputError(where, "'value' must be a number and 'per' a unit text such as \"L\"")
        read_number(value, where)
        code = text_or_mapping.get("currency", "")
        if not isinstance(code, str) or not re.fullmatch(r"(?:[A-Z]{3})?", code):
            raise InputError(
                where, f"'currency' must be a three-letter code such as \"EUR\", got "
                f"{_show(repr(code))}"
            )
        text = f"{code} {value!r} per {per}".strip()
    elif isinstance(text_or_mapping, str):
        text = text_or_mapping
    else:
        raise InputError(where, "a price is a text such as '1.45 per L', got "
                         f"{_show(repr(text_or_mapping))}")

    heating_value: Literal["LHV", "HHV"] = "LHV"
    hv = HEATING_VALUE_MARK.search(text)
    body = text
    if hv is not None:
        heating_value = "LHV" if hv.group(1).upper() in ("LHV", "NCV", "NET") else "HHV"
        body = text[: hv.start()]
    body, code = _split_code(body, currency, where)
    m = re.fullmatch(rf"\s*({_NUMBER})(?![0-9.eE])\s*(?:/|\bper\b)\s*(\S.*?)\s*", body)
    if m is None:
        raise InputError(
            where, f"write a price as '<number> per <unit>', e.g. '1.45 per L'; got {_show(text)}"
        )
    amount = _number(m.group(1), where, text)
    if amount < 0:
        raise InputError(where, f"price {_show(text)} must be zero or positive")
    per = m.group(2)
    per_q = parse_unit(per, where=where, whole=text)
    dims = per_q.dimensionality
    bases = {
        "liquid_volume": ureg.get_dimensionality("[length] ** 3"),
        "mass": ureg.get_dimensionality("[mass]"),
        "gas_volume": ureg.get_dimensionality("[gas_std_volume]"),
        "energy": ureg.get_dimensionality("[energy]"),
    }
    basis = next((name for name, d in bases.items() if d == dims), None)
    if basis is None:
        raise InputError(where, f"cannot price fuel per {_show(per)} ({dims}); price per {_BASES}")
    if hv is not None and basis != "energy":
        raise InputError(
            where, f"{hv.group(1)} applies only to a price per energy; drop it from {_show(text)}"
        )
    try:
        size = float(per_q.to_base_units().magnitude)
    except pint.errors.PintError as exc:
        raise InputError(where, f"cannot use the unit in {_show(text)} ({exc})") from None
    if not math.isfinite(size) or size <= 0:
        raise InputError(where, f"the unit after 'per' in {_show(text)} must be a positive "
                         "amount")
    return Price(amount / size, basis, heating_value, code, text, where)


def price_per_energy(
    price: Price,
    *,
    lhv_mass: ArrayLike,
    density: ArrayLike | None = None,
    molar_mass: ArrayLike | None = None,
    hhv_mass: ArrayLike | None = None,
    std_molar_volume: ArrayLike = MOLAR_VOLUME_STANDARD,
) -> NDArray[np.float64] | float:
    """Convert a price on any basis to currency per joule of the fuel's LHV.

    Parameters
    ----------
    price : Price
        From :func:`parse_price`.
    lhv_mass : float or array
        Lower heating value of the fuel [J/kg].
    density : float or array, optional
        Liquid density [kg/m3], needed for a price per volume of liquid (L, m3, gallon);
        leave None for a fuel that is not sold as a liquid (CNG).
    molar_mass : float or array, optional
        Molar mass [kg/kmol], needed for a price per Sm3 or Nm3 of gas.
    hhv_mass : float or array, optional
        Higher heating value [J/kg], needed for a price per energy written as HHV/GCV.
    std_molar_volume : float or array, optional
        Molar volume of the gas at 15 °C and 101.325 kPa [m3/kmol]; the ideal-gas value
        23.645 m3/kmol by default (natural gas is about 0.2 % below it).

    Returns
    -------
    float or ndarray
        Price per LHV energy [currency/J].

    Raises
    ------
    InputError
        The price's basis needs a property the fuel has not got (a price per L with no liquid
        density, per Sm3 with no molar mass, per kWh HHV with no HHV), naming ``price.where``.

    Notes
    -----
    ``c_J = c_V / (rho LHV)`` per liquid volume; ``c_m / LHV`` per mass;
    ``c_Sm3 V_m / (M LHV)`` per standard gas volume; ``c_J,HHV HHV / LHV`` per gross energy.
    """
    check_price_basis(price, liquid=density is not None, gas=molar_mass is not None,
                      hhv_known=hhv_mass is not None)
    lhv = _positive(lhv_mass, "lower heating value", price.where)
    if price.basis == "mass":
        out = price.value / lhv
    elif price.basis == "liquid_volume":
        out = price.value / (_positive(density, "liquid density", price.where) * lhv)
    elif price.basis == "gas_volume":
        vm = _positive(std_molar_volume, "standard molar volume", price.where)
        out = price.value * vm / (_positive(molar_mass, "molar mass", price.where) * lhv)
    elif price.heating_value == "HHV":
        out = price.value * _positive(hhv_mass, "higher heating value", price.where) / lhv
    else:
        out = price.value * np.ones_like(lhv)
    return float(out) if np.ndim(out) == 0 else out


def check_price_basis(price: Price, *, liquid: bool, gas: bool, hhv_known: bool = True) -> None:
    """Check that a price's basis fits the fuel, without any of the fuel's properties.

    Parameters
    ----------
    price : Price
        From :func:`parse_price`.
    liquid : bool
        The fuel is sold as a liquid (it has a liquid density).
    gas : bool
        The fuel is a gas (it has a molar mass for standard volumes).
    hhv_known : bool, optional
        The fuel's higher heating value is known.

    Raises
    ------
    InputError
        A price per L of a fuel not sold as a liquid, per Sm3 of a liquid, or per HHV energy
        of a fuel without an HHV, naming ``price.where``.
    """
    if price.basis == "liquid_volume" and not liquid:
        raise InputError(price.where, f"{price.text!r} is per volume of liquid but this fuel "
                         "is not sold as a liquid: price it per kg, per Sm3 or per GJ")
    if price.basis == "gas_volume" and not gas:
        raise InputError(price.where, f"{price.text!r} is per standard volume of gas but "
                         "this fuel is a liquid: price it per L, per kg or per GJ")
    if price.basis == "energy" and price.heating_value == "HHV" and not hhv_known:
        raise InputError(price.where, f"{price.text!r} is per gross (HHV) energy but the "
                         "fuel's HHV is not known: price it per net energy (LHV)")


def _positive(x: ArrayLike, name: str, where: str) -> NDArray[np.float64]:
    arr = np.asarray(x, dtype=float)
    if not np.all(np.isfinite(arr) & (arr > 0)):
        raise InputError(where, f"the fuel's {name} must be positive and finite, got {x!r}")
    return arr
