"""A candidate's refuelling station: sized from its classes' daily fuel, costed, and the time
its vehicles lose when it is off the depot (the sizing is :mod:`workbench.models.depot`).

The station is sized for the whole class converted (after any phasing) at the nominal distance
per year: the day's fuel is ``sum_c N_c (D_c / days) m_c`` over the classes it serves (``m_c``
the fuel's mass per metre on class ``c``), a vehicle fills once per its class's ``range``.
A depot station's capital (compressor per kg/h, storage per m3 of water volume, dispensers)
falls in year 0 and its upkeep, a share of that capital, in every year a class runs; an
off-depot station costs its vehicles ``t_detour / range`` hours per metre at ``hour_cost``.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass
from typing import TYPE_CHECKING

import numpy as np

from workbench.models import depot
from workbench.study.studyfile import FleetClass, Option, Station, Uncertain

if TYPE_CHECKING:
    from workbench.study.runner import Plan

#: Seconds in an hour.
_HOUR = 3600.0


@dataclass(frozen=True)
class StationSize:
    """A candidate's station as sized.

    Attributes
    ----------
    station : Station
        The study's station.
    daily_mass : float
        Fuel dispensed per day [kg].
    daily_volume : float
        The same as liquid [m3] (LPG), NaN for a compressed gas.
    fills_per_day : float
        Fills per day.
    sized : CNGStation or LPGStation
        Compressor, buffer or tank and dispensers.
    """

    station: Station
    daily_mass: float
    daily_volume: float
    fills_per_day: float
    sized: depot.CNGStation | depot.LPGStation


def station_sizes(plan: Plan, option: Option) -> list[StationSize]:
    """Size each of an option's stations from its classes' fuel.

    Parameters
    ----------
    plan : Plan
        The run's physics.
    option : Option
        A candidate (or a best mix, with its candidates' stations).

    Returns
    -------
    list of StationSize
    """
    return [_size(plan, option.id, st) for st in option.stations]


def _size(plan: Plan, oid: str, st: Station) -> StationSize:
    classes = {c.id: c for c in plan.inputs.classes}
    mass = fills = 0.0
    for cid in st.classes:
        c = classes[cid]
        km_day = c.km_per_year.nominal / st.operating_days
        burnt = [f for f in plan.physics[oid, cid].fuels if f.fuel.id == st.fuel.id]
        mass += c.count * km_day * sum(f.per_m.fuel_mass_per_m for f in burnt)
        fills += c.count * km_day / c.range
    if st.kind == "cng":
        sized = depot.cng_station(st.fuel, mass, fills, window=st.window,
                                  peak_factor=st.peak_factor,
                                  storage_pressure=st.storage_pressure,
                                  fill_pressure=st.fill_pressure, hose_flow=st.hose_flow,
                                  handling=st.handling)
        return StationSize(st, mass, float("nan"), fills, sized)
    volume = mass / st.fuel.liquid_density
    sized = depot.lpg_station(volume, fills, window=st.window, autonomy_days=st.autonomy_days,
                              fill_limit=st.fill_limit, hose_flow=st.hose_flow,
                              handling=st.handling)
    return StationSize(st, mass, volume, fills, sized)


def station_money(sizes: list[StationSize], val: Callable[[Uncertain], np.ndarray]
                  ) -> tuple[np.ndarray | float, np.ndarray | float]:
    """Depot stations' capital and yearly upkeep, per draw [currency] (0 off the depot).

    Parameters
    ----------
    sizes : list of StationSize
        The sized stations.
    val : callable
        An input's values per draw.

    Returns
    -------
    tuple
        Capital (year 0) and upkeep per year.
    """
    capital: np.ndarray | float = 0.0
    upkeep: np.ndarray | float = 0.0
    for size in sizes:
        st, s = size.station, size.sized
        if st.location != "depot":
            continue
        if isinstance(s, depot.CNGStation):
            own = (val(st.compressor_cost) * s.compressor_mass_flow * _HOUR
                   + val(st.storage_cost) * s.buffer_volume)
        else:
            own = val(st.storage_cost) * s.tank_volume
        own = own + val(st.dispenser_cost) * s.dispensers
        capital = capital + own
        upkeep = upkeep + own * val(st.upkeep_share)
    return capital, upkeep


def time_cost_per_m(option: Option, c: FleetClass, val: Callable[[Uncertain], np.ndarray]
                    ) -> np.ndarray | float:
    """Cost of the time a converted vehicle of ``c`` loses going to an off-depot station, per
    metre driven [currency/m]: ``t_detour / range x hour_cost`` (0 at the depot)."""
    out: np.ndarray | float = 0.0
    for st in option.stations:
        if st.location == "off-depot" and c.id in st.classes:
            out = out + depot.detour_hours_per_m(st.detour, c.range) * val(st.hour_cost)
    return out


def station_rows(plan: Plan) -> list[dict]:
    """Rows of the ``stations`` table: each candidate's station, sized and costed (nominal).

    Parameters
    ----------
    plan : Plan
        The run's physics.

    Returns
    -------
    list of dict
    """
    rows = []
    sizes = [(o, size) for o in plan.inputs.candidates for size in station_sizes(plan, o)]
    for o, size in sizes:
        st, s = size.station, size.sized
        capital, upkeep = station_money([size], lambda u: u.nominal)
        lost = sum(c.count * c.km_per_year.nominal / c.range * st.detour / _HOUR
                   for c in plan.inputs.classes
                   if c.id in st.classes and st.location == "off-depot")
        cng = isinstance(s, depot.CNGStation)
        rows.append({
            "candidate": o.id, "fuel": st.fuel.id, "kind": st.kind, "location": st.location,
            "classes": ", ".join(st.classes), "daily_fuel_kg": size.daily_mass,
            "daily_fuel_l": size.daily_volume * 1e3, "fills_per_day": size.fills_per_day,
            "window_h": st.window / _HOUR,
            "compressor_kg_per_h": s.compressor_mass_flow * _HOUR if cng else float("nan"),
            "compressor_sm3_per_h": s.compressor_standard_flow * _HOUR if cng else
            float("nan"),
            "buffer_m3": s.buffer_volume if cng else float("nan"),
            "tank_m3": float("nan") if cng else s.tank_volume,
            "dispensers": s.dispensers, "capital": float(capital),
            "upkeep_per_year": float(upkeep), "lost_hours_per_year": lost,
            "lost_time_cost_per_year": lost * st.hour_cost.nominal})
    return rows
