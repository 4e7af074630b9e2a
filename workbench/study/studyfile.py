"""The study file: a TOML description of a fleet, its baseline and the candidate conversions.

A :class:`Study` holds the file's contents exactly as written (so it round-trips through TOML
losslessly) and checks them when it is made: every value is read with its unit, every reference
is resolved, and every error names its key path (``candidates[1].conversion_cost``). The checked
values are in :attr:`Study.inputs`, in SI and the study currency. The format is documented in
``docs/study-file.md``.

Numbers may be written as a distribution table instead of a value; the study's Monte Carlo
draws them. Money and usage inputs enter the cash flows directly. The study's own physics inputs
(derate, efficiency offset, methane slip, accessory power, extra idling, catalyst efficiencies,
life and costs) are listed in ``varied`` and evaluated at a few quantiles of their distribution
(see
``workbench.study.runner``). Inputs that change neither money nor physics of the programme (tank
range, hours per day, lambda for ppm conversion, N2O) and the files a study names are fixed.

The files a study names (profiles, vehicles, maps, fuel files) are resolved by one rule
(:func:`resolve_data_file`: a shipped name, or a path relative to the study's folder) and read
once, when the study is checked: :class:`FleetClass` and :class:`ClassOption` carry the objects
(compared by content) beside the paths, so running a study opens no file.
"""

from __future__ import annotations

import copy
import math
import re
from collections.abc import Callable, Iterable, Iterator, Mapping
from contextlib import contextmanager
from dataclasses import dataclass, field, replace
from pathlib import Path
from typing import Any

import numpy as np
import tomlkit
import tomlkit.items

from workbench.core.constants import J_PER_KWH
from workbench.core.errors import InputError
from workbench.core.fuels import BASES, Fuel, blend, load_fuel
from workbench.core.paths import DATA
from workbench.core.text import sha256_hex
from workbench.core.textfiles import check_file_name, parse_toml
from workbench.core.units import (
    HEATING_VALUE_MARK,
    Price,
    check_price_basis,
    parse_price,
    parse_quantity,
    read_number,
)
from workbench.io.files import write_text_atomic
from workbench.io.fuelcards import read_fuel_cards
from workbench.io.logs import FleetSource, fleet_source, list_vehicles
from workbench.io.maps import read_map
from workbench.io.profiles import read_profile
from workbench.io.vehicles import read_vehicle
from workbench.models.aftertreatment import DEVICE_PRESETS, Aftertreatment
from workbench.models.calibration import FuelRecords
from workbench.models.conversion import (
    DEFAULT_SUBSTITUTION,
    KINDS,
    REGIME_DEVICE,
    REGIME_LAMBDA,
    REGIME_SLIP,
    ConversionKind,
    Substitution,
    conversion_kind,
    fuel_regime,
    infer_kind,
    regime_mismatch,
)
from workbench.models.duty import DutyTrace, ModeTable
from workbench.models.economics import DISTRIBUTION_PARAMETERS, Correlation, Distribution
from workbench.models.electric import BatteryPack, EfficiencyCurve, ElectricDrive, tariff_price
from workbench.models.engine import EngineMap
from workbench.models.engine_out import DEFAULT_REFERENCE_FUEL
from workbench.models.fuelcell import HYDROGEN_PATHWAYS, BufferBattery, FuelCellSystem
from workbench.models.nox import ENGINE_PRESETS, EngineOutNOx
from workbench.models.storage.state import storage_spec
from workbench.models.vehicle import Vehicle

#: The demo study of a fictional port city.
DEMO_STUDY = DATA / "studies" / "kestrel-bay.toml"

_DIST_PARAMS = ("value", "low", "mode", "high", "mean", "sd")
PERCENT = ("%", 100.0)
#: Calendar years a programme may start in.
START_YEARS = (1900, 2200)
#: Longest horizon and remaining life [years]; a fleet programme runs a few decades at most.
MAX_YEARS = 100
#: Most vehicles in one class.
MAX_COUNT = 10_000_000
#: Most distance per vehicle and year [m]: 24 h a day at 200 km/h is 1.75 million km.
MAX_KM_PER_YEAR = 2.0e9
#: Longest target range for tank sizing [m].
MAX_RANGE = 1.0e7
#: Largest engine-out NOx by unit: far beyond any engine (a diesel without controls emits
#: some 10 g/kWh, about 2000 ppm); 10^6 ppm is the whole exhaust.
MAX_ENGINE_OUT_NOX = {"g/km": 1000.0, "g/kWh": 1000.0, "ppm": 1e6}
#: Largest well-to-tank CO2e [g/MJ] (coal-to-liquid fuels are some 200 g/MJ, from memory).
MAX_WTT_G_PER_MJ = 1000.0
#: Most Monte Carlo draws; each draw keeps every option's yearly cash flows in memory.
MAX_DRAWS = 1_000_000
#: Real discount rate per year [-]: from -10 % (rates below zero have happened) to 100 %;
#: near -100 % the discount factor (1 + r)^-t explodes.
DISCOUNT_RATE_RANGE = (-0.10, 1.0)


@dataclass(frozen=True)
class Uncertain:
    """A numeric input: its nominal value and, when uncertain, its distribution.

    Attributes
    ----------
    nominal : float
        Value of the deterministic run [SI or currency]: the value, the mode of a
        triangular, the mean otherwise (of the truncated normal when a normal reaches past
        the input's range).
    dist : Distribution or None
        Distribution in the same unit, or None when fixed.
    path : str
        Key path in the study file.
    unit : str
        Unit the user wrote it in, for display.
    scale : float
        Multiply the value by this to get it in ``unit``.
    """

    nominal: float
    dist: Distribution | None
    path: str
    unit: str = ""
    scale: float = 1.0


@dataclass(frozen=True)
class FleetClass:
    """One class of vehicles (all numbers SI unless said)."""

    id: str
    name: str
    count: int
    km_per_year: Uncertain  # [m/year]
    hours_per_day: float  # [h]
    remaining_life_years: int
    profile: Path  # the files as named, for display and the report
    vehicle: Path
    engine_map: Path
    range: float  # target range for tank sizing [m]
    upkeep_per_year: Uncertain  # per vehicle [currency/year]
    daily_revenue: Uncertain  # lost per day off the road [currency/day]
    accessory_power: float  # [W]
    engine_off_at_stops: bool
    extra_idle_share: float
    profile_data: DutyTrace | ModeTable | FleetSource  # read (logs: listed) when checked
    vehicle_data: Vehicle  # read from ``vehicle``
    map_data: EngineMap  # read from ``engine_map``
    varied: tuple[tuple[str, Uncertain], ...] = ()  # physics inputs with a distribution
    fuel_cards: Path | None = None  # the fuel-card file as named, for display
    #: Read from ``fuel_cards`` when checked; compared and hashed by ``card_digest``, so that
    #: a study checked again over the same cards finds its physics cached.
    card_records: FuelRecords | None = field(default=None, compare=False)
    card_digest: str = ""  # SHA-256 of the fills read (:func:`_records_digest`)
    calibrate: bool = False  # apply the factor fitted to the cards to every option


#: Drives an option may give a class: the conversions of :mod:`workbench.models.conversion`
#: keep the combustion engine; any other drive replaces the class's vehicles by new ones
#: (``NewVehicleInputs``) and has its own energy model (``workbench.study.runner.DRIVES``).
DRIVES = ("combustion", "battery-electric", "fuel-cell")
#: The id grid electricity goes by where a fuel's id stands in the result tables.
ELECTRICITY = "electricity"


@dataclass(frozen=True)
class NewVehicleInputs:
    """A class's vehicles replaced by new ones, per vehicle [currency]
    (``workbench.models.economics.NewVehicle``)."""

    purchase_price: Uncertain  # paid in year 0
    resale_value: Uncertain  # when the class leaves the programme
    old_vehicle_sale: Uncertain  # the replaced vehicle, in year 0


@dataclass(frozen=True)
class ElectricInputs:
    """What a battery-electric option gives one class: drive, pack, chargers, electricity."""

    drive: ElectricDrive
    pack: BatteryPack
    range: float  # distance between charges [m]
    mass_saved: float  # combustion powertrain mass the electric vehicle does without [kg]
    charger_power: float  # one charger at the grid [W]
    chargers_per_vehicle: float  # [-]
    charging_window: float  # hours a day at the chargers [s]
    charger_capital: Uncertain  # per vehicle, year 0 [currency]
    charger_upkeep_per_year: Uncertain  # per vehicle [currency/year]
    #: Time-of-use bands: (name, price [currency/J], share of the charging energy) each; a
    #: flat tariff is one band ("flat", price, 1.0).
    tariff: tuple[tuple[str, Uncertain, float], ...]
    escalation: Uncertain  # of the electricity price [1/year]
    #: Grid CO2e intensity by calendar year [kg/J], linear between the years, held beyond.
    grid_co2e: tuple[tuple[int, float], ...]
    grid_co2e_source: str
    where: str = ""  # key path of the range, named when no pack can carry itself over it

    def grid_path(self, start_year: int, horizon: int) -> list[float]:
        """Grid CO2e intensity in each programme year 0 … H [kg/J]."""
        years, values = zip(*self.grid_co2e, strict=True)
        return [float(v) for v in np.interp(start_year + np.arange(horizon + 1), years, values)]


@dataclass(frozen=True)
class FuelCellInputs:
    """What a fuel-cell option gives one class: motor, fuel-cell system, buffer, tank, hydrogen."""

    drive: ElectricDrive  # motor, reducer, regeneration, heating (charging not used)
    system: FuelCellSystem
    buffer: BufferBattery
    range: float  # distance between fills [m]
    mass_saved: float  # combustion powertrain mass the vehicle does without [kg]
    tank_pressure: float  # nominal storage pressure at 15 °C, absolute [Pa]
    hydrogen: Fuel  # the hydrogen fuel sheet (heating value, molar mass)
    price: Price  # the hydrogen price's basis (per kg, per MJ ...)
    price_value: Uncertain  # its value [currency per basis]
    escalation: Uncertain  # of the hydrogen price [1/year]
    pathway: str  # HYDROGEN_PATHWAYS id, or "study file" for a figure given
    co2e_per_kg: Uncertain  # CO2e of producing the hydrogen [kg CO2e/kg H2]
    co2e_source: str


@dataclass(frozen=True)
class ClassOption:
    """What one option does to one class of vehicles.

    A class whose drive is not ``combustion`` keeps the baseline's fuel, engine, map and
    device in the combustion fields (the vehicles it replaces) and buys no fuel
    (:attr:`fuels` is empty).
    """

    converts: bool
    fuel: Fuel
    engine: str  # NOx engine preset
    engine_map: Path  # as named, for display
    map_data: EngineMap  # read from ``engine_map`` when the study was checked
    derate: float
    efficiency_offset: float
    conversion_cost: Uncertain  # per vehicle [currency]
    upkeep_change_per_year: Uncertain  # per vehicle [currency/year]
    tank_inspection_interval: int  # years between tank inspections, 0 for none
    tank_inspection_cost: Uncertain  # per vehicle and inspection [currency]
    n2o_per_m: float  # tailpipe N2O [kg/m]
    downtime_days: Uncertain
    engine_out_nox: EngineOutNOx | None
    lambda_overall: float
    methane_slip: float  # share of the fuel's methane leaving unburnt [-]
    aftertreatment: Aftertreatment
    varied: tuple[tuple[str, Uncertain], ...] = ()  # physics inputs with a distribution
    conversion: str = "none"  # conversion kind (workbench.models.conversion.KINDS)
    derived_map: bool = False  # the kind derives the map from the class's (no engine_map given)
    map_regime: str = ""  # combustion regime the class's map was made for
    #: Defaults applied to this class: (quantity, value, unit, source) each.
    defaults: tuple[tuple[str, str, str, str], ...] = ()
    notices: tuple[str, ...] = ()  # one line each: a fuel on a map of another regime
    #: The derate is the air the gas displaces against this fuel (bi-fuel-si, none given),
    #: worked out when the study runs (it needs both fuels' sheets).
    derate_against: Fuel | None = None
    #: The fuel the engine setting's typical engine-out NOx was measured on (read when the
    #: study is checked, so that a run reads no file).
    reference_fuel: Fuel | None = None
    #: The diesel-like pilot of a dual-fuel engine (``conversion = "dual-fuel-ci"``; ``fuel``
    #: is then its gas); None for an engine that burns one fuel.
    pilot_fuel: Fuel | None = None
    drive: str = "combustion"  # one of DRIVES
    #: The class's vehicles replaced by new ones (every drive but combustion; a combustion
    #: option that names ``purchase_price``); None for a conversion.
    new_vehicle: NewVehicleInputs | None = None
    electric: ElectricInputs | None = None  # drive = "battery-electric"
    fuel_cell: FuelCellInputs | None = None  # drive = "fuel-cell"
    #: A dual-fuel engine's gas share against load (``gas_substitution``; the kind's curve
    #: when not given).
    substitution: Substitution = DEFAULT_SUBSTITUTION
    #: Share of the class converted in each programme year from year 0 (``phasing``); None
    #: converts it all in year 0.
    phasing: tuple[float, ...] | None = None
    grant_per_vehicle: float = 0.0  # grant per vehicle converted, with its capital [currency]
    grant_share: float = 0.0  # grant as a share of the conversion capital [-]

    @property
    def fuels(self) -> tuple[Fuel, ...]:
        """The fuels it buys: its fuel, and a dual-fuel engine's pilot after it (none for a
        drive without an engine: battery-electric, fuel-cell)."""
        if self.drive != "combustion":
            return ()
        return (self.fuel,) if self.pilot_fuel is None else (self.fuel, self.pilot_fuel)


def study_fuels(options: Iterable[Option]) -> dict[str, Fuel]:
    """Every fuel the options buy (dual-fuel pilots included), by id, in study order.

    Parameters
    ----------
    options : iterable of Option

    Returns
    -------
    dict of str to Fuel
    """
    return {f.id: f for o in options for co in o.per_class.values() for f in co.fuels}


@dataclass(frozen=True)
class LoanTerms:
    """A candidate's financing (``loan``): a share of each year's capital borrowed."""

    share: Uncertain  # [-]
    rate: Uncertain  # real interest rate per year [-]
    term_years: int


#: Station kinds by the storage kind of the fuel they dispense.
STATION_KINDS = {"compressed": "cng", "liquefied": "lpg"}
#: Where a station is: at the depot (the operator builds it) or away from it (the vehicles
#: drive to a public station and lose time).
STATION_LOCATIONS = ("depot", "off-depot")


@dataclass(frozen=True)
class Station:
    """A candidate's refuelling station (``station``), SI; money in the study currency."""

    kind: str  # "cng" or "lpg" (:data:`STATION_KINDS`)
    fuel: Fuel
    location: str  # :data:`STATION_LOCATIONS`
    window: float  # refuelling window per day [s]
    operating_days: float  # days a year the fleet runs and refuels
    peak_factor: float  # busiest hour over the window's mean hour [-]
    storage_pressure: float  # CNG buffer [Pa]
    fill_pressure: float  # vehicles' cylinders [Pa]
    hose_flow: float  # per dispenser [kg/s] CNG, [m3/s] LPG
    handling: float  # time per fill besides the flow [s]
    autonomy_days: float  # LPG tank [day]
    fill_limit: float  # LPG tank [-]
    compressor_cost: Uncertain  # per kg/h of compressor capacity [currency]
    storage_cost: Uncertain  # per m3 of water volume (buffer or tank) [currency]
    dispenser_cost: Uncertain  # per dispenser [currency]
    upkeep_share: Uncertain  # of the station's capital, per year [-]
    detour: float  # time lost per fill, off the depot [s]
    hour_cost: Uncertain  # cost of an hour a vehicle loses [currency/h]
    classes: tuple[str, ...] = ()  # class ids it serves (converted to its fuel)


@dataclass(frozen=True)
class Option:
    """The baseline or one candidate."""

    id: str
    name: str
    is_baseline: bool
    per_class: dict[str, ClassOption]
    programme_capital: Uncertain  # one-off, year 0 [currency]
    programme_upkeep_per_year: Uncertain  # [currency/year]
    programme_grant: float = 0.0  # received in year 0 [currency]
    programme_grant_share: float = 0.0  # of the programme capital, in year 0 [-]
    loan: LoanTerms | None = None
    stations: tuple[Station, ...] = ()  # a candidate's own: one; a best mix's: its candidates'


@dataclass(frozen=True)
class StudyInputs:
    """The checked contents of a study file, in SI and the study currency."""

    title: str
    currency: str
    fictional: bool
    notes: str
    start_year: int
    horizon_years: int
    discount_rate: Uncertain
    carbon_price: Uncertain  # [currency/kg CO2e]
    nox_damage_cost: Uncertain  # [currency/kg NOx]
    draws: int
    seed: int
    classes: tuple[FleetClass, ...]
    baseline: Option
    candidates: tuple[Option, ...]
    prices: dict[str, tuple[Price, Uncertain]]  # by fuel id: basis and value [currency/basis]
    escalation: dict[str, Uncertain]  # by fuel id [1/year]
    upstream: dict[str, Uncertain]  # by fuel id, well-to-tank CO2e [kg/J]
    upstream_sources: dict[str, str]
    #: By fuel id: fuel tax paid on top of the price, basis and value [currency/basis].
    fuel_tax: dict[str, tuple[Price, Uncertain]] = field(default_factory=dict)
    uncertain: dict[str, Distribution] = field(default_factory=dict)
    correlation: Correlation | None = None

    @property
    def options(self) -> tuple[Option, ...]:
        """Baseline first, then the candidates."""
        return (self.baseline, *self.candidates)


class Study:
    """A study file's contents, checked.

    Parameters
    ----------
    data : mapping
        The parsed TOML tree.
    where : str
        Name of the file (or other label) errors are prefixed with.
    base_dir : pathlib.Path, optional
        Folder relative paths in the study are resolved from.
    text : str, optional
        The study file's own TOML text, which ``data`` was parsed from: it is what
        :meth:`to_toml` gives back and what an edit changes line by line (comments, key order
        and layout kept). Without it, the text is generated from ``data``.

    Raises
    ------
    InputError
        Any value that fails its check; the message names the key path.
    """

    def __init__(self, data: Mapping[str, Any], *, where: str = "study",
                 base_dir: Path | None = None, text: str | None = None) -> None:
        self._data = copy.deepcopy(dict(data))
        self._text = text
        # The text's tomlkit document (with the text's byte-order mark, if any), parsed on the
        # first edit and handed on to the edited study, as parsing costs ~20 ms a file.
        self._doc: tuple[str, tomlkit.TOMLDocument] | None = None
        self.where = where
        self.base_dir = base_dir or Path.cwd()
        self.inputs = _parse(self._data, self.base_dir)

    @property
    def data(self) -> dict[str, Any]:
        """A copy of the file's contents."""
        return copy.deepcopy(self._data)

    def __eq__(self, other: object) -> bool:
        return isinstance(other, Study) and self._data == other._data

    __hash__ = None  # type: ignore[assignment]

    def get(self, path: str) -> Any:
        """The raw value at a key path such as ``candidates[0].conversion_cost``."""
        node: Any = self._data
        for key in _split_path(path):
            try:
                node = node[key]
            except (KeyError, IndexError, TypeError):
                raise InputError(path, "no such key in the study") from None
        return copy.deepcopy(node)

    def with_value(self, path: str, value: Any) -> Study:
        """A new study with one value changed (checked like a file).

        Parameters
        ----------
        path : str
            Key path (``programme.discount_rate``, ``prices.lpg``, ``classes[0].count``).
        value : object
            The new raw value, as it would be written in the file.

        Returns
        -------
        Study
        """
        return self.with_values({path: value})

    def with_values(self, changes: Mapping[str, Any], *, remove: Iterable[str] = ()) -> Study:
        """A new study with several values changed and entries removed, checked together.

        Parameters
        ----------
        changes : mapping of str to object
            Raw values by key path; missing tables on the way are created.
        remove : iterable of str
            Key paths of table entries to delete (a fuel's price once no option uses it).

        Returns
        -------
        Study
        """
        text = self.to_toml()  # this study keeps its text; its document moves on
        bom, doc = self._doc or (_split_bom(text)[0], tomlkit.parse(_split_bom(text)[1]))
        self._doc = None
        for path, value in changes.items():
            node, key = _parent(doc, path)
            try:
                node[key] = _toml_value(node, key, copy.deepcopy(value))
            except (IndexError, TypeError):
                raise InputError(path, "no such key in the study") from None
        for path in remove:
            node, key = _parent(doc, path)
            if isinstance(node, dict):
                node.pop(key, None)
        data = doc.unwrap()
        touched = {str(_split_path(p)[0]) for p in (*changes, *remove)}
        if touched <= LOCAL_SECTIONS:  # re-check those tables alone, the rest is unchanged
            edited = object.__new__(Study)
            edited._data, edited._text, edited.where = data, None, self.where
            edited.base_dir = self.base_dir
            sections = _local_sections(_Reader(data, ""), study_fuels(self.inputs.options),
                                       self.inputs.currency, touched,
                                       _pilot_only(self.inputs.options))
            edited.inputs = _with_uncertain(replace(self.inputs, **sections),
                                            data.get("correlations", []))
        else:
            edited = Study(data, where=self.where, base_dir=self.base_dir)
        edited._doc = (bom, doc)
        return edited

    def to_toml(self) -> str:
        """The study as TOML text: the file's own text, with edits changing only their lines.

        Reading it back gives an equal study.
        """
        if self._text is None:
            self._text = (self._doc[0] + tomlkit.dumps(self._doc[1]) if self._doc is not None
                          else tomlkit.dumps(self._data))
        return self._text

    def to_bytes(self) -> bytes:
        """The bytes :func:`write_study` saves: for a study read and not edited, the file's own."""
        return self.to_toml().encode("utf-8")

    def digest(self) -> str:
        """SHA-256 of :meth:`to_bytes` (identifies the inputs in reports; ``sha256sum`` of the
        file for a study read from one and not edited)."""
        return sha256_hex(self.to_bytes())


def _split_bom(text: str) -> tuple[str, str]:
    """A byte-order mark at the start of a text, and the rest (TOML parsers refuse the mark)."""
    return ("\ufeff", text[1:]) if text.startswith("\ufeff") else ("", text)


def _toml_value(node: Any, key: str | int, value: Any) -> Any:
    """A raw value laid out as the file had it: a table stays a table, other tables inline."""
    if not isinstance(value, Mapping):
        return value
    old = node.get(key) if isinstance(node, Mapping) else None
    if isinstance(old, tomlkit.items.Table) or (
            old is None and isinstance(node, tomlkit.TOMLDocument)):
        table = tomlkit.table()
        table.update(value)
        return table
    inline = tomlkit.inline_table()
    inline.update(value)
    return inline


def _parent(data: dict[str, Any], path: str) -> tuple[Any, str | int]:
    """The table or list holding the last key of ``path`` (tables made as needed)."""
    keys = _split_path(path)
    node: Any = data
    for key in keys[:-1]:
        if isinstance(key, str) and isinstance(node, dict) and key not in node:
            node[key] = _toml_value(node, key, {})
        try:
            node = node[key]
        except (KeyError, IndexError, TypeError):
            raise InputError(path, "no such key in the study") from None
    if not isinstance(node, dict | list):
        raise InputError(path, "no such key in the study")
    return node, keys[-1]


def _split_path(path: str) -> list[str | int]:
    keys: list[str | int] = []
    for part in path.split("."):
        m = re.fullmatch(r"([^\[\]]+)((?:\[\d+\])*)", part)
        if m is None:
            raise InputError(path, "is not a key path like candidates[0].fuel")
        keys.append(m.group(1))
        keys += [int(i) for i in re.findall(r"\[(\d+)\]", m.group(2))]
    return keys


def read_study(path: str | Path) -> Study:
    """Read and check a study file.

    Parameters
    ----------
    path : str or pathlib.Path
        The ``.toml`` file; ``"demo"`` reads the shipped demo study.

    Returns
    -------
    Study
    """
    p = DEMO_STUDY if str(path) == "demo" else Path(check_file_name(
        str(path) if isinstance(path, Path) else path, "study", what="a study .toml file"))
    if not p.is_file():
        raise InputError(str(path), "no such study file; check the path")
    try:
        raw = p.read_bytes()
    except OSError as exc:
        raise InputError(str(p), f"cannot read the file ({exc.strerror}); check it") from None
    data = parse_toml(raw, str(p))  # the checks of every TOML reader (UTF-8, BOM, nesting)
    text = raw.decode("utf-8")  # no newline translation: the text is the bytes
    return parse_study(text, where=str(p), base_dir=p.resolve().parent, data=data)


def parse_study(text: str, *, where: str, base_dir: Path,
                data: Mapping[str, Any] | None = None) -> Study:
    """Check the text of a study file (read from a file, or from standard input).

    Parameters
    ----------
    text : str
        The TOML text (a leading byte-order mark is kept in the study's text).
    where : str
        Name of the file (or ``<stdin>``) that errors name.
    base_dir : pathlib.Path
        Folder the study's relative paths are resolved from.
    data : mapping, optional
        The text already parsed (by :func:`read_study`); parsed here when omitted.

    Returns
    -------
    Study
    """
    if data is None:
        data = parse_toml(text.encode("utf-8"), where)
    try:
        return Study(data, where=where, base_dir=base_dir, text=text)
    except InputError as exc:
        raise InputError(f"{Path(where).name}: {exc.where}", exc.message) from None


def write_study(study: Study, path: str | Path) -> Path:
    """Write a study file, whole or not at all: the bytes of :meth:`Study.to_bytes`.

    A study read from a file keeps that file's comments, key order and layout; each edit
    (:meth:`Study.with_values`) changes only the lines of the values it changed.

    Parameters
    ----------
    study : Study
        The study.
    path : str or pathlib.Path
        Destination ``.toml`` file.

    Returns
    -------
    pathlib.Path
    """
    return write_text_atomic(Path(path), study.to_toml(), suffix=".toml", option="path")


# ----------------------------------------------------------------------------- parsing


class _Reader:
    """Reads values out of a table, naming each key path in errors."""

    def __init__(self, table: Any, path: str) -> None:
        if not isinstance(table, Mapping):
            raise InputError(path, "must be a table")
        self.table = table
        self.path = path

    def at(self, key: str) -> str:
        return f"{self.path}.{key}" if self.path else key

    def only(self, known: Iterable[str], what: str) -> None:
        """Refuse keys not in ``known`` (a misspelt key would otherwise be ignored)."""
        names = sorted(known)
        for key in self.table:
            if key not in names:
                raise InputError(self.at(str(key)), f"unknown key; {what} has {', '.join(names)}")

    def has(self, key: str) -> bool:
        return key in self.table

    def raw(self, key: str, default: Any = ...) -> Any:
        if key in self.table:
            return self.table[key]
        if default is ...:
            raise InputError(self.at(key), "is required")
        return default

    def text(self, key: str, default: Any = ..., *, empty: bool = False) -> str:
        value = self.raw(key, default)
        if not isinstance(value, str) or not (empty or value.strip()):
            raise InputError(self.at(key), f"must be a non-empty text, got {_short(value)}")
        return value

    def integer(self, key: str, default: Any = ..., *, low: int = 0, high: int) -> int:
        value = self.raw(key, default)
        if isinstance(value, bool) or not isinstance(value, int):
            raise InputError(self.at(key), f"must be a whole number, got {_short(value)}")
        if not low <= value <= high:
            raise InputError(self.at(key), f"must be from {low:,} to {high:,}, got "
                             f"{_short(value)}")
        return value

    def flag(self, key: str, default: bool) -> bool:
        value = self.raw(key, default)
        if not isinstance(value, bool):
            raise InputError(self.at(key), f"must be true or false, got {value!r}")
        return value

    def quantity(self, key: str, dimension: str, default: Any = ..., *,
                 unit: str | None = None, low: float | None = None,
                 high: float | None = None) -> float:
        return _fixed(self.raw(key, default), dimension, self.at(key), unit, low, high)

    def uncertain(self, key: str, parse: Callable[[Any, str], float], default: Any = ..., *,
                  low: float | None = None, high: float | None = None,
                  unit: tuple[str, float] = ("", 1.0)) -> Uncertain:
        where = self.at(key)
        return _uncertain(self.raw(key, default), parse, where, low, high, unit)


def _fixed(value: Any, dimension: str, where: str, unit: str | None = None,
           low: float | None = None, high: float | None = None) -> float:
    """A physics input: a quantity that may not carry a distribution."""
    if isinstance(value, Mapping):
        raise InputError(where, "cannot carry a distribution (it changes the physics); "
                         "run a second study for another value")
    out = _quantity(value, dimension, where, unit)
    _check_range(out, where, low, high)
    return out


def _check_range(value: float, where: str, low: float | None, high: float | None,
                 unit: tuple[str, float] = ("", 1.0)) -> None:
    label, scale = unit
    suffix = f" {label}" if label else ""

    def show(x: float) -> str:
        return f"{x * scale:g}{suffix}"

    if low is not None and not value >= low:
        raise InputError(where, f"must be at least {show(low)}, got {show(value)}")
    if high is not None and not value <= high:
        raise InputError(where, f"must be at most {show(high)}, got {show(value)}")


def _quantity(value: Any, dimension: str, where: str, unit: str | None) -> float:
    if isinstance(value, bool) or not isinstance(value, str | int | float):
        raise InputError(where, f"expected a number with a unit, got {value!r}")
    return parse_quantity(value, dimension, where=where, unit=unit)


def _uncertain(raw: Any, parse: Callable[[Any, str], float], where: str,
               low: float | None = None, high: float | None = None,
               unit: tuple[str, float] = ("", 1.0)) -> Uncertain:
    if not isinstance(raw, Mapping):
        value = parse(raw, where)
        _check_range(value, where, low, high, unit)
        return Uncertain(value, None, where, *unit)
    if "kind" not in raw:
        raise InputError(f"{where}.kind", "a distribution needs a kind: uniform, triangular, "
                         "normal, lognormal or fixed")
    _choice(raw["kind"], f"{where}.kind", DISTRIBUTION_PARAMETERS, "distribution kind")
    params = {}
    for k, v in raw.items():
        if k == "kind":
            continue
        if k not in _DIST_PARAMS:
            raise InputError(f"{where}.{k}", f"unknown key; a distribution takes "
                             f"{', '.join(_DIST_PARAMS)}")
        params[k] = parse(v, f"{where}.{k}")
    try:
        dist = Distribution.from_mapping({"kind": raw["kind"], **params}, where=where)
    except InputError as exc:
        raise InputError(exc.where, _as_written(exc, raw)) from None
    for k in ("low", "high", "value"):  # the number the user typed is named first
        if params.get(k) is not None:
            _check_range(params[k], f"{where}.{k}", low, high, unit)
    if dist.kind == "normal":  # cut to the input's range: no negative price, km or cost
        _check_range(params["mean"], f"{where}.mean", low, high, unit)
        dist = replace(dist, lower=low, upper=high)
    nominal = dist.mode if dist.kind == "triangular" else dist.expected_value()
    _check_range(float(nominal), where, low, high, unit)
    return Uncertain(float(nominal), dist, where, *unit)


def _short(value: Any) -> str:
    """``repr(value)`` cut to 60 characters, for an error line."""
    text = repr(value)
    return text if len(text) <= 60 else text[:57] + "..."


#: Messages of a distribution's order checks, in the user's own text (not SI values).
_ORDER_MESSAGES = {
    "low": "low {low} is above high {high}; swap them",
    "mode": "mode {mode} must lie between low {low} and high {high}",
    "sd": "sd {sd} must be zero or positive",
    "mean": "a lognormal input must have a positive mean, got {mean}; use a normal "
            "distribution",
}


def _as_written(exc: InputError, raw: Mapping[str, Any]) -> str:
    """A distribution's order error with the values as the user wrote them, units included."""
    key = exc.where.rsplit(".", 1)[-1]
    template = _ORDER_MESSAGES.get(key)
    try:
        return template.format(**{k: str(v) for k, v in raw.items()}) if template else exc.message
    except KeyError:
        return exc.message


def _money(raw: Any, where: str) -> float:
    return parse_quantity(raw, "[currency]", where=where)


def _money_per_year(raw: Any, where: str) -> float:
    if isinstance(raw, int | float) and not isinstance(raw, bool):
        return read_number(raw, where)  # a bare number is per year
    return parse_quantity(raw, "[currency] / [time]", where=where, unit="currency_unit / year")


def _fraction(raw: Any, where: str) -> float:
    return parse_quantity(raw, "[]", where=where)


def _days(raw: Any, where: str) -> float:
    if isinstance(raw, int | float) and not isinstance(raw, bool):
        return read_number(raw, where)
    return parse_quantity(raw, "[time]", where=where, unit="day")


def _km_per_year(raw: Any, where: str) -> float:
    return parse_quantity(raw, "[length]", where=where)  # [m] per year, the unit says km


def _per_mass(unit_mass: str) -> Callable[[Any, str], float]:
    def parse(raw: Any, where: str) -> float:
        if isinstance(raw, int | float) and not isinstance(raw, bool):
            return read_number(raw, where) / parse_quantity(f"1 {unit_mass}", "[mass]",
                                                            where=where)
        return parse_quantity(raw, "[currency] / [mass]", where=where)
    return parse


def _g_per_mj(raw: Any, where: str) -> float:
    return read_number(raw, where, what="a number of g CO2e per MJ") * 1e-9  # [kg/J]


def _parse(data: Mapping[str, Any], base_dir: Path) -> StudyInputs:
    top = _Reader(data, "")
    top.only(("title", "currency", "fictional", "notes", "programme", "classes", "baseline",
              "candidates", "prices", "escalation", "upstream", "correlations", "fuel_tax"),
             "a study")
    currency = top.text("currency")
    if not re.fullmatch(r"[A-Z]{3}", currency):
        raise InputError("currency", f"must be a three-letter code such as EUR, got {currency!r}")
    programme = _local_sections(top, {}, currency, {"programme"})
    classes_raw = top.raw("classes")
    if not isinstance(classes_raw, list) or not classes_raw:
        raise InputError("classes", "needs at least one [[classes]] table")
    classes = tuple(_fleet_class(_Reader(c, f"classes[{i}]"), base_dir, currency)
                    for i, c in enumerate(classes_raw))
    ids = [c.id for c in classes]
    if len(set(ids)) != len(ids):
        raise InputError("classes", "class ids must be unique")
    baseline = _option(_Reader(top.raw("baseline"), "baseline"), classes, None, base_dir,
                       currency)
    cands_raw = top.raw("candidates")
    if not isinstance(cands_raw, list) or not cands_raw:
        raise InputError("candidates", "needs at least one [[candidates]] table")
    candidates = tuple(_option(_Reader(c, f"candidates[{i}]"), classes, baseline, base_dir,
                               currency) for i, c in enumerate(cands_raw))
    opt_ids = [baseline.id, *(c.id for c in candidates)]
    if len(set(opt_ids)) != len(opt_ids):
        raise InputError("candidates", "option ids (baseline and candidates) must be unique")
    names = [baseline.name, *(c.name for c in candidates)]
    if len(set(names)) != len(names):
        raise InputError("candidates", "option names (baseline and candidates) must be unique")
    options = (baseline, *candidates)
    sections = _local_sections(top, study_fuels(options), currency,
                               LOCAL_SECTIONS - {"programme"}, _pilot_only(options))
    inputs = StudyInputs(
        title=top.text("title"),
        currency=currency,
        fictional=top.flag("fictional", False),
        notes=top.text("notes", "", empty=True),
        classes=classes,
        baseline=baseline,
        candidates=candidates,
        **programme,
        **sections,
    )
    return _with_uncertain(inputs, top.raw("correlations", []))


#: Top-level tables whose values depend only on the study's fuels and currency (and that no
#: other table depends on): an edit inside them re-checks those tables alone
#: (:meth:`Study.with_values`).
LOCAL_SECTIONS = frozenset({"programme", "prices", "escalation", "upstream", "fuel_tax"})


def _pilot_only(options: Iterable[Option]) -> dict[str, str]:
    """Fuels bought only as a dual-fuel pilot, by id: where the first option names it."""
    options = tuple(options)
    main = {co.fuel.id for o in options for co in o.per_class.values()}
    out: dict[str, str] = {}
    for i, o in enumerate(options):
        where = "baseline" if o.is_baseline else f"candidates[{i - 1}]"
        for co in o.per_class.values():
            if co.pilot_fuel is not None and co.pilot_fuel.id not in main:
                out.setdefault(co.pilot_fuel.id, f"the pilot fuel of {where}")
    return out


def _local_sections(top: _Reader, fuels: Mapping[str, Fuel], currency: str,
                    sections: Iterable[str], pilots: Mapping[str, str] | None = None
                    ) -> dict[str, Any]:
    """Check the named tables of :data:`LOCAL_SECTIONS`; StudyInputs fields by name
    (``pilots``: :func:`_pilot_only`, named in a missing price's line)."""
    out: dict[str, Any] = {}
    if "programme" in sections:
        prog = _Reader(top.raw("programme"), "programme")
        prog.only(("start_year", "horizon_years", "discount_rate", "carbon_price",
                   "nox_damage_cost", "monte_carlo_draws", "seed"), "[programme]")
        out["horizon_years"] = prog.integer("horizon_years", low=1, high=MAX_YEARS)
        out["start_year"] = prog.integer("start_year", 2027, low=START_YEARS[0],
                                         high=START_YEARS[1])
        out["discount_rate"] = prog.uncertain("discount_rate", _fraction,
                                              low=DISCOUNT_RATE_RANGE[0],
                                              high=DISCOUNT_RATE_RANGE[1], unit=PERCENT)
        out["carbon_price"] = prog.uncertain("carbon_price", _per_mass("t"), 0.0, low=0.0,
                                             unit=(f"{currency}/t", 1e3))
        out["nox_damage_cost"] = prog.uncertain("nox_damage_cost", _per_mass("kg"), 0.0,
                                                low=0.0, unit=(f"{currency}/kg", 1.0))
        out["draws"] = prog.integer("monte_carlo_draws", 10_000, low=0, high=2**63)
        out["seed"] = prog.integer("seed", 12345, low=0, high=2**63 - 1)
    if "prices" in sections:
        out["prices"] = _prices(_Reader(top.raw("prices"), "prices"), fuels, currency,
                                pilots or {})
    if "escalation" in sections:
        escalation = {}
        esc = _Reader(top.raw("escalation", {}), "escalation")
        for fid in esc.table:
            if fid not in fuels:
                raise InputError(esc.at(fid), "names no fuel of the study")
            escalation[fid] = esc.uncertain(fid, _fraction, low=-0.5, high=1.0, unit=PERCENT)
        for fid in fuels:
            escalation.setdefault(fid, Uncertain(0.0, None, f"escalation.{fid}"))
        out["escalation"] = escalation
    if "upstream" in sections:
        out["upstream"], out["upstream_sources"] = _upstream(
            _Reader(top.raw("upstream"), "upstream"), fuels)
    if "fuel_tax" in sections:
        out["fuel_tax"] = _prices(_Reader(top.raw("fuel_tax", {}), "fuel_tax"), fuels,
                                  currency, {}, required=False)
    return out


def _with_uncertain(inputs: StudyInputs, correlations: Any) -> StudyInputs:
    """``inputs`` with its uncertain inputs (those with a spread) and their correlations
    (the raw ``[[correlations]]`` tables, checked against them) filled in."""
    uncertain = {u.path: u.dist for u in all_uncertain(inputs) if u.dist is not None
                 and not u.dist.spread_is_zero}
    inputs = replace(inputs, uncertain=uncertain,
                     correlation=_correlations(correlations, uncertain))
    _check_phasing(inputs)
    check_draws(inputs.draws, inputs, "programme.monte_carlo_draws")
    return inputs


def check_draws(draws: int, inputs: StudyInputs, where: str) -> int:
    """Check a number of Monte Carlo draws against :data:`MAX_DRAWS`.

    Parameters
    ----------
    draws : int
        Draws asked for; 0 turns the Monte Carlo off.
    inputs : StudyInputs
        The study (its options, horizon and uncertain inputs set the memory a draw takes).
    where : str
        Key path or option named in the error.

    Returns
    -------
    int
        ``draws``.

    Raises
    ------
    InputError
        Not a whole number, below 0, or above :data:`MAX_DRAWS`; the message gives the memory
        the draws would take: 8 bytes per draw for each uncertain input and for each option's
        costs, cash flow and CO2e and the fleet's distance in every year.
    """
    if isinstance(draws, bool) or not isinstance(draws, int):
        raise InputError(where, f"must be a whole number of draws, got {_short(draws)}")
    if draws < 0:
        raise InputError(where, f"must be 0 or more, got {draws}")
    if draws > MAX_DRAWS:
        per_draw = 8 * (len(inputs.uncertain)
                        + (3 * len(inputs.options) + 1) * (inputs.horizon_years + 1))
        raise InputError(where, f"{_count(draws)} draws would need ~{_size(draws * per_draw)} of "
                         f"memory; at most {MAX_DRAWS:,}")
    return draws


def _count(n: int) -> str:
    exponent = len(str(n)) - 1
    return f"10^{exponent}" if n == 10**exponent else f"{n:,}" if exponent < 16 else \
        f"{n:.2e}"


def _size(n_bytes: float) -> str:
    for unit in ("B", "kB", "MB", "GB", "TB", "PB", "EB"):
        if n_bytes < 1000 or unit == "EB":
            return f"{n_bytes:.0f} {unit}"
        n_bytes /= 1000
    raise AssertionError("unreachable")


def _correlations(raw: Any, uncertain: Mapping[str, Distribution]) -> Correlation | None:
    """The ``[[correlations]]`` tables as one correlation matrix (None when there are none).

    Each table names ``inputs`` (key paths of uncertain inputs) and either one
    ``coefficient`` for every pair of them or a full ``matrix`` over them; a pair may be
    given once.
    """
    if not isinstance(raw, list) or not all(isinstance(t, Mapping) for t in raw):
        raise InputError("correlations", "must be [[correlations]] tables with inputs = "
                         '["prices.diesel", "prices.lpg"] and coefficient = 0.8')
    if not raw:
        return None
    names: list[str] = []
    pairs: dict[frozenset[str], tuple[float, str]] = {}
    for i, table in enumerate(raw):
        r = _Reader(table, f"correlations[{i}]")
        for key in table:
            if key not in ("inputs", "coefficient", "matrix", "note"):
                raise InputError(r.at(key), "unknown key; a correlation has inputs, "
                                 "coefficient or matrix, and note")
        listed = r.raw("inputs")
        if (not isinstance(listed, list) or len(listed) < 2
                or not all(isinstance(x, str) for x in listed)):
            raise InputError(r.at("inputs"), "must list two or more uncertain inputs by key "
                             'path, e.g. ["prices.diesel", "prices.lpg"]')
        for x in listed:
            if x not in uncertain:
                known = ", ".join(uncertain) or "none: give an input a distribution first"
                raise InputError(r.at("inputs"), f"{x!r} is not an uncertain input of the "
                                 f"study (uncertain inputs: {known})")
        if len(set(listed)) != len(listed):
            raise InputError(r.at("inputs"), "names an input twice")
        if ("coefficient" in table) == ("matrix" in table):
            raise InputError(r.at("coefficient"), "give either one coefficient for every pair "
                             "of the inputs or a matrix over them")
        matrix = (_correlation_matrix(r.raw("matrix"), len(listed), r.at("matrix"))
                  if "matrix" in table else None)
        coefficient = None if matrix is not None else r.raw("coefficient")
        if coefficient is not None and (isinstance(coefficient, bool) or not isinstance(
                coefficient, int | float) or not -1.0 <= coefficient <= 1.0):
            raise InputError(r.at("coefficient"), f"must be a number from -1 to 1, got "
                             f"{coefficient!r}")
        for a in range(len(listed)):
            for b in range(a + 1, len(listed)):
                key = frozenset((listed[a], listed[b]))
                if key in pairs:
                    raise InputError(r.at("inputs"), f"{listed[a]} ~ {listed[b]} is already "
                                     f"given in {pairs[key][1]}; give each pair once")
                value = matrix[a][b] if matrix is not None else float(coefficient)
                pairs[key] = (value, f"correlations[{i}]")
        names += [x for x in listed if x not in names]
    order = [k for k in uncertain if k in names]
    m = [[1.0 if a == b else pairs.get(frozenset((a, b)), (0.0, ""))[0] for b in order]
         for a in order]
    return Correlation(tuple(order), tuple(tuple(row) for row in m), where="correlations")


def _correlation_matrix(raw: Any, k: int, where: str) -> list[list[float]]:
    if (not isinstance(raw, list) or len(raw) != k
            or not all(isinstance(row, list) and len(row) == k for row in raw)
            or not all(isinstance(v, int | float) and not isinstance(v, bool)
                       for row in raw for v in row)):
        raise InputError(where, f"must be a {k} x {k} table of numbers, one row per input")
    m = [[float(v) for v in row] for row in raw]
    Correlation(tuple(f"input {i + 1}" for i in range(k)), tuple(map(tuple, m)), where=where)
    return m


def all_uncertain(inputs: StudyInputs) -> list[Uncertain]:
    """Every input that may carry a distribution, once each, in file order."""
    out = [inputs.discount_rate, inputs.carbon_price, inputs.nox_damage_cost]
    for c in inputs.classes:
        out += [c.km_per_year, c.upkeep_per_year, c.daily_revenue]
        out += [u for _, u in c.varied]
    for o in inputs.options:
        out += [o.programme_capital, o.programme_upkeep_per_year]
        if o.loan is not None:
            out += [o.loan.share, o.loan.rate]
        for st in o.stations:
            out += [st.compressor_cost, st.storage_cost, st.dispenser_cost, st.upkeep_share,
                    st.hour_cost]
        for co in o.per_class.values():
            out += [co.conversion_cost, co.upkeep_change_per_year, co.downtime_days,
                    co.tank_inspection_cost]
            if co.new_vehicle is not None:
                v = co.new_vehicle
                out += [v.purchase_price, v.resale_value, v.old_vehicle_sale]
            if co.electric is not None:
                e = co.electric
                out += [e.charger_capital, e.charger_upkeep_per_year, e.escalation]
                out += [u for _, u, _ in e.tariff]
            if co.fuel_cell is not None:
                h = co.fuel_cell
                out += [h.price_value, h.escalation, h.co2e_per_kg]
            out += [u for _, u in co.varied]
    out += [u for _, u in inputs.prices.values()]
    out += [u for _, u in inputs.fuel_tax.values()]
    out += list(inputs.escalation.values()) + list(inputs.upstream.values())
    seen: dict[str, Uncertain] = {}
    for u in out:
        seen.setdefault(u.path, u)
    return list(seen.values())


#: Kinds of file a study names: kind -> (folder of shipped files under ``DATA`` or None,
#: expected suffixes).
DATA_FILE_KINDS: dict[str, tuple[str | None, tuple[str, ...]]] = {
    "profile": ("profiles", (".csv",)),
    "vehicle": ("vehicles", (".toml",)),
    "map": ("maps", (".csv",)),
    "fuel": (None, (".toml",)),
    "fuel cards": (None, (".csv",)),
}


def resolve_data_file(raw: Any, where: str, kind: str, base_dir: Path) -> Path:
    """The file a study names: a shipped name, or a path relative to the study's folder.

    Parameters
    ----------
    raw : object
        The value in the study (``"taxi-shift"``, ``"logs/taxi.csv"``, an absolute path).
    where : str
        Its key path, for errors.
    kind : str
        A key of :data:`DATA_FILE_KINDS`: ``profile``, ``vehicle``, ``map``, ``fuel`` or
        ``fuel cards``.
    base_dir : pathlib.Path
        The study file's folder; relative paths are read from there, never from the working
        directory.

    Returns
    -------
    pathlib.Path
        An existing file, absolute.

    Raises
    ------
    InputError
        Not a text, wrong suffix, or no such file; the message names the path tried.
    """
    folder, suffixes = DATA_FILE_KINDS[kind]

    def names() -> str:  # only for the error message
        shipped = sorted(p.stem for p in (DATA / folder).glob(f"*{suffixes[0]}")) if folder else []
        return f" or a shipped {kind} ({', '.join(shipped)})" if shipped else ""

    if not isinstance(raw, str) or not raw.strip():
        raise InputError(where, f"must name a {'/'.join(suffixes)} file{names()}")
    check_file_name(raw, where, what=f"a {'/'.join(suffixes)} file")
    if folder and re.fullmatch(r"[A-Za-z0-9_.-]+", raw) and not raw.endswith(suffixes):
        shipped = DATA / folder / f"{raw}{suffixes[0]}"
        if shipped.is_file():
            return shipped
    path = Path(raw).expanduser()
    tried = path if path.is_absolute() else base_dir / path
    if tried.suffix.lower() not in suffixes:
        raise InputError(where, f"{raw!r} is not a {kind} file: name a "
                         f"{'/'.join(suffixes)} file{names()}")
    try:
        found = tried.is_file()
    except (OSError, ValueError):
        found = False
    if not found:
        raise InputError(where, f"no {kind} file at {tried} (relative paths are read from the "
                         f"study's folder); fix the path{names()}")
    return tried.resolve()


def _read_data_file(raw: Any, where: str, kind: str, base_dir: Path,
                    reader: Callable[[Path], Any]) -> tuple[Path, Any]:
    """The path a study names and the object read from it (errors name the key path)."""
    path = resolve_data_file(raw, where, kind, base_dir)
    try:
        return path, reader(path)
    except InputError as exc:
        raise InputError(f"{where}: {exc.where}", exc.message) from None


def _profile(raw: Any, where: str, base_dir: Path
             ) -> tuple[Path, DutyTrace | ModeTable | FleetSource]:
    """A shipped profile or a profile CSV, read; or a fleet's logs (folder, glob, Parquet
    dataset, relative to the study's folder), listed (each vehicle is read when run)."""
    if isinstance(raw, str) and raw.strip():
        check_file_name(raw, where, what="a profile .csv file or a folder of logs")
    logs = fleet_source(raw, base_dir) if isinstance(raw, str) and raw.strip() else None
    if logs is None:
        return _read_data_file(raw, where, "profile", base_dir, read_profile)
    try:
        return logs, list_vehicles(logs)
    except InputError as exc:
        raise InputError(f"{where}: {exc.where}", exc.message) from None


def _watts(raw: Any, where: str) -> float:
    return parse_quantity(raw, "[power]", where=where)


def _physics_input(varied: list[tuple[str, Uncertain]]) -> Callable[..., float]:
    """A reader of physics inputs that notes which carry a distribution in ``varied``."""

    def read(r: _Reader, key: str, parse: Callable[[Any, str], float], default: Any,
             low: float, high: float, unit: tuple[str, float]) -> float:
        u = r.uncertain(key, parse, default, low=low, high=high, unit=unit)
        if u.dist is not None and not u.dist.spread_is_zero:
            varied.append((key, u))
        return u.nominal

    return read


def _fleet_class(r: _Reader, base_dir: Path, currency: str) -> FleetClass:
    r.only(("id", "name", "count", "km_per_year", "hours_per_day", "remaining_life_years",
            "profile", "vehicle", "engine_map", "range", "upkeep_per_year", "daily_revenue",
            "accessory_power", "engine_off_at_stops", "extra_idle_share", "fuel_cards",
            "calibrate"), "a class")
    cid = r.text("id")
    if not re.fullmatch(r"[A-Za-z0-9_-]+", cid):
        raise InputError(r.at("id"), "use letters, digits, - and _ only")
    varied: list[tuple[str, Uncertain]] = []
    physics = _physics_input(varied)
    profile, duty = _profile(r.raw("profile"), r.at("profile"), base_dir)
    vehicle, vehicle_data = _read_data_file(r.raw("vehicle"), r.at("vehicle"), "vehicle",
                                            base_dir, read_vehicle)
    engine_map, map_data = _read_data_file(r.raw("engine_map"), r.at("engine_map"), "map",
                                           base_dir, read_map)
    cards, records = None, None
    if r.has("fuel_cards"):
        if not isinstance(duty, FleetSource):
            raise InputError(r.at("fuel_cards"), "fuel cards calibrate a class run from its "
                             "vehicles' logs: make profile name the folder of logs, or drop "
                             "fuel_cards")
        cards, records = _read_data_file(r.raw("fuel_cards"), r.at("fuel_cards"), "fuel cards",
                                         base_dir, read_fuel_cards)
    calibrated = r.flag("calibrate", records is not None)
    if calibrated and records is None:
        raise InputError(r.at("calibrate"), "needs fuel_cards (the fills to fit the factor "
                         "to); name the fuel-card file or set calibrate = false")
    return FleetClass(
        id=cid,
        name=r.text("name", cid),
        count=r.integer("count", low=1, high=MAX_COUNT),
        km_per_year=r.uncertain("km_per_year", _km_per_year, low=1.0, high=MAX_KM_PER_YEAR,
                                unit=("km", 1e-3)),
        hours_per_day=r.quantity("hours_per_day", "[]", 8, low=0.0, high=24.0),
        remaining_life_years=r.integer("remaining_life_years", low=1, high=MAX_YEARS),
        profile=profile,
        vehicle=vehicle,
        engine_map=engine_map,
        profile_data=duty,
        vehicle_data=vehicle_data,
        map_data=map_data,
        range=r.quantity("range", "[length]", "500 km", low=1.0, high=MAX_RANGE),
        upkeep_per_year=r.uncertain("upkeep_per_year", _money_per_year, 0.0, low=0.0,
                                    unit=(f"{currency}/year", 1.0)),
        daily_revenue=r.uncertain("daily_revenue", _money, 0.0, low=0.0,
                                  unit=(f"{currency}/day", 1.0)),
        accessory_power=physics(r, "accessory_power", _watts, "0 W", 0.0, 1e5, ("kW", 1e-3)),
        engine_off_at_stops=r.flag("engine_off_at_stops", False),
        extra_idle_share=physics(r, "extra_idle_share", _fraction, 0.0, 0.0, 0.9, PERCENT),
        varied=tuple(varied),
        fuel_cards=cards,
        card_records=records,
        card_digest=_records_digest(records) if records is not None else "",
        calibrate=calibrated,
    )


def _records_digest(records: FuelRecords) -> str:
    """SHA-256 of fuel-card fills as read: equal fills, equal digest."""
    parts = [records.basis.encode(), records.vehicle.astype(str).tobytes()]
    parts += [a.astype(float).tobytes() for a in (records.time, records.amount, records.odometer)]
    return sha256_hex(b"\0".join(parts))


def _per_class(r: _Reader, key: str, cid: str, class_ids: set[str], default: Any) -> Any:
    """A value for one class: plain, or a table keyed by class id (missing ids: default)."""
    value = r.raw(key, default)
    if isinstance(value, Mapping) and value and set(value) <= class_ids:
        return value.get(cid, default)
    return value


def _option(r: _Reader, classes: tuple[FleetClass, ...], baseline: Option | None,
            base_dir: Path, currency: str) -> Option:
    oid = r.text("id")
    if not re.fullmatch(r"[A-Za-z0-9_-]+", oid):
        raise InputError(r.at("id"), "use letters, digits, - and _ only")
    r.only(("id", "name", "fuel", "classes", "engine", "engine_map", "derate",
            "efficiency_offset", "conversion_cost", "upkeep_change_per_year", "downtime_days",
            "tank_inspection_interval_years", "tank_inspection_cost", "n2o",
            "engine_out_nox", "lambda_overall", "methane_slip", "aftertreatment",
            "programme_capital", "programme_upkeep_per_year", "conversion", "pilot_fuel",
            "gas_substitution", "phasing", "grant", "programme_grant", "loan", "station",
            "drive", *NEW_VEHICLE_KEYS, *ELECTRIC_KEYS, *FUEL_CELL_KEYS), "an option")
    if baseline is None:
        for key in ("phasing", "grant", "programme_grant", "loan", "station"):
            if r.has(key):
                raise InputError(r.at(key), "the baseline converts nothing; name it on the "
                                 "candidates")
    class_ids = {c.id for c in classes}
    converts = class_ids
    if baseline is not None and r.has("classes"):
        raw = r.raw("classes")
        if not isinstance(raw, list) or not raw or not all(
                isinstance(x, str) and x in class_ids for x in raw):
            raise InputError(r.at("classes"), f"must list class ids from {sorted(class_ids)}")
        converts = set(raw)
    per_class = {}
    for c in classes:
        if c.id not in converts:
            assert baseline is not None
            per_class[c.id] = _unchanged(baseline.per_class[c.id])
            continue
        base = None if baseline is None else baseline.per_class[c.id]
        per_class[c.id] = _drive_option(r, c, class_ids, base, base_dir, currency)
    grant, grant_share = _grant(r.raw("programme_grant", 0), r.at("programme_grant"))
    return Option(
        id=oid,
        name=r.text("name", oid),
        is_baseline=baseline is None,
        per_class=per_class,
        programme_capital=r.uncertain("programme_capital", _money, 0.0, low=0.0,
                                      unit=(currency, 1.0)),
        programme_upkeep_per_year=r.uncertain("programme_upkeep_per_year", _money_per_year,
                                              0.0, low=0.0, unit=(f"{currency}/year", 1.0)),
        programme_grant=grant,
        programme_grant_share=grant_share,
        loan=None if not r.has("loan") else _loan(r.raw("loan"), r.at("loan")),
        stations=() if not r.has("station") else (_station(
            r.raw("station"), r.at("station"), classes, per_class, converts, currency),),
    )


#: Keys of a class's new vehicles (any drive): money per vehicle.
NEW_VEHICLE_KEYS = ("purchase_price", "resale_value", "old_vehicle_sale")
#: Keys of a battery-electric drive (``drive = "battery-electric"`` only).
ELECTRIC_KEYS = ("motor_power", "motor_efficiency", "reducer_efficiency", "regen_share",
                 "hvac_power", "charging_efficiency", "depth_of_discharge",
                 "end_of_life_health", "specific_energy", "range", "mass_saved",
                 "charger_power", "chargers_per_vehicle", "charger_capital",
                 "charger_upkeep_per_year", "charging_window", "electricity_price",
                 "charging_shares", "electricity_escalation", "grid_co2e", "grid_co2e_source")
#: Keys of the electric motor, which every drive without an engine has.
MOTOR_KEYS = ("motor_power", "motor_efficiency", "reducer_efficiency", "regen_share",
              "hvac_power", "range", "mass_saved")
#: Keys of a fuel-cell drive (``drive = "fuel-cell"`` only).
FUEL_CELL_KEYS = (*MOTOR_KEYS, "stack_power", "rated_cell_voltage", "fuel_utilisation",
                  "bop_base_share", "bop_load_share", "fuel_cell_specific_power",
                  "buffer_capacity", "buffer_power", "buffer_round_trip_efficiency",
                  "tank_pressure", "hydrogen_price", "hydrogen_escalation", "hydrogen_pathway",
                  "hydrogen_co2e", "hydrogen_co2e_source")
#: The keys of each drive without an engine.
DRIVE_KEYS = {"battery-electric": ELECTRIC_KEYS, "fuel-cell": FUEL_CELL_KEYS}
#: Keys of a combustion engine, which a battery-electric class has not got.
COMBUSTION_KEYS = ("fuel", "conversion", "engine", "engine_map", "derate", "efficiency_offset",
                   "engine_out_nox", "lambda_overall", "methane_slip", "aftertreatment",
                   "pilot_fuel", "tank_inspection_interval_years", "tank_inspection_cost",
                   "n2o", "conversion_cost")


def _class_at(r: _Reader, key: str, class_ids: set[str], cid: str) -> str:
    """Key path of a class's value: ``key.<class id>`` where the key is a table by class."""
    value = r.raw(key, None)
    if isinstance(value, Mapping) and value and set(value) <= class_ids:
        return f"{r.at(key)}.{cid}"
    return r.at(key)


def _drive_option(r: _Reader, c: FleetClass, class_ids: set[str], base: ClassOption | None,
                  base_dir: Path, currency: str) -> ClassOption:
    """What an option does to a class, read by its drive (the one place that maps a drive to
    its keys): a combustion engine (kept or converted) or a battery-electric vehicle."""
    raw = _per_class(r, "drive", c.id, class_ids, "combustion")
    where = _class_at(r, "drive", class_ids, c.id)
    drive = _choice(raw, where, DRIVES, "drive")
    if base is None and drive != "combustion":
        raise InputError(where, "the baseline is the fleet as it runs today: give a new drive "
                         "on a candidate")

    def given(keys: Iterable[str]) -> str | None:
        return next((k for k in keys if _per_class(r, k, c.id, class_ids, None) is not None),
                    None)

    def not_of(drive: str) -> None:
        other = given(k for keys in DRIVE_KEYS.values() for k in keys
                      if k not in DRIVE_KEYS.get(drive, ()))
        if other is not None:
            owner = " or ".join(f'drive = "{d}"' for d, keys in DRIVE_KEYS.items()
                                if other in keys)
            raise InputError(_class_at(r, other, class_ids, c.id),
                             f"belongs to {owner}; name that drive or leave it out")

    not_of(drive)
    if drive == "combustion":
        co = _class_option(r, c, class_ids, base, base_dir, currency)
        new = given(NEW_VEHICLE_KEYS)
        if new is None:
            return co
        if base is None:
            raise InputError(r.at(new), "the baseline keeps today's vehicles; name new "
                             "vehicles on a candidate")
        return replace(co, new_vehicle=_new_vehicle(r, c, class_ids, currency))
    assert base is not None
    other = given(COMBUSTION_KEYS)
    if other is not None:
        raise InputError(_class_at(r, other, class_ids, c.id), f"a {drive} vehicle has no "
                         f"combustion engine; leave {other} out (its energy is set by the "
                         "drive's keys)")
    if not isinstance(c.profile_data, DutyTrace):
        raise InputError(where, f"a {drive} drive runs on a speed trace; class {c.id}'s "
                         "profile is not one (a time-at-mode table or logs): give the class a "
                         "trace profile")
    read = _electric_option if drive == "battery-electric" else _fuel_cell_option
    return read(r, c, class_ids, base, currency)


def _new_vehicle(r: _Reader, c: FleetClass, class_ids: set[str],
                 currency: str) -> NewVehicleInputs:
    """A class's new vehicles: purchase price (required), resale value and the old vehicle's
    sale (0 when not given)."""
    def money(key: str, default: Any) -> Uncertain:
        raw = _per_class(r, key, c.id, class_ids, default)
        where = _class_at(r, key, class_ids, c.id)
        if raw is ...:
            raise InputError(where, "is required for new vehicles: the price of one, e.g. "
                             f"purchase_price = 52000 ({currency})")
        return _uncertain(raw, _money, where, 0.0, unit=(currency, 1.0))

    return NewVehicleInputs(purchase_price=money("purchase_price", ...),
                            resale_value=money("resale_value", 0.0),
                            old_vehicle_sale=money("old_vehicle_sale", 0.0))


def _electric_option(r: _Reader, c: FleetClass, class_ids: set[str], base: ClassOption,
                     currency: str) -> ClassOption:
    """A battery-electric drive on a class, checked: the combustion fields keep the
    baseline's (the vehicles replaced), the drive, pack, chargers and electricity are read."""
    def at(key: str) -> str:
        return _class_at(r, key, class_ids, c.id)

    def raw(key: str, default: Any) -> Any:
        return _per_class(r, key, c.id, class_ids, default)

    def share(key: str, default: float) -> float:
        return _fixed(raw(key, default), "[]", at(key), None, 0.0, 1.0)

    def money(key: str, parse: Callable[[Any, str], float], unit: str) -> Uncertain:
        return _uncertain(raw(key, 0.0), parse, at(key), 0.0, unit=(unit, 1.0))

    defaults: list[tuple[str, str, str, str]] = []
    _defaults(raw, defaults, (("charging_efficiency", "charging efficiency", "%", 100),
                              ("depth_of_discharge", "depth of discharge", "%", 100),
                              ("end_of_life_health", "end-of-life capacity", "%", 100),
                              ("specific_energy", "pack specific energy", "Wh/kg", 1 / 3600)),
              ElectricDrive.__dataclass_fields__ | BatteryPack.__dataclass_fields__,
              _ELECTRIC_MODEL)
    with _model_keys(at, r.path, {}):  # a share of 0 where the model needs more
        drive = _motor(raw, at, defaults, charging_efficiency=share("charging_efficiency", 0.88))
        pack = BatteryPack(
            depth_of_discharge=share("depth_of_discharge", 0.9),
            end_of_life_health=share("end_of_life_health", 0.8),
            specific_energy=_fixed(raw("specific_energy", "140 Wh/kg"), "J/kg",
                                   at("specific_energy"), None, 3600.0, 3600.0 * 2000))
    window = _fixed(raw("charging_window", "8 h"), "[time]", at("charging_window"), None,
                    60.0, 86400.0)
    electric = ElectricInputs(
        drive=drive, pack=pack, **_range_mass(raw, at, c),
        charger_power=_fixed(raw("charger_power", "22 kW"), "[power]", at("charger_power"),
                             None, 100.0, 1e7),
        chargers_per_vehicle=_fixed(raw("chargers_per_vehicle", 1.0), "[]",
                                    at("chargers_per_vehicle"), None, 0.01, 100.0),
        charging_window=window,
        charger_capital=money("charger_capital", _money, currency),
        charger_upkeep_per_year=money("charger_upkeep_per_year", _money_per_year,
                                      f"{currency}/year"),
        tariff=_tariff(raw("electricity_price", ...), raw("charging_shares", None),
                       at("electricity_price"), at("charging_shares"), currency),
        escalation=_uncertain(raw("electricity_escalation", 0.0), _fraction,
                              at("electricity_escalation"), -0.5, 1.0, PERCENT),
        grid_co2e=_grid_co2e(raw("grid_co2e", ...), at("grid_co2e")),
        grid_co2e_source=_fixed_text(raw("grid_co2e_source", "study file"),
                                     at("grid_co2e_source")),
        where=at("range"))
    if raw("charger_power", None) is None:
        defaults.append(("charger power", "22", "kW", "common practice, no source (a "
                         "three-phase AC depot charger)"))
    if raw("charging_window", None) is None:
        defaults.append(("charging window", "8", "h", "overnight at the depot, common "
                         "practice, no source"))
    return _new_drive(r, c, class_ids, base, currency, defaults, electric=electric)


_ELECTRIC_MODEL = "models/electric.py default (docs/electric.md)"


def _defaults(raw: Callable[[str, Any], Any], defaults: list[tuple[str, str, str, str]],
              keys: Iterable[tuple[str, str, str, float]], fields: Mapping[str, Any],
              source: str) -> None:
    """Note the model default of each (key, label, unit, scale) the study leaves out."""
    for key, label, unit, scale in keys:
        if raw(key, None) is None:
            defaults.append((label, f"{fields[key].default * scale:g}", unit, source))


@contextmanager
def _model_keys(at: Callable[[str], str], option: str,
                keys: Mapping[str, str]) -> Iterator[None]:
    """Name the study key of a model's own check (a share of 0 where the model needs more):
    an InputError whose ``where`` is a model field, not a key path of the ``option`` already,
    gets the key's path (``keys`` maps fields whose key differs)."""
    try:
        yield
    except InputError as exc:
        if exc.where.startswith(option):
            raise
        raise InputError(at(keys.get(exc.where, exc.where)), exc.message) from None


def _motor(raw: Callable[[str, Any], Any], at: Callable[[str], str],
           defaults: list[tuple[str, str, str, str]], **extra: float) -> ElectricDrive:
    """The motor, reducer, regeneration and heating of a drive without an engine (the
    :data:`MOTOR_KEYS`), its defaults noted; ``extra`` are further ElectricDrive fields."""
    _defaults(raw, defaults, (("reducer_efficiency", "reduction gear efficiency", "%", 100),
                              ("regen_share", "regeneration share of braking", "%", 100)),
              ElectricDrive.__dataclass_fields__, _ELECTRIC_MODEL)
    curve_raw = raw("motor_efficiency", None)
    if curve_raw is None:
        curve = EfficiencyCurve.typical()
        defaults.append(("motor and inverter efficiency", "typical curve, 70-93 %", "",
                         "models/electric.py default TYPICAL_MOTOR_CURVE (docs/electric.md)"))
    else:
        curve = EfficiencyCurve.constant(_fixed(curve_raw, "[]", at("motor_efficiency"), None,
                                                0.01, 1.0))
    return ElectricDrive(
        motor_power=_fixed(raw("motor_power", ...), "[power]", at("motor_power"), None,
                           1.0, 1e7),
        motor_efficiency=curve,
        reducer_efficiency=_fixed(raw("reducer_efficiency", 0.97), "[]",
                                  at("reducer_efficiency"), None, 0.0, 1.0),
        regen_share=_fixed(raw("regen_share", 0.6), "[]", at("regen_share"), None, 0.0, 1.0),
        hvac_power=_fixed(raw("hvac_power", "0 W"), "[power]", at("hvac_power"), None,
                          0.0, 1e5), **extra)


def _range_mass(raw: Callable[[str, Any], Any], at: Callable[[str], str],
                c: FleetClass) -> dict[str, float]:
    """``range`` (the class's by default) and ``mass_saved`` of a drive without an engine."""
    return {"range": _fixed(raw("range", f"{c.range / 1e3:g} km"), "[length]", at("range"),
                            None, 1.0, MAX_RANGE),
            "mass_saved": _fixed(raw("mass_saved", "0 kg"), "[mass]", at("mass_saved"), None,
                                 0.0, c.vehicle_data.mass * 0.9)}


def _new_drive(r: _Reader, c: FleetClass, class_ids: set[str], base: ClassOption,
               currency: str, defaults: list[tuple[str, str, str, str]],
               **drive: Any) -> ClassOption:
    """A class's vehicles replaced by new ones without a combustion engine: the combustion
    fields keep the baseline's (the vehicles replaced) with nothing burnt; ``drive`` is the
    drive's own inputs (``electric=`` or ``fuel_cell=``)."""
    def at(key: str) -> str:
        return _class_at(r, key, class_ids, c.id)

    def raw(key: str, default: Any) -> Any:
        return _per_class(r, key, c.id, class_ids, default)

    name = "battery-electric" if "electric" in drive else "fuel-cell"
    zero = Uncertain(0.0, None, at("conversion_cost"), currency)
    return ClassOption(**{
        **base.__dict__, "converts": True, "drive": name,
        "derate": 0.0, "efficiency_offset": 0.0, "conversion_cost": zero,
        "upkeep_change_per_year": _uncertain(raw("upkeep_change_per_year", 0.0),
                                             _money_per_year, at("upkeep_change_per_year"),
                                             None, unit=(f"{currency}/year", 1.0)),
        "downtime_days": _uncertain(raw("downtime_days", 0.0), _days, at("downtime_days"),
                                    0.0, unit=("day", 1.0)),
        "tank_inspection_interval": 0, "tank_inspection_cost": replace(
            zero, path=at("tank_inspection_cost")),
        "n2o_per_m": 0.0, "engine_out_nox": None, "methane_slip": 0.0,
        "aftertreatment": DEVICE_PRESETS["none"], "varied": (), "conversion": "none",
        "derived_map": False, "defaults": tuple(defaults), "notices": (),
        "derate_against": None, "pilot_fuel": None, **_phasing_and_grant(r, c, class_ids),
        "new_vehicle": _new_vehicle(r, c, class_ids, currency), **drive})


#: Largest hydrogen production CO2e [kg CO2e/kg H2] (grid electrolysis on coal power is about
#: 55 x 1 kg/kWh; from memory).
MAX_H2_CO2E = 100.0


def _fuel_cell_option(r: _Reader, c: FleetClass, class_ids: set[str], base: ClassOption,
                      currency: str) -> ClassOption:
    """A fuel-cell drive on a class, checked: the motor (as a battery-electric drive's), the
    fuel-cell system, its buffer battery, the hydrogen tank's pressure, the hydrogen's price
    and the CO2e of its production (a pathway of ``models/fuelcell.py`` or a figure)."""
    def at(key: str) -> str:
        return _class_at(r, key, class_ids, c.id)

    def raw(key: str, default: Any) -> Any:
        return _per_class(r, key, c.id, class_ids, default)

    def share(key: str, default: float, low: float = 0.0) -> float:
        return _fixed(raw(key, default), "[]", at(key), None, low, 1.0)

    defaults: list[tuple[str, str, str, str]] = []
    source = "models/fuelcell.py default (docs/fuel-cell.md)"
    _defaults(raw, defaults, (
        ("rated_cell_voltage", "cell voltage at rated power", "V", 1.0),
        ("fuel_utilisation", "fuel utilisation", "%", 100),
        ("bop_base_share", "balance of plant, base", "% of rated", 100),
        ("bop_load_share", "balance of plant, with load", "% of gross", 100)),
        FuelCellSystem.__dataclass_fields__, source)
    if raw("fuel_cell_specific_power", None) is None:
        defaults.append(("fuel-cell system specific power", "650", "W/kg", source))
    def quantity(key: str, default: Any, dimension: str, low: float, high: float,
                 unit: tuple[str, float]) -> float:
        value = _fixed(raw(key, default), dimension, at(key))
        _check_range(value, at(key), low, high, unit)
        return value

    with _model_keys(at, r.path, {"round_trip_efficiency": "buffer_round_trip_efficiency"}):
        drive = _motor(raw, at, defaults)
        system = FuelCellSystem(
            rated_power=quantity("stack_power", ..., "[power]", 1e3, 1e7, ("kW", 1e-3)),
            rated_cell_voltage=_fixed(raw("rated_cell_voltage", 0.6), "[]",
                                      at("rated_cell_voltage"), None, 0.3, 1.2),
            fuel_utilisation=share("fuel_utilisation", 0.95),
            bop_base_share=share("bop_base_share", 0.01),
            bop_load_share=share("bop_load_share", 0.08),
            specific_power=quantity("fuel_cell_specific_power", "650 W/kg", "W/kg", 10.0, 1e4,
                                    ("W/kg", 1.0)))
        buffer = BufferBattery(
            capacity=quantity("buffer_capacity", "2 kWh", "[energy]", 0.01 * J_PER_KWH,
                              1e3 * J_PER_KWH, ("kWh", 1 / J_PER_KWH)),
            power=quantity("buffer_power", f"{drive.motor_power / 1e3:g} kW", "[power]", 100.0,
                           1e7, ("kW", 1e-3)),
            round_trip_efficiency=share("buffer_round_trip_efficiency", 0.90))
    for key, label, value, unit in (("buffer_capacity", "buffer battery capacity", "2", "kWh"),
                                    ("buffer_power", "buffer battery power",
                                     f"{drive.motor_power / 1e3:g}", "kW (the motor's)"),
                                    ("buffer_round_trip_efficiency",
                                     "buffer battery round trip", "90", "%"),
                                    ("tank_pressure", "hydrogen tank pressure", "700", "bar")):
        if raw(key, None) is None:
            defaults.append((label, value, unit, source if key != "buffer_power" else
                             "common practice, no source: the buffer can feed the motor"))
    hydrogen = load_fuel("hydrogen")
    price_raw = raw("hydrogen_price", ...)
    if price_raw is ...:
        raise InputError(at("hydrogen_price"), 'is required: the price of hydrogen at the '
                         'pump, e.g. hydrogen_price = "9.5 per kg"')
    price, price_value = _fuel_price(price_raw, at("hydrogen_price"), currency, hydrogen)
    co2e, pathway, co2e_source = _hydrogen_co2e(raw, at, defaults)
    fuel_cell = FuelCellInputs(
        drive=drive, system=system, buffer=buffer, **_range_mass(raw, at, c),
        tank_pressure=quantity("tank_pressure", "700 bar", "[pressure]", 100e5, 700e5,
                               ("bar", 1e-5)),
        hydrogen=hydrogen, price=price, price_value=price_value,
        escalation=_uncertain(raw("hydrogen_escalation", 0.0), _fraction,
                              at("hydrogen_escalation"), -0.5, 1.0, PERCENT),
        pathway=pathway, co2e_per_kg=co2e, co2e_source=co2e_source)
    return _new_drive(r, c, class_ids, base, currency, defaults, fuel_cell=fuel_cell)


def _hydrogen_co2e(raw: Callable[[str, Any], Any], at: Callable[[str], str],
                   defaults: list[tuple[str, str, str, str]]) -> tuple[Uncertain, str, str]:
    """CO2e of producing the hydrogen [kg CO2e/kg H2], its pathway id and source: a pathway of
    :data:`workbench.models.fuelcell.HYDROGEN_PATHWAYS` (grey by default, noted), or a
    figure given as ``hydrogen_co2e`` with ``hydrogen_co2e_source``."""
    given = raw("hydrogen_co2e", None)
    named = raw("hydrogen_pathway", None)
    if given is not None and named is not None:
        raise InputError(at("hydrogen_co2e"), "give hydrogen_pathway or hydrogen_co2e, not both")
    if given is not None:
        def kg_per_kg(value: Any, w: str) -> float:
            return read_number(value, w, what="a number of kg CO2e per kg of hydrogen")

        co2e = _uncertain(given, kg_per_kg, at("hydrogen_co2e"), 0.0, MAX_H2_CO2E,
                          unit=("kg CO2e/kg H2", 1.0))
        source = raw("hydrogen_co2e_source", None)
        if source is None:
            raise InputError(at("hydrogen_co2e_source"), "is required with hydrogen_co2e: "
                             "where the figure comes from (a certificate, a supplier)")
        return co2e, "study file", _fixed_text(source, at("hydrogen_co2e_source"))
    if raw("hydrogen_co2e_source", None) is not None:
        raise InputError(at("hydrogen_co2e_source"), "belongs to hydrogen_co2e; give the "
                         "figure or leave the source out")
    pathway_id = _choice(named if named is not None else "grey-smr", at("hydrogen_pathway"),
                         HYDROGEN_PATHWAYS, "hydrogen pathway")
    pathway = HYDROGEN_PATHWAYS[pathway_id]
    if named is None:
        defaults.append(("hydrogen pathway", pathway_id, f"{pathway.co2e_per_kg:g} kg CO2e/kg",
                         "grey unless the study names one; " + pathway.source))
    return (Uncertain(pathway.co2e_per_kg, None, at("hydrogen_pathway"), "kg CO2e/kg H2"),
            pathway_id, pathway.source)


def _fixed_text(value: Any, where: str) -> str:
    if not isinstance(value, str) or not value.strip():
        raise InputError(where, f"must be a non-empty text, got {_short(value)}")
    return value


def _tariff(raw: Any, shares_raw: Any, where: str, where_shares: str, currency: str
            ) -> tuple[tuple[str, Uncertain, float], ...]:
    """A flat electricity price (a price or a distribution of one) or time-of-use bands
    (a table of band = price) with each band's share of the charging energy."""
    if raw is ...:
        raise InputError(where, 'is required: the electricity price, e.g. "0.21 per kWh", or '
                         'bands { peak = "0.32 per kWh", night = "0.14 per kWh" } with '
                         "charging_shares")

    def price(value: Any, w: str) -> Uncertain:
        def parse(v: Any, w2: str) -> float:
            p = parse_price(v, where=w2, currency=currency)
            if p.basis != "energy":
                raise InputError(w2, f"{_short(v)} is not per energy; price electricity per "
                                 'kWh, e.g. "0.21 per kWh"')
            return p.value
        return _uncertain(value, parse, w, 0.0, unit=(f"{currency}/kWh", J_PER_KWH))

    bands = isinstance(raw, Mapping) and "kind" not in raw
    if not bands:
        if shares_raw is not None:
            raise InputError(where_shares, "belongs to time-of-use bands: give "
                             "electricity_price as a table of band = price, or leave "
                             "charging_shares out")
        return (("flat", price(raw, where), 1.0),)
    if not raw:
        raise InputError(where, "needs at least one band = price")
    if not isinstance(shares_raw, Mapping) or set(shares_raw) != set(raw):
        raise InputError(where_shares, f"must give each band of electricity_price "
                         f"({', '.join(raw)}) its share of the charging energy, e.g. "
                         f"charging_shares = {{ {next(iter(raw))} = 1.0 }}")
    out = []
    for name, value in sorted(raw.items()):  # by name: the same tariff in any key order
        share = _fixed(shares_raw[name], "[]", f"{where_shares}.{name}", None, 0.0, 1.0)
        out.append((str(name), price(value, f"{where}.{name}"), share))
    try:
        tariff_price([u.nominal for _, u, _ in out], [s for _, _, s in out])
    except InputError as exc:
        raise InputError(where_shares, exc.message) from None
    return tuple(out)


#: Largest grid CO2e intensity [g/kWh] (a coal plant is about 1000 g/kWh, from memory).
MAX_GRID_G_PER_KWH = 2000.0


def _grid_co2e(raw: Any, where: str) -> tuple[tuple[int, float], ...]:
    """Grid CO2e intensity [g/kWh, read as kg/J]: one number, or a table of calendar year =
    number (linear between the years, held beyond the first and last)."""
    if raw is ...:
        raise InputError(where, "is required: the grid's CO2e per kWh drawn, e.g. "
                         'grid_co2e = 420 or { "2027" = 420, "2035" = 180 } (g/kWh)')
    def intensity(value: Any, w: str) -> float:
        g = read_number(value, w, what="a number of g CO2e per kWh")
        _check_range(g, w, 0.0, MAX_GRID_G_PER_KWH, ("g/kWh", 1.0))
        return g / 3.6e9  # [kg/J]

    if not isinstance(raw, Mapping):
        return ((0, intensity(raw, where)),)
    if not raw:
        raise InputError(where, 'needs at least one year = g/kWh, e.g. { "2027" = 420 }')
    out = []
    for key, value in raw.items():
        w = f"{where}.{key}"
        if not re.fullmatch(r"\d{4}", str(key)):
            raise InputError(w, 'name a calendar year, e.g. "2030" = 300')
        out.append((int(key), intensity(value, w)))
    return tuple(sorted(out))


def _unchanged(base: ClassOption) -> ClassOption:
    return ClassOption(**{**base.__dict__, "converts": False})


def _class_option(r: _Reader, c: FleetClass, class_ids: set[str], base: ClassOption | None,
                  base_dir: Path, currency: str) -> ClassOption:
    is_baseline = base is None

    def at(key: str) -> str:
        return _class_at(r, key, class_ids, c.id)

    def fixed(key: str, default: str | float, low: float, high: float) -> float:
        return _fixed(_per_class(r, key, c.id, class_ids, default), "[]", at(key), None, low,
                      high)

    varied: list[tuple[str, Uncertain]] = []

    def varying(key: str, default: str, low: float, high: float) -> float:
        u = _uncertain(_per_class(r, key, c.id, class_ids, default), _fraction, at(key), low,
                       high, PERCENT)
        if u.dist is not None and not u.dist.spread_is_zero:
            varied.append((key, u))
        return u.nominal

    fuel = _fuel(_per_class(r, "fuel", c.id, class_ids, ...), at("fuel"), base_dir)

    def given(key: str) -> bool:
        return _per_class(r, key, c.id, class_ids, None) is not None

    defaults: list[tuple[str, str, str, str]] = []
    if is_baseline and given("conversion"):
        raise InputError(at("conversion"), "the baseline converts nothing; name the conversion "
                         "on the candidates")
    map_regime = fuel_regime(fuel) if base is None else base.engine
    if given("conversion"):
        kind = conversion_kind(_choice(_per_class(r, "conversion", c.id, class_ids, None),
                                       at("conversion"), KINDS, "conversion kind"),
                               where=at("conversion"))
    else:
        kind = KINDS[infer_kind(fuel, map_regime, None if base is None else base.fuel)]
        if kind.name != "none":
            defaults.append(("conversion", kind.name, "", f"inferred: {fuel.id} on a "
                             f"{map_regime} map ({kind.summary})"))
    pilot = _pilot_fuel(r, c, class_ids, kind.name, fuel, base, base_dir, at, defaults)
    default_engine = kind.nox_engine or fuel_regime(fuel)
    engine = _choice(_per_class(r, "engine", c.id, class_ids, default_engine), at("engine"),
                     ENGINE_PRESETS, "engine setting")
    if not given("engine") and not is_baseline:
        defaults.append(("engine setting (NOx regime)", engine, "",
                         f"conversion {kind.name}" if kind.nox_engine else "by fuel"))
    map_raw = _per_class(r, "engine_map", c.id, class_ids, None)
    engine_map, map_data = (c.engine_map, c.map_data) if map_raw is None else _read_data_file(
        map_raw, at("engine_map"), "map", base_dir, read_map)
    zero_money = 0.0

    def uq(key: str, parse: Callable[[Any, str], float], unit: str,
           low: float | None = 0.0) -> Uncertain:
        value = _per_class(r, key, c.id, class_ids, zero_money)
        if is_baseline and key in ("conversion_cost", "downtime_days") and value != zero_money:
            raise InputError(at(key), "the baseline converts nothing; leave it out")
        return _uncertain(value, parse, at(key), low, unit=(unit, 1.0))

    nox_raw = _per_class(r, "engine_out_nox", c.id, class_ids, None)
    lam_default, slip_default, device_default, derate_default = _kind_values(kind, engine,
                                                                             fuel)
    base_ppm = (base is not None and base.engine == engine and base.engine_out_nox is not None
                and base.engine_out_nox.unit == "ppm")
    if not given("lambda_overall") and ("ppm" in str(nox_raw) or (nox_raw is None and base_ppm)):
        defaults.append(("lambda", f"{lam_default:g}", "-", f"{engine} default "
                         "(Heywood 1988 ch. 1 and 11, from memory)"))
    if slip_default and not given("methane_slip"):
        defaults.append(("methane slip", f"{slip_default:.2%}", "of the fuel's methane",
                         kind.sources.get("methane_slip", f"{engine} default (models/"
                                          "conversion.py REGIME_SLIP)")))
    derived = kind.name in ("dedicated-si", "dual-fuel-ci") and map_raw is None
    air_derate = kind.derate is None and not given("derate")
    if derate_default and not given("derate"):
        defaults.append(("derate", f"{derate_default * 100:.1f}", "%", kind.sources["derate"]))
    if kind.efficiency_offset and not given("efficiency_offset"):
        defaults.append(("efficiency offset", f"{kind.efficiency_offset * 100:+g}", "points",
                         kind.sources["efficiency_offset"]))
    if derived:
        defaults.append(("engine map", f"{c.engine_map.stem} converted", "",
                         f"{kind.name}: {kind.source}"))
    at_raw = _per_class(r, "aftertreatment", c.id, class_ids, None)
    if at_raw is None or (isinstance(at_raw, Mapping) and "preset" not in at_raw):
        d = DEVICE_PRESETS[device_default]
        defaults.append(("aftertreatment", device_default, "", f"default device of {engine}"
                         + (f" (conversion {kind.name})" if kind.aftertreatment else "")))
        if d.efficiency_new > 0:
            given_at = set(at_raw or ())
            for key, label in (("efficiency_new", "catalyst efficiency new"),
                               ("efficiency_aged", "catalyst efficiency aged")):
                if key not in given_at:
                    defaults.append((label, f"{getattr(d, key):.0%}", "",
                                     "device preset (models/aftertreatment.py DEVICE_PRESETS: "
                                     "Euro 6 / Euro VI limits met new and at durability "
                                     "distance, from memory)"))
        at_raw = {"preset": device_default, **(at_raw or {})}
    mismatch = None if map_raw is not None else regime_mismatch(fuel, kind, map_regime)
    return ClassOption(
        **_phasing_and_grant(r, c, class_ids),
        converts=not is_baseline,
        fuel=fuel,
        engine=engine,
        engine_map=engine_map,
        map_data=map_data,
        derate=varying("derate", f"{derate_default:.9%}", 0.0, 0.9),
        efficiency_offset=varying("efficiency_offset", f"{kind.efficiency_offset:.9%}", -0.3,
                                  0.3),
        conversion_cost=uq("conversion_cost", _money, currency),
        upkeep_change_per_year=uq("upkeep_change_per_year", _money_per_year,
                                  f"{currency}/year", low=None),
        downtime_days=uq("downtime_days", _days, "day"),
        tank_inspection_interval=_whole(_per_class(r, "tank_inspection_interval_years", c.id,
                                                   class_ids, 0),
                                        at("tank_inspection_interval_years")),
        tank_inspection_cost=uq("tank_inspection_cost", _money, currency),
        n2o_per_m=_fixed(_per_class(r, "n2o", c.id, class_ids, "0 g/km"),
                         "[mass] / [length]", at("n2o"), None, 0.0, 1e-4),
        engine_out_nox=None if nox_raw is None else _engine_out(nox_raw, at("engine_out_nox")),
        lambda_overall=fixed("lambda_overall", lam_default, 0.5, 5.0),
        methane_slip=varying("methane_slip", f"{slip_default:.6%}", 0.0, 0.2),
        aftertreatment=_aftertreatment(at_raw, at("aftertreatment"), varied, currency),
        varied=tuple(varied),
        conversion=kind.name,
        derived_map=derived,
        map_regime=map_regime,
        defaults=tuple(defaults),
        notices=() if mismatch is None else (mismatch,),
        derate_against=(base.fuel if base is not None else fuel) if air_derate else None,
        reference_fuel=load_fuel(DEFAULT_REFERENCE_FUEL[engine]),
        pilot_fuel=pilot,
        substitution=_substitution(_per_class(r, "gas_substitution", c.id, class_ids, None),
                                   at("gas_substitution"), kind.name),
    )


def _pilot_fuel(r: _Reader, c: FleetClass, class_ids: set[str], kind: str, fuel: Fuel,
                base: ClassOption | None, base_dir: Path, at: Callable[[str], str],
                defaults: list[tuple[str, str, str, str]]) -> Fuel | None:
    """The pilot fuel of a dual-fuel option on a class (None for any other kind), checked:
    the option's fuel a gas, the pilot a compression-ignition fuel (the baseline's when not
    named, added to ``defaults``)."""
    raw = _per_class(r, "pilot_fuel", c.id, class_ids, None)
    if kind != "dual-fuel-ci":
        if raw is not None:
            raise InputError(at("pilot_fuel"), 'a pilot fuel belongs to conversion = '
                             '"dual-fuel-ci"; name that conversion or leave pilot_fuel out')
        return None
    if not fuel.is_gas:
        raise InputError(at("fuel"), f"{fuel.id} is a liquid; a dual-fuel diesel burns a gas "
                         "(natural gas, LPG) with its diesel pilot: name the gas as fuel")
    if raw is None:
        assert base is not None  # the baseline names no conversion
        pilot = base.fuel
        defaults.append(("pilot fuel", pilot.id, "", "the fuel the class burns today "
                         "(baseline); name pilot_fuel to change it"))
    else:
        pilot = _fuel(raw, at("pilot_fuel"), base_dir)
    if fuel_regime(pilot) != "compression-ignition":
        where = at("pilot_fuel") if raw is not None else at("conversion")
        raise InputError(where, f"the pilot {pilot.id} does not ignite by compression; a "
                         'dual-fuel engine needs a diesel-like pilot: pilot_fuel = "diesel"')
    return pilot


#: The keys of a ``gas_substitution`` table and the curve's own values.
_SUBSTITUTION_KEYS = {"share_max": DEFAULT_SUBSTITUTION.share_max,
                      "load_low": DEFAULT_SUBSTITUTION.load_low,
                      "load_high": DEFAULT_SUBSTITUTION.load_high}


def _substitution(raw: Any, where: str, kind: str) -> Substitution:
    """A dual-fuel option's ``gas_substitution`` table, checked (the kind's curve if absent)."""
    if raw is None:
        return DEFAULT_SUBSTITUTION
    if kind != "dual-fuel-ci":
        raise InputError(where, 'a gas substitution curve belongs to conversion = '
                         '"dual-fuel-ci"; name that conversion or leave gas_substitution out')
    example = 'gas_substitution = {share_max = "60 %", load_low = "20 %", load_high = "60 %"}'
    if not isinstance(raw, Mapping) or not raw:
        raise InputError(where, f"give a table, e.g. {example}")
    unknown = sorted(set(raw) - set(_SUBSTITUTION_KEYS))
    if unknown:
        raise InputError(f"{where}.{unknown[0]}",
                         f"unknown key; use {', '.join(_SUBSTITUTION_KEYS)} ({example})")
    values = {key: _fixed(raw.get(key, default), "[]", f"{where}.{key}", None, 0.0, 1.0)
              for key, default in _SUBSTITUTION_KEYS.items()}
    try:
        return Substitution(**values)
    except InputError as exc:
        raise InputError(f"{where}.{exc.where}", exc.message) from None


def _choice(value: Any, where: str, choices: Iterable[str], what: str) -> str:
    """One of ``choices`` (a text; a list or a table where a name is due is refused)."""
    names = sorted(choices)
    if not isinstance(value, str) or value not in names:
        raise InputError(where, f"unknown {what} {_short(value)}; use one of {', '.join(names)}")
    return value


def _kind_values(kind: ConversionKind, engine: str, fuel: Fuel
                 ) -> tuple[float, float, str, float]:
    """Lambda [-], methane slip [-], device and derate [-] a conversion implies for a class.

    The kind's own values hold while the engine setting is the kind's; a setting the study
    names otherwise takes that setting's defaults. A fuel without methane slips none. A kind
    whose derate follows from the fuels (``bi-fuel-si``) gives 0 here: the run works it out
    (``ClassOption.derate_against``), so reading a study runs no chemistry.
    """
    own = kind.nox_engine in (None, engine)
    lam = kind.lambda_overall if own and kind.lambda_overall else REGIME_LAMBDA[engine]
    slip = kind.methane_slip if own and kind.name != "none" else REGIME_SLIP[engine]
    if fuel.mole_fractions.get("CH4", 0.0) == 0.0:
        slip = 0.0
    device = kind.aftertreatment if own and kind.aftertreatment else REGIME_DEVICE[engine]
    return lam, slip, device, kind.derate or 0.0


def _whole(value: Any, where: str) -> int:
    if isinstance(value, bool) or not isinstance(value, int) or not 0 <= value <= MAX_YEARS:
        raise InputError(where, f"must be a whole number of years from 0 (none) to {MAX_YEARS}; "
                         f"got {_short(value)}")
    return value


# ----------------------------------------------------------------------------- programme

#: Most money a grant or a station's unit cost may be [currency] (a guard against a typo).
MAX_MONEY = 1e15


def _phasing_and_grant(r: _Reader, c: FleetClass, class_ids: set[str]) -> dict[str, Any]:
    """A class option's ``phasing``, ``grant_per_vehicle`` and ``grant_share`` (any drive)."""
    grant, grant_share = _grant(_per_class(r, "grant", c.id, class_ids, 0),
                                _class_at(r, "grant", class_ids, c.id))
    raw = _per_class(r, "phasing", c.id, class_ids, None)
    return {"phasing": None if raw is None else _phasing(
                raw, _class_at(r, "phasing", class_ids, c.id), c),
            "grant_per_vehicle": grant, "grant_share": grant_share}


def _grant(raw: Any, where: str) -> tuple[float, float]:
    """A grant as (money, share): a sum (``500``, ``"500 KBD"``) or a share (``"30 %"``)."""
    if isinstance(raw, Mapping):
        raise InputError(where, "must be a sum (500) or a share of the capital (\"30 %\"); "
                         "a grant cannot carry a distribution")
    if isinstance(raw, str) and raw.strip().endswith("%"):
        share = _fraction(raw, where)
        _check_range(share, where, 0.0, 1.0, PERCENT)
        return 0.0, share
    money = _quantity(raw, "[currency]", where, None)
    _check_range(money, where, 0.0, MAX_MONEY)
    return money, 0.0


def _phasing(raw: Any, where: str, c: FleetClass) -> tuple[float, ...]:
    """Shares of the class converted in each year from year 0: shares adding up to 1 or
    whole counts adding up to the class's vehicles, at most one a year of its life."""
    if not isinstance(raw, list) or not raw or not all(
            isinstance(x, int | float) and not isinstance(x, bool) for x in raw):
        raise InputError(where, "must be a list of shares a year from year 0, e.g. [0.5, 0.5], "
                         f"or of vehicle counts adding up to {c.count}, got {_short(raw)}")
    values = [float(x) for x in raw]
    if any(not math.isfinite(x) or x < 0 for x in values):
        raise InputError(where, f"shares and counts must be 0 or more, got {_short(raw)}")
    total = sum(values)
    counts = all(isinstance(x, int) for x in raw)
    if counts and total == c.count:
        shares = [x / c.count for x in values]
    elif abs(total - 1.0) <= 1e-9:
        shares = [x / total for x in values]
    else:
        what = f"counts add up to {total:g}, not the class's {c.count} vehicles" if counts \
            else f"shares add up to {total:g}, not 1"
        raise InputError(where, f"{what}; give shares adding up to 1 or counts adding up to "
                         f"{c.count}")
    if len(shares) > c.remaining_life_years:
        raise InputError(where, f"{len(shares)} years of conversions, but the class runs "
                         f"{c.remaining_life_years} more years; convert within its life")
    return tuple(shares)


def _check_phasing(inputs: StudyInputs) -> None:
    """Every phased conversion ends before the horizon (each cohort runs a year at least)."""
    h = inputs.horizon_years
    for i, o in enumerate(inputs.candidates):
        for cid, co in o.per_class.items():
            if co.converts and co.phasing is not None and len(co.phasing) > h:
                raise InputError(f"candidates[{i}].phasing", f"{len(co.phasing)} years of "
                                 f"conversions on {cid} within a {h}-year horizon; shorten "
                                 "the phasing or lengthen programme.horizon_years")


def _loan(raw: Any, where: str) -> LoanTerms:
    r = _Reader(raw, where)
    r.only(("share", "rate", "term_years"), "a loan")
    return LoanTerms(
        share=r.uncertain("share", _fraction, low=0.0, high=1.0, unit=PERCENT),
        rate=r.uncertain("rate", _fraction, low=0.0, high=1.0, unit=PERCENT),
        term_years=r.integer("term_years", low=1, high=MAX_YEARS))


#: Keys of a station, by where they apply.
_STATION_DEPOT = ("compressor_cost", "storage_cost", "dispenser_cost", "upkeep_share")
_STATION_OFF = ("detour", "hour_cost")


def _station(raw: Any, where: str, classes: tuple[FleetClass, ...],
             per_class: Mapping[str, ClassOption], converts: Iterable[str],
             currency: str) -> Station:
    """A candidate's refuelling station: one fuel (the gas its converted classes run on)."""
    r = _Reader(raw, where)
    r.only(("location", "window", "operating_days", "peak_factor", "storage_pressure",
            "fill_pressure", "hose_flow", "handling", "autonomy_days", "fill_limit",
            *_STATION_DEPOT, *_STATION_OFF), "a station")
    served = [c.id for c in classes if c.id in set(converts) and per_class[c.id].converts]
    drives = {per_class[cid].drive for cid in served} - {"combustion"}
    if drives:
        raise InputError(where, f"sizes gas stations for engines; a {' or '.join(sorted(drives))}"
                         " drive's chargers or hydrogen station are not sized here: give a "
                         "hydrogen station's cost as programme_capital and its upkeep as "
                         "programme_upkeep_per_year, and leave station out")
    fuels = {per_class[cid].fuel.id: per_class[cid].fuel for cid in served}
    if len(fuels) != 1:
        raise InputError(where, f"a station dispenses one fuel; the candidate's classes run on "
                         f"{', '.join(sorted(fuels)) or 'none'}: split it into candidates")
    fuel = next(iter(fuels.values()))
    spec = storage_spec(fuel)
    storage = spec.kind
    if storage not in STATION_KINDS:
        raise InputError(where, f"sizes compressed-gas (CNG) and liquefied-gas (LPG) stations; "
                         f"{fuel.id} is stored {storage}: leave station out")
    kind = STATION_KINDS[storage]
    if kind == "lpg" and fuel.liquid_density is None:
        raise InputError(where, f"{fuel.id} has no liquid density, which an LPG station's "
                         "tank needs; give liquid_density in its fuel file")
    location = _choice(r.raw("location", "depot"), r.at("location"), STATION_LOCATIONS,
                       "station location")
    for key in _STATION_DEPOT if location == "off-depot" else _STATION_OFF:
        if r.has(key):
            other = "depot" if location == "off-depot" else "off-depot"
            raise InputError(r.at(key), f'applies to location = "{other}" only; leave it out')
    vehicle_p = spec.pressure or 20e6

    def q(key: str, dimension: str, default: Any, unit: str, scale: float, low: float,
          high: float) -> float:
        """A station quantity checked in ``unit`` (errors say it), returned times ``scale``
        (in SI)."""
        value = r.quantity(key, dimension, default, unit=unit)
        _check_range(value, r.at(key), low, high, (unit, 1.0))
        return value * scale

    if kind == "cng":
        flow = q("hose_flow", "[mass] / [time]", "20 kg/min", "kg/min", 1 / 60, 0.01, 600.0)
    else:
        flow = q("hose_flow", "[length] ** 3 / [time]", "40 L/min", "L/min", 1e-3 / 60, 0.01,
                 6000.0)
    money = {"unit": (currency, 1.0)}
    station = Station(
        kind=kind, fuel=fuel, location=location,
        window=q("window", "[time]", "8 h", "hour", 3600.0, 1 / 60, 24.0),
        operating_days=r.quantity("operating_days", "[]", 365, low=1.0, high=366.0),
        peak_factor=r.quantity("peak_factor", "[]", 2.0, low=1.0, high=24.0),
        storage_pressure=q("storage_pressure", "[pressure]", "250 bar", "bar", 1e5, 1.0,
                           1000.0),
        fill_pressure=q("fill_pressure", "[pressure]", f"{vehicle_p / 1e5:g} bar", "bar", 1e5,
                        1.0, 1000.0),
        hose_flow=flow,
        handling=q("handling", "[time]", "5 min", "minute", 60.0, 0.0, 1440.0),
        autonomy_days=r.quantity("autonomy_days", "[]", 7, low=0.1, high=366.0),
        fill_limit=r.quantity("fill_limit", "[]", "85 %", low=0.1, high=1.0),
        compressor_cost=r.uncertain("compressor_cost", _money, 0.0, low=0.0, **money),
        storage_cost=r.uncertain("storage_cost", _money, 0.0, low=0.0, **money),
        dispenser_cost=r.uncertain("dispenser_cost", _money, 0.0, low=0.0, **money),
        upkeep_share=r.uncertain("upkeep_share", _fraction, 0.0, low=0.0, high=1.0,
                                 unit=PERCENT),
        detour=q("detour", "[time]", "0 min", "minute", 60.0, 0.0, 1440.0),
        hour_cost=r.uncertain("hour_cost", _money, 0.0, low=0.0,
                              unit=(f"{currency}/h", 1.0)),
        classes=tuple(served))
    if kind == "cng" and not station.storage_pressure > station.fill_pressure:
        raise InputError(r.at("storage_pressure"), "must be above fill_pressure (the buffer "
                         "fills the vehicles' cylinders by pressure difference)")
    return station


def _fuel(raw: Any, where: str, base_dir: Path) -> Fuel:
    if raw is ...:
        raise InputError(where, "is required: a library fuel id, a fuel .toml path or a blend "
                         "table")
    if isinstance(raw, str) and (raw.endswith(".toml") or "/" in raw or "\\" in raw):
        return _read_data_file(raw, where, "fuel", base_dir, load_fuel)[1]
    if isinstance(raw, str):
        try:
            return load_fuel(raw)
        except InputError as exc:
            raise InputError(where, exc.message) from None
    if isinstance(raw, Mapping):
        r = _Reader(raw, where)
        fid = r.text("id")
        basis = r.raw("basis", "mole")
        if basis not in BASES:
            raise InputError(r.at("basis"), f"must be one of {', '.join(BASES)}")
        parts = r.raw("parts")
        if not isinstance(parts, Mapping) or not parts:
            raise InputError(r.at("parts"), "must be a table of fuel = fraction")
        for k, v in parts.items():
            if isinstance(v, bool) or not isinstance(v, int | float):
                raise InputError(f"{r.at('parts')}.{k}", f"must be a number, got {v!r}")
        base = load_fuel(next(iter(parts))) if parts else None
        fuel = blend(dict(parts), basis, id=fid, name=str(raw.get("name", fid)),
                     where=r.at("parts"))
        return Fuel(**{**fuel.__dict__, "storage": base.storage if base else None})
    raise InputError(where, f"must be a fuel id or a blend table, got {raw!r}")


def _engine_out(raw: Any, where: str) -> EngineOutNOx:
    if not isinstance(raw, str):
        raise InputError(where, 'write engine-out NOx with its unit: "1.2 g/km", "6 g/kWh" or '
                         '"900 ppm"')
    m = re.fullmatch(r"\s*([-+]?[0-9.eE+-]+)\s*(g/km|g/kWh|ppm)\s*", raw)
    if m is None:
        raise InputError(where, f'{_short(raw)}: use a number and one of g/km, g/kWh, ppm')
    try:
        value = float(m.group(1))
    except ValueError:
        raise InputError(where, f"{m.group(1)!r} is not a number") from None
    limit = MAX_ENGINE_OUT_NOX[m.group(2)]
    if not value <= limit:
        raise InputError(where, f"{raw.strip()} is beyond any engine; at most {limit:g} "
                         f"{m.group(2)}")
    try:
        return EngineOutNOx(value, m.group(2), source=f"study file ({where})")
    except InputError as exc:
        raise InputError(where, exc.message) from None


_AFTERTREATMENT_KEYS = {
    "preset", "efficiency_new", "efficiency_aged", "life", "policy", "replacement_interval",
    "replacement_threshold", "parts_cost", "labour_cost", "reductant_price",
}


def _aftertreatment(raw: Any, where: str, varied: list[tuple[str, Uncertain]],
                    currency: str) -> Aftertreatment:
    """The device at its nominal values; inputs with a distribution are added to ``varied``."""
    r = _Reader(raw, where)
    r.only(_AFTERTREATMENT_KEYS, "aftertreatment")
    preset = _choice(r.raw("preset", "none"), r.at("preset"), DEVICE_PRESETS, "device")
    device = DEVICE_PRESETS[preset]
    changes: dict[str, Any] = {}
    age_bases: set[str] = set()

    def age(raw_age: Any, w: str) -> float:
        value, basis = _age(raw_age, w)
        age_bases.update({basis} - {None})
        return value

    parsers: dict[str, tuple[Callable[[Any, str], float], tuple[str, float]]] = {
        "efficiency_new": (_fraction, PERCENT),
        "efficiency_aged": (_fraction, PERCENT),
        "replacement_threshold": (_fraction, PERCENT),
        "life": (age, ("", 1.0)),
        "replacement_interval": (age, ("", 1.0)),
        "parts_cost": (_money, (currency, 1.0)),
        "labour_cost": (_money, (currency, 1.0)),
        "reductant_price": (_per_mass("kg"), (f"{currency}/kg", 1.0)),
    }
    for key, (parse, unit) in parsers.items():
        if r.has(key):
            high = 1.0 if unit == PERCENT else None
            u = r.uncertain(key, parse, low=0.0, high=high, unit=unit)
            changes[key] = u.nominal
            if key in ("life", "replacement_interval"):  # shown in the unit it was written in
                u = replace(u, unit="km", scale=1e-3) if "distance" in age_bases else replace(
                    u, unit="month", scale=1.0)
            if u.dist is not None and not u.dist.spread_is_zero:
                varied.append((f"aftertreatment.{key}", u))
    if len(age_bases) > 1:
        raise InputError(where, "give life and replacement_interval in the same kind of unit "
                         "(both months or both km)")
    if age_bases:
        changes["age_basis"] = age_bases.pop()
    if r.has("policy"):
        changes["policy"] = _choice(r.raw("policy"), r.at("policy"), ("interval", "threshold"),
                                    "policy")
    try:
        return Aftertreatment(**{**device.__dict__, **changes})
    except InputError as exc:
        raise InputError(f"{where}.{exc.where}", exc.message) from None


def _age(raw: Any, where: str) -> tuple[float, str | None]:
    """An age as (value, basis): months or metres, or (inf, None) for "never"."""
    if raw == "never":
        return math.inf, None
    if not isinstance(raw, str):
        raise InputError(where, 'write an age with its unit: "150000 km", "24 month" or "never"')
    try:
        return parse_quantity(raw, "[time]", where=where, unit="month"), "months"
    except InputError:
        return parse_quantity(raw, "[length]", where=where), "distance"


def _prices(r: _Reader, fuels: Mapping[str, Fuel], currency: str,
            pilots: Mapping[str, str], *, required: bool = True
            ) -> dict[str, tuple[Price, Uncertain]]:
    """Prices (or, not ``required``, fuel taxes) by fuel id, each on a basis fitting its fuel."""
    out = {}
    for fid in r.table:
        if fid not in fuels:
            raise InputError(r.at(fid), f"names no fuel of the study ({', '.join(sorted(fuels))})")
    for fid in fuels:
        where = r.at(fid)
        raw = r.raw(fid, None)
        if raw is None and not required:
            continue
        if raw is None:
            role = f" ({pilots[fid]})" if fid in pilots else ""
            raise InputError(where, f'is required: the price of {fid}{role}, e.g. '
                             f'{fid} = "1.45 per L" in [prices]')
        out[fid] = _fuel_price(raw, where, currency, fuels[fid])
    return out


def _fuel_price(raw: Any, where: str, currency: str, fuel: Fuel) -> tuple[Price, Uncertain]:
    """A fuel's price (a price or a distribution of prices on one basis), its basis checked
    against the fuel; the value shown in the unit the study wrote."""
    bases: list[Price] = []

    def parse(value: Any, w: str) -> float:
        price = parse_price(value, where=w, currency=currency)
        if bases and price.basis != bases[0].basis:
            raise InputError(w, "every value of one price's distribution needs the same "
                             "basis (all per L, or all per kg …)")
        bases.append(price)
        return price.value

    unc = _uncertain(raw, parse, where, 0.0)
    check_price_basis(bases[0], liquid=sold_as_liquid(fuel),
                      gas=fuel.is_gas)  # the basis must fit the fuel
    if bases[0].basis == "energy" and not fuel.is_gas and not any(
            HEATING_VALUE_MARK.search(b.text) for b in bases):
        raise InputError(where, f"{bases[0].text!r} prices a liquid fuel per energy; "
                         "add the heating value (LHV or HHV) so it cannot be an electricity "
                         "tariff by mistake, or price it per L or per kg")
    m = re.match(r"\s*(?:[A-Z]{3}\s*)?([-+0-9.eE]+)\s*(?:[A-Z]{3}\s*)?(.*)$", bases[0].text)
    amount = float(m.group(1)) if m else 0.0
    if m and bases[0].value > 0 and amount > 0:
        unc = replace(unc, unit=m.group(2).strip(), scale=amount / bases[0].value)
    return bases[0], unc


def sold_as_liquid(fuel: Fuel) -> bool:
    """True when the fuel can be priced by liquid volume: stored as a liquid (or no storage
    given) and with a liquid density."""
    return fuel.liquid_density is not None and (
        fuel.storage is None or fuel.storage.kind in ("liquid", "liquefied"))


def _upstream(r: _Reader, fuels: Mapping[str, Fuel]) -> tuple[dict[str, Uncertain],
                                                               dict[str, str]]:
    out, sources = {}, {}
    for fid in r.table:
        if fid not in fuels:
            raise InputError(r.at(fid), "names no fuel of the study")
    for fid in fuels:
        if fid not in r.table:
            raise InputError(r.at(fid), "is required: well-to-tank CO2e of this fuel, "
                             '{ wtt_co2e_g_per_mj = 15.0, source = "…" }')
        sub = _Reader(r.table[fid], r.at(fid))
        sub.only(("wtt_co2e_g_per_mj", "source"), "an upstream entry")
        sources[fid] = sub.text("source")
        out[fid] = sub.uncertain("wtt_co2e_g_per_mj", _g_per_mj, low=0.0,
                                 high=MAX_WTT_G_PER_MJ * 1e-9, unit=("g/MJ", 1e9))
    return out, sources
