"""Liquefied gases (LPG) at saturation: vapour pressure, liquid density, cold start.

A gas liquefied under its own vapour pressure (propane, butane, LPG) is a saturated liquid at
its bubble point, from CoolProp's multi-fluid model; where that has no model for a pair or a
flash fails, an ideal solution of the pure fluids (Raoult's law, additive liquid volumes).
"""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass

import numpy as np
import pandas as pd
from numpy.typing import ArrayLike
from scipy.optimize import brentq

from workbench.core.cache import memoize
from workbench.core.constants import P_STANDARD
from workbench.core.errors import InputError
from workbench.core.fuels import Fuel
from workbench.models.storage.fluids import (
    _celsius,
    _check_above_freezing,
    _check_pressure,
    _coolprop,
    _critical_temperature,
    _freezing_limit,
    _gas_mixture,
    _heos,
    _Mixture,
    _molar_mass,
    _per_point,
    _pure,
)

#: Gauge pressure an LPG feed system needs from the tank [Pa]: typical value, example. A
#: vapour-phase system's pressure regulator holds its outlet about 1 bar above manifold
#: pressure (common practice, no source) and needs some margin over that at full-load flow
#: through the tank valve, filter and lines, hence 1.5 bar gauge. Liquid-phase injection with an
#: in-tank pump needs less; set the value of the system at hand.
DEFAULT_FEED_PRESSURE = 1.5e5


@dataclass(frozen=True)
class _Saturation:
    pressure: float
    density: float
    method: str


@memoize(maxsize=8192)
def _saturated(mix: _Mixture, temperature: float) -> _Saturation:
    CP = _coolprop()
    state = _heos(mix)
    if state is not None:
        try:
            state.unspecify_phase()
            state.update(CP.QT_INPUTS, 0.0, temperature)
            p, rho = float(state.p()), float(state.rhomass())
            if p > 0 and math.isfinite(rho):
                return _Saturation(p, rho, "CoolProp HEOS")
        except ValueError:
            pass
    return _ideal_saturated(mix, temperature)


def _ideal_saturated(mix: _Mixture, temperature: float) -> _Saturation:
    """Raoult's law and additive liquid volumes over the pure fluids."""
    CP = _coolprop()
    p = 0.0
    volume = 0.0  # molar volume of the liquid [m3/mol]
    for fluid, xi in zip(mix.fluids, mix.x, strict=True):
        state = _pure(fluid)
        if temperature >= state.T_critical():
            raise InputError("temperature", f"{_celsius(temperature)}: CoolProp has no "
                             f"converged bubble point for this blend and {fluid} is above its "
                             "critical point; use a lower temperature")
        state.update(CP.QT_INPUTS, 0.0, temperature)
        p += xi * state.p()
        volume += xi / state.rhomolar()
    return _Saturation(p, _molar_mass(mix) / volume, "ideal solution (Raoult, Amagat)")


def _check_saturation_temperature(mix: _Mixture, fuel: Fuel, t: float) -> None:
    if not math.isfinite(t):
        return
    _check_above_freezing(mix, fuel, t)
    t_crit = _critical_temperature(mix)
    if t >= t_crit:
        raise InputError("temperature", f"{_celsius(t)} is above the critical "
                         f"temperature of {fuel.id} ({_celsius(t_crit)}), where it cannot "
                         "stay liquid; use a lower temperature")


def _saturation_property(fuel: Fuel | str, temperature: ArrayLike,
                         read: Callable[[_Saturation], float]) -> float | np.ndarray:
    def one(mix: _Mixture, fuel: Fuel, t: float) -> float:
        _check_saturation_temperature(mix, fuel, t)
        return read(_saturated(mix, t))

    return _per_point(fuel, one, temperature)


def vapour_pressure(fuel: Fuel | str, temperature: ArrayLike) -> float | np.ndarray:
    """Bubble-point (vapour) pressure of a liquefied gas or blend [Pa].

    Parameters
    ----------
    fuel : Fuel or str
        A gaseous fuel (propane, n-butane, LPG, ...).
    temperature : array_like
        Liquid temperature [K]; NaN gives NaN.

    Returns
    -------
    float or numpy.ndarray
        Absolute pressure [Pa] at which the liquid of the fuel's composition starts to boil:
        the pressure in a tank that holds mostly liquid.

    Raises
    ------
    InputError
        A temperature at or below the freezing limit or at or above the critical temperature.

    Notes
    -----
    CoolProp's bubble-point flash on the multi-fluid model (``QT_INPUTS`` with Q = 0); where
    that fails, Raoult's law :math:`p = \\sum_i x_i p_{sat,i}(T)` over the pure fluids.

    Examples
    --------
    >>> round(vapour_pressure("propane", 288.15) / 1e5, 2)  # doctest: +SKIP
    7.32
    """
    return _saturation_property(fuel, temperature, lambda s: s.pressure)


def saturated_liquid_density(fuel: Fuel | str, temperature: ArrayLike) -> float | np.ndarray:
    """Density of the saturated liquid of a liquefied gas or blend [kg/m3].

    Parameters
    ----------
    fuel : Fuel or str
        A gaseous fuel.
    temperature : array_like
        Liquid temperature [K]; NaN gives NaN.

    Returns
    -------
    float or numpy.ndarray
        Liquid density at the bubble point [kg/m3]; the ideal-solution fallback adds the pure
        liquids' molar volumes.
    """
    return _saturation_property(fuel, temperature, lambda s: s.density)


def bubble_temperature(fuel: Fuel | str, pressure: float, *, where: str = "pressure") -> float:
    """Temperature at which a liquefied gas's vapour pressure equals ``pressure`` [K].

    Parameters
    ----------
    fuel : Fuel or str
        A gaseous fuel.
    pressure : float
        Absolute pressure [Pa].
    where : str
        Name of the input that error messages name.

    Returns
    -------
    float
        Bubble-point temperature [K].

    Raises
    ------
    InputError
        A non-positive pressure, or one the blend's liquid never reaches between its freezing
        limit and its critical point.

    Notes
    -----
    CoolProp's ``PQ_INPUTS`` flash; where it fails, the root of the ideal-solution vapour
    pressure between the freezing limit and the lowest critical temperature of the components.
    """
    fuel, mix = _gas_mixture(fuel)
    _check_pressure(pressure, where)
    t_freeze = _freezing_limit(mix)
    t = _heos_bubble_temperature(mix, pressure)
    if t is None:
        t = _ideal_bubble_temperature(mix, pressure, fuel, where)
    if t <= t_freeze:
        raise InputError(where, f"at {pressure / 1e5:.4g} bar {fuel.id} boils at "
                         f"{_celsius(t)}, below the freezing point of one of its "
                         f"components ({_celsius(t_freeze)}); remove that component")
    return t


def _heos_bubble_temperature(mix: _Mixture, pressure: float) -> float | None:
    state = _heos(mix)
    if state is None:
        return None
    try:
        state.unspecify_phase()
        state.update(_coolprop().PQ_INPUTS, pressure, 0.0)
    except ValueError:
        return None
    t = float(state.T())
    return t if 0 < t < _critical_temperature(mix) else None


def _ideal_bubble_temperature(mix: _Mixture, pressure: float, fuel: Fuel, where: str) -> float:
    lo = max(_pure(f).Tmin() for f in mix.fluids) + 1e-6
    hi = min(_pure(f).T_critical() for f in mix.fluids) - 1e-6

    def excess(t: float) -> float:
        return _ideal_saturated(mix, t).pressure - pressure

    if lo >= hi or excess(lo) > 0 or excess(hi) < 0:
        raise InputError(where, f"{pressure / 1e5:.4g} bar: no bubble point of {fuel.id} "
                         "found (CoolProp's mixture flash failed and the ideal-solution "
                         "fallback has no root below the components' critical points)")
    return float(brentq(excess, lo, hi, xtol=1e-6))


def cold_start_temperature(
    fuel: Fuel | str,
    *,
    feed_pressure: float = DEFAULT_FEED_PRESSURE,
    ambient_pressure: float = P_STANDARD,
) -> float:
    """Temperature below which a liquefied gas no longer feeds the engine [K].

    Parameters
    ----------
    fuel : Fuel or str
        A liquefied gas or blend (LPG).
    feed_pressure : float, optional
        Gauge pressure the feed system needs from the tank [Pa];
        :data:`DEFAULT_FEED_PRESSURE` (typical value) by default.
    ambient_pressure : float, optional
        Atmospheric pressure [Pa].

    Returns
    -------
    float
        The bubble-point temperature at ``feed_pressure + ambient_pressure`` [K]: below it
        the tank pressure falls short of what the feed system needs.

    Notes
    -----
    The tank is taken at the ambient temperature, as after a cold night parked. Liquid is
    drawn from the tank, so the liquid's composition stays that of the fuel; vapour
    withdrawal would boil off the propane first and lower the pressure further.
    """
    if not feed_pressure >= 0:
        raise InputError("feed_pressure", f"must be zero or more (gauge), got {feed_pressure:g}")
    return bubble_temperature(fuel, feed_pressure + ambient_pressure, where="feed_pressure")


def vapour_pressure_table(
    fuel: Fuel | str,
    temperature: ArrayLike,
    *,
    feed_pressure: float = DEFAULT_FEED_PRESSURE,
    ambient_pressure: float = P_STANDARD,
) -> pd.DataFrame:
    """Vapour pressure, liquid density and whether the engine is fed, against temperature.

    Parameters
    ----------
    fuel : Fuel or str
        A liquefied gas or blend.
    temperature : array_like
        Temperatures [K] (flattened).
    feed_pressure : float, optional
        Gauge pressure the feed system needs [Pa].
    ambient_pressure : float, optional
        Atmospheric pressure [Pa].

    Returns
    -------
    pandas.DataFrame
        One row per temperature: ``temperature_k`` [K], ``vapour_pressure_pa`` [Pa absolute],
        ``vapour_pressure_gauge_pa`` [Pa], ``liquid_density_kg_per_m3`` [kg/m3],
        ``feeds_engine`` (gauge vapour pressure at least ``feed_pressure``) and ``method``.
    """
    fuel, mix = _gas_mixture(fuel)
    t = np.atleast_1d(np.asarray(temperature, dtype=float)).ravel()
    p = np.atleast_1d(vapour_pressure(fuel, t))
    rho = np.atleast_1d(saturated_liquid_density(fuel, t))
    method = [_saturated(mix, float(ti)).method if math.isfinite(ti) else "" for ti in t]
    return pd.DataFrame({
        "temperature_k": t,
        "vapour_pressure_pa": p,
        "vapour_pressure_gauge_pa": p - ambient_pressure,
        "liquid_density_kg_per_m3": rho,
        "feeds_engine": p - ambient_pressure >= feed_pressure,
        "method": method,
    })
