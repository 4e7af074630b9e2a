"""Run a study: the recipe that wires the models together.

``run(study)`` is the only place that knows how the models combine:

1. **plan** — physics per option and vehicle class, cached (duty and road load → engine map →
   fuel energy per km; flame chemistry → engine-out NOx, :mod:`workbench.models.engine_out`;
   catalyst ageing over the programme; tank sizing), each uncertain physics input evaluated at
   quantiles of its distribution, and each fuel price turned into currency per joule;
2. **money** — the programme's yearly cash flows, vectorised over Monte Carlo draws
   (:func:`workbench.models.economics.programme_money`) → NPV, payback, levelised cost,
   abatement cost; one-at-a-time sensitivity;
3. **tables** — :mod:`workbench.study.tables` lays the results out as tidy tables.

A price, discount-rate or other money change re-uses every cached physics result. See
``docs/study-file.md`` for what each input means and ``workbench.study.results`` for the tables.
"""

from __future__ import annotations

from collections.abc import Callable, Mapping
from dataclasses import dataclass, field, replace

import numpy as np
import pandas as pd

from workbench.core.cache import memoize
from workbench.core.constants import J_PER_KWH
from workbench.core.errors import InputError
from workbench.core.fuels import Fuel
from workbench.core.units import Price, price_per_energy
from workbench.io.logs import FleetSource
from workbench.models import economics as econ
from workbench.models.aftertreatment import Aftertreatment, optimal_interval, programme_nox
from workbench.models.calibration import Calibration
from workbench.models.combustion import FuelSheet, fuel_sheet
from workbench.models.conversion import (
    DEFAULT_SUBSTITUTION,
    KINDS,
    Substitution,
    convert,
    histogram_gas_share,
    kind_derate,
    slipped,
)
from workbench.models.duty import DutySettings, DutyTrace, ModeTable
from workbench.models.electric import (
    BatterySizing,
    ChargingCheck,
    charging_check,
    size_battery,
    tariff_price,
)
from workbench.models.emissions import co2e
from workbench.models.engine import (
    DutyEnergy,
    DutyRun,
    EngineMap,
    FuelPerDistance,
    fuel_per_distance_for,
    run_duty,
)
from workbench.models.engine_out import engine_out_per_m
from workbench.models.fuelcell import FuelCellSizing, size_fuel_cell_vehicle
from workbench.models.nox import DEFAULT_ENGINE_OUT
from workbench.models.pollutants import pollutant_factors
from workbench.models.storage import tank_for_range
from workbench.models.vehicle import Vehicle
from workbench.study import refuelling, tables
from workbench.study.fleet import (
    FleetDutyRun,
    Progress,
    calibrate_fleet,
    card_energy_per_amount,
    fleet_duty,
    reporting,
    vehicle_rows,
)
from workbench.study.results import RunMap, StudyResult
from workbench.study.studyfile import (
    ClassOption,
    FleetClass,
    Study,
    StudyInputs,
    Uncertain,
    check_draws,
    sold_as_liquid,
    study_fuels,
)

# ----------------------------------------------------------------------------- physics


@memoize(maxsize=128)
def converted_map(engine_map: EngineMap, derate: float, efficiency_offset: float,
                  conversion: str = "none", fuel: Fuel | None = None,
                  methane_slip: float | None = None,
                  substitution: Substitution = DEFAULT_SUBSTITUTION
                  ) -> tuple[EngineMap, dict[str, tuple[float, str, str]]]:
    """The map a fuel runs on, and the numbers a derived map used (cached by their content).

    Parameters
    ----------
    engine_map : EngineMap
        The class's engine map.
    derate : float
        Share of full-load torque lost [-].
    efficiency_offset : float
        Added to every map cell [-].
    conversion : str
        Conversion kind whose derived map applies (``none``: the map adjusted only).
    fuel : Fuel, optional
        The fuel a derived map burns.
    methane_slip : float, optional
        Share of a dual-fuel engine's gas that slips unburnt [-]; None: the kind's.
    substitution : Substitution, optional
        A dual-fuel engine's gas share against load.

    Returns
    -------
    (EngineMap, dict)
    """
    sheet = fuel_sheet(fuel) if fuel is not None else None
    out = convert(engine_map, KINDS[conversion], sheet, None, derate=derate,
                  efficiency_offset=efficiency_offset, methane_slip=methane_slip,
                  substitution=substitution)
    return out.engine_map, out.parameters


@memoize(maxsize=128)
def duty_physics(profile: DutyTrace | ModeTable | FleetSource, vehicle: Vehicle | None,
                 engine_map: EngineMap, derate: float, efficiency_offset: float,
                 settings: DutySettings, conversion: str = "none", fuel: Fuel | None = None,
                 methane_slip: float | None = None,
                 substitution: Substitution = DEFAULT_SUBSTITUTION) -> DutyRun:
    """Run a profile with a vehicle and an adjusted map (cached by their content).

    Parameters
    ----------
    profile : DutyTrace or ModeTable or FleetSource
        The class's duty, read when the study was checked; or its vehicles' logs, listed when
        it was checked and run here (``workbench.study.fleet.fleet_duty``; a
        :class:`~workbench.study.fleet.FleetDutyRun` comes back).
    vehicle : Vehicle
        Road load and driveline (unused for a time-at-mode table).
    engine_map : EngineMap
        The option's map before the fuel's adjustment.
    derate : float
        Share of full-load torque lost [-].
    efficiency_offset : float
        Added to every map cell [-].
    settings : DutySettings
        Accessories, engine-off at stops, extra idling.
    conversion, fuel, methane_slip, substitution
        Conversion kind whose derived map applies, its fuel, a dual-fuel engine's slip and
        gas share against load (:func:`converted_map`).

    Returns
    -------
    DutyRun
    """
    emap = converted_map(engine_map, derate, efficiency_offset, conversion, fuel,
                         methane_slip, substitution)[0]
    if isinstance(profile, FleetSource):
        return fleet_duty(profile, vehicle, emap, settings=settings)
    return run_duty(profile, vehicle, emap, settings=settings)


@dataclass(frozen=True)
class FuelBurnt:
    """One fuel an option burns on a class: the only one, or a dual-fuel engine's gas or
    pilot.

    Attributes
    ----------
    fuel : Fuel
    role : str
        ``fuel`` (an engine on one fuel), ``gas`` or ``pilot`` (a dual-fuel engine).
    energy_share : float
        Its share of the class's fuel energy over the duty [-].
    per_m : FuelPerDistance
        Its energy, mass, volume and tank-to-wheel CO2 per metre: the CO2 of its carbon less
        that of the methane slipping unburnt (which leaves as CH4, not CO2).
    ch4_per_m : float
        Its methane slipping unburnt [kg/m].
    """

    fuel: Fuel
    role: str
    energy_share: float
    per_m: FuelPerDistance
    ch4_per_m: float


@dataclass(frozen=True)
class ElectricPhysics:
    """A battery-electric drive on a class: the pack sized for the range on the class's duty
    (its energy flows in ``sizing.energy``) and the charging check of a full recharge."""

    sizing: BatterySizing
    charging: ChargingCheck


@dataclass(frozen=True)
class FuelCellPhysics:
    """A fuel-cell drive on a class: hydrogen over the class's duty with the tank for the range
    on board (``sizing.use``: buffer flows; ``sizing.tank``: the tank)."""

    sizing: FuelCellSizing


@dataclass(frozen=True)
class ClassPhysics:
    """Everything about one option on one vehicle class that does not involve money; the
    per-metre figures are totals over the energy carriers it buys (:attr:`fuels`, and grid
    electricity for a battery-electric drive)."""

    sheet: FuelSheet | None  # of its (first) fuel; None without a fuel
    fuels: tuple[FuelBurnt, ...]  # the option's fuel first, then a dual-fuel pilot
    fuel_energy_per_m: float  # energy bought [J/m]: fuel LHV, or grid electricity
    fuel_mass_per_m: float  # [kg/m]
    fuel_volume_per_m: float  # [m3/m], NaN when not stored as a liquid or two fuels
    co2_ttw_per_m: float  # [kg/m]
    ch4_per_m: float  # [kg/m]
    tailpipe_co2e_per_m: float  # [kg/m]: CO2, slipped methane and N2O on AR6 GWP-100
    engine_out_nox_per_m: float  # [kg/m]
    nox_source: str
    pm_per_m: float  # tailpipe particulate mass [kg/m]
    co_per_m: float  # tailpipe carbon monoxide [kg/m]
    nmhc_per_m: float  # tailpipe non-methane hydrocarbons [kg/m]
    monthly: pd.DataFrame  # programme_nox monthly table
    yearly: pd.DataFrame  # programme_nox yearly table
    replacements: int
    best_interval_months: int
    best_total_cost: float
    share_out_of_map: float
    share_full_load: float  # of the time at full load (an electric motor: above rated power)
    duty: DutyRun | None  # the engine's duty run; None without an engine
    storage: dict[str, float]  # the fuel tank; empty without a fuel
    electric: ElectricPhysics | None = None
    fuel_cell: FuelCellPhysics | None = None


def _settings(c: FleetClass) -> DutySettings:
    return DutySettings(accessory_power=c.accessory_power,
                        engine_off_at_stops=c.engine_off_at_stops,
                        extra_idle_share=c.extra_idle_share)


def applied_derate(co: ClassOption) -> float:
    """Full-load derate an option applies to a class [-]: the study's or its kind's, or for a
    bi-fuel kit the air its gas displaces against the original fuel."""
    if co.derate_against is None:
        return co.derate
    return kind_derate(KINDS[co.conversion], fuel_sheet(co.fuel), fuel_sheet(co.derate_against))


def _map_inputs(co: ClassOption) -> tuple[EngineMap, float, float, str, Fuel | None,
                                          float | None, Substitution]:
    """(map, derate, offset, conversion kind, fuel, slip, substitution curve) that
    :func:`converted_map` takes for an option: the kind's derived map only where the option
    derives one, the option's methane slip and curve where that map is a dual-fuel one."""
    kind, fuel = (co.conversion, co.fuel) if co.derived_map else ("none", None)
    dual = kind == "dual-fuel-ci"
    return (co.map_data, applied_derate(co), co.efficiency_offset, kind, fuel,
            co.methane_slip if dual else None, co.substitution if dual else DEFAULT_SUBSTITUTION)


def _duty_for(c: FleetClass, co: ClassOption) -> DutyRun:
    emap, derate, offset, kind, fuel, slip, curve = _map_inputs(co)
    return duty_physics(c.profile_data, c.vehicle_data, emap, derate, offset, _settings(c),
                        kind, fuel, slip, curve)


def option_map(co: ClassOption) -> EngineMap:
    """The map an option runs a class on (its derived or adjusted map; cached by content).

    Parameters
    ----------
    co : ClassOption
        What the option does to the class.

    Returns
    -------
    EngineMap
        The map :func:`duty_physics` ran the class's duty on.
    """
    return converted_map(*_map_inputs(co))[0]


def run_maps(inputs: StudyInputs) -> list[RunMap]:
    """Every distinct map each class runs on, with the options that run on it.

    Parameters
    ----------
    inputs : StudyInputs
        The checked study.

    Returns
    -------
    list of RunMap
        By class in study order; within a class the baseline's map first, then each other map
        (a derived map or an explicit ``engine_map`` of a candidate) where an option first
        runs on it.
    """
    out = []
    for c in inputs.classes:
        groups: dict[EngineMap, list[str]] = {}
        for o in sorted(inputs.options, key=lambda o: not o.is_baseline):
            if c.id in o.per_class and o.per_class[c.id].drive == "combustion":
                groups.setdefault(option_map(o.per_class[c.id]), []).append(o.id)
        out += [RunMap(c.id, tuple(ids), emap) for emap, ids in groups.items()]
    return out


@memoize(maxsize=256)
def class_physics(c: FleetClass, co: ClassOption, base: ClassOption, months: int,
                  nox_damage_cost: float) -> ClassPhysics:
    """All physics of one option on one class, by its drive (:data:`DRIVES`), cached.

    Parameters
    ----------
    c : FleetClass
        The vehicle class (its nominal km per year sets the catalysts' ageing).
    co : ClassOption
        What the option does to the class.
    base : ClassOption
        What the baseline does to the class (its engine-out NOx is the reference).
    months : int
        Months the class runs within the programme.
    nox_damage_cost : float
        Damage cost of NOx for the best catalyst interval [currency/kg].

    Returns
    -------
    ClassPhysics
    """
    return DRIVES[co.drive](c, co, base, months, nox_damage_cost)


def combustion_physics(c: FleetClass, co: ClassOption, base: ClassOption, months: int,
                       nox_damage_cost: float) -> ClassPhysics:
    """All physics of a combustion engine on one class (duty, chemistry, catalyst, tank).

    Parameters
    ----------
    c : FleetClass
        The vehicle class (its nominal km per year sets the catalysts' ageing).
    co : ClassOption
        What the option does to the class.
    base : ClassOption
        What the baseline does to the class (its engine-out NOx is the reference).
    months : int
        Months the class runs within the programme.
    nox_damage_cost : float
        Damage cost of NOx for the best catalyst interval [currency/kg].

    Returns
    -------
    ClassPhysics
    """
    duty = _duty_for(c, co)
    factor = applied_calibration(c, base)
    energy = _calibrated(duty.energy, factor)
    sheet = fuel_sheet(co.fuel)
    fuels = _fuels_burnt(co, energy, duty)
    per_m = fuels[0].per_m
    energy_m = sum(f.per_m.fuel_energy_per_m for f in fuels)
    base_duty = _duty_for(c, base)

    def engine_out(fuel: Fuel) -> tuple[float, str]:
        return engine_out_per_m(
            fuel, co.engine, given=co.engine_out_nox, lambda_overall=co.lambda_overall,
            energy=energy, fuel_energy_per_m=energy_m, baseline_fuel=base.fuel,
            baseline_engine=base.engine, baseline_given=base.engine_out_nox,
            baseline_energy=_calibrated(base_duty.energy, factor),
            nox_speeds_rpm=duty.nox_speeds, nox_weights=duty.nox_weights,
            reference_fuel=co.reference_fuel)

    eo, source = engine_out(co.fuel)
    if co.pilot_fuel is not None and co.engine_out_nox is None:
        # screening: the engine-out NOx of each fuel burnt alone, weighted by energy share
        share = fuels[0].energy_share
        eo_pilot, source_pilot = engine_out(co.pilot_fuel)
        eo = share * eo + (1.0 - share) * eo_pilot
        source = (f"weighted by energy share: {share:.0%} as on {co.fuel.id} alone ({source}), "
                  f"{1.0 - share:.0%} as on {co.pilot_fuel.id} alone ({source_pilot})")
    km_month = c.km_per_year.nominal / 12.0
    damage = nox_damage_cost
    prog = programme_nox(co.aftertreatment, eo, distance_per_month=km_month, months=months,
                         fleet_size=c.count, nox_damage_cost=damage)
    best = _best_interval(co.aftertreatment, eo, km_month, months, damage, c.count)
    co2_ttw = sum(f.per_m.co2_ttw_per_m for f in fuels)
    ch4_per_m = sum(f.ch4_per_m for f in fuels)
    factors = pollutant_factors(co.engine, co.aftertreatment.name)
    work_m = duty.energy.engine_energy / duty.energy.distance
    return ClassPhysics(
        sheet=sheet,
        fuels=fuels,
        fuel_energy_per_m=energy_m,
        fuel_mass_per_m=sum(f.per_m.fuel_mass_per_m for f in fuels),
        fuel_volume_per_m=per_m.fuel_volume_per_m if len(fuels) == 1 else float("nan"),
        co2_ttw_per_m=co2_ttw,
        ch4_per_m=ch4_per_m,
        tailpipe_co2e_per_m=float(co2e(co2_ttw, ch4_per_m, co.n2o_per_m)),
        engine_out_nox_per_m=eo,
        nox_source=source,
        pm_per_m=factors.pm * work_m,
        co_per_m=factors.co * work_m,
        nmhc_per_m=factors.nmhc * work_m,
        monthly=prog.monthly,
        yearly=prog.yearly,
        replacements=prog.replacements,
        best_interval_months=best[0],
        best_total_cost=best[1],
        share_out_of_map=per_m.share_out_of_map,
        share_full_load=per_m.share_at_full_load,
        duty=duty,
        storage=_storage(co.fuel, per_m.fuel_energy_per_m, c.range),
    )


def electric_physics(c: FleetClass, co: ClassOption, base: ClassOption, months: int,
                     nox_damage_cost: float) -> ClassPhysics:
    """All physics of a battery-electric drive on one class (arguments as
    :func:`class_physics`).

    The pack is sized for the option's range on the class's trace, carrying its own mass
    (:func:`workbench.models.electric.size_battery`); the energy bought is the grid energy per
    metre with the pack on board. Nothing burns on board: tailpipe CO2, CH4, N2O, NOx, PM, CO
    and hydrocarbons are zero (brake and tyre wear particles are not counted, for any drive).
    The charging check asks whether a recharge of the whole range fits the charging window.
    """
    e = co.electric
    assert e is not None and isinstance(c.profile_data, DutyTrace)  # the study checked both
    try:
        sizing = size_battery(c.vehicle_data, c.profile_data, e.drive, e.pack, e.range,
                              mass_saved=e.mass_saved, settings=_settings(c))
    except InputError as exc:  # the range too long for the pack: name the study's key
        raise InputError(e.where, exc.message) from None
    grid_m = sizing.energy.grid_per_m
    charging = charging_check(e.range * grid_m, e.charger_power, e.chargers_per_vehicle,
                              e.charging_window)
    prog = programme_nox(co.aftertreatment, 0.0, distance_per_month=c.km_per_year.nominal / 12,
                         months=months, fleet_size=c.count, nox_damage_cost=nox_damage_cost)
    return ClassPhysics(
        sheet=None, fuels=(), fuel_energy_per_m=grid_m, fuel_mass_per_m=0.0,
        fuel_volume_per_m=float("nan"), co2_ttw_per_m=0.0, ch4_per_m=0.0,
        tailpipe_co2e_per_m=0.0, engine_out_nox_per_m=0.0,
        nox_source="battery-electric drive: no combustion, no tailpipe NOx",
        pm_per_m=0.0, co_per_m=0.0, nmhc_per_m=0.0, monthly=prog.monthly, yearly=prog.yearly,
        replacements=0, best_interval_months=months, best_total_cost=0.0,
        share_out_of_map=0.0,
        share_full_load=sizing.energy.over_power_time / sizing.energy.duration,
        duty=None, storage={}, electric=ElectricPhysics(sizing, charging))


def fuel_cell_physics(c: FleetClass, co: ClassOption, base: ClassOption, months: int,
                      nox_damage_cost: float) -> ClassPhysics:
    """All physics of a fuel-cell drive on one class (arguments as :func:`class_physics`).

    The motor's DC demand on the class's trace (as a battery-electric drive's) is met by the
    fuel-cell system and its buffer battery; the hydrogen tank is sized for the option's range
    at its pressure and carried with the stack and buffer
    (:func:`workbench.models.fuelcell.size_fuel_cell_vehicle`). The energy bought is the
    hydrogen's LHV per metre. Only water leaves the vehicle: tailpipe CO2, CH4, N2O, NOx, PM,
    CO and hydrocarbons are zero.
    """
    h = co.fuel_cell
    assert h is not None and isinstance(c.profile_data, DutyTrace)  # the study checked both
    sizing = size_fuel_cell_vehicle(c.vehicle_data, c.profile_data, h.drive, h.system, h.buffer,
                                    h.range, pressure=h.tank_pressure, mass_saved=h.mass_saved,
                                    settings=_settings(c))
    use = sizing.use
    prog = programme_nox(co.aftertreatment, 0.0, distance_per_month=c.km_per_year.nominal / 12,
                         months=months, fleet_size=c.count, nox_damage_cost=nox_damage_cost)
    return ClassPhysics(
        sheet=None, fuels=(), fuel_energy_per_m=use.energy_per_m,
        fuel_mass_per_m=use.hydrogen_per_m, fuel_volume_per_m=float("nan"), co2_ttw_per_m=0.0,
        ch4_per_m=0.0, tailpipe_co2e_per_m=0.0, engine_out_nox_per_m=0.0,
        nox_source="fuel-cell drive: no combustion, no tailpipe NOx",
        pm_per_m=0.0, co_per_m=0.0, nmhc_per_m=0.0, monthly=prog.monthly, yearly=prog.yearly,
        replacements=0, best_interval_months=months, best_total_cost=0.0,
        share_out_of_map=0.0, share_full_load=use.over_power_time / use.drive.duration,
        duty=None, storage={}, fuel_cell=FuelCellPhysics(sizing))


#: The energy model of each drive a study may name (``studyfile.DRIVES``): the one place a
#: drive's physics is chosen. Each takes the arguments of :func:`class_physics`.
DRIVES: dict[str, Callable[[FleetClass, ClassOption, ClassOption, int, float], ClassPhysics]] = {
    "combustion": combustion_physics,
    "battery-electric": electric_physics,
    "fuel-cell": fuel_cell_physics,
}


def _fuels_burnt(co: ClassOption, energy: DutyEnergy, duty: DutyRun) -> tuple[FuelBurnt, ...]:
    """The fuels an option burns on a class's duty: its fuel; or, on a dual-fuel engine, its
    gas at the duty's gas share (:func:`histogram_gas_share` on the map it ran on) and the
    pilot for the rest. The methane slip applies to the (gas) fuel's methane, whose carbon
    leaves as CH4 rather than CO2 (:func:`~workbench.models.conversion.slipped`)."""
    def burnt(fuel: Fuel, role: str, share: float) -> FuelBurnt:
        part = energy if share == 1.0 else replace(energy,
                                                  fuel_energy=energy.fuel_energy * share)
        per_m = fuel_per_distance_for(part, fuel, fuel_sheet(fuel))
        per_m, ch4 = slipped(per_m, fuel, co.methane_slip if fuel is co.fuel else 0.0)
        return FuelBurnt(fuel, role, share, per_m, ch4)

    if co.pilot_fuel is None:
        return (burnt(co.fuel, "fuel", 1.0),)
    share = histogram_gas_share(duty, option_map(co), curve=co.substitution)
    return burnt(co.fuel, "gas", share), burnt(co.pilot_fuel, "pilot", 1.0 - share)


@memoize(maxsize=64)
def class_calibration(c: FleetClass, base: ClassOption
                      ) -> tuple[Calibration, tuple[str, ...]] | None:
    """A fleet-log class's calibration against its fuel cards, on the baseline (cached).

    The cards are the fuel the fleet buys today, so the factor is fitted to the baseline's
    modelled fuel energy per km of each vehicle (``workbench.study.fleet.calibrate_fleet``).

    Parameters
    ----------
    c : FleetClass
        The class; None comes back without fuel cards.
    base : ClassOption
        What the baseline does to the class (its fuel turns the cards' litres or kg into
        energy).

    Returns
    -------
    (Calibration, tuple of str) or None
        The fit and the vehicles left out of it.

    Raises
    ------
    InputError
        The cards in litres and a baseline fuel with no liquid density, or no vehicle both
        in the cards and the logs (names the fuel-card file).
    """
    if c.card_records is None:
        return None
    duty = _duty_for(c, base)
    assert isinstance(duty, FleetDutyRun)  # the study refuses fuel cards on another profile
    where = str(c.fuel_cards)
    per_amount = card_energy_per_amount(base.fuel, fuel_sheet(base.fuel).lhv_mass,
                                        c.card_records.basis, where)
    try:
        return calibrate_fleet(duty.fleet, c.card_records, energy_per_amount=per_amount)
    except InputError as exc:
        raise InputError(where, exc.message) from None


def _fit(c: FleetClass, base: ClassOption) -> Calibration | None:
    """A class's fit against its fuel cards (applied or not), None without cards."""
    found = class_calibration(c, base)
    return None if found is None else found[0]


def applied_calibration(c: FleetClass, base: ClassOption) -> float:
    """Factor a class's modelled fuel energy per km is multiplied by on every option [-]:
    the fitted one when the class calibrates, else 1."""
    cal = class_calibration(c, base) if c.calibrate else None
    return 1.0 if cal is None else cal[0].factor


def _calibrated(energy: DutyEnergy, factor: float) -> DutyEnergy:
    """A duty's energy with its fuel energy times a calibration factor."""
    return energy if factor == 1.0 else replace(energy, fuel_energy=energy.fuel_energy * factor)


def _best_interval(device: Aftertreatment, eo: float, km_month: float, months: int,
                   damage: float, count: int) -> tuple[int, float]:
    if device.efficiency_new == 0.0:
        return months, 0.0
    choice = optimal_interval(device, eo, distance_per_month=km_month, months=months,
                              nox_damage_cost=damage, fleet_size=count)
    row = choice.table.loc[choice.table["interval_months"] == choice.interval_months].iloc[0]
    return choice.interval_months, float(row["total_cost"])


@memoize(maxsize=256)
def _storage(fuel: Fuel, energy_per_m: float, range_m: float) -> dict[str, float]:
    tank = tank_for_range(fuel, range_m, energy_per_m)
    return {
        "energy_density_mj_per_kg": tank.fuel_energy_per_mass / 1e6,
        "energy_density_mj_per_l": tank.fuel_energy_per_volume / 1e9,
        "system_energy_density_mj_per_kg": tank.system_energy_per_mass / 1e6,
        "system_energy_density_mj_per_l": tank.system_energy_per_volume / 1e9,
        "tank_volume_l": tank.tank_volume * 1e3,
        "tank_system_mass_kg": tank.system_mass,
        "range_km": tank.range / 1e3,
    }


# ----------------------------------------------------------------------------- plan


@dataclass(frozen=True)
class Plan:
    """Physics of every option × class, and the yearly arrays the money needs."""

    inputs: StudyInputs
    physics: dict[tuple[str, str], ClassPhysics]
    active: dict[str, np.ndarray]  # by class: 1 in years 1..min(H, life), shape (H+1,)
    catalyst_cost: dict[tuple[str, str], np.ndarray]  # shape (H+1,), nominal km
    nox_t: dict[tuple[str, str], np.ndarray]  # fleet tonnes by year, shape (H+1,)
    replacements: dict[tuple[str, str], np.ndarray]  # fleet catalyst replacements by year
    price_factor: dict[str, float]  # by fuel id: currency/J per unit of price value
    responses: dict[tuple[str, str], list[econ.Response]]  # physics inputs with a distribution
    #: by key path of a drawn physics factor (spread, calibration): its display unit and the
    #: scale from the factor to it (the tornado shows the factor's values in that unit)
    factor_units: dict[str, tuple[str, float]] = field(default_factory=dict)
    tax_factor: dict[str, float] = field(default_factory=dict)  # as price_factor, fuel tax


#: Quantiles at which an uncertain physics input is evaluated; draws between them are
#: interpolated linearly, draws beyond them held at the end values.
RESPONSE_QUANTILES = (0.01, 0.1, 0.3, 0.5, 0.7, 0.9, 0.99)


def _physics_key(inputs: StudyInputs) -> tuple:
    """What the price-independent part of a plan depends on (prices, rates and escalation
    are not in it, so a price edit finds the physics, responses and tables cached)."""
    return (inputs.horizon_years, inputs.nox_damage_cost.nominal, inputs.classes,
            tuple((o.id, o.name, o.is_baseline, tuple(o.per_class.items()))
                  for o in inputs.options))


@dataclass(frozen=True)
class _Physics:
    """The part of a plan no price, rate or escalation touches, and the tables made of it."""

    plan: Plan  # without price factors, and with the inputs it was first made for
    tables: dict[str, pd.DataFrame]  # :func:`tables.physics_tables`, copied out to each result


@memoize(maxsize=16, key=_physics_key)
def _physics_plan(inputs: StudyInputs) -> _Physics:
    """Physics of every option x class, their yearly arrays and the physics-only tables
    (cached by :func:`_physics_key`)."""
    h = inputs.horizon_years
    physics, active, cat, nox, repl, responses = {}, {}, {}, {}, {}, {}
    years = np.arange(h + 1)
    for c in inputs.classes:
        run_years = min(h, c.remaining_life_years)
        active[c.id] = ((years >= 1) & (years <= run_years)).astype(float)
        for o in inputs.options:
            ph = class_physics(c, o.per_class[c.id], inputs.baseline.per_class[c.id],
                               12 * run_years, inputs.nox_damage_cost.nominal)
            physics[o.id, c.id] = ph
            cat[o.id, c.id], nox[o.id, c.id], repl[o.id, c.id] = _yearly(ph, h, run_years)
            responses[o.id, c.id] = [
                _response(inputs, c, o.per_class[c.id], field, u, 12 * run_years, run_years)
                for field, u in (*c.varied, *o.per_class[c.id].varied)]
    plan = Plan(inputs, physics, active, cat, nox, repl, {}, responses)
    return _Physics(plan, tables.physics_tables(plan))


def _plan(inputs: StudyInputs) -> tuple[Plan, dict[str, pd.DataFrame]]:
    """The plan of a run (physics from the cache when only money changed), and the
    physics-only tables."""
    cached = _physics_plan(inputs)
    factors: dict[str, float] = {}
    taxes: dict[str, float] = {}
    for fid, fuel in study_fuels(inputs.options).items():
        factors[fid] = price_factor(inputs.prices[fid][0], fuel)
        if fid in inputs.fuel_tax:
            taxes[fid] = price_factor(inputs.fuel_tax[fid][0], fuel)
    return replace(cached.plan, inputs=inputs, price_factor=factors,
                   tax_factor=taxes), cached.tables


def price_factor(price: Price, fuel: Fuel) -> float:
    """Currency per joule (LHV) of a fuel per unit of the price's value.

    Parameters
    ----------
    price : Price
        The price, on any basis (the study file has checked that the basis fits the fuel).
    fuel : Fuel
        The fuel it is the price of.

    Returns
    -------
    float
        Multiply :attr:`Price.value` by this to get [currency/J].
    """
    sheet = fuel_sheet(fuel)
    return float(price_per_energy(
        replace(price, value=1.0), lhv_mass=sheet.lhv_mass,
        density=fuel.liquid_density if sold_as_liquid(fuel) else None,
        molar_mass=sheet.molar_mass if fuel.is_gas else None, hhv_mass=sheet.hhv_mass))


def _yearly(ph: ClassPhysics, h: int, run_years: int
            ) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Catalyst cost, fleet NOx tonnes and replacements by programme year, shape (H+1,)."""
    yearly = ph.yearly.set_index("year")
    cost, tonnes, count = np.zeros(h + 1), np.zeros(h + 1), np.zeros(h + 1)
    for y in range(1, run_years + 1):
        if y in yearly.index:
            cost[y] = yearly.at[y, "replacement_cost"] + yearly.at[y, "reductant_cost"]
            tonnes[y] = yearly.at[y, "fleet_nox_t"]
            count[y] = yearly.at[y, "replacements"]
    return cost, tonnes, count


def _response(inputs: StudyInputs, c: FleetClass, co: ClassOption, field: str, u: Uncertain,
              months: int, run_years: int) -> econ.Response:
    """Evaluate one option-class at quantiles of one uncertain physics input."""
    nodes = np.unique(np.asarray(u.dist.ppf(np.array(RESPONSE_QUANTILES)), dtype=float))
    base = inputs.baseline.per_class[c.id]
    energy, tailpipe, catalyst = [], [], []
    for value in nodes:
        try:
            c2, co2 = _vary(c, co, field, float(value))
        except InputError as exc:
            raise InputError(u.path, f"at {value:g} of its range: {exc.message}") from None
        ph = class_physics(c2, co2, base, months, inputs.nox_damage_cost.nominal)
        energy.append(_energies(ph))
        tailpipe.append(ph.tailpipe_co2e_per_m)
        catalyst.append(_yearly(ph, inputs.horizon_years, run_years)[0])
    return econ.Response(u.path, nodes, np.array(energy), np.array(tailpipe), np.array(catalyst))


def _energies(ph: ClassPhysics) -> np.ndarray:
    """Energy per distance of each carrier an option-class buys (its fuels, then a drive's
    grid electricity or hydrogen), shape (carriers,) [J/m]."""
    drive = [] if ph.electric is None and ph.fuel_cell is None else [ph.fuel_energy_per_m]
    return np.array([f.per_m.fuel_energy_per_m for f in ph.fuels] + drive)


def _vary(c: FleetClass, co: ClassOption, field: str, value: float
          ) -> tuple[FleetClass, ClassOption]:
    """The class and option with one physics input set to ``value``."""
    if field in ("accessory_power", "extra_idle_share"):
        return replace(c, **{field: value}), co
    if field.startswith("aftertreatment."):
        device = replace(co.aftertreatment, **{field.split(".", 1)[1]: value})
        return c, replace(co, aftertreatment=device)
    return c, replace(co, **{field: value})


# ----------------------------------------------------------------------------- money


def _lines(plan: Plan, params: Mapping[str, np.ndarray], n: int) -> dict[str, econ.OptionLines]:
    """What the cash flows of each option need, for ``n`` draws of the uncertain inputs
    (nominal where absent)."""
    inputs = plan.inputs
    seen: dict[tuple[str, float], np.ndarray] = {}

    def val(u: Uncertain) -> np.ndarray:
        # synthetic options share their class options' inputs: make each array once
        key = (u.path, u.nominal)
        if key not in seen:
            seen[key] = _values(u, params, n)
        return seen[key]

    def tax(fid: str) -> np.ndarray | float:
        if fid not in inputs.fuel_tax:
            return 0.0
        return val(inputs.fuel_tax[fid][1]) * plan.tax_factor[fid]

    h = inputs.horizon_years
    options = {}
    made: dict[tuple[int, ...], econ.ClassLine] = {}
    before: dict[str, econ.ClassLine] = {}  # the baseline's line of each class
    for o in inputs.options:
        lines = []
        for c in inputs.classes:
            co = o.per_class[c.id]
            ph = plan.physics[o.id, c.id]
            # a synthetic option reuses a (candidate, class)'s objects: one line for them all
            key = tuple(map(id, (c, co, ph, plan.catalyst_cost[o.id, c.id],
                                 plan.responses[o.id, c.id], plan.nox_t[o.id, c.id],
                                 *o.stations)))
            if key in made:
                lines.append(made[key])
                continue
            energy, tailpipe, catalyst = econ.physics_draws(
                _energies(ph), ph.tailpipe_co2e_per_m, plan.catalyst_cost[o.id, c.id],
                plan.responses[o.id, c.id], params, n)
            parts = tuple(econ.EnergyPart(
                energy[:, k], val(inputs.prices[f.fuel.id][1]) * plan.price_factor[f.fuel.id],
                val(inputs.escalation[f.fuel.id]), val(inputs.upstream[f.fuel.id]),
                tax_per_j=tax(f.fuel.id))
                for k, f in enumerate(ph.fuels))
            own_capital = val(co.conversion_cost)
            own_upkeep = val(co.upkeep_change_per_year)
            if (e := co.electric) is not None:
                parts += (econ.EnergyPart(
                    energy[:, len(ph.fuels)],
                    tariff_price([val(u) for _, u, _ in e.tariff], [s for _, _, s in e.tariff]),
                    val(e.escalation), np.array(e.grid_path(inputs.start_year,
                                                            inputs.horizon_years)),
                    upstream_by_year=True),)
                own_capital = own_capital + val(e.charger_capital)
                own_upkeep = own_upkeep + val(e.charger_upkeep_per_year)
            if (fc := co.fuel_cell) is not None:  # hydrogen, its production's CO2e upstream
                lhv = fuel_sheet(fc.hydrogen).lhv_mass
                parts += (econ.EnergyPart(
                    energy[:, len(ph.fuels)], val(fc.price_value) * price_factor(fc.price,
                                                                                 fc.hydrogen),
                    val(fc.escalation), val(fc.co2e_per_kg) / lhv),)
            v = co.new_vehicle
            phasing = None
            if co.converts and co.phasing is not None:
                phasing = np.zeros(h + 1)
                phasing[:len(co.phasing)] = co.phasing
            lines.append(econ.ClassLine(
                count=c.count, active=plan.active[c.id], km_per_year=val(c.km_per_year),
                km_per_year_nominal=c.km_per_year.nominal, parts=parts,
                tailpipe_co2e_per_m=tailpipe, catalyst_cost=catalyst,
                upkeep_per_year=val(c.upkeep_per_year) + own_upkeep,
                tank_inspection_cost=val(co.tank_inspection_cost),
                tank_inspection_interval=co.tank_inspection_interval, converts=co.converts,
                conversion_cost=own_capital, downtime_days=val(co.downtime_days),
                daily_revenue=val(c.daily_revenue), remaining_life_years=c.remaining_life_years,
                nox_mass=plan.nox_t[o.id, c.id] * 1e3, phasing=phasing,
                before=before.get(c.id), grant_per_vehicle=co.grant_per_vehicle,
                grant_share=co.grant_share,
                time_cost_per_m=refuelling.time_cost_per_m(o, c, val) if co.converts else 0.0,
                new_vehicle=None if v is None else econ.NewVehicle(
                    val(v.purchase_price), val(v.resale_value), val(v.old_vehicle_sale))))
            made[key] = lines[-1]
            if o.is_baseline:
                before[c.id] = lines[-1]
        capital, upkeep = refuelling.station_money(refuelling.station_sizes(plan, o), val)
        programme = val(o.programme_capital)
        loan = None if o.loan is None else econ.Loan(val(o.loan.share), val(o.loan.rate),
                                                      o.loan.term_years)
        options[o.id] = econ.OptionLines(
            lines, programme + capital, val(o.programme_upkeep_per_year) + upkeep,
            programme_grant=o.programme_grant + o.programme_grant_share * programme,
            loan=loan)
    return options


def _money(plan: Plan, params: Mapping[str, np.ndarray], n: int,
           lines: Mapping[str, econ.OptionLines] | None = None) -> econ.Money:
    """The programme's money for ``n`` draws of the uncertain inputs (nominal where absent),
    from ``lines`` when the caller made them (:func:`_lines` of the same arguments)."""
    inputs = plan.inputs
    lines = _lines(plan, params, n) if lines is None else lines
    return econ.programme_money(lines, baseline=inputs.baseline.id,
                                rate=_values(inputs.discount_rate, params, n),
                                carbon_price=_values(inputs.carbon_price, params, n),
                                horizon=inputs.horizon_years, n=n)


def _values(u: Uncertain, params: Mapping[str, np.ndarray], n: int) -> np.ndarray:
    """An input's value in each of ``n`` draws: drawn when ``params`` has it, else nominal."""
    drawn = params.get(u.path)
    if drawn is None:  # most inputs, most calls: a plain array is 4x quicker to make
        return np.full(n, u.nominal, dtype=float)
    return np.broadcast_to(np.asarray(drawn, dtype=float), (n,))


# ----------------------------------------------------------------------------- run


def run(study: Study, *, draws: int | None = None,
        progress: Callable[[str], None] | None = None,
        vehicles: Progress | None = None) -> StudyResult:
    """Run a study.

    Parameters
    ----------
    study : Study
        A checked study.
    draws : int, optional
        Monte Carlo draws; the study's ``programme.monte_carlo_draws`` when omitted; 0 skips
        the Monte Carlo and the tornado.
    progress : callable, optional
        Called with a short text as each slow step starts (the panels show it).
    vehicles : callable, optional
        Called with (vehicles done, vehicles in all) as each vehicle of a class run from its
        logs finishes, once per fleet run (``workbench.study.fleet.Progress``; the terminal
        prints it, the panels draw a bar); not called when the physics is cached.

    Returns
    -------
    StudyResult
    """
    inputs = study.inputs
    say = progress or (lambda _text: None)
    n = inputs.draws if draws is None else check_draws(draws, inputs, "draws")
    say("physics and chemistry (cached after the first run)")
    with reporting(vehicles):
        plan, physics_tables = _plan(inputs)
    say("money")
    lines = _lines(plan, {}, 1)
    det = _money(plan, {}, 1, lines)
    draws_of: dict[str, econ.NPVDraws] = {}
    samples: dict[str, np.ndarray] = {}
    sensitivity: dict[str, pd.DataFrame] = {}
    if n > 0:
        say(f"Monte Carlo, {n} draws")
        drawn = {**inputs.uncertain, **_vehicle_spread(plan), **_calibration_spread(plan)}
        samples = econ.sample_inputs(drawn, n, inputs.seed, correlation=inputs.correlation)
        money = _money(plan, samples, n)
        for o in inputs.candidates:
            draws_of[o.id] = econ.npv_draws(money, o.id, inputs.baseline.id)
            if drawn:
                sensitivity[o.id] = _sensitivity(plan, o.id, drawn)
    result = tables.study_result(study, plan, lines, det, draws_of,
                                 sensitivity, n, _break_even(plan), physics_tables)
    from workbench.study.decisions import decision_tables  # it builds on this module

    say("decisions per class")
    decisions, mix = decision_tables(plan, samples, n, {k: v.npv for k, v in draws_of.items()})
    result = replace(result, defaults=tables.frame("defaults", defaults_rows(inputs, plan.physics)),
                     notices=tables.frame("notices", notice_rows(inputs)),
                     class_decisions=tables.frame("class_decisions", decisions),
                     best_mix=tables.frame("best_mix", mix),
                     vehicles=tables.frame("vehicles", [
                         row for c in inputs.classes for row in vehicle_rows(
                             c.id, plan.physics[inputs.baseline.id, c.id].duty,
                             inputs.baseline.per_class[c.id].fuel,
                             plan.physics[inputs.baseline.id, c.id].sheet,
                             _fit(c, inputs.baseline.per_class[c.id]))]),
                     calibration=tables.frame("calibration", calibration_rows(inputs)))
    result.assumptions.update(_fleet_notes(plan))
    result.assumptions.update(_calibration_notes(inputs))
    say("done")
    return result


def _vehicle_spread(plan: Plan) -> dict[str, econ.Distribution]:
    """What the spread between a fleet-log class's vehicles leaves uncertain in its mean, as
    an uncertain physics input.

    A normal factor on the class's fuel energy per km, mean 1, sd the standard error of the
    km-weighted mean over the mean (baseline option; ``ClassAggregate.mean_se_per_m``): the
    programme converts the whole class, so its fuel is the class mean's, not one vehicle's
    (``docs/fleet-logs.md``). Every option of the class takes the same draw, scaling its fuel
    energy and tailpipe CO2e per km; the tornado shows it as the class's fuel energy per km
    on the baseline [MJ/km]. Adds the responses to ``plan`` and returns the distributions to
    draw, by key path.
    """
    out = {}
    base = plan.inputs.baseline.id
    for c in plan.inputs.classes:
        duty = plan.physics[base, c.id].duty
        if not isinstance(duty, FleetDutyRun):
            continue
        agg = duty.fleet.aggregate
        sd = agg.mean_se_per_m / agg.energy_per_m
        if not sd > 0.0:  # NaN with one vehicle: nothing drawn
            continue
        path = f"classes.{c.id}.vehicle_spread"
        out[path] = _fuel_factor(plan, c, path, sd, "MJ/km",
                                 plan.physics[base, c.id].fuel_energy_per_m / 1e3)
    return out


def _calibration_spread(plan: Plan) -> dict[str, econ.Distribution]:
    """The standard error of each calibrated class's factor as an uncertain physics input.

    A normal factor (mean 1, sd the factor's standard error over the factor) on the class's
    calibrated fuel energy per km, the same draw on every option. Adds the responses to
    ``plan`` and returns the distributions to draw, by key path.
    """
    out = {}
    for c in plan.inputs.classes:
        cal = class_calibration(c, plan.inputs.baseline.per_class[c.id]) if c.calibrate else None
        if cal is None or not cal[0].factor_se > 0.0:  # NaN with one vehicle: nothing drawn
            continue
        path = f"classes.{c.id}.calibration"
        out[path] = _fuel_factor(plan, c, path, cal[0].factor_se / cal[0].factor, "-",
                                 cal[0].factor)
    return out


def _fuel_factor(plan: Plan, c: FleetClass, path: str, sd: float, unit: str, scale: float
                 ) -> econ.Distribution:
    """A normal factor (mean 1, ``sd``) on a class's fuel energy and tailpipe CO2e per km on
    every option, added to ``plan``'s responses once (a warm re-run shares the cached plan),
    with the unit and scale the tornado shows it in; returns its distribution."""
    dist = econ.Distribution("normal", mean=1.0, sd=sd, where=path)
    plan.factor_units[path] = (unit, scale)
    nodes = np.asarray(dist.ppf(np.array(RESPONSE_QUANTILES)), dtype=float)
    for o in plan.inputs.options:
        if any(r.path == path for r in plan.responses[o.id, c.id]):
            continue
        ph = plan.physics[o.id, c.id]
        plan.responses[o.id, c.id].append(econ.Response(
            path, nodes, np.outer(nodes, _energies(ph)), ph.tailpipe_co2e_per_m * nodes,
            np.tile(plan.catalyst_cost[o.id, c.id], (nodes.size, 1))))
    return dist


def _fleet_notes(plan: Plan) -> dict[str, str]:
    """One assumption line per fleet-log class: vehicles used, left out, spread."""
    out = {}
    for c in plan.inputs.classes:
        duty = plan.physics[plan.inputs.baseline.id, c.id].duty
        if not isinstance(duty, FleetDutyRun):
            continue
        run = duty.fleet
        agg = run.aggregate
        lo, hi = (x / 1e3 for x in agg.spread_per_m)
        left = f"; left out: {'; '.join(run.problems)}" if run.problems else ""
        drawn = (f"its standard error ± {agg.mean_se_per_m / 1e3:.3f} MJ/km "
                 f"({agg.effective_vehicles:.1f} vehicles' worth of km) drawn in the Monte "
                 "Carlo as the uncertainty of the class mean"
                 if agg.mean_se_per_m > 0.0 else "one vehicle: no spread to draw")
        out[f"vehicle logs, {c.name}"] = (
            f"{len(run.summaries)} of {run.found} vehicles used, "
            f"{agg.energy.distance / 1e3:,.0f} km, km-weighted mean "
            f"{agg.energy_per_m / 1e3:.2f} MJ/km on the baseline (before calibration); "
            f"between vehicles P10-P90 {lo:.2f}-{hi:.2f} MJ/km; {drawn}{left}")
    return out


def calibration_rows(inputs: StudyInputs) -> list[dict]:
    """Rows of the ``calibration`` table: each class with fuel cards, its fit on the baseline.

    Parameters
    ----------
    inputs : StudyInputs

    Returns
    -------
    list of dict
        ``vehicle_class``, ``fuel`` (the baseline's, which the cards bought), ``applied``,
        ``calibration_factor`` and ``calibration_factor_se`` [-], ``vehicles`` and ``fills``
        in the fit, ``card_km`` (their odometer distance), ``observed_mj_per_km`` and
        ``modelled_mj_per_km`` (total over total) and ``rms_residual_mj_per_km``.
    """
    return [row for row, _ in _calibrations(inputs).values()]


def _calibrations(inputs: StudyInputs) -> dict[str, tuple[dict, tuple[str, ...]]]:
    """By class name, each class with fuel cards: its ``calibration`` row and the vehicles
    left out of the fit."""
    out = {}
    for c in inputs.classes:
        base = inputs.baseline.per_class[c.id]
        found = class_calibration(c, base)
        if found is None or c.card_records is None:
            continue
        cal, left = found
        out[c.name] = ({
            "vehicle_class": c.id, "fuel": base.fuel.id, "applied": c.calibrate,
            "calibration_factor": cal.factor, "calibration_factor_se": cal.factor_se,
            "vehicles": cal.vehicles,
            "fills": int(np.isin(c.card_records.vehicle, cal.residuals["vehicle"]).sum()),
            "card_km": float(cal.residuals["card_km"].sum()),
            "observed_mj_per_km": cal.observed_per_m / 1e3,
            "modelled_mj_per_km": cal.modelled_per_m / 1e3,
            "rms_residual_mj_per_km": cal.rms_residual_per_m / 1e3}, left)
    return out


def _calibration_notes(inputs: StudyInputs) -> dict[str, str]:
    """One assumption line per class with fuel cards: the factor, its fit, applied or not."""
    out = {}
    cards = {c.name: c.fuel_cards.name for c in inputs.classes if c.fuel_cards is not None}
    for name, (row, left) in _calibrations(inputs).items():
        how = ("applied to the modelled fuel energy per km of every option, its standard "
               "error drawn in the Monte Carlo" if row["applied"]
               else "not applied (calibrate = false)")
        dropped = f"; left out of the fit: {'; '.join(left)}" if left else ""
        out[f"fuel-card calibration, {name}"] = (
            f"factor {row['calibration_factor']:.3f} ± {row['calibration_factor_se']:.3f} "
            f"(1 s.e.) from {row['vehicles']} vehicles and {row['fills']} fills of "
            f"{cards[name]} on {row['fuel']}, RMS residual "
            f"{row['rms_residual_mj_per_km']:.3f} MJ/km; {how}{dropped}")
    return out


def _break_even(plan: Plan) -> dict[str, list[tuple[Uncertain, float]]]:
    """Per candidate, the inputs that could turn its verdict and where its NPV is zero.

    The inputs are the prices of the fuels a candidate brings in (grid electricity: each
    tariff band's price) and the km per year of the classes it converts, one at a time, every
    other input nominal.
    """
    inputs = plan.inputs
    base = inputs.baseline.id
    base_fuels = set(study_fuels([inputs.baseline]))
    subjects: list[tuple[str, Uncertain]] = []  # (candidate, input), one draw each
    for o in inputs.candidates:
        converted = [co for co in o.per_class.values() if co.converts]
        found = [inputs.prices[f][1] for f in dict.fromkeys(
            fuel.id for co in converted for fuel in co.fuels) if f not in base_fuels]
        found += list({u.path: u for co in converted if co.electric is not None
                       for _, u, _ in co.electric.tariff}.values())  # grid electricity
        found += [c.km_per_year for c in inputs.classes if o.per_class[c.id].converts]
        subjects += [(o.id, u) for u in found]
    out: dict[str, list[tuple[Uncertain, float]]] = {o.id: [] for o in inputs.candidates}
    if not subjects:
        return out
    n = len(subjects)
    nominal = {u.path: u.nominal for _, u in subjects}
    varies = {p: np.array([u.path == p for _, u in subjects]) for p in nominal}

    def npv_at(x: np.ndarray) -> np.ndarray:
        # draw i moves subject i's input alone; money inputs only, so a path held at its
        # nominal value in the other draws is the same as not naming it
        money = _money(plan, {p: np.where(m, x, nominal[p]) for p, m in varies.items()}, n)
        npv = {oid: np.asarray(econ.npv(money.rate, money.cash[oid] - money.cash[base])
                               ).reshape(-1) for oid, _ in dict(subjects).items()}
        return np.array([npv[oid][i] for i, (oid, _) in enumerate(subjects)])

    roots = econ.break_even(npv_at, np.array([u.nominal for _, u in subjects]))
    for (oid, u), root in zip(subjects, roots, strict=True):
        out[oid].append((u, float(root)))
    return out


def _sensitivity(plan: Plan, option: str, dists: Mapping[str, econ.Distribution]
                 ) -> pd.DataFrame:
    """One-at-a-time sensitivity of an option's NPV to each uncertain input (P10 and P90):
    the study's and the drawn physics factors (vehicle spread, calibration)."""
    base = plan.inputs.baseline.id

    def npv_of(params: dict[str, np.ndarray]) -> np.ndarray:
        n = len(next(iter(params.values())))
        return econ.npv_draws(_money(plan, params, n), option, base).npv

    return econ.tornado(npv_of, dists)


# ----------------------------------------------------------------------------- defaults


def _shown(inputs: StudyInputs) -> list[tuple[str, str, ClassOption]]:
    """(option id, class id, class option) of the baseline and of each class a candidate
    converts."""
    return [(o.id, cid, co) for o in inputs.options for cid, co in o.per_class.items()
            if o.is_baseline or co.converts]


def notice_rows(inputs: StudyInputs) -> list[dict]:
    """Rows of the ``notices`` table: one line each where a fuel runs on a map made for
    another combustion regime."""
    return [{"candidate": oid, "vehicle_class": cid, "message": m}
            for oid, cid, co in _shown(inputs) for m in co.notices]


def defaults_rows(inputs: StudyInputs,
                  physics: Mapping[tuple[str, str], ClassPhysics] | None = None) -> list[dict]:
    """Rows of the ``defaults`` table: every value a run takes that the study did not give.

    Parameters
    ----------
    inputs : StudyInputs
        The checked study.
    physics : mapping, optional
        Physics by (option, class) of a run; with it, the engine-out NOx rows carry the value
        per km the run used.

    Returns
    -------
    list of dict
        ``candidate``, ``vehicle_class``, ``quantity``, ``value``, ``unit``, ``source``.
    """
    rows = []
    for oid, cid, co in _shown(inputs):
        def add(quantity: str, value: str, unit: str, source: str,
                _oid: str = oid, _cid: str = cid) -> None:
            rows.append({"candidate": _oid, "vehicle_class": _cid, "quantity": quantity,
                         "value": value, "unit": unit, "source": source})

        for quantity, value, unit, source in co.defaults:
            add(quantity, value, unit, source)
        if co.drive != "combustion" and co.converts:  # no engine: no combustion defaults
            continue
        if co.derate_against is not None:
            add("derate", f"{applied_derate(co) * 100:.1f}", "%",
                KINDS[co.conversion].sources["derate"])
        if co.derived_map and co.pilot_fuel is None:
            # a dual-fuel map's numbers are its slip and curve, each listed on its own below
            for name, (value, unit, source) in converted_map(*_map_inputs(co))[1].items():
                add(name, f"{value:.4g}", unit, source)
        if co.pilot_fuel is not None and co.substitution == DEFAULT_SUBSTITUTION:
            add("gas substitution curve", co.substitution.describe(), "share of fuel energy",
                KINDS[co.conversion].source)
            if physics is not None:
                ph = physics[oid, cid]
                add("gas energy share on the duty", f"{ph.fuels[0].energy_share * 100:.1f}",
                    "%", "the substitution curve weighted by fuel energy over the duty's "
                    "speed x torque histogram")
                if co.engine_out_nox is None:
                    add("engine-out NOx, dual fuel", f"{ph.engine_out_nox_per_m * 1e6:.3g}",
                        "g/km", ph.nox_source)
        base = inputs.baseline.per_class[cid]
        if co.engine_out_nox is None and (base.engine != co.engine or co is base
                                          or base.engine_out_nox is None):
            spec = DEFAULT_ENGINE_OUT[co.engine]
            add("engine-out NOx", f"{spec.value:g}", spec.unit, spec.source)
            if physics is not None:
                add("engine-out NOx on the duty",
                    f"{physics[oid, cid].engine_out_nox_per_m * 1e6:.3g}", "g/km",
                    "the default above with the class's brake work per km")
        f = pollutant_factors(co.engine, co.aftertreatment.name)
        g_kwh = 1e3 * J_PER_KWH  # [g/kWh] per [kg/J]
        add("PM, CO, NMHC factors", f"{f.pm * g_kwh:g}, {f.co * g_kwh:g}, {f.nmhc * g_kwh:g}",
            "g/kWh", f.source)
    return rows
