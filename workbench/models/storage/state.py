"""The stored state: which storage model a fuel takes, and the fuel as it sits in the tank."""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any

from workbench.core.constants import P_STANDARD, T_STANDARD, ZERO_CELSIUS
from workbench.core.errors import InputError
from workbench.core.fuels import STORAGE_KINDS, Fuel, StorageSpec, load_fuel
from workbench.models.combustion import fuel_sheet
from workbench.models.storage.compressed import DEFAULT_COMPRESSED_PRESSURE, _check_compressed, _gas
from workbench.models.storage.fluids import _celsius, _critical_temperature, _mixture
from workbench.models.storage.liquids import liquid_density
from workbench.models.storage.saturation import (
    _check_saturation_temperature,
    _saturated,
    bubble_temperature,
)

#: Tank pressure of a cryogenic liquid [Pa]: typical value, example (vehicle LNG tanks hold the
#: liquid near saturation at a few bar absolute).
DEFAULT_CRYOGENIC_PRESSURE = 4e5


def storage_spec(fuel: Fuel | str) -> StorageSpec:
    """How a fuel is stored: its declared ``[storage]``, or one inferred for a blend.

    Parameters
    ----------
    fuel : Fuel or str
        The fuel.

    Returns
    -------
    StorageSpec
        The declared one; otherwise liquid for a liquid fuel, liquefied for a gas whose
        critical temperature is above 15 °C, compressed at :data:`DEFAULT_COMPRESSED_PRESSURE`
        for other gases.
    """
    fuel = load_fuel(fuel)
    if fuel.storage is not None:
        return fuel.storage
    if not fuel.is_gas:
        return StorageSpec("liquid", source="inferred: liquid fuel")
    if _critical_temperature(_mixture(fuel)) > T_STANDARD:
        return StorageSpec("liquefied", source="inferred: critical temperature above 15 °C")
    return StorageSpec("compressed", pressure=DEFAULT_COMPRESSED_PRESSURE,
                       source="inferred: critical temperature below 15 °C")


@dataclass(frozen=True)
class StoredState:
    """A fuel as it sits in the tank.

    Attributes
    ----------
    fuel : Fuel
        The fuel.
    kind : {"liquid", "liquefied", "compressed", "cryogenic"}
        Storage model.
    temperature : float
        Fuel temperature [K].
    pressure : float
        Absolute tank pressure [Pa]: ambient for a liquid, the vapour pressure for a
        liquefied or cryogenic fuel, the storage pressure for a compressed gas.
    density : float
        Density of the stored fuel [kg/m3].
    vapour_pressure : float
        Bubble-point pressure [Pa]; NaN unless liquefied or cryogenic.
    compressibility_factor : float
        Z [-]; NaN unless compressed.
    lhv_mass : float
        Lower heating value [J/kg] (:func:`workbench.models.combustion.fuel_sheet`).
    method : str
        Property model used (CoolProp HEOS, a named fallback, or the volume correction).
    """

    fuel: Fuel
    kind: str
    temperature: float
    pressure: float
    density: float
    vapour_pressure: float
    compressibility_factor: float
    lhv_mass: float
    method: str

    @property
    def energy_density_mass(self) -> float:
        """Energy of the stored fuel per unit mass, LHV [J/kg]."""
        return self.lhv_mass

    @property
    def energy_density_volume(self) -> float:
        """Energy of the stored fuel per unit volume, LHV [J/m3]."""
        return self.lhv_mass * self.density


def stored_state(
    fuel: Fuel | str,
    *,
    kind: str | None = None,
    temperature: float | None = None,
    pressure: float | None = None,
) -> StoredState:
    """The state of a fuel in its tank.

    Parameters
    ----------
    fuel : Fuel or str
        The fuel.
    kind : {"liquid", "liquefied", "compressed", "cryogenic"}, optional
        Storage model; the fuel's (:func:`storage_spec`) by default.
    temperature : float, optional
        Fuel temperature [K]; the declared storage temperature (15 °C unless declared) by
        default. Not accepted for a cryogenic liquid, whose temperature is its boiling point.
    pressure : float, optional
        Absolute pressure [Pa] of a compressed gas (declared, or
        :data:`DEFAULT_COMPRESSED_PRESSURE`) or a cryogenic tank
        (:data:`DEFAULT_CRYOGENIC_PRESSURE`). Not accepted for liquid and liquefied storage,
        whose pressure follows from the temperature.

    Returns
    -------
    StoredState

    Raises
    ------
    InputError
        A kind the fuel cannot have (compressed diesel, liquefied methane at 15 °C, ...), a
        non-positive pressure, or a temperature outside the model's range.
    """
    fuel = load_fuel(fuel)
    spec = storage_spec(fuel)
    kind = spec.kind if kind is None else kind
    if kind not in STORAGE_KINDS:
        raise InputError("kind", f"must be one of {', '.join(STORAGE_KINDS)}, got {kind!r}")
    if fuel.is_gas == (kind == "liquid"):
        allowed = "liquefied, compressed or cryogenic" if fuel.is_gas else "liquid"
        raise InputError("kind", f"{fuel.id} cannot be stored {kind}; "
                         f"{'a gas' if fuel.is_gas else 'a liquid fuel'} is stored {allowed}")
    if pressure is not None and kind in ("liquid", "liquefied"):
        raise InputError("pressure", f"a {kind} fuel's pressure follows from its temperature; "
                         "set the temperature instead")
    if temperature is not None and kind == "cryogenic":
        raise InputError("temperature", "a cryogenic liquid sits at its boiling point for the "
                         "tank pressure; set the pressure instead")
    t = spec.temperature if temperature is None else float(temperature)
    if not math.isfinite(t) or t <= 0:
        raise InputError("temperature", f"must be above absolute zero, got {_celsius(t, 'g')}")
    lhv = fuel_sheet(fuel).lhv_mass
    nan = math.nan
    if kind == "liquid":
        rho = liquid_density(fuel, t)
        return StoredState(fuel, kind, t, P_STANDARD, rho, nan, nan, lhv,
                           "declared density, ASTM D1250-80 volume correction")
    mix = _mixture(fuel)
    if kind == "liquefied":
        _check_saturation_temperature(mix, fuel, t)
        sat = _saturated(mix, t)
        return StoredState(fuel, kind, t, sat.pressure, sat.density, sat.pressure, nan, lhv,
                           sat.method)
    if kind == "compressed":
        p = float(pressure) if pressure is not None \
            else spec.pressure or DEFAULT_COMPRESSED_PRESSURE
        _check_compressed(mix, fuel, t, p)
        gas = _gas(mix, t, p)
        return StoredState(fuel, kind, t, p, gas.density, nan, gas.compressibility_factor,
                           lhv, gas.method)
    if _critical_temperature(mix) > T_STANDARD:
        raise InputError("kind", f"{fuel.id} liquefies under pressure at ambient temperature; "
                         "store it liquefied, not cryogenic")
    p = DEFAULT_CRYOGENIC_PRESSURE if pressure is None else float(pressure)
    t_boil = bubble_temperature(fuel, p)
    sat = _saturated(mix, t_boil)
    return StoredState(fuel, kind, t_boil, p, sat.density, sat.pressure, nan, lhv, sat.method)



def storage_summary(fuel: Fuel | str) -> dict[str, Any]:
    """Storage figures for a fuel sheet: declared storage at 15 °C.

    Parameters
    ----------
    fuel : Fuel or str
        The fuel.

    Returns
    -------
    dict
        ``storage_kind``, ``pressure_bar`` (absolute), ``density_kg_per_l``,
        ``energy_density_mj_per_kg`` and ``energy_density_mj_per_l`` (LHV of the fuel as
        stored); for a liquefied fuel also ``vapour_pressure_bar``, for a compressed gas
        ``compressibility_factor``.
    """
    fuel = load_fuel(fuel)
    kind = storage_spec(fuel).kind
    state = stored_state(fuel, temperature=None if kind == "cryogenic" else T_STANDARD)
    return state_summary(state)


def state_summary(state: StoredState) -> dict[str, Any]:
    """A stored state in interface units (bar, kg/L, MJ), as ``storage_summary`` gives it.

    Parameters
    ----------
    state : StoredState
        The stored fuel.

    Returns
    -------
    dict
        See :func:`storage_summary`; ``temperature_c`` [°C] is added.
    """
    out: dict[str, Any] = {
        "storage_kind": state.kind,
        "temperature_c": state.temperature - ZERO_CELSIUS,
        "pressure_bar": state.pressure / 1e5,
        "density_kg_per_l": state.density / 1e3,
        "energy_density_mj_per_kg": state.energy_density_mass / 1e6,
        "energy_density_mj_per_l": state.energy_density_volume / 1e9,
    }
    if state.kind in ("liquefied", "cryogenic"):
        out["vapour_pressure_bar"] = state.vapour_pressure / 1e5
    if state.kind == "compressed":
        out["compressibility_factor"] = state.compressibility_factor
    return out
