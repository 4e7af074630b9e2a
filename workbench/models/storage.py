"""On-board storage: what each fuel costs in tank space, mass and cold weather.

Four storage models, one per :data:`workbench.core.fuels.STORAGE_KINDS` kind:

``"liquid"``
    A liquid at ambient pressure (diesel, gasoline). Density is the fuel's declared density at
    15 °C corrected for temperature with the volume-correction equation of the petroleum
    measurement tables (ASTM D1250-80 / API MPMS 11.1, Table 54B "generalized products").
``"liquefied"``
    A gas liquefied under its own vapour pressure (propane, butane, LPG): saturated liquid at
    the bubble point, from the reference equations of state in CoolProp.
``"compressed"``
    A supercritical gas at the storage pressure (natural gas at 200 or 250 bar, hydrogen at 350
    or 700 bar): density and compressibility factor from CoolProp.
``"cryogenic"``
    A liquid at its bubble point for the tank pressure (LNG, liquid hydrogen).

Gas mixtures use CoolProp's multi-fluid Helmholtz model (backend ``"HEOS"``, GERG-2008-type
mixing functions). When CoolProp has no model for a pair (propylene with butane, for example)
or a flash fails, the functions fall back to an ideal solution of the pure fluids (Raoult's law
for the bubble pressure, additive volumes for densities, Amagat's law for gases) and say so in
the ``method`` they report. Compressed-gas flashes are run with the single phase imposed: the
unimposed mixture flash runs a phase-stability search that, in CoolProp 8.0, hung for minutes
on a natural gas at -20 °C and 200 bar.

Tank systems (:class:`TankType`) add a usable-fill fraction, the mass of the empty tank and
its installed envelope per litre of water volume; :func:`size_tank` and :func:`tank_range`
turn them into litres and kilograms for a range. The shipped tank figures are typical values,
example: replace them with the supplier's data for a study.

References
----------
.. [1] E. W. Lemmon, M. O. McLinden, W. Wagner, J. Chem. Eng. Data 54 (2009) 3141 (propane).
.. [2] D. Buecker, W. Wagner, J. Phys. Chem. Ref. Data 35 (2006) 929 (n-butane, isobutane).
.. [3] U. Setzmann, W. Wagner, J. Phys. Chem. Ref. Data 20 (1991) 1061 (methane).
.. [4] J. W. Leachman et al., J. Phys. Chem. Ref. Data 38 (2009) 721 (hydrogen).
.. [5] O. Kunz, W. Wagner, J. Chem. Eng. Data 57 (2012) 3032 (GERG-2008 mixtures).
.. [6] I. H. Bell et al., Ind. Eng. Chem. Res. 53 (2014) 2498 (CoolProp).
.. [7] ASTM D1250-80 / API MPMS Ch. 11.1 / IP 200, Table 54B (volume correction to 15 °C).
"""

from __future__ import annotations

import math
from collections.abc import Callable, Iterable
from dataclasses import dataclass
from typing import TYPE_CHECKING, Any

import numpy as np
import pandas as pd
from numpy.typing import ArrayLike
from scipy.optimize import brentq

from workbench.core.cache import memoize
from workbench.core.errors import InputError
from workbench.core.fuels import STORAGE_KINDS, Fuel, StorageSpec, load_fuel
from workbench.models.combustion import fuel_sheet

if TYPE_CHECKING:
    from CoolProp.CoolProp import AbstractState

#: Reference temperature of the default stored state and of liquid densities [K] (15 °C).
T_REFERENCE = 288.15
#: Ambient (atmospheric) pressure used for gauge pressures and liquid tanks [Pa].
P_AMBIENT = 101325.0
#: Gauge pressure an LPG feed system needs from the tank [Pa]: typical value, example. A
#: vapour-phase system's pressure regulator holds its outlet about 1 bar above manifold
#: pressure (common practice, no source) and needs some margin over that at full-load flow
#: through the tank valve, filter and lines, hence 1.5 bar gauge. Liquid-phase injection with an
#: in-tank pump needs less; set the value of the system at hand.
DEFAULT_FEED_PRESSURE = 1.5e5
#: Storage pressure assumed for a compressed gas that declares none [Pa] (200 bar, common
#: practice, no source).
DEFAULT_COMPRESSED_PRESSURE = 200e5
#: Tank pressure of a cryogenic liquid [Pa]: typical value, example (vehicle LNG tanks hold the
#: liquid near saturation at a few bar absolute).
DEFAULT_CRYOGENIC_PRESSURE = 4e5
#: Temperatures the liquid-fuel model accepts [K]: -40 °C to +70 °C, the service range of
#: vehicle fuel tanks (typical value). Diesel grades gel well above -40 °C in summer grades:
#: check the grade's cold filter plugging point.
LIQUID_TEMPERATURE_RANGE = (233.15, 343.15)

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

#: ASTM D1250-80 Table 54B bands: (upper density [kg/m3], K0 [kg2/m6/K], K1 [kg/m3/K],
#: A [1/K]) with alpha15 = K0/rho^2 + K1/rho + A. Constants from memory; they join up at
#: the band edges to four digits, which tests/test_storage.py checks.
_TABLE_54B = (
    (770.5, 346.4228, 0.4388, 0.0),  # gasolines, from 653 kg/m3
    (787.5, 2680.3206, 0.0, -0.00336312),  # transition zone
    (838.5, 594.5418, 0.0, 0.0),  # jet fuels, kerosene
    (1075.0, 186.9696, 0.4862, 0.0),  # fuel oils, diesel
)
_TABLE_54B_LOWEST = 653.0


# ----------------------------------------------------------------------------- fluids


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
    return _critical_temperature(_mixture(_gaseous(load_fuel(fuel))))


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
    return _freezing_limit(_mixture(_gaseous(load_fuel(fuel))))


def _gaseous(fuel: Fuel) -> Fuel:
    if not fuel.is_gas:
        raise InputError(fuel.id, "is a liquid fuel; vapour pressure and gas storage apply to "
                         "gaseous fuels")
    return fuel


# ----------------------------------------------------------------------------- saturation


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
            raise InputError("temperature", f"{temperature - 273.15:.1f} °C: CoolProp has no "
                             f"converged bubble point for this blend and {fluid} is above its "
                             "critical point; use a lower temperature")
        state.update(CP.QT_INPUTS, 0.0, temperature)
        p += xi * state.p()
        volume += xi / state.rhomolar()
    return _Saturation(p, _molar_mass(mix) / volume, "ideal solution (Raoult, Amagat)")


def _check_saturation_temperature(mix: _Mixture, fuel: Fuel, t: float) -> None:
    if not math.isfinite(t):
        return
    t_freeze = _freezing_limit(mix)
    if t <= t_freeze:
        raise InputError("temperature", f"{t - 273.15:.1f} °C is at or below the freezing point "
                         f"of a component of {fuel.id} ({t_freeze - 273.15:.1f} °C); use a "
                         "higher temperature")
    t_crit = _critical_temperature(mix)
    if t >= t_crit:
        raise InputError("temperature", f"{t - 273.15:.1f} °C is above the critical "
                         f"temperature of {fuel.id} ({t_crit - 273.15:.1f} °C), where it cannot "
                         "stay liquid; use a lower temperature")


def _elementwise(func: Callable[..., float], *arrays: ArrayLike) -> float | np.ndarray:
    """Apply a scalar function over broadcast arrays; NaN in gives NaN out."""
    values = np.broadcast_arrays(*(np.asarray(a, dtype=float) for a in arrays))
    flat = [v.ravel() for v in values]
    out = np.array([func(*args) if all(math.isfinite(a) for a in args) else math.nan
                    for args in zip(*flat, strict=True)], dtype=float).reshape(values[0].shape)
    return float(out) if out.ndim == 0 else out


def _saturation_property(fuel: Fuel | str, temperature: ArrayLike,
                         read: Callable[[_Saturation], float]) -> float | np.ndarray:
    fuel = _gaseous(load_fuel(fuel))
    mix = _mixture(fuel)

    def one(t: float) -> float:
        _check_saturation_temperature(mix, fuel, t)
        return read(_saturated(mix, t))

    return _elementwise(one, temperature)


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
    fuel = _gaseous(load_fuel(fuel))
    _check_pressure(pressure, where)
    mix = _mixture(fuel)
    t_freeze = _freezing_limit(mix)
    t = _heos_bubble_temperature(mix, pressure)
    if t is None:
        t = _ideal_bubble_temperature(mix, pressure, fuel, where)
    if t <= t_freeze:
        raise InputError(where, f"at {pressure / 1e5:.4g} bar {fuel.id} boils at "
                         f"{t - 273.15:.1f} °C, below the freezing point of one of its "
                         f"components ({t_freeze - 273.15:.1f} °C); remove that component")
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
    ambient_pressure: float = P_AMBIENT,
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
    ambient_pressure: float = P_AMBIENT,
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
    fuel = _gaseous(load_fuel(fuel))
    mix = _mixture(fuel)
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


# ----------------------------------------------------------------------------- compressed gas


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


def _check_pressure(pressure: float, where: str = "pressure") -> None:
    if not pressure > 0:
        raise InputError(where, f"must be above zero (absolute), got {pressure / 1e5:g} bar")


def _gas_property(fuel: Fuel | str, temperature: ArrayLike, pressure: ArrayLike,
                  read: Callable[[_GasState], float]) -> float | np.ndarray:
    fuel = _gaseous(load_fuel(fuel))
    mix = _mixture(fuel)

    def one(t: float, p: float) -> float:
        _check_compressed(mix, fuel, t, p)
        return read(_gas(mix, t, p))

    return _elementwise(one, temperature, pressure)


def _check_compressed(mix: _Mixture, fuel: Fuel, t: float, p: float) -> None:
    _check_pressure(p)
    t_freeze = _freezing_limit(mix)
    if t <= t_freeze:
        raise InputError("temperature", f"{t - 273.15:.1f} °C is at or below the freezing point "
                         f"of a component of {fuel.id} ({t_freeze - 273.15:.1f} °C)")
    t_crit = _critical_temperature(mix)
    if t <= t_crit:
        raise InputError("temperature", f"{t - 273.15:.1f} °C is below the critical temperature "
                         f"of {fuel.id} ({t_crit - 273.15:.1f} °C): compressed, it would "
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


# ----------------------------------------------------------------------------- liquids


def thermal_expansion_coefficient(density_15: float, *, where: str = "density_15") -> float:
    """Thermal expansion coefficient of a petroleum liquid at 15 °C [1/K].

    Parameters
    ----------
    density_15 : float
        Density at 15 °C [kg/m3], 653 to 1075.
    where : str, optional
        Name of the input that error messages name.

    Returns
    -------
    float
        :math:`\\alpha_{15} = K_0/\\rho_{15}^2 + K_1/\\rho_{15} + A` with the constants of the
        density band (ASTM D1250-80 Table 54B, generalized products; from memory): about
        0.00085 1/K for a diesel of 835 kg/m3 and 0.0012 1/K for a gasoline of 745 kg/m3.

    Raises
    ------
    InputError
        A density outside the table's 653–1075 kg/m3.
    """
    if not _TABLE_54B_LOWEST <= density_15 <= _TABLE_54B[-1][0]:
        raise InputError(where, f"{density_15:g} kg/m3 is outside the "
                         f"{_TABLE_54B_LOWEST:g}–{_TABLE_54B[-1][0]:g} kg/m3 of the volume-"
                         "correction table; give thermal_expansion explicitly")
    k0, k1, a = next(band[1:] for band in _TABLE_54B if density_15 <= band[0])
    return k0 / density_15**2 + k1 / density_15 + a


def liquid_density(
    fuel: Fuel | str, temperature: ArrayLike, *, thermal_expansion: float | None = None
) -> float | np.ndarray:
    """Density of a liquid fuel at a temperature [kg/m3].

    Parameters
    ----------
    fuel : Fuel or str
        A liquid fuel with a declared density at 15 °C (``Fuel.liquid_density``).
    temperature : array_like
        Liquid temperature [K], within :data:`LIQUID_TEMPERATURE_RANGE`.
    thermal_expansion : float, optional
        Thermal expansion coefficient at 15 °C [1/K]; from
        :func:`thermal_expansion_coefficient` by default.

    Returns
    -------
    float or numpy.ndarray
        :math:`\\rho = \\rho_{15} \\exp(-\\alpha \\Delta T (1 + 0.8 \\alpha \\Delta T))` with
        :math:`\\Delta T = T - 288.15` (the volume-correction factor of ASTM D1250-80).
    """
    fuel = load_fuel(fuel)
    if fuel.is_gas:
        raise InputError(fuel.id, "is a gas at 15 °C; use the liquefied or compressed model")
    if fuel.liquid_density is None:
        raise InputError(f"{fuel.id}: [liquid].density_kg_per_m3", "is needed for liquid "
                         "storage; add a [liquid] table to the fuel file")
    alpha = thermal_expansion
    if alpha is None:
        alpha = thermal_expansion_coefficient(
            fuel.liquid_density, where=f"{fuel.id}: [liquid].density_kg_per_m3")
    lo, hi = LIQUID_TEMPERATURE_RANGE
    t = np.asarray(temperature, dtype=float)
    bad = t[np.isfinite(t) & ((t < lo) | (t > hi))]
    if bad.size:
        raise InputError("temperature", f"{bad.flat[0] - 273.15:.1f} °C is outside "
                         f"{lo - 273.15:.0f}…{hi - 273.15:.0f} °C, the range the liquid-fuel "
                         "model covers (below it diesel gels)")
    dt = t - T_REFERENCE
    rho = fuel.liquid_density * np.exp(-alpha * dt * (1.0 + 0.8 * alpha * dt))
    return float(rho) if rho.ndim == 0 else rho


# ----------------------------------------------------------------------------- stored state


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
    if _critical_temperature(_mixture(fuel)) > T_REFERENCE:
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
        raise InputError("temperature", f"must be above absolute zero, got {t - 273.15:g} °C")
    lhv = fuel_sheet(fuel).lhv_mass
    nan = math.nan
    if kind == "liquid":
        rho = liquid_density(fuel, t)
        return StoredState(fuel, kind, t, P_AMBIENT, rho, nan, nan, lhv,
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
    if _critical_temperature(mix) > T_REFERENCE:
        raise InputError("kind", f"{fuel.id} liquefies under pressure at ambient temperature; "
                         "store it liquefied, not cryogenic")
    p = DEFAULT_CRYOGENIC_PRESSURE if pressure is None else float(pressure)
    t_boil = bubble_temperature(fuel, p)
    sat = _saturated(mix, t_boil)
    return StoredState(fuel, kind, t_boil, p, sat.density, sat.pressure, nan, lhv, sat.method)


# ----------------------------------------------------------------------------- tanks


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
    state = stored_state(fuel, temperature=None if kind == "cryogenic" else T_REFERENCE)
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
        "temperature_c": state.temperature - 273.15,
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
