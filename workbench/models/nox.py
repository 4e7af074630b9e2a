"""NOx propensity of a fuel's flame: thermal NO formed in engine-like burnt gas.

The burnt gas is the constant-pressure (HP) equilibrium of the fuel–air–diluent charge at the
end-of-compression state of an engine (:func:`workbench.models.combustion.flame_state`). From that
gas, with every nitrogen-containing species but N2 removed, the full GRI-Mech 3.0 mechanism
runs at fixed temperature and pressure for a residence time tied to engine speed. Because the
gas starts at C/H/O equilibrium, the H and O radicals stay at (partial) equilibrium and the NO
formed is thermal NO: the extended Zeldovich steps O + N2 -> NO + N, N + O2 -> NO + O and
N + OH -> NO + H, plus the small N2O- and NNH-intermediate contributions GRI-Mech 3.0 carries
for lean, high-pressure gas. Prompt NO (CH + N2 in the flame front) is outside this model.

The result per fuel and engine setting is the flame temperature, NO after the residence time,
the equilibrium NO it tends to, its characteristic formation time, NO as NO2 mass per unit of
fuel energy (LHV) and a propensity index relative to a baseline fuel at the same settings.
Engine-out NOx of a candidate is the baseline engine's measured value scaled by that index: a
screening model, not a prediction of a particular engine's emissions.

References
----------
.. [1] J. B. Heywood, Internal Combustion Engine Fundamentals, McGraw-Hill (1988), ch. 11.
.. [2] S. R. Turns, An Introduction to Combustion, 2nd ed., McGraw-Hill (2000), ch. 5.
.. [3] G. P. Smith et al., GRI-Mech 3.0, http://combustion.berkeley.edu/gri-mech/ (1999).
"""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, fields, replace
from itertools import product
from typing import Any, Literal

import cantera as ct
import numpy as np
import pandas as pd

from workbench.core.cache import memoize
from workbench.core.constants import M_NO2
from workbench.core.errors import InputError
from workbench.core.fuels import Fuel, load_fuel
from workbench.models.combustion import flame_state, fuel_sheet

#: Flame-zone equivalence ratios the model accepts [-]: about the flammable range of
#: hydrocarbon–air mixtures (methane 0.5–1.7, Turns 2nd ed. Table 8.3, from memory), widened
#: to 0.4 for lean-burn hydrogen and gas engines.
PHI_RANGE_FLAME_ZONE = (0.4, 1.7)
#: Nitrogen-containing species of GRI-Mech 3.0 removed from the burnt gas before the run.
_GRI = "gri30.yaml"
_THERMAL_STEPS = ("N + NO <=> N2 + O", "N + O2 <=> NO + O", "N + OH <=> H + NO")


@memoize(maxsize=None, kind="resource")
def _gri30() -> tuple[ct.Solution, tuple[int, int, int], np.ndarray, dict[str, int]]:
    """The process's GRI-Mech 3.0 phase, its Zeldovich step indices and N-species mask."""
    gas = ct.Solution(_GRI, transport_model=None)
    equations = [r.equation for r in gas.reactions()]
    steps = tuple(equations.index(eq) for eq in _THERMAL_STEPS)
    mask = np.array(
        [sp.composition.get("N", 0.0) > 0 and sp.name != "N2" for sp in gas.species()]
    )
    index = {name: k for k, name in enumerate(gas.species_names)}
    return gas, steps, mask, index  # type: ignore[return-value]


@dataclass(frozen=True)
class EngineConditions:
    """Engine-like state of the charge at which NO forms.

    The flame burns at constant pressure from the end-of-compression state, found from the
    intake state by a polytropic compression unless given directly.

    Attributes
    ----------
    name : str
        Label of the setting (a preset name or ``"custom"``).
    compression_ratio : float
        Geometric compression ratio [-], at least 1.
    t_intake : float
        Charge temperature at intake valve closing, residual/EGR included [K].
    p_intake : float
        Charge pressure at intake valve closing [Pa].
    polytropic_exponent : float
        Exponent n of the compression p v^n = const [-], 1 < n <= 1.4.
    phi : float
        Flame-zone fuel–air equivalence ratio [-] (not the overall engine ratio).
    dilution : float
        Mass fraction of the unburnt charge that is burnt gas (residual or EGR) [-], 0 to 0.6.
    engine_speed_rpm : float
        Engine speed [rev/min], sets the residence time.
    crank_window_deg : float
        Crank-angle window the hottest burnt gas spends near flame temperature [deg].
    t_unburnt : float or None
        Unburnt-gas temperature at the flame [K]; overrides the compression when given.
    pressure : float or None
        Flame pressure [Pa]; overrides the compression when given.
    residence_time : float or None
        Time the burnt gas spends at flame temperature [s]; overrides the crank window.
    air : str
        Air model passed to :func:`workbench.models.combustion.flame_state` (``"21/79"``).
    """

    name: str = "custom"
    compression_ratio: float = 10.0
    t_intake: float = 330.0
    p_intake: float = 95.0e3
    polytropic_exponent: float = 1.30
    phi: float = 1.0
    dilution: float = 0.08
    engine_speed_rpm: float = 2500.0
    crank_window_deg: float = 40.0
    t_unburnt: float | None = None
    pressure: float | None = None
    residence_time: float | None = None
    air: str = "21/79"

    def __post_init__(self) -> None:
        lo, hi = PHI_RANGE_FLAME_ZONE
        checks: list[tuple[str, float | None, float, float, str]] = [
            ("compression_ratio", self.compression_ratio, 1.0, 40.0, "1 to 40"),
            ("t_intake", self.t_intake, 200.0, 600.0, "200 to 600 K"),
            ("p_intake", self.p_intake, 1.0e4, 1.0e7, "10 kPa to 10 MPa"),
            ("polytropic_exponent", self.polytropic_exponent, 1.0, 1.4, "1.0 to 1.4"),
            ("phi", self.phi, lo, hi, f"{lo} to {hi} (flame-zone range of the NOx model)"),
            ("dilution", self.dilution, 0.0, 0.6, "0 to 0.6 (burnt-gas mass fraction)"),
            ("engine_speed_rpm", self.engine_speed_rpm, 1.0, 2.0e4, "1 to 20000 rev/min"),
            ("crank_window_deg", self.crank_window_deg, 1.0, 360.0, "1 to 360 deg"),
            ("t_unburnt", self.t_unburnt, 200.0, 1500.0, "200 to 1500 K"),
            ("pressure", self.pressure, 1.0e3, 5.0e7, "1 kPa to 50 MPa"),
            ("residence_time", self.residence_time, 1.0e-7, 10.0, "1e-7 to 10 s"),
        ]
        for field, value, low, high, text in checks:
            if value is None:
                continue
            if not (isinstance(value, int | float) and low <= value <= high):
                raise InputError(field, f"got {value!r}; use a number from {text}")

    @property
    def flame_t_unburnt(self) -> float:
        """Unburnt-charge temperature at the flame [K]: T1 r^(n-1) unless given."""
        if self.t_unburnt is not None:
            return float(self.t_unburnt)
        return self.t_intake * self.compression_ratio ** (self.polytropic_exponent - 1.0)

    @property
    def flame_pressure(self) -> float:
        """Flame pressure [Pa]: p1 r^n unless given."""
        if self.pressure is not None:
            return float(self.pressure)
        return self.p_intake * self.compression_ratio**self.polytropic_exponent

    @property
    def nox_residence_time(self) -> float:
        """Residence time of the burnt gas [s]: window / (6 N) with N in rev/min, unless given."""
        if self.residence_time is not None:
            return float(self.residence_time)
        return self.crank_window_deg / (6.0 * self.engine_speed_rpm)

    def chemistry_key(self) -> tuple[float, float, float, float, float, str]:
        """The conditions the chemistry depends on, rounded to 6 significant digits."""
        return (
            _round6(self.flame_t_unburnt),
            _round6(self.flame_pressure),
            _round6(self.phi),
            _round6(self.dilution),
            _round6(self.nox_residence_time),
            self.air,
        )


def _round6(x: float) -> float:
    return float(f"{x:.6g}")


#: Named engine settings. Numbers are typical values (Heywood 1988 ch. 4, 6 and 11, from
#: memory; crank windows are common practice, no source); see docs/nox.md for each choice.
ENGINE_PRESETS: dict[str, EngineConditions] = {
    # Stoichiometric spark ignition near full load: wide-open throttle, ~8 % residual gas.
    "spark-ignition": EngineConditions(
        name="spark-ignition",
        compression_ratio=10.0,
        t_intake=330.0,
        p_intake=95.0e3,
        polytropic_exponent=1.30,
        phi=1.0,
        dilution=0.08,
        engine_speed_rpm=2500.0,
        crank_window_deg=40.0,
    ),
    # Turbocharged lean-burn gas engine (bus/truck size): lambda about 1.55, little residual.
    "lean-burn-gas": EngineConditions(
        name="lean-burn-gas",
        compression_ratio=12.0,
        t_intake=320.0,
        p_intake=200.0e3,
        polytropic_exponent=1.32,
        phi=0.65,
        dilution=0.03,
        engine_speed_rpm=1500.0,
        crank_window_deg=40.0,
    ),
    # Turbocharged diesel: lean overall, but the diffusion flame burns near stoichiometric;
    # moderate cooled EGR.
    "compression-ignition": EngineConditions(
        name="compression-ignition",
        compression_ratio=17.0,
        t_intake=330.0,
        p_intake=200.0e3,
        polytropic_exponent=1.33,
        phi=1.0,
        dilution=0.15,
        engine_speed_rpm=1800.0,
        crank_window_deg=40.0,
    ),
}


def engine_preset(name: str, **changes: Any) -> EngineConditions:
    """A named engine setting, optionally with some fields changed.

    Parameters
    ----------
    name : str
        One of :data:`ENGINE_PRESETS` (``"spark-ignition"``, ``"lean-burn-gas"``,
        ``"compression-ignition"``).
    **changes
        Fields of :class:`EngineConditions` to change (e.g. ``phi=0.9``).

    Returns
    -------
    EngineConditions
    """
    if name not in ENGINE_PRESETS:
        raise InputError("engine", f"unknown preset {name!r}; use one of {sorted(ENGINE_PRESETS)}")
    unknown = set(changes) - {f.name for f in fields(EngineConditions)}
    if unknown:
        raise InputError("engine", f"unknown field(s) {sorted(unknown)} of EngineConditions")
    return replace(ENGINE_PRESETS[name], **changes)


@dataclass(frozen=True)
class ThermalNO:
    """Thermal NO formed in burnt gas held at fixed temperature and pressure.

    Attributes
    ----------
    temperature : float
        Burnt-gas temperature [K].
    pressure : float
        Pressure [Pa].
    residence_time : float
        Time at temperature [s].
    no_mole_fraction : float
        NO mole fraction after the residence time [-].
    no_equilibrium_mole_fraction : float
        NO mole fraction at TP equilibrium of the same gas [-].
    formation_time : float
        Characteristic time of NO formation, tau_NO = [NO]e (1 + K) / (4 R1) [s].
    mean_molar_mass : float
        Mean molar mass of the gas [kg/kmol].
    """

    temperature: float
    pressure: float
    residence_time: float
    no_mole_fraction: float
    no_equilibrium_mole_fraction: float
    formation_time: float
    mean_molar_mass: float


def thermal_no(
    temperature: float,
    pressure: float,
    mole_fractions: Mapping[str, float],
    residence_time: float,
) -> ThermalNO:
    """Thermal NO formed from NO-free burnt gas at fixed temperature and pressure.

    Parameters
    ----------
    temperature : float
        Burnt-gas temperature [K].
    pressure : float
        Pressure [Pa].
    mole_fractions : mapping of str to float
        Burnt-gas composition (GRI-Mech 3.0 names; species outside it must be trace,
        below 1e-4 in total, and are dropped). Nitrogen species other than N2 are removed.
    residence_time : float
        Time at temperature [s], positive.

    Returns
    -------
    ThermalNO

    Notes
    -----
    The gas runs in ``IdealGasConstPressureReactor(energy="off")`` with the full GRI-Mech 3.0
    mechanism. The formation time is Heywood's (1988, eq. 11.11) relaxation time

    .. math:: \\tau_{NO} = \\frac{[NO]_e (1 + K)}{4 R_1}, \\quad K = \\frac{R_1}{R_2 + R_3}

    with R_i the one-way rates of the three Zeldovich steps at TP equilibrium.
    """
    if not residence_time > 0.0:
        raise InputError("residence_time", f"got {residence_time!r}; must be positive [s]")
    gas, steps, n_mask, index = _gri30()
    x0 = np.zeros(gas.n_species)
    foreign = 0.0
    for name, value in mole_fractions.items():
        k = index.get(name)
        if k is None:
            foreign += value
        else:
            x0[k] = value
    if foreign > 1.0e-4:
        raise InputError(
            "fuel", f"burnt gas holds {foreign:.2g} of species outside GRI-Mech 3.0; "
            "its NO chemistry cannot be modelled"
        )
    x0[n_mask] = 0.0
    total = x0.sum()
    if not total > 0.0:
        raise InputError("mole_fractions", "burnt-gas composition is empty")
    x0 /= total

    gas.TPX = temperature, pressure, x0
    reactor = ct.IdealGasConstPressureReactor(gas, clone=False, energy="off")
    ct.ReactorNet([reactor]).advance(residence_time)
    x_no = float(gas.X[index["NO"]])

    gas.TPX = temperature, pressure, x0
    gas.equilibrate("TP")
    x_no_e = float(gas.X[index["NO"]])
    rates = gas.forward_rates_of_progress
    r1, r2, r3 = (float(rates[i]) for i in steps)
    no_e = gas.concentrations[index["NO"]]  # [kmol/m3]
    tau = no_e * (1.0 + r1 / (r2 + r3)) / (4.0 * r1)
    return ThermalNO(
        temperature=float(temperature),
        pressure=float(pressure),
        residence_time=float(residence_time),
        no_mole_fraction=x_no,
        no_equilibrium_mole_fraction=x_no_e,
        formation_time=float(tau),
        mean_molar_mass=float(gas.mean_molecular_weight),
    )


@dataclass(frozen=True)
class NOxPropensity:
    """NOx propensity of one fuel at one engine setting.

    Attributes
    ----------
    fuel_id, baseline_id : str
        The fuel and the baseline fuel the index refers to.
    conditions : EngineConditions
        The engine setting.
    t_unburnt : float
        Unburnt-charge temperature at the flame [K].
    pressure : float
        Flame pressure [Pa].
    residence_time : float
        Residence time of the burnt gas [s].
    flame_temperature : float
        HP-equilibrium burnt-gas temperature [K].
    no_mole_fraction : float
        NO after the residence time [-] (wet).
    no_equilibrium_mole_fraction : float
        Equilibrium NO at flame temperature [-] (wet).
    formation_time : float
        Characteristic NO formation time [s].
    no2_eq_per_energy : float
        NO formed, as NO2 mass, per fuel energy (LHV) [kg/J].
    propensity_index : float
        ``no2_eq_per_energy`` over the baseline fuel's at the same setting [-].
    ppm_index : float
        ``no_mole_fraction`` over the baseline fuel's at the same setting [-].
    """

    fuel_id: str
    baseline_id: str
    conditions: EngineConditions
    t_unburnt: float
    pressure: float
    residence_time: float
    flame_temperature: float
    no_mole_fraction: float
    no_equilibrium_mole_fraction: float
    formation_time: float
    no2_eq_per_energy: float
    propensity_index: float
    ppm_index: float

    def to_record(self) -> dict[str, Any]:
        """The result in interface units, with the glossary's column names."""
        return {
            "fuel": self.fuel_id,
            "baseline": self.baseline_id,
            "engine": self.conditions.name,
            "phi": self.conditions.phi,
            "dilution": self.conditions.dilution,
            "t_unburnt_k": self.t_unburnt,
            "pressure_bar": self.pressure / 1.0e5,
            "residence_time_ms": self.residence_time * 1.0e3,
            "flame_temperature_k": self.flame_temperature,
            "no_ppm": self.no_mole_fraction * 1.0e6,
            "no_equilibrium_ppm": self.no_equilibrium_mole_fraction * 1.0e6,
            "formation_time_ms": self.formation_time * 1.0e3,
            "no2_eq_g_per_mj": self.no2_eq_per_energy * 1.0e9,
            "propensity_index": self.propensity_index,
            "ppm_index": self.ppm_index,
        }


@dataclass(frozen=True)
class _FuelNO:
    flame_temperature: float
    no: ThermalNO
    no2_eq_per_energy: float


@memoize(maxsize=4096, key=lambda fuel, conditions: (fuel.key,
                                                        conditions.chemistry_key()))
def _fuel_no(fuel: Fuel, conditions: EngineConditions) -> _FuelNO:
    """Flame temperature and thermal NO of a fuel at engine conditions, cached by the
    fuel's chemistry and the rounded conditions."""
    sheet = fuel_sheet(fuel, air=conditions.air)
    try:
        burnt = flame_state(
            fuel,
            conditions.phi,
            t_unburnt=conditions.flame_t_unburnt,
            p=conditions.flame_pressure,
            air=conditions.air,
            dilution=conditions.dilution,
        )
        no = thermal_no(
            burnt.temperature, burnt.pressure, burnt.mole_fractions,
            conditions.nox_residence_time,
        )
    except ct.CanteraError as exc:
        lines = str(exc).strip().splitlines()
        raise InputError(
            "fuel", f"Cantera cannot model the flame of {fuel.id!r} "
            f"({lines[-1] if lines else 'no detail'})"
        ) from None
    # kg NO2-equivalent per kg charge, times kg charge per kg fuel, per J of fuel LHV.
    charge_per_fuel = (1.0 + sheet.stoich_afr_mass / conditions.phi) / (1.0 - conditions.dilution)
    per_energy = no.no_mole_fraction * M_NO2 / no.mean_molar_mass * charge_per_fuel / sheet.lhv_mass
    return _FuelNO(burnt.temperature, no, per_energy)


def nox_propensity(
    fuel: Fuel | str,
    conditions: EngineConditions | None = None,
    *,
    baseline: Fuel | str | None = None,
) -> NOxPropensity:
    """Thermal-NO propensity of a fuel at an engine setting, relative to a baseline fuel.

    Parameters
    ----------
    fuel : Fuel or str
        The candidate fuel, or a library id / fuel file path.
    conditions : EngineConditions, optional
        Engine setting; the ``"spark-ignition"`` preset when omitted.
    baseline : Fuel or str, optional
        Fuel the index refers to (index 1); the candidate itself when omitted.

    Returns
    -------
    NOxPropensity

    Notes
    -----
    NO as NO2 per fuel energy is x_NO M_NO2 (1 + AFR_s / phi) / (M_b (1 - d) LHV) with x_NO
    the NO mole fraction, M_b the burnt-gas molar mass, AFR_s the stoichiometric air–fuel
    ratio by mass, d the dilution and LHV the fuel's lower heating value: the charge mass
    per kg of fuel times the NO2-equivalent mass per kg of charge. The diluent is NO-free.
    Results are cached by (fuel composition, rounded conditions).
    """
    conditions = ENGINE_PRESETS["spark-ignition"] if conditions is None else conditions
    fuel = load_fuel(fuel)
    baseline = None if baseline is None else load_fuel(baseline)
    cand = _fuel_no(fuel, conditions)
    base = cand if baseline is None else _fuel_no(baseline, conditions)
    return NOxPropensity(
        fuel_id=fuel.id,
        baseline_id=fuel.id if baseline is None else baseline.id,
        conditions=conditions,
        t_unburnt=conditions.flame_t_unburnt,
        pressure=conditions.flame_pressure,
        residence_time=conditions.nox_residence_time,
        flame_temperature=cand.flame_temperature,
        no_mole_fraction=cand.no.no_mole_fraction,
        no_equilibrium_mole_fraction=cand.no.no_equilibrium_mole_fraction,
        formation_time=cand.no.formation_time,
        no2_eq_per_energy=cand.no2_eq_per_energy,
        propensity_index=cand.no2_eq_per_energy / base.no2_eq_per_energy,
        ppm_index=cand.no.no_mole_fraction / base.no.no_mole_fraction,
    )


def nox_table(
    fuels: Sequence[Fuel],
    conditions: EngineConditions | None = None,
    *,
    baseline: Fuel | None = None,
) -> pd.DataFrame:
    """NOx propensity of several fuels at one setting, one row per fuel.

    Parameters
    ----------
    fuels : sequence of Fuel
        Candidate fuels.
    conditions : EngineConditions, optional
        Engine setting; the ``"spark-ignition"`` preset when omitted.
    baseline : Fuel, optional
        Fuel of index 1; the first fuel when omitted.

    Returns
    -------
    pandas.DataFrame
        Columns of :meth:`NOxPropensity.to_record`.
    """
    if not fuels:
        raise InputError("fuels", "give at least one fuel")
    base = fuels[0] if baseline is None else baseline
    return pd.DataFrame(
        [nox_propensity(f, conditions, baseline=base).to_record() for f in fuels]
    )


def nox_sweep(
    fuel: Fuel,
    conditions: EngineConditions | None = None,
    *,
    baseline: Fuel | None = None,
    **axes: Sequence[float] | np.ndarray,
) -> pd.DataFrame:
    """NOx propensity over a grid of conditions (the product of the given axes).

    Parameters
    ----------
    fuel : Fuel
        The candidate fuel.
    conditions : EngineConditions, optional
        Setting the sweep starts from; ``"spark-ignition"`` when omitted.
    baseline : Fuel, optional
        Fuel of index 1 at each grid point; the candidate itself when omitted.
    **axes : array_like
        Values for any of ``phi`` [-], ``pressure`` [Pa], ``t_unburnt`` [K], ``dilution`` [-]
        and ``residence_time`` [s]. Pressure and unburnt temperature given here replace the
        compression calculation.

    Returns
    -------
    pandas.DataFrame
        One row per grid point, columns of :meth:`NOxPropensity.to_record`.

    Examples
    --------
    >>> nox_sweep(load_fuel("methane"), phi=[0.8, 1.0], pressure=[2e6, 4e6])  # doctest: +SKIP
    """
    allowed = ("phi", "pressure", "t_unburnt", "dilution", "residence_time")
    unknown = set(axes) - set(allowed)
    if unknown or not axes:
        raise InputError("sweep", f"sweep over one or more of {allowed}, got {sorted(axes)}")
    start = ENGINE_PRESETS["spark-ignition"] if conditions is None else conditions
    names = list(axes)
    grids = [np.atleast_1d(np.asarray(axes[n], dtype=float)) for n in names]
    rows = []
    for values in product(*grids):
        point = replace(start, **{n: float(v) for n, v in zip(names, values, strict=True)})
        rows.append(nox_propensity(fuel, point, baseline=baseline).to_record())
    return pd.DataFrame(rows)


@dataclass(frozen=True)
class DutyPropensity:
    """NOx propensity over a duty's engine operating points.

    Attributes
    ----------
    points : pandas.DataFrame
        One row per point: ``engine_speed_rpm``, ``p_intake_bar``, ``weight`` and the
        columns of :meth:`NOxPropensity.to_record`.
    propensity_index : float
        Energy-weighted index, sum(w g_c) / sum(w g_b) with g the NO2-equivalent per MJ [-].
    ppm_index : float
        Weighted ratio of NO mole fractions, sum(w x_c) / sum(w x_b) [-].
    """

    points: pd.DataFrame
    propensity_index: float
    ppm_index: float


def duty_propensity(
    fuel: Fuel,
    baseline: Fuel,
    conditions: EngineConditions,
    *,
    engine_speed_rpm: Sequence[float] | np.ndarray,
    weight: Sequence[float] | np.ndarray,
    p_intake: Sequence[float] | np.ndarray | None = None,
) -> DutyPropensity:
    """Propensity index of a candidate over a duty's operating points.

    Parameters
    ----------
    fuel, baseline : Fuel
        Candidate and baseline fuel.
    conditions : EngineConditions
        Engine setting the points vary (speed, and intake pressure when given).
    engine_speed_rpm : array_like
        Engine speed at each point [rev/min].
    weight : array_like
        Fuel energy used at each point (any consistent unit), non-negative, not all zero.
    p_intake : array_like, optional
        Intake pressure at each point [Pa] (load); the setting's when omitted.

    Returns
    -------
    DutyPropensity
    """
    speed = np.atleast_1d(np.asarray(engine_speed_rpm, dtype=float))
    w = np.broadcast_to(np.asarray(weight, dtype=float), speed.shape)
    p_in = np.broadcast_to(
        np.asarray(conditions.p_intake if p_intake is None else p_intake, dtype=float),
        speed.shape,
    )
    if not (np.all(np.isfinite(w)) and np.all(w >= 0.0) and w.sum() > 0.0):
        raise InputError("weight", "operating-point weights must be non-negative, not all zero")
    rows = []
    for n, p in zip(speed, p_in, strict=True):
        point = replace(conditions, engine_speed_rpm=float(n), p_intake=float(p))
        cand = nox_propensity(fuel, point, baseline=baseline)
        base = nox_propensity(baseline, point)
        rec = cand.to_record()
        rec["baseline_no2_eq_g_per_mj"] = base.no2_eq_per_energy * 1.0e9
        rec["baseline_no_ppm"] = base.no_mole_fraction * 1.0e6
        rows.append(rec)
    table = pd.DataFrame(rows)
    table.insert(0, "engine_speed_rpm", speed)
    table.insert(1, "p_intake_bar", p_in / 1.0e5)
    table.insert(2, "weight", w)
    g_cand, g_base = table["no2_eq_g_per_mj"], table["baseline_no2_eq_g_per_mj"]
    index = float(np.sum(w * g_cand) / np.sum(w * g_base))
    ppm = float(np.sum(w * table["no_ppm"]) / np.sum(w * table["baseline_no_ppm"]))
    return DutyPropensity(points=table, propensity_index=index, ppm_index=ppm)


EngineOutUnit = Literal["g/kWh", "g/km", "ppm"]


@dataclass(frozen=True)
class EngineOutNOx:
    """The baseline engine's engine-out NOx, measured, certified or a typical default.

    Attributes
    ----------
    value : float
        Engine-out NOx (as NO2 for mass units) in ``unit``.
    unit : {"g/kWh", "g/km", "ppm"}
        Unit of ``value``.
    source : str
        Where the number comes from.
    is_default : bool
        True for a typical value from published engine data, not this fleet's engine.
    """

    value: float
    unit: EngineOutUnit
    source: str = "user"
    is_default: bool = False

    def __post_init__(self) -> None:
        if self.unit not in ("g/kWh", "g/km", "ppm"):
            raise InputError("unit", f"engine-out NOx unit {self.unit!r}; use g/kWh, g/km or ppm")
        if not (isinstance(self.value, int | float) and math.isfinite(self.value)
                and self.value >= 0.0):
            raise InputError("value", f"engine-out NOx {self.value!r}; must be a number >= 0")


#: Typical engine-out NOx of engines without aftertreatment (Heywood 1988 ch. 11 and common
#: practice, from memory): labelled defaults, replace them with the fleet's measured values.
DEFAULT_ENGINE_OUT: dict[str, EngineOutNOx] = {
    "spark-ignition": EngineOutNOx(
        7.0, "g/kWh", "typical stoichiometric SI engine-out over an urban cycle, cooled EGR or "
        "retarded spark at part load (Heywood 1988 ch. 11: a few thousand ppm at full load, "
        "far less at part load; from memory)", True,
    ),
    "lean-burn-gas": EngineOutNOx(
        3.0, "g/kWh", "typical lean-burn gas engine-out (common practice, from memory)", True
    ),
    "compression-ignition": EngineOutNOx(
        7.0, "g/kWh", "typical EGR diesel engine-out before SCR (common practice, from memory)",
        True,
    ),
}


def engine_out_nox(
    baseline: EngineOutNOx,
    candidate: NOxPropensity | DutyPropensity,
    *,
    energy_ratio: float | np.ndarray = 1.0,
) -> float | np.ndarray:
    """Screening estimate of a candidate's engine-out NOx from the baseline engine's.

    Parameters
    ----------
    baseline : EngineOutNOx
        The baseline engine's engine-out NOx.
    candidate : NOxPropensity or DutyPropensity
        The candidate's propensity relative to that baseline fuel.
    energy_ratio : float or array_like
        Candidate's fuel energy per kWh (or per km) over the baseline's [-]; 1 for equal
        efficiency. Not used for ``ppm``.

    Returns
    -------
    float or numpy.ndarray
        Engine-out NOx in ``baseline.unit``.

    Notes
    -----
    Mass units scale by ``propensity_index * energy_ratio``; ppm scales by ``ppm_index``.
    This assumes the candidate's engine forms NO like the baseline's apart from its flame
    chemistry: a screening model, not an emission prediction.
    """
    if baseline.unit == "ppm":
        return baseline.value * candidate.ppm_index
    ratio = np.asarray(energy_ratio, dtype=float)
    if not np.all(ratio > 0.0):
        raise InputError("energy_ratio", "must be positive")
    out = baseline.value * candidate.propensity_index * ratio
    return float(out) if out.ndim == 0 else out


__all__ = [
    "DEFAULT_ENGINE_OUT",
    "ENGINE_PRESETS",
    "PHI_RANGE_FLAME_ZONE",
    "DutyPropensity",
    "EngineConditions",
    "EngineOutNOx",
    "NOxPropensity",
    "ThermalNO",
    "duty_propensity",
    "engine_out_nox",
    "engine_preset",
    "nox_propensity",
    "nox_sweep",
    "nox_table",
    "thermal_no",
]
