"""Depot refuelling stations sized from a fleet's daily fuel demand and its refuelling window.

A compressed-gas (CNG) station is a compressor, a buffer of stored gas and dispensers; a
liquefied-gas (LPG) station a storage tank and dispensers. Both are sized with closed forms
(numbers in, numbers out, SI):

- the compressor delivers the day's gas within the refuelling window, ``m_dot = m_day / T_w``;
- the buffer covers the busiest hour's fills beyond what the compressor gives in that hour,
  ``m_buf = (k_peak - 1) m_dot (1 h)``, stored between the storage pressure and the pressure a
  vehicle's cylinder is filled to: water volume ``V = m_buf / (rho(p_store) - rho(p_min))``;
- dispensers share the window: ``n_disp = ceil((Q_day / q + n_fills t_h) / T_w)`` for a day's
  fuel ``Q_day`` dispensed at ``q`` per hose and ``n_fills`` fills each taking ``t_h`` to
  connect, pay and leave;
- an LPG tank holds ``d_aut`` days of fuel at a fill limit ``phi``: ``V = d_aut Q_day / phi``.

A vehicle refuels once per ``range`` driven (its tank was sized for that range), so a station
off the depot costs ``t_detour / range`` hours per metre driven (:func:`detour_hours_per_m`).

These are screening sizes for a cost estimate. Gas stations (compressors, high-pressure
storage, LPG tanks) are designed, installed and inspected by licensed practitioners under the
local codes, which set separation distances and fill limits.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from workbench.core.constants import MOLAR_VOLUME_STANDARD, T_STANDARD
from workbench.core.fuels import Fuel
from workbench.models.storage.compressed import compressed_gas_density

__all__ = [
    "CNGStation",
    "LPGStation",
    "buffer_volume",
    "cng_station",
    "detour_hours_per_m",
    "dispensers",
    "lpg_station",
]

#: Seconds in an hour.
_HOUR = 3600.0


@dataclass(frozen=True)
class CNGStation:
    """A compressed-gas depot station.

    Attributes
    ----------
    daily_mass : float
        Gas dispensed per day [kg].
    compressor_mass_flow : float
        Compressor capacity [kg/s].
    compressor_standard_flow : float
        The same at standard conditions (15 °C, 101.325 kPa) [m3/s].
    buffer_mass : float
        Gas the buffer must give in the busiest hour [kg].
    buffer_volume : float
        Water volume of the buffer storage [m3].
    dispensers : int
        Hoses needed within the window.
    """

    daily_mass: float
    compressor_mass_flow: float
    compressor_standard_flow: float
    buffer_mass: float
    buffer_volume: float
    dispensers: int


@dataclass(frozen=True)
class LPGStation:
    """A liquefied-gas depot station.

    Attributes
    ----------
    daily_volume : float
        Liquid dispensed per day [m3].
    tank_volume : float
        Water volume of the storage tank [m3].
    dispensers : int
        Hoses needed within the window.
    """

    daily_volume: float
    tank_volume: float
    dispensers: int


def dispensers(daily_amount: float, flow: float, fills: float, handling: float,
               window: float) -> int:
    """Dispensers (hoses) a day's fills need within the refuelling window.

    Parameters
    ----------
    daily_amount : float
        Fuel dispensed per day [kg or m3].
    flow : float
        Flow of one hose [kg/s or m3/s, as ``daily_amount``], > 0.
    fills : float
        Fills per day.
    handling : float
        Time per fill besides the flow (connect, pay, leave) [s].
    window : float
        Refuelling window per day [s], > 0.

    Returns
    -------
    int
        ``ceil((Q / q + n t_h) / T_w)``, at least 1 when anything is dispensed.
    """
    busy = daily_amount / flow + fills * handling
    return max(math.ceil(busy / window - 1e-12), 1) if busy > 0 else 0


def buffer_volume(mass: float, density_store: float, density_min: float) -> float:
    """Water volume of storage that gives ``mass`` between two pressures [m3].

    Parameters
    ----------
    mass : float
        Gas to give [kg].
    density_store, density_min : float
        Gas density at the storage pressure and at the lowest pressure the buffer is drawn to
        (the vehicles' fill pressure) [kg/m3].

    Returns
    -------
    float
        ``m / (rho_store - rho_min)`` [m3].
    """
    if not density_store > density_min:
        raise ValueError("the storage pressure must be above the vehicles' fill pressure")
    return mass / (density_store - density_min)


def cng_station(fuel: Fuel, daily_mass: float, fills: float, *, window: float,
                peak_factor: float = 2.0, storage_pressure: float = 25e6,
                fill_pressure: float = 20e6, temperature: float = T_STANDARD,
                hose_flow: float = 20.0 / 60.0, handling: float = 300.0) -> CNGStation:
    """Size a compressed-gas depot station.

    Parameters
    ----------
    fuel : Fuel
        The compressed gas.
    daily_mass : float
        Gas dispensed per day [kg].
    fills : float
        Fills per day.
    window : float
        Refuelling window per day [s].
    peak_factor : float, optional
        Busiest hour's fills over the window's mean hour [-], >= 1 (2: common practice for
        a depot refuelling on return, from memory).
    storage_pressure, fill_pressure : float, optional
        Buffer storage pressure and the vehicles' fill pressure [Pa] (250 and 200 bar: common
        practice, no source).
    temperature : float, optional
        Gas temperature [K].
    hose_flow : float, optional
        Flow of one dispenser hose [kg/s] (20 kg/min, from memory).
    handling : float, optional
        Time per fill besides the flow [s].

    Returns
    -------
    CNGStation
    """
    flow = daily_mass / window
    buffer = (peak_factor - 1.0) * flow * _HOUR
    dense = float(compressed_gas_density(fuel, temperature, storage_pressure))
    thin = float(compressed_gas_density(fuel, temperature, fill_pressure))
    standard = fuel.molar_mass() / MOLAR_VOLUME_STANDARD  # [kg/m3], ideal gas
    return CNGStation(daily_mass, flow, flow / standard, buffer,
                      buffer_volume(buffer, dense, thin),
                      dispensers(daily_mass, hose_flow, fills, handling, window))


def lpg_station(daily_volume: float, fills: float, *, window: float,
                autonomy_days: float = 7.0, fill_limit: float = 0.85,
                hose_flow: float = 40e-3 / 60.0, handling: float = 240.0) -> LPGStation:
    """Size a liquefied-gas depot station.

    Parameters
    ----------
    daily_volume : float
        Liquid dispensed per day [m3].
    fills : float
        Fills per day.
    window : float
        Refuelling window per day [s].
    autonomy_days : float, optional
        Days of demand the tank holds between deliveries.
    fill_limit : float, optional
        Share of the tank's water volume filled with liquid (about 85 %: common practice for
        LPG vessels, from memory; local codes set it).
    hose_flow : float, optional
        Flow of one dispenser hose [m3/s] (40 L/min, from memory).
    handling : float, optional
        Time per fill besides the flow [s].

    Returns
    -------
    LPGStation
    """
    return LPGStation(daily_volume, autonomy_days * daily_volume / fill_limit,
                      dispensers(daily_volume, hose_flow, fills, handling, window))


def detour_hours_per_m(detour: float, range_m: float) -> float:
    """Hours lost going to an off-depot station per metre driven [h/m].

    Parameters
    ----------
    detour : float
        Time lost per fill (drive there and back, wait) [s].
    range_m : float
        Distance driven per fill (the range the tank was sized for) [m].

    Returns
    -------
    float
        ``t_detour / range`` in hours per metre.
    """
    return detour / _HOUR / range_m
