"""NOx aftertreatment over a fleet programme: conversion, ageing, replacement and reductant.

A candidate's NOx conversion device (three-way catalyst, urea SCR, or none) converts a
fraction of the engine-out NOx. That fraction falls with the device's age, measured in months
in service or in distance driven, by a documented exponential model or a user's table. The
device is replaced at a fixed interval or when its efficiency falls below a threshold; each
replacement costs parts and labour, and a reductant (urea solution for SCR) is used in
proportion to the NOx converted. Over the programme this gives tailpipe NOx month by month,
fleet tonnes per year, replacement count and cost, and the replacement interval that
minimises upkeep plus NOx damage cost.

Units inside are SI: distances [m], NOx masses [kg], emission factors [kg/m]; the programme
steps in months of constant use. Costs are in the study's currency.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace
from typing import Literal

import numpy as np
import pandas as pd
from numpy.typing import ArrayLike

from workbench.core.constants import M_NO2
from workbench.core.errors import InputError

AgeBasis = Literal["months", "distance"]
Policy = Literal["interval", "threshold"]

#: Molar mass of urea CO(NH2)2 [kg/kmol] (IUPAC atomic weights); M_NO2 is in core.constants.
M_UREA = 60.056
#: Urea mass fraction of AdBlue/DEF, ISO 22241-1 (32.5 %).
UREA_IN_DEF = 0.325
#: Urea solution per NOx converted [kg DEF / kg NOx as NO2]: standard SCR uses one NH3 per NO
#: (4 NH3 + 4 NO + O2 -> 4 N2 + 6 H2O) and one urea gives two NH3, so 0.5 M_urea / M_NO2
#: / 0.325 = 2.01. Real dosing adds a few per cent for slip (common practice, no source).
DEF_PER_NOX = 0.5 * M_UREA / M_NO2 / UREA_IN_DEF


@dataclass(frozen=True)
class Aftertreatment:
    """A NOx conversion device, how it ages, when it is replaced and what it costs.

    Attributes
    ----------
    name : str
        Label.
    efficiency_new : float
        NOx conversion efficiency of a new device [-], 0 to 1.
    efficiency_aged : float
        Efficiency the device tends to when fully aged or fouled [-], at most ``efficiency_new``.
    life : float
        Characteristic life: age over which the efficiency loss falls by 1/e, in months or [m].
    age_basis : {"months", "distance"}
        Whether age (``life``, ``replacement_interval``, ``ageing_table``) is in months in
        service or in distance driven [m].
    ageing_table : tuple of (float, float), optional
        User table of (age, efficiency); replaces the exponential model when given. Linear
        between rows, held flat beyond the ends.
    policy : {"interval", "threshold"}
        Replace at a fixed interval, or when efficiency falls below ``replacement_threshold``.
    replacement_interval : float
        Age at replacement for the ``"interval"`` policy (months or [m]); ``inf`` for never.
    replacement_threshold : float
        Efficiency below which the device is replaced (``"threshold"`` policy) [-].
    parts_cost, labour_cost : float
        Cost of one replacement per vehicle [currency].
    reductant_per_nox : float
        Reductant used per NOx converted [kg/kg NOx as NO2]; 0 for devices that need none.
    reductant_price : float
        Reductant price [currency/kg].

    Notes
    -----
    Exponential ageing: :math:`\\eta(a) = \\eta_{aged} + (\\eta_{new} - \\eta_{aged})
    e^{-a/L}`.
    """

    name: str
    efficiency_new: float
    efficiency_aged: float = 0.0
    life: float = math.inf
    age_basis: AgeBasis = "distance"
    ageing_table: tuple[tuple[float, float], ...] | None = None
    policy: Policy = "interval"
    replacement_interval: float = math.inf
    replacement_threshold: float = 0.0
    parts_cost: float = 0.0
    labour_cost: float = 0.0
    reductant_per_nox: float = 0.0
    reductant_price: float = 0.0

    def __post_init__(self) -> None:
        for field, lo, hi in (
            ("efficiency_new", 0.0, 1.0),
            ("efficiency_aged", 0.0, self.efficiency_new),
            ("replacement_threshold", 0.0, 1.0),
        ):
            value = getattr(self, field)
            if not (isinstance(value, int | float) and lo <= value <= hi):
                raise InputError(field, f"got {value!r}; use a fraction from {lo:g} to {hi:g}")
        for field in ("life", "replacement_interval", "parts_cost", "labour_cost",
                      "reductant_per_nox", "reductant_price"):
            value = getattr(self, field)
            if not (isinstance(value, int | float) and value >= 0.0 and not math.isnan(value)):
                raise InputError(field, f"got {value!r}; must be a number >= 0")
        if self.life == 0.0 or self.replacement_interval == 0.0:
            raise InputError("life" if self.life == 0.0 else "replacement_interval",
                             "must be above zero")
        if self.age_basis not in ("months", "distance"):
            raise InputError("age_basis", f"got {self.age_basis!r}; use 'months' or 'distance'")
        if self.policy not in ("interval", "threshold"):
            raise InputError("policy", f"got {self.policy!r}; use 'interval' or 'threshold'")
        if self.policy == "threshold" and self.replacement_threshold >= self.efficiency_new:
            raise InputError("replacement_threshold",
                             "must be below efficiency_new, or the device is never fit to use")
        if self.ageing_table is not None:
            table = np.asarray(self.ageing_table, dtype=float)
            if (table.ndim != 2 or table.shape[1] != 2 or len(table) < 2
                    or np.any(np.diff(table[:, 0]) <= 0) or table[0, 0] != 0.0
                    or np.any((table[:, 1] < 0) | (table[:, 1] > 1))):
                raise InputError("ageing_table", "give (age, efficiency) rows starting at age 0, "
                                 "ages increasing, efficiencies from 0 to 1")

    @property
    def replacement_cost(self) -> float:
        """Cost of one replacement, parts and labour [currency]."""
        return self.parts_cost + self.labour_cost

    def efficiency(self, age: ArrayLike) -> np.ndarray:
        """NOx conversion efficiency at an age [-].

        Parameters
        ----------
        age : array_like
            Age since installation, in months or [m] per ``age_basis``.

        Returns
        -------
        numpy.ndarray
        """
        a = np.asarray(age, dtype=float)
        if self.ageing_table is not None:
            table = np.asarray(self.ageing_table, dtype=float)
            return np.interp(a, table[:, 0], table[:, 1])
        loss = self.efficiency_new - self.efficiency_aged
        return self.efficiency_aged + loss * np.exp(-a / self.life)

    def replacement_age(self) -> float:
        """Age at which the policy replaces the device (months or [m]); ``inf`` for never."""
        if self.policy == "interval":
            return float(self.replacement_interval)
        thr = self.replacement_threshold
        if self.ageing_table is not None:
            table = np.asarray(self.ageing_table, dtype=float)
            below = np.nonzero(table[:, 1] < thr)[0]
            if below.size == 0:
                return math.inf
            j = int(below[0])
            (a0, e0), (a1, e1) = table[j - 1], table[j]
            return float(a0 + (e0 - thr) * (a1 - a0) / (e0 - e1))
        if thr <= self.efficiency_aged:
            return math.inf
        ratio = (thr - self.efficiency_aged) / (self.efficiency_new - self.efficiency_aged)
        return float(-self.life * math.log(ratio))


#: Typical devices. Efficiencies and lives are typical values chosen so that a vehicle at
#: typical engine-out NOx (``workbench.models.nox.DEFAULT_ENGINE_OUT``) meets the Euro 6
#: light-duty NOx limits (60 mg/km PI, 80 mg/km CI; Regulation (EC) 715/2007 Annex I) and the
#: Euro VI heavy-duty WHTC limit (0.46 g/kWh; Regulation (EC) 595/2009 Annex I) both new and at
#: the durability distances (160,000 km light duty; 300,000 km for urban buses and medium
#: trucks), from memory; tests/test_conversion.py checks this. A warm, closed-loop three-way
#: catalyst converts about 98-99 % of NOx and an aged one still about 95 %; a urea SCR about
#: 95-98 % warm (measured ranges as recalled, from memory; urban duty with cold exhaust does
#: worse). Costs and reductant price are INVENTED example numbers for a fictional scenario.
#: Replace all of them with supplier data for a study.
DEVICE_PRESETS: dict[str, Aftertreatment] = {
    "three-way-catalyst": Aftertreatment(
        name="three-way-catalyst", efficiency_new=0.98, efficiency_aged=0.94, life=300.0e6,
        age_basis="distance", policy="threshold", replacement_threshold=0.95,
        parts_cost=900.0, labour_cost=150.0,
    ),
    "urea-scr": Aftertreatment(
        name="urea-scr", efficiency_new=0.97, efficiency_aged=0.92, life=500.0e6,
        age_basis="distance", policy="threshold", replacement_threshold=0.93,
        parts_cost=3500.0, labour_cost=400.0, reductant_per_nox=DEF_PER_NOX,
        reductant_price=0.60,
    ),
    # An oxidation catalyst on a lean-burn engine oxidises CO and hydrocarbons but does not
    # reduce NOx in excess oxygen (common practice, no source).
    "none": Aftertreatment(name="none", efficiency_new=0.0),
}


@dataclass(frozen=True)
class ProgrammeNOx:
    """Tailpipe NOx and aftertreatment upkeep of a fleet over a programme.

    Attributes
    ----------
    monthly : pandas.DataFrame
        One row per month: ``month``, ``device_age`` (months or km), ``efficiency``,
        ``engine_out_g_per_km``, ``tailpipe_g_per_km``, ``fleet_nox_kg``,
        ``replacements``, ``replacement_cost``, ``reductant_kg``, ``reductant_cost``,
        ``damage_cost``.
    yearly : pandas.DataFrame
        One row per programme year: ``year``, ``fleet_nox_t``, ``replacements``,
        ``replacement_cost``, ``reductant_cost``, ``damage_cost``.
    interval_months : int
        Months between replacements; the programme length means none within it.
    replacements : int
        Replacements over the programme, whole fleet.
    replacement_cost, reductant_cost, damage_cost : float
        Programme totals [currency]; damage is NOx mass times the damage cost per kg.
    fleet_nox : float
        Tailpipe NOx of the fleet over the programme [kg].
    """

    monthly: pd.DataFrame
    yearly: pd.DataFrame
    interval_months: int
    replacements: int
    replacement_cost: float
    reductant_cost: float
    damage_cost: float
    fleet_nox: float


@dataclass(frozen=True)
class _Grid:
    """Programme quantities for several replacement intervals (rows) by month (columns)."""

    age: np.ndarray
    efficiency: np.ndarray
    tailpipe: np.ndarray  # [kg/m]
    fleet_nox: np.ndarray  # [kg]
    replaced: np.ndarray  # replacements per vehicle at the end of each month
    reductant: np.ndarray  # [kg]


def _check_programme(engine_out: ArrayLike, distance_per_month: float, months: int,
                     fleet_size: int, nox_damage_cost: float) -> np.ndarray:
    if not (isinstance(months, int | np.integer) and months >= 1):
        raise InputError("months", f"got {months!r}; give a whole number of months >= 1")
    if not (isinstance(fleet_size, int | np.integer) and fleet_size >= 1):
        raise InputError("fleet_size", f"got {fleet_size!r}; give a whole number >= 1")
    if not (math.isfinite(distance_per_month) and distance_per_month > 0.0):
        raise InputError("distance_per_month", "must be a positive distance [m]")
    if not (math.isfinite(nox_damage_cost) and nox_damage_cost >= 0.0):
        raise InputError("nox_damage_cost", "must be a number >= 0 [currency/kg]")
    eo = np.asarray(engine_out, dtype=float)
    if eo.ndim > 1 or (eo.ndim == 1 and eo.size != months):
        raise InputError("engine_out", f"give one value or one per month ({months})")
    if not (np.all(np.isfinite(eo)) and np.all(eo >= 0.0)):
        raise InputError("engine_out", "engine-out NOx must be finite and >= 0 [kg/m]")
    return np.broadcast_to(eo, (months,))


def _grid(device: Aftertreatment, intervals: np.ndarray, engine_out: np.ndarray,
          distance_per_month: float, fleet_size: int) -> _Grid:
    months = engine_out.size
    m = np.arange(months)
    k = intervals[:, None]
    step = 1.0 if device.age_basis == "months" else distance_per_month
    age = ((m % k) + 0.5) * step  # mid-month age of the device in service
    eff = device.efficiency(age)
    tailpipe = engine_out * (1.0 - eff)
    fleet_nox = tailpipe * distance_per_month * fleet_size
    converted = (engine_out - tailpipe) * distance_per_month * fleet_size
    # Replaced at the end of months k-1, 2k-1, ...; not at the programme's very end.
    replaced = (((m + 1) % k) == 0) & (m < months - 1)
    return _Grid(age, eff, tailpipe, fleet_nox, replaced.astype(float),
                 converted * device.reductant_per_nox)


def _interval_months(device: Aftertreatment, distance_per_month: float, months: int) -> int:
    age = device.replacement_age()
    step = 1.0 if device.age_basis == "months" else distance_per_month
    if not math.isfinite(age) or age / step >= months:
        return months
    return max(1, math.ceil(age / step - 1e-9))


def programme_nox(
    device: Aftertreatment,
    engine_out: ArrayLike,
    *,
    distance_per_month: float,
    months: int,
    fleet_size: int = 1,
    nox_damage_cost: float = 0.0,
) -> ProgrammeNOx:
    """Tailpipe NOx, replacements and upkeep of a fleet's aftertreatment over a programme.

    Parameters
    ----------
    device : Aftertreatment
        The device fitted to every vehicle, new at month 0.
    engine_out : array_like
        Engine-out NOx as NO2 [kg/m], one value or one per month.
    distance_per_month : float
        Distance each vehicle drives per month [m].
    months : int
        Programme length [months].
    fleet_size : int
        Number of vehicles.
    nox_damage_cost : float
        Damage cost of NOx [currency/kg].

    Returns
    -------
    ProgrammeNOx
    """
    eo = _check_programme(engine_out, distance_per_month, months, fleet_size, nox_damage_cost)
    k = _interval_months(device, distance_per_month, months)
    g = _grid(device, np.array([k]), eo, distance_per_month, fleet_size)
    age_out = g.age[0] if device.age_basis == "months" else g.age[0] / 1.0e3
    replacements = g.replaced[0] * fleet_size
    monthly = pd.DataFrame({
        "month": np.arange(1, months + 1),
        "device_age": age_out,
        "efficiency": g.efficiency[0],
        "engine_out_g_per_km": eo * 1.0e6,
        "tailpipe_g_per_km": g.tailpipe[0] * 1.0e6,
        "fleet_nox_kg": g.fleet_nox[0],
        "replacements": replacements,
        "replacement_cost": replacements * device.replacement_cost,
        "reductant_kg": g.reductant[0],
        "reductant_cost": g.reductant[0] * device.reductant_price,
        "damage_cost": g.fleet_nox[0] * nox_damage_cost,
    })
    year = (monthly["month"] - 1) // 12 + 1
    yearly = monthly.groupby(year).agg(
        fleet_nox_kg=("fleet_nox_kg", "sum"),
        replacements=("replacements", "sum"),
        replacement_cost=("replacement_cost", "sum"),
        reductant_cost=("reductant_cost", "sum"),
        damage_cost=("damage_cost", "sum"),
    )
    yearly.insert(0, "fleet_nox_t", yearly.pop("fleet_nox_kg") / 1.0e3)
    yearly = yearly.rename_axis("year").reset_index()
    return ProgrammeNOx(
        monthly=monthly,
        yearly=yearly,
        interval_months=k,
        replacements=int(replacements.sum() + 0.5),
        replacement_cost=float(monthly["replacement_cost"].sum()),
        reductant_cost=float(monthly["reductant_cost"].sum()),
        damage_cost=float(monthly["damage_cost"].sum()),
        fleet_nox=float(monthly["fleet_nox_kg"].sum()),
    )


@dataclass(frozen=True)
class IntervalChoice:
    """The replacement interval that minimises upkeep plus NOx damage cost.

    Attributes
    ----------
    interval_months : int
        Best interval [months]; the programme length means no replacement within it.
    device : Aftertreatment
        The device with an ``"interval"`` policy at that interval.
    table : pandas.DataFrame
        Every interval tried: ``interval_months``, ``replacements``, ``replacement_cost``,
        ``reductant_cost``, ``fleet_nox_kg``, ``damage_cost``, ``total_cost``.
    """

    interval_months: int
    device: Aftertreatment
    table: pd.DataFrame


def optimal_interval(
    device: Aftertreatment,
    engine_out: ArrayLike,
    *,
    distance_per_month: float,
    months: int,
    nox_damage_cost: float,
    fleet_size: int = 1,
) -> IntervalChoice:
    """Replacement interval minimising replacement + reductant + NOx damage cost.

    Every whole-month interval from 1 month to never is evaluated at once (costs are
    undiscounted; discounting belongs to the economics layer).

    Parameters
    ----------
    device : Aftertreatment
        The device (its own policy is ignored).
    engine_out : array_like
        Engine-out NOx as NO2 [kg/m], one value or one per month.
    distance_per_month : float
        Distance each vehicle drives per month [m].
    months : int
        Programme length [months].
    nox_damage_cost : float
        Damage cost of NOx [currency/kg].
    fleet_size : int
        Number of vehicles.

    Returns
    -------
    IntervalChoice
    """
    eo = _check_programme(engine_out, distance_per_month, months, fleet_size, nox_damage_cost)
    intervals = np.arange(1, months + 1)
    g = _grid(device, intervals, eo, distance_per_month, fleet_size)
    replacements = g.replaced.sum(axis=1) * fleet_size
    nox = g.fleet_nox.sum(axis=1)
    table = pd.DataFrame({
        "interval_months": intervals,
        "replacements": replacements,
        "replacement_cost": replacements * device.replacement_cost,
        "reductant_cost": g.reductant.sum(axis=1) * device.reductant_price,
        "fleet_nox_kg": nox,
        "damage_cost": nox * nox_damage_cost,
    })
    table["total_cost"] = table[["replacement_cost", "reductant_cost", "damage_cost"]].sum(axis=1)
    best = int(intervals[int(np.argmin(table["total_cost"].to_numpy()))])
    step = 1.0 if device.age_basis == "months" else distance_per_month
    interval = math.inf if best >= months else best * step
    chosen = replace(device, policy="interval", replacement_interval=interval)
    return IntervalChoice(interval_months=best, device=chosen, table=table)
