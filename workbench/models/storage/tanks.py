"""Tank systems: usable fill, empty mass and installed envelope; tanks for a range.

:class:`TankType` gives a tank's figures per litre of water volume; :func:`tank_of_volume` and
:func:`tank_for_range` turn them into litres, kilograms and range. The shipped tank figures are
typical values, example: replace them with the supplier's data for a study.
"""

from __future__ import annotations

import math
from collections.abc import Iterable
from dataclasses import dataclass

import numpy as np
import pandas as pd
from numpy.typing import ArrayLike

from workbench.core.errors import InputError
from workbench.core.fuels import Fuel
from workbench.models.storage.compressed import _gas
from workbench.models.storage.fluids import _mixture
from workbench.models.storage.state import StoredState, stored_state


@dataclass(frozen=True)
class TankType:
    """A kind of on-board tank, by its figures per litre of water volume.

    Attributes
    ----------
    id : str
        Short id (``"cng-type4"``).
    name : str
        Description.
    kinds : tuple of str
        Storage kinds it holds.
    mass_per_volume : float
        Empty tank with its valves and brackets per unit water volume [kg/m3].
    envelope_per_volume : float
        Installed envelope (outer volume it takes in the vehicle) per water volume [-].
    fill_fraction : float
        Share of the water volume holding fuel when full [-] (LPG: about 0.8).
    residual_pressure : float
        Compressed gas: pressure below which the regulator cannot feed the engine [Pa];
        the gas left at it is not usable. Zero for other kinds.
    service_pressure : float
        Highest nominal storage pressure of this type [Pa]; ``inf`` where irrelevant.
    source : str
        Where the figures come from.
    """

    id: str
    name: str
    kinds: tuple[str, ...]
    mass_per_volume: float
    envelope_per_volume: float
    fill_fraction: float
    residual_pressure: float = 0.0
    service_pressure: float = math.inf
    source: str = "typical value, example"


_TYPICAL = ("typical value, example: order of magnitude of published tank data sheets; "
            "use the supplier's figures for a study")
_CNG = "compressed natural gas cylinder"
#: Shipped tank types, by id.
TANK_TYPES: dict[str, TankType] = {t.id: t for t in (
    TankType("liquid-plastic", "Moulded plastic (HDPE) fuel tank", ("liquid",), 130.0, 1.10,
             0.95, source=_TYPICAL + "; 5 % of the volume is expansion space and unusable heel"),
    TankType("liquid-steel", "Steel or aluminium fuel tank (trucks, buses)", ("liquid",), 200.0,
             1.10, 0.95, source=_TYPICAL),
    TankType("lpg-cylinder", "Cylindrical steel LPG tank", ("liquefied",), 400.0, 1.15, 0.80,
             source=_TYPICAL + "; filled to about 80 % of water volume by the fill stop valve "
             "(common practice, no source)"),
    TankType("lpg-toroidal", "Toroidal steel LPG tank (spare-wheel well)", ("liquefied",), 470.0,
             1.35, 0.80, source=_TYPICAL + "; 80 % fill as for cylinders"),
    TankType("cng-type1", f"Type 1 all-steel {_CNG}", ("compressed",), 1100.0, 1.30, 1.0,
             20e5, 250e5, source=_TYPICAL + "; 20 bar residual pressure"),
    TankType("cng-type2", f"Type 2 hoop-wrapped steel {_CNG}", ("compressed",), 850.0, 1.30,
             1.0, 20e5, 250e5, source=_TYPICAL),
    TankType("cng-type3", f"Type 3 composite {_CNG}, metal liner", ("compressed",), 450.0, 1.35,
             1.0, 20e5, 250e5, source=_TYPICAL),
    TankType("cng-type4", f"Type 4 composite {_CNG}, polymer liner", ("compressed",), 350.0,
             1.35, 1.0, 20e5, 250e5, source=_TYPICAL),
    TankType("h2-type4-350", "Type 4 hydrogen tank, 350 bar (buses)", ("compressed",), 550.0,
             1.45, 1.0, 20e5, 350e5, source=_TYPICAL),
    TankType("h2-type4-700", "Type 4 hydrogen tank, 700 bar (cars)", ("compressed",), 750.0,
             1.60, 1.0, 20e5, 700e5, source=_TYPICAL),
    TankType("cryogenic-vacuum", "Vacuum-insulated double-wall cryogenic tank", ("cryogenic",),
             600.0, 1.30, 0.90, source=_TYPICAL + "; 10 % ullage for boil-off"),
)}
#: Default tank ids per storage kind, in order of preference; the first whose service
#: pressure covers the storage pressure is taken.
DEFAULT_TANKS: dict[str, tuple[str, ...]] = {
    "liquid": ("liquid-plastic",),
    "liquefied": ("lpg-cylinder",),
    "compressed": ("cng-type1", "h2-type4-350", "h2-type4-700"),
    "cryogenic": ("cryogenic-vacuum",),
}


def tank_type(state: StoredState, tank: str | TankType | None = None) -> TankType:
    """The tank for a stored state: the one named, or the default for its kind and pressure.

    Parameters
    ----------
    state : StoredState
        The stored fuel.
    tank : str or TankType, optional
        A :data:`TANK_TYPES` id or a custom :class:`TankType`.

    Returns
    -------
    TankType

    Raises
    ------
    InputError
        An unknown id, a tank for another storage kind, or a storage pressure above the
        tank's service pressure.
    """
    if tank is None:
        for tank_id in DEFAULT_TANKS[state.kind]:
            if TANK_TYPES[tank_id].service_pressure >= state.pressure:
                return TANK_TYPES[tank_id]
        raise InputError("pressure", f"{state.pressure / 1e5:g} bar is above every shipped "
                         "tank's service pressure; give a tank rated for it")
    if isinstance(tank, str):
        if tank not in TANK_TYPES:
            raise InputError("tank", f"unknown tank {tank!r}; pick one of {', '.join(TANK_TYPES)}")
        tank = TANK_TYPES[tank]
    if state.kind not in tank.kinds:
        raise InputError("tank", f"{tank.id} holds {', '.join(tank.kinds)} fuel, not "
                         f"{state.kind}; pick a tank for {state.kind} storage")
    if state.pressure > tank.service_pressure:
        raise InputError("pressure", f"{state.pressure / 1e5:g} bar is above the "
                         f"{tank.service_pressure / 1e5:g} bar service pressure of {tank.id}")
    return tank


@dataclass(frozen=True)
class TankSystem:
    """A tank of a given water volume, filled with a stored fuel, and the range it gives.

    Array-valued where the volume, range or energy use passed in were arrays.

    Attributes
    ----------
    state : StoredState
        The fuel in the tank.
    tank : TankType
        The tank type.
    tank_volume : float or numpy.ndarray
        Internal (water) volume of the tank [m3].
    range : float or numpy.ndarray
        Distance the usable fuel carries the vehicle [m]; NaN when no energy use was given.
    energy_per_distance : float or numpy.ndarray
        Fuel energy (LHV) used per distance [J/m]; NaN when not given.
    fuel_mass : float or numpy.ndarray
        Fuel in the full tank [kg].
    usable_fuel_mass : float or numpy.ndarray
        Fuel the engine can draw [kg] (less the gas left at the residual pressure).
    usable_energy : float or numpy.ndarray
        LHV of the usable fuel [J].
    tank_mass : float or numpy.ndarray
        Empty tank [kg].
    system_mass : float or numpy.ndarray
        Tank plus its full load of fuel [kg].
    envelope_volume : float or numpy.ndarray
        Space the installed tank takes [m3].
    fuel_energy_per_mass, fuel_energy_per_volume : float
        Energy density of the fuel as stored, LHV [J/kg], [J/m3].
    system_energy_per_mass : float
        Usable energy per kg of full tank system [J/kg].
    system_energy_per_volume : float
        Usable energy per m3 of installed tank envelope [J/m3].
    """

    state: StoredState
    tank: TankType
    tank_volume: float | np.ndarray
    range: float | np.ndarray
    energy_per_distance: float | np.ndarray
    fuel_mass: float | np.ndarray
    usable_fuel_mass: float | np.ndarray
    usable_energy: float | np.ndarray
    tank_mass: float | np.ndarray
    system_mass: float | np.ndarray
    envelope_volume: float | np.ndarray
    fuel_energy_per_mass: float
    fuel_energy_per_volume: float
    system_energy_per_mass: float
    system_energy_per_volume: float


def _as_state(fuel: StoredState | Fuel | str) -> StoredState:
    return fuel if isinstance(fuel, StoredState) else stored_state(fuel)


def _usable_density(state: StoredState, tank: TankType) -> tuple[float, float]:
    """Full and usable fuel per unit water volume [kg/m3]."""
    full = tank.fill_fraction * state.density
    if state.kind != "compressed" or tank.residual_pressure <= 0:
        return full, full
    if tank.residual_pressure >= state.pressure:
        raise InputError("pressure", f"{state.pressure / 1e5:g} bar is not above the "
                         f"{tank.residual_pressure / 1e5:g} bar residual pressure of {tank.id}")
    residual = _gas(_mixture(state.fuel), state.temperature, tank.residual_pressure).density
    return full, full - tank.fill_fraction * residual


def _positive_array(value: ArrayLike, where: str) -> float | np.ndarray:
    arr = np.asarray(value, dtype=float)
    if not np.all(arr > 0):
        raise InputError(where, "must be above zero")
    return float(arr) if arr.ndim == 0 else arr


def _system(state: StoredState, tank: TankType, volume: float | np.ndarray,
            energy_per_distance: float | np.ndarray) -> TankSystem:
    full, usable = _usable_density(state, tank)
    energy_per_volume = usable * state.lhv_mass
    return TankSystem(
        state=state,
        tank=tank,
        tank_volume=volume,
        range=volume * energy_per_volume / energy_per_distance,
        energy_per_distance=energy_per_distance,
        fuel_mass=volume * full,
        usable_fuel_mass=volume * usable,
        usable_energy=volume * energy_per_volume,
        tank_mass=volume * tank.mass_per_volume,
        system_mass=volume * (full + tank.mass_per_volume),
        envelope_volume=volume * tank.envelope_per_volume,
        fuel_energy_per_mass=state.energy_density_mass,
        fuel_energy_per_volume=state.energy_density_volume,
        system_energy_per_mass=energy_per_volume / (full + tank.mass_per_volume),
        system_energy_per_volume=energy_per_volume / tank.envelope_per_volume,
    )


def tank_of_volume(
    fuel: StoredState | Fuel | str,
    tank_volume: ArrayLike,
    energy_per_distance: ArrayLike | None = None,
    *,
    tank: str | TankType | None = None,
) -> TankSystem:
    """A tank of a given water volume: its fuel, energy, mass, space and range.

    Parameters
    ----------
    fuel : StoredState, Fuel or str
        The stored fuel (a fuel is taken in its default :func:`stored_state`).
    tank_volume : array_like
        Internal (water) volume of the tank [m3].
    energy_per_distance : array_like, optional
        Fuel energy (LHV) used per distance [J/m] (1 MJ/km = 1000 J/m); without it the
        range is NaN.
    tank : str or TankType, optional
        Tank type; by default the first of :data:`DEFAULT_TANKS` for the storage kind whose
        service pressure covers the storage pressure (:func:`tank_type`).

    Returns
    -------
    TankSystem

    Notes
    -----
    With water volume :math:`V`, fill fraction :math:`f`, stored density :math:`\\rho`, the
    density :math:`\\rho_r` of gas left at the residual pressure and the LHV :math:`H`, the
    usable energy is :math:`V f (\\rho - \\rho_r) H`; the system mass adds the empty tank
    :math:`V m_V` to the full load :math:`V f \\rho`; the envelope is :math:`V e_V`; the range
    is the usable energy over the energy per distance.

    Examples
    --------
    >>> tank_of_volume("diesel", 0.060, 2.5e3).range / 1e3  # km  # doctest: +SKIP
    820.5...
    """
    state = _as_state(fuel)
    tank = tank_type(state, tank)
    volume = _positive_array(tank_volume, "tank_volume")
    energy = math.nan if energy_per_distance is None else _positive_array(
        energy_per_distance, "energy_per_distance")
    return _system(state, tank, volume, energy)


def tank_for_range(
    fuel: StoredState | Fuel | str,
    distance: ArrayLike,
    energy_per_distance: ArrayLike,
    *,
    tank: str | TankType | None = None,
) -> TankSystem:
    """The tank that carries a vehicle a given distance.

    Parameters
    ----------
    fuel : StoredState, Fuel or str
        The stored fuel.
    distance : array_like
        Target range [m].
    energy_per_distance : array_like
        Fuel energy (LHV) used per distance [J/m] (1 MJ/km = 1000 J/m).
    tank : str or TankType, optional
        Tank type (see :func:`tank_of_volume`).

    Returns
    -------
    TankSystem
        The tank whose usable energy is ``distance * energy_per_distance``.

    Examples
    --------
    >>> tank_for_range("lpg", 500e3, 2.5e3).tank_volume * 1e3  # litres  # doctest: +SKIP
    """
    state = _as_state(fuel)
    tank = tank_type(state, tank)
    energy = _positive_array(energy_per_distance, "energy_per_distance")
    distance = _positive_array(distance, "distance")
    _, usable = _usable_density(state, tank)
    return _system(state, tank, distance * energy / (usable * state.lhv_mass), energy)


def tank_table(
    fuels: Iterable[StoredState | Fuel | str],
    distance: float,
    energy_per_distance: float,
) -> pd.DataFrame:
    """Tank size, mass and space for one range, fuel by fuel.

    Parameters
    ----------
    fuels : iterable of StoredState, Fuel or str
        The stored fuels, each with its default tank.
    distance : float
        Target range [m].
    energy_per_distance : float
        Fuel energy used per distance [J/m], the same for every fuel: engines of equal
        efficiency. Size each fuel with its own figure (:func:`tank_for_range`) otherwise.

    Returns
    -------
    pandas.DataFrame
        One row per fuel: ``fuel``, ``kind``, ``tank``, ``pressure_pa``,
        ``density_kg_per_m3``, ``fuel_energy_per_volume_j_per_m3``, ``usable_fuel_kg``,
        ``tank_volume_m3`` (water volume), ``envelope_volume_m3``, ``tank_mass_kg``,
        ``tank_system_mass_kg``, ``system_energy_per_mass_j_per_kg`` and
        ``system_energy_per_volume_j_per_m3``.
    """
    rows = []
    for fuel in fuels:
        s = tank_for_range(fuel, distance, energy_per_distance)
        rows.append({
            "fuel": s.state.fuel.id,
            "kind": s.state.kind,
            "tank": s.tank.id,
            "pressure_pa": s.state.pressure,
            "density_kg_per_m3": s.state.density,
            "fuel_energy_per_volume_j_per_m3": s.fuel_energy_per_volume,
            "usable_fuel_kg": s.usable_fuel_mass,
            "tank_volume_m3": s.tank_volume,
            "envelope_volume_m3": s.envelope_volume,
            "tank_mass_kg": s.tank_mass,
            "tank_system_mass_kg": s.system_mass,
            "system_energy_per_mass_j_per_kg": s.system_energy_per_mass,
            "system_energy_per_volume_j_per_m3": s.system_energy_per_volume,
        })
    return pd.DataFrame(rows)
