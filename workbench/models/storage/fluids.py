"""Fuels as CoolProp fluids: mixtures, shared states, critical and freezing limits.

The ground of the storage models: a gaseous fuel becomes a :class:`_Mixture` of CoolProp
fluids; the CoolProp module and its states are created once per process (registered resource
caches) and set to a state before every read.
"""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass
from typing import TYPE_CHECKING, Any

import numpy as np
from numpy.typing import ArrayLike

from workbench.core.cache import memoize
from workbench.core.constants import ZERO_CELSIUS
from workbench.core.errors import InputError
from workbench.core.fuels import Fuel, load_fuel

if TYPE_CHECKING:
    from CoolProp.CoolProp import AbstractState

#: CoolProp fluid for each Cantera species name a gaseous fuel may contain.
COOLPROP_FLUIDS: dict[str, str] = {
    "CH4": "Methane",
    "C2H6": "Ethane",
    "C3H8": "Propane",
    "C4H10,n-butane": "n-Butane",
    "C4H10,isobutane": "IsoButane",
    "C5H12,n-pentane": "n-Pentane",
    "C5H12,i-pentane": "Isopentane",
    "C2H4": "Ethylene",
    "C3H6,propylene": "Propylene",
    "C4H8,1-butene": "1-Butene",
    "C4H8,isobutene": "IsoButene",
    "C4H8,cis2-buten": "cis-2-Butene",
    "C4H8,tr2-butene": "trans-2-Butene",
    "N2": "Nitrogen",
    "CO2": "CarbonDioxide",
    "CO": "CarbonMonoxide",
    "H2": "Hydrogen",
    "H2S": "HydrogenSulfide",
    "O2": "Oxygen",
    "AR": "Argon",
    "HE": "Helium",
    "H2O": "Water",
}


@dataclass(frozen=True)
class _Mixture:
    """A fuel as CoolProp fluids and mole fractions."""

    fluids: tuple[str, ...]
    x: tuple[float, ...]

    @property
    def names(self) -> str:
        return "&".join(self.fluids)


def _mixture(fuel: Fuel) -> _Mixture:
    fluids, x = [], []
    for species, fraction in fuel.composition:
        if species not in COOLPROP_FLUIDS:
            raise InputError(f"{fuel.id}: species {species}", "has no CoolProp fluid, so its "
                             "storage as a gas is unknown; describe the fuel with other species")
        fluids.append(COOLPROP_FLUIDS[species])
        x.append(fraction)
    return _Mixture(tuple(fluids), tuple(x))


@memoize(maxsize=None, kind="resource")
def _coolprop() -> Any:
    """The CoolProp module, imported on first use (the import takes seconds)."""
    import CoolProp.CoolProp

    return CoolProp.CoolProp


@memoize(maxsize=None, kind="resource")
def _pure(fluid: str) -> AbstractState:
    """Shared state of one pure fluid (set its state before every read)."""
    return _coolprop().AbstractState("HEOS", fluid)


@memoize(maxsize=None, kind="resource")
def _heos(mix: _Mixture) -> AbstractState | None:
    """Shared multi-fluid state of a mixture, or None when CoolProp has no model for it."""
    if len(mix.fluids) == 1:
        return _pure(mix.fluids[0])
    try:
        state = _coolprop().AbstractState("HEOS", mix.names)
    except ValueError:  # a binary pair without interaction parameters
        return None
    state.set_mole_fractions(list(mix.x))
    return state


@memoize(maxsize=256)
def _critical_temperature(mix: _Mixture) -> float:
    """Critical temperature of a pure fluid, pseudo-critical (Kay's rule) of a mixture [K]."""
    return sum(xi * _pure(f).T_critical() for f, xi in zip(mix.fluids, mix.x, strict=True))


def _freezing_limit(mix: _Mixture) -> float:
    return max(_pure(f).Ttriple() for f in mix.fluids)


def _molar_mass(mix: _Mixture) -> float:
    """Mean molar mass [kg/mol] (CoolProp's unit)."""
    return sum(xi * _pure(f).molar_mass() for f, xi in zip(mix.fluids, mix.x, strict=True))


def critical_temperature(fuel: Fuel | str) -> float:
    """Critical temperature of a gaseous fuel [K].

    Parameters
    ----------
    fuel : Fuel or str
        A gaseous fuel whose species all have CoolProp fluids.

    Returns
    -------
    float
        A pure fluid's critical temperature; for a mixture the pseudo-critical temperature,
        the mole-fraction mean of the components' (Kay's rule): 390 K for the library's LPG
        against 395 K for the mixture critical point of the multi-fluid model. The true
        mixture critical-point search of CoolProp 8.0 took 65 s and then failed for the
        library's natural gas, so it is not used.
    """
    return _critical_temperature(_gas_mixture(fuel)[1])


def freezing_limit(fuel: Fuel | str) -> float:
    """Lowest temperature the storage models accept for a gaseous fuel [K].

    Parameters
    ----------
    fuel : Fuel or str
        A gaseous fuel.

    Returns
    -------
    float
        The highest triple-point temperature among the fuel's components: conservative, since
        a dissolved component freezes out below its own triple point.
    """
    return _freezing_limit(_gas_mixture(fuel)[1])


def _gaseous(fuel: Fuel) -> Fuel:
    if not fuel.is_gas:
        raise InputError(fuel.id, "is a liquid fuel; vapour pressure and gas storage apply to "
                         "gaseous fuels")
    return fuel


def _gas_mixture(fuel: Fuel | str) -> tuple[Fuel, _Mixture]:
    """A gaseous fuel, loaded, and its CoolProp mixture."""
    fuel = _gaseous(load_fuel(fuel))
    return fuel, _mixture(fuel)


def _check_above_freezing(mix: _Mixture, fuel: Fuel, t: float) -> None:
    """Refuse a temperature at or below the freezing point of one of the fuel's components."""
    t_freeze = _freezing_limit(mix)
    if t <= t_freeze:
        raise InputError("temperature", f"{_celsius(t)} is at or below the freezing point "
                         f"of a component of {fuel.id} ({_celsius(t_freeze)}); use a "
                         "higher temperature")


def _per_point(fuel: Fuel | str, one: Callable[..., float],
               *conditions: ArrayLike) -> float | np.ndarray:
    """``one(mix, fuel, *values)`` of a gaseous fuel over broadcast arrays of conditions."""
    fuel, mix = _gas_mixture(fuel)
    return _elementwise(lambda *values: one(mix, fuel, *values), *conditions)


def _elementwise(func: Callable[..., float], *arrays: ArrayLike) -> float | np.ndarray:
    """Apply a scalar function over broadcast arrays; NaN in gives NaN out."""
    values = np.broadcast_arrays(*(np.asarray(a, dtype=float) for a in arrays))
    flat = [v.ravel() for v in values]
    out = np.array([func(*args) if all(math.isfinite(a) for a in args) else math.nan
                    for args in zip(*flat, strict=True)], dtype=float).reshape(values[0].shape)
    return float(out) if out.ndim == 0 else out



def _check_pressure(pressure: float, where: str = "pressure") -> None:
    if not pressure > 0:
        raise InputError(where, f"must be above zero (absolute), got {pressure / 1e5:g} bar")


def _celsius(t: float, spec: str = ".1f") -> str:
    """A temperature in kelvin as text in °C, for messages (``"-42.1 °C"``)."""
    return f"{t - ZERO_CELSIUS:{spec}} °C"
