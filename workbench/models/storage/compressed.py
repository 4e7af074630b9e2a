"""Compressed gases: density and compressibility factor at the storage pressure.

A supercritical gas (natural gas at 200 or 250 bar, hydrogen at 350 or 700 bar) from CoolProp's
multi-fluid model with the single phase imposed (the unimposed mixture flash's phase-stability
search hung for minutes in CoolProp 8.0 on a natural gas at -20 °C and 200 bar); where that
fails, Amagat's law over the pure fluids.
"""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike

from workbench.core.cache import memoize
from workbench.core.errors import InputError
from workbench.core.fuels import Fuel
from workbench.models.storage.fluids import (
    _celsius,
    _check_above_freezing,
    _check_pressure,
    _coolprop,
    _critical_temperature,
    _heos,
    _Mixture,
    _molar_mass,
    _per_point,
    _pure,
)

#: Storage pressure assumed for a compressed gas that declares none [Pa] (200 bar, common
#: practice, no source).
DEFAULT_COMPRESSED_PRESSURE = 200e5


@dataclass(frozen=True)
class _GasState:
    density: float
    compressibility_factor: float
    method: str


@memoize(maxsize=8192)
def _gas(mix: _Mixture, temperature: float, pressure: float) -> _GasState:
    CP = _coolprop()
    state = _heos(mix)
    if state is not None:
        try:
            state.specify_phase(CP.iphase_supercritical)
            state.update(CP.PT_INPUTS, pressure, temperature)
            rho, z = float(state.rhomass()), float(state.compressibility_factor())
            if rho > 0 and math.isfinite(z):
                return _GasState(rho, z, "CoolProp HEOS")
        except ValueError:
            pass
        finally:
            state.unspecify_phase()
    volume = 0.0  # molar volume [m3/mol], additive (Amagat)
    for fluid, xi in zip(mix.fluids, mix.x, strict=True):
        pure = _pure(fluid)
        pure.update(CP.PT_INPUTS, pressure, temperature)
        volume += xi / pure.rhomolar()
    z = pressure * volume / (_pure(mix.fluids[0]).gas_constant() * temperature)
    return _GasState(_molar_mass(mix) / volume, z, "Amagat's law over pure fluids")



def _gas_property(fuel: Fuel | str, temperature: ArrayLike, pressure: ArrayLike,
                  read: Callable[[_GasState], float]) -> float | np.ndarray:
    def one(mix: _Mixture, fuel: Fuel, t: float, p: float) -> float:
        _check_compressed(mix, fuel, t, p)
        return read(_gas(mix, t, p))

    return _per_point(fuel, one, temperature, pressure)


def _check_compressed(mix: _Mixture, fuel: Fuel, t: float, p: float) -> None:
    _check_pressure(p)
    _check_above_freezing(mix, fuel, t)
    t_crit = _critical_temperature(mix)
    if t <= t_crit:
        raise InputError("temperature", f"{_celsius(t)} is below the critical temperature "
                         f"of {fuel.id} ({_celsius(t_crit)}): compressed, it would "
                         "liquefy; store it liquefied or warmer")


def compressed_gas_density(
    fuel: Fuel | str, temperature: ArrayLike, pressure: ArrayLike
) -> float | np.ndarray:
    """Density of a compressed gas [kg/m3].

    Parameters
    ----------
    fuel : Fuel or str
        A gaseous fuel above its critical temperature (methane, natural gas, hydrogen).
    temperature : array_like
        Gas temperature [K].
    pressure : array_like
        Absolute pressure [Pa]; broadcast against ``temperature``.

    Returns
    -------
    float or numpy.ndarray
        Density [kg/m3] from CoolProp's multi-fluid model with the single (supercritical)
        phase imposed; Amagat's law over the pure fluids where that fails.

    Raises
    ------
    InputError
        A non-positive pressure, or a temperature at or below the fuel's critical
        temperature or freezing limit.

    Examples
    --------
    >>> round(compressed_gas_density("methane", 288.15, 200e5), 1)  # doctest: +SKIP
    167.8
    """
    return _gas_property(fuel, temperature, pressure, lambda s: s.density)


def compressibility_factor(
    fuel: Fuel | str, temperature: ArrayLike, pressure: ArrayLike
) -> float | np.ndarray:
    """Compressibility factor :math:`Z = p M / (\\rho R T)` of a compressed gas [-].

    Parameters
    ----------
    fuel : Fuel or str
        A gaseous fuel above its critical temperature.
    temperature : array_like
        Gas temperature [K].
    pressure : array_like
        Absolute pressure [Pa].

    Returns
    -------
    float or numpy.ndarray
        Z [-]: below 1 where attraction dominates (natural gas at 200 bar), above 1 where
        repulsion does (hydrogen at 700 bar).
    """
    return _gas_property(fuel, temperature, pressure, lambda s: s.compressibility_factor)
