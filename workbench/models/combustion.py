"""Thermochemistry of burning a fuel in air, computed with Cantera.

The fuel property sheet (:func:`fuel_sheet`), complete-combustion exhaust at any lambda
(:func:`exhaust`), and adiabatic flame temperature with HP-equilibrium products
(:func:`flame_state`, :func:`flame_table`).

Air models
----------
``"21/79"`` (default)
    21 % O2 and 79 % N2 by mole: 3.76 mol N2 per mol O2, 4.76 mol air per mol O2, about
    28.85 kg/kmol with Cantera's atomic weights (28.84 with integer ones). Common practice in
    combustion texts, no source.
``"dry"``
    Standard dry air: N2 78.084 %, O2 20.9476 %, Ar 0.934 %, CO2 0.0314 % by mole, normalised
    (U.S. Standard Atmosphere, 1976, Table 3; from memory).

References
----------
.. [1] S. R. Turns, An Introduction to Combustion, 3rd ed., McGraw-Hill, 2012, ch. 2.
.. [2] J. B. Heywood, Internal Combustion Engine Fundamentals, McGraw-Hill, 1988, ch. 3–4.
.. [3] ISO 13443:1996, Natural gas — Standard reference conditions (15 °C, 101.325 kPa).
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass
from typing import Literal

import cantera as ct
import numpy as np
import pandas as pd
from numpy.typing import ArrayLike

from workbench.core import thermo
from workbench.core.cache import memoize
from workbench.core.constants import MOLAR_VOLUME_STANDARD, P_REF, P_STANDARD, T_REF
from workbench.core.errors import InputError
from workbench.core.fuels import Fuel, complete_products, load_fuel, oxygen_demand

AirModel = Literal["21/79", "dry"]
#: Mole fractions of each air model.
AIR_MODELS: dict[str, dict[str, float]] = {
    "21/79": {"O2": 0.21, "N2": 0.79},
    "dry": {"N2": 0.78084, "O2": 0.209476, "AR": 0.00934, "CO2": 0.000314},
}
#: Water-gas shift constant used for rich exhaust, K = (CO·H2O)/(CO2·H2) (Heywood 1988, sec. 4.2;
#: the customary 3.5, from memory).
K_WATER_GAS_SHIFT = 3.5
#: Molar mass of CO2 [kg/kmol].
M_CO2 = thermo.molar_mass({"C": 1, "O": 2})
#: Molar mass of methane [kg/kmol].
M_CH4 = thermo.molar_mass({"C": 1, "H": 4})
M_H2O = thermo.molar_mass({"H": 2, "O": 1})


def air_composition(air: str) -> dict[str, float]:
    """Mole fractions of an air model.

    Parameters
    ----------
    air : {"21/79", "dry"}
        Air model name.

    Returns
    -------
    dict of str to float
        Normalised mole fractions [-].
    """
    if air not in AIR_MODELS:
        raise InputError("air", f"unknown air model {air!r}; use one of {', '.join(AIR_MODELS)}")
    x = AIR_MODELS[air]
    total = sum(x.values())
    return {k: v / total for k, v in x.items()}


def air_molar_mass(air: str = "21/79") -> float:
    """Molar mass of an air model [kg/kmol]."""
    return sum(x * thermo.molar_mass(_formula(sp)) for sp, x in air_composition(air).items())


def _formula(species: str) -> dict[str, float]:
    return dict(thermo.find_species(species).composition)


@dataclass(frozen=True)
class FuelSheet:
    """Thermochemical properties of a fuel burned in air.

    Attributes
    ----------
    fuel_id : str
        Fuel id.
    name : str
        Fuel name.
    is_gas : bool
        Gaseous at 15 °C, 1 atm.
    air : str
        Air model used for the air requirement.
    molar_mass : float
        Mean molar mass [kg/kmol].
    carbon_mass_fraction, hydrogen_mass_fraction, oxygen_mass_fraction : float
        Element mass fractions [-].
    sulfur_mass_fraction, nitrogen_mass_fraction : float
        Element mass fractions [-] (nitrogen includes N2 diluent).
    h_to_c_ratio : float
        Atomic hydrogen-to-carbon ratio [-].
    stoich_afr_mass : float
        Stoichiometric air–fuel ratio [kg air/kg fuel].
    stoich_afr_mole : float
        Stoichiometric air–fuel ratio [kmol air/kmol fuel].
    lhv_mass, hhv_mass : float
        Lower and higher heating values at 25 °C [J/kg].
    lhv_mole, hhv_mole : float
        The same per kmol [J/kmol].
    lhv_volume, hhv_volume : float
        Per standard cubic metre at 15 °C, 101.325 kPa, ideal gas [J/m3]; NaN for liquids.
    wobbe_index : float
        Gross (HHV) Wobbe index at the same reference [J/m3]; NaN for liquids.
    relative_density : float
        Gas density relative to air of the same model, ideal gas [-]; NaN for liquids.
    co2_mass : float
        CO2 from complete combustion [kg CO2/kg fuel].
    co2_per_energy : float
        CO2 per unit of LHV [kg/J].
    water_mass : float
        Water from combustion [kg H2O/kg fuel].
    liquid_density : float or None
        Liquid density at 15 °C [kg/m3].
    """

    fuel_id: str
    name: str
    is_gas: bool
    air: str
    molar_mass: float
    carbon_mass_fraction: float
    hydrogen_mass_fraction: float
    oxygen_mass_fraction: float
    nitrogen_mass_fraction: float
    sulfur_mass_fraction: float
    h_to_c_ratio: float
    stoich_afr_mass: float
    stoich_afr_mole: float
    lhv_mass: float
    hhv_mass: float
    lhv_mole: float
    hhv_mole: float
    lhv_volume: float
    hhv_volume: float
    wobbe_index: float
    relative_density: float
    co2_mass: float
    co2_per_energy: float
    water_mass: float
    liquid_density: float | None


def fuel_sheet(fuel: Fuel | str, *, air: AirModel = "21/79") -> FuelSheet:
    """Compute a fuel's property sheet.

    Parameters
    ----------
    fuel : Fuel or str
        The fuel, or a library id / file path.
    air : {"21/79", "dry"}
        Air model for the air requirement.

    Returns
    -------
    FuelSheet

    Notes
    -----
    Heating values are the enthalpy released by complete combustion at 298.15 K to CO2,
    SO2, N2 and water as vapour (LHV) or liquid (HHV), from the species' standard enthalpies
    in Cantera's databases; the water's enthalpy of vaporisation is
    :data:`workbench.core.thermo.H_VAP_WATER_298`. Stoichiometric air is
    :math:`(C + H/4 + S - O/2)/x_{O_2}` moles per mole of fuel.

    Examples
    --------
    >>> round(fuel_sheet("propane").lhv_mass / 1e6, 1)  # doctest: +SKIP
    46.4
    """
    fuel = load_fuel(fuel)
    return _sheet(fuel, air)


@memoize(maxsize=256)
def _sheet(fuel: Fuel, air: str) -> FuelSheet:
    x_air = air_composition(air)
    atoms = fuel.elements_per_mole()
    mw = thermo.molar_mass(atoms)
    y = {el: n * thermo.atomic_weight(el) / mw for el, n in atoms.items()}
    demand = oxygen_demand(atoms)
    if demand <= 0:
        raise InputError(fuel.id, "has nothing to burn (its oxygen demand is not positive)")
    afr_mole = demand / x_air["O2"]
    afr_mass = afr_mole * air_molar_mass(air) / mw
    lhv_mole = _heat_of_combustion(fuel, atoms)
    n_water = complete_products(atoms).get("H2O", 0.0)
    hhv_mole = lhv_mole + n_water * thermo.H_VAP_WATER_298
    co2_mass = atoms.get("C", 0.0) * M_CO2 / mw
    if fuel.is_gas:
        lhv_vol = lhv_mole / MOLAR_VOLUME_STANDARD
        hhv_vol = hhv_mole / MOLAR_VOLUME_STANDARD
        rel_density = mw / air_molar_mass(air)
        wobbe = hhv_vol / math.sqrt(rel_density)
    else:
        lhv_vol = hhv_vol = wobbe = rel_density = math.nan
    return FuelSheet(
        fuel_id=fuel.id,
        name=fuel.name,
        is_gas=fuel.is_gas,
        air=air,
        molar_mass=mw,
        carbon_mass_fraction=y.get("C", 0.0),
        hydrogen_mass_fraction=y.get("H", 0.0),
        oxygen_mass_fraction=y.get("O", 0.0),
        nitrogen_mass_fraction=y.get("N", 0.0),
        sulfur_mass_fraction=y.get("S", 0.0),
        h_to_c_ratio=atoms.get("H", 0.0) / atoms["C"] if atoms.get("C") else math.inf,
        stoich_afr_mass=afr_mass,
        stoich_afr_mole=afr_mole,
        lhv_mass=lhv_mole / mw,
        hhv_mass=hhv_mole / mw,
        lhv_mole=lhv_mole,
        hhv_mole=hhv_mole,
        lhv_volume=lhv_vol,
        hhv_volume=hhv_vol,
        wobbe_index=wobbe,
        relative_density=rel_density,
        co2_mass=co2_mass,
        co2_per_energy=co2_mass / (lhv_mole / mw),
        water_mass=n_water * M_H2O / mw,
        liquid_density=fuel.liquid_density,
    )


def _heat_of_combustion(fuel: Fuel, atoms: Mapping[str, float]) -> float:
    """LHV per kmol of fuel mixture at 298.15 K [J/kmol]."""
    gas = fuel.gas_phase()
    products = complete_products(atoms)
    if "SO2" in products:  # SO2 is not a GRI-Mech species; the fuel's phase has it then
        gas = thermo.phase(tuple(sorted({*fuel.database_species, "SO2"})), fuel.pseudo)
    reactants = dict(fuel.composition)
    reactants["O2"] = reactants.get("O2", 0.0) + oxygen_demand(atoms)
    h_in = thermo.standard_enthalpies(gas, reactants) @ np.array(list(reactants.values()))
    h_out = thermo.standard_enthalpies(gas, products) @ np.array(list(products.values()))
    return float(h_in - h_out)


# ----------------------------------------------------------------------------- exhaust


@dataclass(frozen=True)
class Exhaust:
    """Exhaust of a fuel burned at a given lambda, before any aftertreatment.

    Attributes
    ----------
    lambda_ : float
        Air–fuel equivalence ratio (actual over stoichiometric air) [-].
    mole_fractions : dict of str to float
        Wet exhaust composition [-].
    dry_mole_fractions : dict of str to float
        Composition with the water removed [-].
    moles_per_kg_fuel : float
        Exhaust produced per kg of fuel [kmol/kg].
    dew_point : float
        Temperature at which the exhaust's water starts to condense at ``pressure`` [K].
    pressure : float
        Exhaust pressure [Pa].
    """

    lambda_: float
    mole_fractions: dict[str, float]
    dry_mole_fractions: dict[str, float]
    moles_per_kg_fuel: float
    dew_point: float
    pressure: float


def exhaust(
    fuel: Fuel | str, lambda_: float, *, air: AirModel = "21/79", pressure: float = P_STANDARD
) -> Exhaust:
    """Exhaust composition and water dew point at any lambda.

    Parameters
    ----------
    fuel : Fuel or str
        The fuel.
    lambda_ : float
        Air–fuel equivalence ratio [-], above zero.
    air : {"21/79", "dry"}
        Air model.
    pressure : float
        Exhaust pressure [Pa].

    Returns
    -------
    Exhaust

    Notes
    -----
    Lean and stoichiometric (lambda >= 1): complete combustion, excess O2 passes through.
    Rich: the oxygen is short; carbon leaves as CO2 and CO, hydrogen as H2O and H2, split by
    the water–gas shift equilibrium with :data:`K_WATER_GAS_SHIFT` (Heywood 1988, sec. 4.2).
    The dew point is the saturation temperature of water (IAPWS-95 through CoolProp) at the
    water's partial pressure.
    """
    if not lambda_ > 0:
        raise InputError("lambda", f"must be above zero, got {lambda_:g}")
    fuel = load_fuel(fuel)
    x_air = air_composition(air)
    atoms = fuel.elements_per_mole()
    o2_supplied = lambda_ * oxygen_demand(atoms)
    n_air = o2_supplied / x_air["O2"]
    products = {k: v for k, v in complete_products(atoms).items()}
    for sp, x in x_air.items():
        if sp != "O2":
            products[sp] = products.get(sp, 0.0) + x * n_air
    if lambda_ >= 1:
        products["O2"] = (lambda_ - 1) * oxygen_demand(atoms)
    else:
        products.update(_rich_products(atoms, o2_supplied))
    products = {k: v for k, v in products.items() if v > 0}
    total = sum(products.values())
    x = {k: v / total for k, v in products.items()}
    dry_total = total - products.get("H2O", 0.0)
    dry = {k: v / dry_total for k, v in products.items() if k != "H2O"}
    return Exhaust(
        lambda_=lambda_,
        mole_fractions=x,
        dry_mole_fractions=dry,
        moles_per_kg_fuel=total / fuel.molar_mass(),
        dew_point=water_dew_point(x.get("H2O", 0.0) * pressure),
        pressure=pressure,
    )


def _rich_products(atoms: Mapping[str, float], o2_supplied: float) -> dict[str, float]:
    c, h = atoms.get("C", 0.0), atoms.get("H", 0.0)
    # Oxygen atoms available for C and H after S: 2*O2 + fuel O - 2*S.
    o = 2 * o2_supplied + atoms.get("O", 0.0) - 2 * atoms.get("S", 0.0)
    if o < c:
        raise InputError("lambda", "is so low that not even CO can form; raise it")
    if c == 0:  # hydrogen: O goes to water, the rest stays H2
        return {"CO2": 0.0, "H2O": o, "H2": h / 2 - o}
    # Unknown a = CO2; CO = c - a; H2O = o - 2a - (c - a) = o - c - a; H2 = h/2 - H2O.
    # K (c - a)(o - c - a) ... K = CO*H2O / (CO2*H2) -> (c-a)(o-c-a) = K a (h/2 - o + c + a)
    k = K_WATER_GAS_SHIFT
    qa = 1 - k
    qb = -(c + (o - c)) - k * (h / 2 - o + c)
    qc = c * (o - c)
    if abs(qa) < 1e-12:
        a = -qc / qb
    else:
        disc = math.sqrt(qb * qb - 4 * qa * qc)
        roots = [(-qb - disc) / (2 * qa), (-qb + disc) / (2 * qa)]
        a = next(r for r in roots if 0 <= r <= c + 1e-12)
    water = o - c - a
    return {"CO2": a, "CO": c - a, "H2O": water, "H2": h / 2 - water}


def water_dew_point(partial_pressure: float) -> float:
    """Saturation temperature of water at a partial pressure [K].

    Parameters
    ----------
    partial_pressure : float
        Water vapour partial pressure [Pa]; must be above the triple point (611.655 Pa).

    Returns
    -------
    float
        Dew point [K]; NaN when there is no water or the pressure is below the triple point.
    """
    from CoolProp.CoolProp import PropsSI

    if partial_pressure <= 611.655:
        return math.nan
    return float(PropsSI("T", "P", partial_pressure, "Q", 0, "Water"))


# ----------------------------------------------------------------------------- flames


@dataclass(frozen=True)
class FlameState:
    """Adiabatic, HP-equilibrium burnt gas.

    Attributes
    ----------
    phi : float
        Fuel–air equivalence ratio [-].
    temperature : float
        Adiabatic flame temperature [K].
    pressure : float
        Pressure [Pa].
    mole_fractions : dict of str to float
        Equilibrium composition (species above 1e-12) [-].
    fuel_mass_fraction : float
        Fuel mass per unit mass of unburnt charge, diluent included [-].
    mean_molar_mass : float
        Mean molar mass of the burnt gas [kg/kmol].
    t_unburnt : float
        Unburnt charge temperature [K].
    dilution : float
        Mass fraction of burnt gas in the unburnt charge [-].
    """

    phi: float
    temperature: float
    pressure: float
    mole_fractions: dict[str, float]
    fuel_mass_fraction: float
    mean_molar_mass: float
    t_unburnt: float
    dilution: float


#: Range of phi the equilibrium flame model accepts [-] (beyond it, mixtures of road fuels do
#: not burn in an engine and equilibrium answers stop meaning anything for this tool). The NOx
#: model's narrower flame-zone range is :data:`workbench.models.nox.PHI_RANGE_FLAME_ZONE`.
PHI_RANGE_EQUILIBRIUM = (0.05, 5.0)


def flame_state(
    fuel: Fuel | str,
    phi: float = 1.0,
    *,
    t_unburnt: float = T_REF,
    p: float = P_REF,
    air: AirModel = "21/79",
    dilution: float = 0.0,
) -> FlameState:
    """Adiabatic flame temperature and equilibrium products by Cantera's HP equilibrium.

    Parameters
    ----------
    fuel : Fuel or str
        The fuel.
    phi : float
        Fuel–air equivalence ratio [-].
    t_unburnt : float
        Temperature of the unburnt charge [K].
    p : float
        Pressure [Pa].
    air : {"21/79", "dry"}
        Air model.
    dilution : float
        Mass fraction of the charge that is burnt gas (residual or EGR), taken as the
        undiluted flame's equilibrium products cooled, frozen, to ``t_unburnt`` [-].

    Returns
    -------
    FlameState

    Raises
    ------
    InputError
        phi, temperature, pressure or dilution out of range, or an equilibrium that fails.
    """
    fuel = load_fuel(fuel)
    _check_flame_inputs(phi, t_unburnt, p, dilution)
    return _flame(fuel, round(float(phi), 9), round(float(t_unburnt), 6), round(float(p), 3),
                  air, round(float(dilution), 9))


def _check_flame_inputs(phi: float, t_unburnt: float, p: float, dilution: float) -> None:
    lo, hi = PHI_RANGE_EQUILIBRIUM
    if not lo <= phi <= hi:
        raise InputError("phi", f"must be within {lo:g} to {hi:g}, got {phi:g}")
    if not 200.0 <= t_unburnt <= 1500.0:
        raise InputError("unburnt temperature", f"must be 200-1500 K, got {t_unburnt:g} K")
    if not p > 0:
        raise InputError("pressure", f"must be above zero, got {p:g} Pa")
    if not 0.0 <= dilution < 1.0:
        raise InputError("dilution", f"must be at least 0 and below 1, got {dilution:g}")


def unburnt_mole_fractions(fuel: Fuel, phi: float, air: str = "21/79") -> dict[str, float]:
    """Composition of a fresh fuel–air charge at a given phi [-].

    Parameters
    ----------
    fuel : Fuel
        The fuel.
    phi : float
        Fuel–air equivalence ratio [-].
    air : {"21/79", "dry"}
        Air model.

    Returns
    -------
    dict of str to float
        Mole fractions.
    """
    x_air = air_composition(air)
    n_air = oxygen_demand(fuel.elements_per_mole()) / phi / x_air["O2"]
    moles = dict(fuel.composition)
    for sp, x in x_air.items():
        moles[sp] = moles.get(sp, 0.0) + x * n_air
    total = sum(moles.values())
    return {k: v / total for k, v in moles.items()}


@memoize(maxsize=4096)
def _flame(fuel: Fuel, phi: float, t_unburnt: float, p: float, air: str,
           dilution: float) -> FlameState:
    gas = fuel.gas_phase()
    fresh = unburnt_mole_fractions(fuel, phi, air)
    gas.TPX = t_unburnt, p, fresh
    # The fuel's own N2 or CO2 must not be told apart from air's, so take the fuel share
    # from the air requirement: 1 / (1 + AFR_st / phi).
    y_fuel = 1.0 / (1.0 + _sheet(fuel, air).stoich_afr_mass / phi)
    if dilution > 0:
        y_fresh = gas.Y.copy()
        burnt = _flame(fuel, phi, t_unburnt, p, air, 0.0)
        gas.TPX = t_unburnt, p, burnt.mole_fractions
        gas.TPY = t_unburnt, p, (1 - dilution) * y_fresh + dilution * gas.Y
        y_fuel *= 1 - dilution
    try:
        gas.equilibrate("HP")
    except ct.CanteraError as exc:
        first = str(exc).strip().splitlines()
        raise InputError(fuel.id, f"Cantera could not equilibrate this mixture at phi={phi:g} "
                         f"({first[-1] if first else 'no detail'})") from None
    x = gas.X
    return FlameState(
        phi=phi,
        temperature=float(gas.T),
        pressure=float(gas.P),
        mole_fractions={n: float(v) for n, v in zip(gas.species_names, x, strict=True)
                        if v > 1e-12},
        fuel_mass_fraction=y_fuel,
        mean_molar_mass=float(gas.mean_molecular_weight),
        t_unburnt=t_unburnt,
        dilution=dilution,
    )


#: Products reported as columns by :func:`flame_table`.
FLAME_TABLE_SPECIES = ("CO2", "H2O", "N2", "O2", "CO", "H2", "OH", "O", "H", "NO")


def flame_table(
    fuel: Fuel | str,
    phi: ArrayLike,
    *,
    t_unburnt: float = T_REF,
    p: float = P_REF,
    air: AirModel = "21/79",
    dilution: float = 0.0,
) -> pd.DataFrame:
    """Adiabatic flame temperature and major equilibrium products over phi.

    Parameters
    ----------
    fuel : Fuel or str
        The fuel.
    phi : array_like
        Fuel–air equivalence ratios [-] (scalar or any shape; flattened).
    t_unburnt, p, air, dilution
        As in :func:`flame_state`.

    Returns
    -------
    pandas.DataFrame
        One row per phi: ``phi``, ``flame_temperature_k`` [K] and ``x_<species>`` mole
        fractions of :data:`FLAME_TABLE_SPECIES`.
    """
    fuel = load_fuel(fuel)
    phis = np.atleast_1d(np.asarray(phi, dtype=float)).ravel()
    rows = []
    for value in phis:
        state = flame_state(fuel, float(value), t_unburnt=t_unburnt, p=p, air=air,
                            dilution=dilution)
        row = {"phi": value, "flame_temperature_k": state.temperature}
        row.update({f"x_{sp}": state.mole_fractions.get(sp, 0.0) for sp in FLAME_TABLE_SPECIES})
        rows.append(row)
    return pd.DataFrame(rows)
