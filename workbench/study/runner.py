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
from dataclasses import dataclass, replace

import numpy as np
import pandas as pd

from workbench.core.cache import memoize
from workbench.core.errors import InputError
from workbench.core.fuels import Fuel
from workbench.core.thermo import molar_mass
from workbench.core.units import Price, price_per_energy
from workbench.models import economics as econ
from workbench.models.aftertreatment import Aftertreatment, optimal_interval, programme_nox
from workbench.models.combustion import FuelSheet, fuel_sheet
from workbench.models.duty import DutySettings, DutyTrace, ModeTable
from workbench.models.emissions import co2e
from workbench.models.engine import DutyRun, EngineMap, fuel_per_distance_for, run_duty
from workbench.models.engine_out import engine_out_per_m
from workbench.models.storage import tank_for_range
from workbench.models.vehicle import Vehicle
from workbench.study import tables
from workbench.study.results import StudyResult
from workbench.study.studyfile import (
    ClassOption,
    FleetClass,
    Study,
    StudyInputs,
    Uncertain,
    check_draws,
    sold_as_liquid,
)

# ----------------------------------------------------------------------------- physics


@memoize(maxsize=128)
def duty_physics(profile: DutyTrace | ModeTable, vehicle: Vehicle, engine_map: EngineMap,
                 derate: float, efficiency_offset: float, settings: DutySettings) -> DutyRun:
    """Run a profile with a vehicle and an adjusted map (cached by their content).

    Parameters
    ----------
    profile : DutyTrace or ModeTable
        The class's duty, read when the study was checked.
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

    Returns
    -------
    DutyRun
    """
    emap = engine_map.adjusted(derate=derate, efficiency_offset=efficiency_offset)
    return run_duty(profile, vehicle, emap, settings=settings)


@dataclass(frozen=True)
class ClassPhysics:
    """Everything about one option on one vehicle class that does not involve money."""

    sheet: FuelSheet
    fuel_energy_per_m: float  # [J/m]
    fuel_mass_per_m: float  # [kg/m]
    fuel_volume_per_m: float  # [m3/m], NaN when not stored as a liquid
    co2_ttw_per_m: float  # [kg/m]
    ch4_per_m: float  # [kg/m]
    tailpipe_co2e_per_m: float  # [kg/m]: CO2, slipped methane and N2O on AR6 GWP-100
    engine_out_nox_per_m: float  # [kg/m]
    nox_source: str
    monthly: pd.DataFrame  # programme_nox monthly table
    yearly: pd.DataFrame  # programme_nox yearly table
    replacements: int
    best_interval_months: int
    best_total_cost: float
    share_out_of_map: float
    share_full_load: float
    duty: DutyRun
    storage: dict[str, float]


def _settings(c: FleetClass) -> DutySettings:
    return DutySettings(accessory_power=c.accessory_power,
                        engine_off_at_stops=c.engine_off_at_stops,
                        extra_idle_share=c.extra_idle_share)


def _duty_for(c: FleetClass, co: ClassOption) -> DutyRun:
    return duty_physics(c.profile_data, c.vehicle_data, co.map_data, co.derate,
                        co.efficiency_offset, _settings(c))


@memoize(maxsize=256)
def class_physics(c: FleetClass, co: ClassOption, base: ClassOption, months: int,
                  nox_damage_cost: float) -> ClassPhysics:
    """All physics of one option on one class (duty, chemistry, catalyst, tank), cached.

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
    sheet = fuel_sheet(co.fuel)
    per_m = fuel_per_distance_for(duty.energy, co.fuel, sheet)
    energy_m = per_m.fuel_energy_per_m
    mass_m = per_m.fuel_mass_per_m
    base_duty = _duty_for(c, base)
    eo, source = engine_out_per_m(
        co.fuel, co.engine, given=co.engine_out_nox, lambda_overall=co.lambda_overall,
        energy=duty.energy, fuel_energy_per_m=energy_m, baseline_fuel=base.fuel,
        baseline_engine=base.engine, baseline_given=base.engine_out_nox,
        baseline_energy=base_duty.energy, nox_speeds_rpm=duty.nox_speeds,
        nox_weights=duty.nox_weights)
    km_month = c.km_per_year.nominal / 12.0
    damage = nox_damage_cost
    prog = programme_nox(co.aftertreatment, eo, distance_per_month=km_month, months=months,
                         fleet_size=c.count, nox_damage_cost=damage)
    best = _best_interval(co.aftertreatment, eo, km_month, months, damage, c.count)
    ch4_per_m = co.methane_slip * _methane_mass_share(co.fuel) * mass_m
    return ClassPhysics(
        sheet=sheet,
        fuel_energy_per_m=energy_m,
        fuel_mass_per_m=mass_m,
        fuel_volume_per_m=per_m.fuel_volume_per_m,
        co2_ttw_per_m=per_m.co2_ttw_per_m,
        ch4_per_m=ch4_per_m,
        tailpipe_co2e_per_m=float(co2e(per_m.co2_ttw_per_m, ch4_per_m, co.n2o_per_m)),
        engine_out_nox_per_m=eo,
        nox_source=source,
        monthly=prog.monthly,
        yearly=prog.yearly,
        replacements=prog.replacements,
        best_interval_months=best[0],
        best_total_cost=best[1],
        share_out_of_map=per_m.share_out_of_map,
        share_full_load=per_m.share_at_full_load,
        duty=duty,
        storage=_storage(co.fuel, energy_m, c.range),
    )


def _best_interval(device: Aftertreatment, eo: float, km_month: float, months: int,
                   damage: float, count: int) -> tuple[int, float]:
    if device.efficiency_new == 0.0:
        return months, 0.0
    choice = optimal_interval(device, eo, distance_per_month=km_month, months=months,
                              nox_damage_cost=damage, fleet_size=count)
    row = choice.table.loc[choice.table["interval_months"] == choice.interval_months].iloc[0]
    return choice.interval_months, float(row["total_cost"])


def _methane_mass_share(fuel: Fuel) -> float:
    x = fuel.mole_fractions.get("CH4", 0.0)
    return x * molar_mass({"C": 1, "H": 4}) / fuel.molar_mass() if x else 0.0


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


#: Quantiles at which an uncertain physics input is evaluated; draws between them are
#: interpolated linearly, draws beyond them held at the end values.
RESPONSE_QUANTILES = (0.01, 0.1, 0.3, 0.5, 0.7, 0.9, 0.99)


def _plan(inputs: StudyInputs) -> Plan:
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
    factors = {}
    for o in inputs.options:
        for co in o.per_class.values():
            factors[co.fuel.id] = price_factor(inputs.prices[co.fuel.id][0], co.fuel)
    return Plan(inputs, physics, active, cat, nox, repl, factors, responses)


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
        energy.append(ph.fuel_energy_per_m)
        tailpipe.append(ph.tailpipe_co2e_per_m)
        catalyst.append(_yearly(ph, inputs.horizon_years, run_years)[0])
    return econ.Response(u.path, nodes, np.array(energy), np.array(tailpipe), np.array(catalyst))


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

    def val(u: Uncertain) -> np.ndarray:
        return _values(u, params, n)

    options = {}
    for o in inputs.options:
        lines = []
        for c in inputs.classes:
            co = o.per_class[c.id]
            ph = plan.physics[o.id, c.id]
            fid = co.fuel.id
            energy, tailpipe, catalyst = econ.physics_draws(
                ph.fuel_energy_per_m, ph.tailpipe_co2e_per_m, plan.catalyst_cost[o.id, c.id],
                plan.responses[o.id, c.id], params, n)
            lines.append(econ.ClassLine(
                count=c.count, active=plan.active[c.id], km_per_year=val(c.km_per_year),
                km_per_year_nominal=c.km_per_year.nominal, fuel_energy_per_m=energy,
                tailpipe_co2e_per_m=tailpipe, catalyst_cost=catalyst,
                price_per_j=val(inputs.prices[fid][1]) * plan.price_factor[fid],
                escalation=val(inputs.escalation[fid]),
                upstream_co2e_per_j=val(inputs.upstream[fid]),
                upkeep_per_year=val(c.upkeep_per_year) + val(co.upkeep_change_per_year),
                tank_inspection_cost=val(co.tank_inspection_cost),
                tank_inspection_interval=co.tank_inspection_interval, converts=co.converts,
                conversion_cost=val(co.conversion_cost), downtime_days=val(co.downtime_days),
                daily_revenue=val(c.daily_revenue), remaining_life_years=c.remaining_life_years,
                nox_mass=plan.nox_t[o.id, c.id] * 1e3))
        options[o.id] = econ.OptionLines(lines, val(o.programme_capital),
                                         val(o.programme_upkeep_per_year))
    return options


def _money(plan: Plan, params: Mapping[str, np.ndarray], n: int) -> econ.Money:
    """The programme's money for ``n`` draws of the uncertain inputs (nominal where absent)."""
    inputs = plan.inputs
    return econ.programme_money(_lines(plan, params, n), baseline=inputs.baseline.id,
                                rate=_values(inputs.discount_rate, params, n),
                                carbon_price=_values(inputs.carbon_price, params, n),
                                horizon=inputs.horizon_years, n=n)


def _values(u: Uncertain, params: Mapping[str, np.ndarray], n: int) -> np.ndarray:
    """An input's value in each of ``n`` draws: drawn when ``params`` has it, else nominal."""
    return np.broadcast_to(np.asarray(params.get(u.path, u.nominal), dtype=float), (n,))


# ----------------------------------------------------------------------------- run


def run(study: Study, *, draws: int | None = None,
        progress: Callable[[str], None] | None = None) -> StudyResult:
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

    Returns
    -------
    StudyResult
    """
    inputs = study.inputs
    say = progress or (lambda _text: None)
    n = inputs.draws if draws is None else check_draws(draws, inputs, "draws")
    say("physics and chemistry (cached after the first run)")
    plan = _plan(inputs)
    say("money")
    det = _money(plan, {}, 1)
    draws_of: dict[str, econ.NPVDraws] = {}
    sensitivity: dict[str, pd.DataFrame] = {}
    if n > 0:
        say(f"Monte Carlo, {n} draws")
        samples = econ.sample_inputs(inputs.uncertain, n, inputs.seed,
                                     correlation=inputs.correlation)
        money = _money(plan, samples, n)
        for o in inputs.candidates:
            draws_of[o.id] = econ.npv_draws(money, o.id, inputs.baseline.id)
            if inputs.uncertain:
                sensitivity[o.id] = _sensitivity(plan, o.id)
    result = tables.study_result(study, plan, _lines(plan, {}, 1), det, draws_of,
                                 sensitivity, n, _break_even(plan))
    say("done")
    return result


def _break_even(plan: Plan) -> dict[str, list[tuple[Uncertain, float]]]:
    """Per candidate, the inputs that could turn its verdict and where its NPV is zero.

    The inputs are the prices of the fuels a candidate brings in and the km per year of the
    classes it converts, one at a time, every other input nominal.
    """
    inputs = plan.inputs
    base = inputs.baseline.id
    base_fuels = {co.fuel.id for co in inputs.baseline.per_class.values()}
    out: dict[str, list[tuple[Uncertain, float]]] = {}
    for o in inputs.candidates:
        converted = [co for co in o.per_class.values() if co.converts]
        subjects = [inputs.prices[f][1] for f in dict.fromkeys(co.fuel.id for co in converted)
                    if f not in base_fuels]
        subjects += [c.km_per_year for c in inputs.classes if o.per_class[c.id].converts]

        def npv_at(x: float, u: Uncertain, _oid: str = o.id) -> float:
            money = _money(plan, {u.path: np.array([x])}, 1)
            return float(econ.npv_draws(money, _oid, base).npv[0])

        out[o.id] = [(u, econ.break_even(lambda x, _u=u: npv_at(x, _u), u.nominal))
                     for u in subjects]
    return out


def _sensitivity(plan: Plan, option: str) -> pd.DataFrame:
    """One-at-a-time sensitivity of an option's NPV to each uncertain input (P10 and P90)."""
    base = plan.inputs.baseline.id

    def npv_of(params: dict[str, np.ndarray]) -> np.ndarray:
        n = len(next(iter(params.values())))
        return econ.npv_draws(_money(plan, params, n), option, base).npv

    return econ.tornado(npv_of, plan.inputs.uncertain)
