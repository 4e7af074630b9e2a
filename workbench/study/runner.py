"""Run a study: wire the models together and lay the results out as tidy tables.

``run(study)`` is the only place that knows how the models combine:

1. physics per option and vehicle class, cached (duty and road load → engine map → fuel energy
   per km; flame chemistry → NOx propensity → engine-out NOx; catalyst ageing over the
   programme; tank sizing);
2. money per year, vectorised over Monte Carlo draws (fuel, upkeep, catalysts, carbon,
   conversion capital, downtime, residual value) → NPV, payback, levelised cost, abatement
   cost; one-at-a-time sensitivity.

A price, discount-rate or other money change re-uses every cached physics result. See
``docs/study-file.md`` for what each input means and ``workbench.study.results`` for the tables.
"""

from __future__ import annotations

from collections.abc import Callable, Mapping
from dataclasses import dataclass, replace
from pathlib import Path

import numpy as np
import pandas as pd

from workbench.core.cache import memoize
from workbench.core.constants import J_PER_KWH, M_NO2, RPM, to_rpm
from workbench.core.errors import InputError
from workbench.core.fuels import Fuel, load_fuel
from workbench.core.thermo import molar_mass
from workbench.models import economics as econ
from workbench.models.aftertreatment import Aftertreatment, optimal_interval, programme_nox
from workbench.models.combustion import FuelSheet, exhaust, fuel_sheet
from workbench.models.duty import DutySettings, DutyTrace, read_profile
from workbench.models.emissions import co2e
from workbench.models.engine import (
    DutyEnergy,
    duty_energy,
    fuel_per_distance_for,
    mode_energy,
    read_map,
)
from workbench.models.nox import (
    DEFAULT_ENGINE_OUT,
    duty_propensity,
    engine_out_nox,
    engine_preset,
    nox_sweep,
)
from workbench.models.storage import tank_for_range
from workbench.models.vehicle import FIRED, IDLE, operating_points, read_vehicle, road_load
from workbench.study.results import COLUMNS, PALETTE, StudyResult
from workbench.study.studyfile import (
    ClassOption,
    FleetClass,
    Study,
    StudyInputs,
    Uncertain,
    all_uncertain,
    check_draws,
    price_factor,
)

#: Reference fuel of each engine setting's typical engine-out NOx default.
_DEFAULT_REFERENCE_FUEL = {"spark-ignition": "gasoline", "lean-burn-gas": "natural-gas",
                           "compression-ignition": "diesel"}
#: Engine-speed bins the NOx propensity is weighted over (by fuel energy).
NOX_SPEED_BINS = 3
#: Equivalence ratios of the flame table [-].
FLAME_PHI = (0.7, 0.8, 0.9, 1.0, 1.1, 1.2, 1.3)


# ----------------------------------------------------------------------------- physics


@dataclass(frozen=True)
class DutyPhysics:
    """What one vehicle class does on its duty with one engine map (no fuel yet).

    Attributes
    ----------
    energy : DutyEnergy
        Energy flows over the profile.
    nox_speeds : numpy.ndarray
        Engine-speed bin centres for the NOx weighting [rev/min].
    nox_weights : numpy.ndarray
        Fuel energy in each bin [J].
    points : pandas.DataFrame
        Operating-point histogram: ``engine_speed_rpm``, ``torque_nm``, ``seconds``,
        ``brake_efficiency`` (per pass of the profile).
    """

    energy: DutyEnergy
    nox_speeds: np.ndarray
    nox_weights: np.ndarray
    points: pd.DataFrame


@memoize(maxsize=128)
def duty_physics(profile: Path, vehicle: Path, engine_map: Path, derate: float,
                 efficiency_offset: float, settings: DutySettings) -> DutyPhysics:
    """Run a profile with a vehicle and an adjusted map (cached by its arguments).

    Parameters
    ----------
    profile, vehicle, engine_map : pathlib.Path
        Profile CSV, vehicle TOML, map CSV.
    derate : float
        Share of full-load torque lost [-].
    efficiency_offset : float
        Added to every map cell [-].
    settings : DutySettings
        Accessories, engine-off at stops, extra idling.

    Returns
    -------
    DutyPhysics
    """
    emap = read_map(engine_map).adjusted(derate=derate, efficiency_offset=efficiency_offset)
    duty = read_profile(profile)
    if not isinstance(duty, DutyTrace):
        energy = mode_energy(duty, emap, settings=settings)
        speed = to_rpm(duty.engine_speed)
        torque = duty.torque
        dt = duty.duration
        fuel_power = emap.fuel_power(duty.engine_speed, duty.torque).fuel_power
    else:
        veh = read_vehicle(vehicle)
        energy = duty_energy(duty, veh, emap, settings=settings)
        load = road_load(veh, duty)
        ops = operating_points(veh, duty, load, idle_speed=emap.idle_speed, settings=settings,
                               full_load_torque=emap.max_torque)
        burning = (ops.state == FIRED) | (ops.state == IDLE)
        speed = to_rpm(ops.engine_speed[burning])
        torque = ops.engine_torque[burning]
        dt = load.duration[burning]
        fuel_power = emap.fuel_power(ops.engine_speed[burning], torque).fuel_power
    edges = np.linspace(speed.min(), speed.max() + 1e-9, NOX_SPEED_BINS + 1)
    weights, _ = np.histogram(speed, edges, weights=fuel_power * dt)
    centres = (edges[:-1] + edges[1:]) / 2
    keep = weights > 0
    s_edges = to_rpm(np.linspace(emap.speed.min(), emap.speed.max(), 13))
    t_edges = np.linspace(0.0, float(emap.full_load_torque.max()), 11)
    seconds, _, _ = np.histogram2d(speed, np.clip(torque, 0, None), [s_edges, t_edges],
                                   weights=dt)
    sc, tc = np.meshgrid((s_edges[:-1] + s_edges[1:]) / 2, (t_edges[:-1] + t_edges[1:]) / 2,
                         indexing="ij")
    mask = seconds > 0
    eff = emap.efficiency_at(sc[mask] * RPM, tc[mask])
    points = pd.DataFrame({"engine_speed_rpm": sc[mask], "torque_nm": tc[mask],
                           "seconds": seconds[mask], "brake_efficiency": eff})
    return DutyPhysics(energy, centres[keep], weights[keep], points)


@dataclass(frozen=True)
class ClassPhysics:
    """Everything about one option on one vehicle class that does not involve money."""

    sheet: FuelSheet
    fuel_energy_per_m: float  # [J/m]
    fuel_mass_per_m: float  # [kg/m]
    fuel_volume_per_m: float  # [m3/m], NaN when not stored as a liquid
    co2_ttw_per_m: float  # [kg/m]
    ch4_per_m: float  # [kg/m]
    engine_out_nox_per_m: float  # [kg/m]
    nox_source: str
    monthly: pd.DataFrame  # programme_nox monthly table
    yearly: pd.DataFrame  # programme_nox yearly table
    replacements: int
    best_interval_months: int
    best_total_cost: float
    share_out_of_map: float
    share_full_load: float
    duty: DutyPhysics
    storage: dict[str, float]


def _settings(c: FleetClass) -> DutySettings:
    return DutySettings(accessory_power=c.accessory_power,
                        engine_off_at_stops=c.engine_off_at_stops,
                        extra_idle_share=c.extra_idle_share)


def _duty_for(c: FleetClass, co: ClassOption) -> DutyPhysics:
    return duty_physics(c.profile, c.vehicle, co.engine_map, co.derate, co.efficiency_offset,
                        _settings(c))


def _engine_out(c: FleetClass, co: ClassOption, base: ClassOption, duty: DutyPhysics,
                fuel_energy_per_m: float) -> tuple[float, str]:
    """Engine-out NOx of one option on one class [kg/m] and where it comes from."""
    conditions = engine_preset(co.engine)
    if co.engine_out_nox is not None:
        spec, reference, ratio = co.engine_out_nox, None, 1.0
    elif base.engine == co.engine:
        spec = base.engine_out_nox or DEFAULT_ENGINE_OUT[base.engine]
        reference = base.fuel
        base_duty = _duty_for(c, base)
        base_energy = base_duty.energy.fuel_energy / base_duty.energy.distance
        ratio = fuel_energy_per_m / base_energy
        if spec.unit == "g/kWh":  # per kWh of brake work: ratio of fuel energy per kWh
            ratio = (duty.energy.fuel_energy / duty.energy.engine_energy) / (
                base_duty.energy.fuel_energy / base_duty.energy.engine_energy)
    else:
        spec = DEFAULT_ENGINE_OUT[co.engine]
        reference = load_fuel(_DEFAULT_REFERENCE_FUEL[co.engine])
        ratio = 1.0
    value = spec.value
    source = spec.source + (" (typical default)" if spec.is_default else "")
    if reference is not None and reference.key != co.fuel.key:
        prop = duty_propensity(co.fuel, reference, conditions, engine_speed_rpm=duty.nox_speeds,
                               weight=duty.nox_weights)
        value = float(engine_out_nox(spec, prop, energy_ratio=ratio))
        source += f", scaled by the NOx propensity of {co.fuel.id} against {reference.id}"
    return _nox_per_m(value, spec.unit, co, duty, fuel_energy_per_m), source


def _nox_per_m(value: float, unit: str, co: ClassOption, duty: DutyPhysics,
               fuel_energy_per_m: float) -> float:
    if unit == "g/km":
        return value * 1e-6
    if unit == "g/kWh":
        return value * 1e-3 * duty.energy.engine_energy / duty.energy.distance / J_PER_KWH
    ex = exhaust(co.fuel, co.lambda_overall)  # ppm of NO in the wet exhaust, as NO2 mass
    fuel_kg_per_m = fuel_energy_per_m / fuel_sheet(co.fuel).lhv_mass
    return value * 1e-6 * ex.moles_per_kg_fuel * M_NO2 * fuel_kg_per_m


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
    eo, source = _engine_out(c, co, base, duty, energy_m)
    km_month = c.km_per_year.nominal / 12.0
    damage = nox_damage_cost
    prog = programme_nox(co.aftertreatment, eo, distance_per_month=km_month, months=months,
                         fleet_size=c.count, nox_damage_cost=damage)
    best = _best_interval(co.aftertreatment, eo, km_month, months, damage, c.count)
    ch4_share = _methane_mass_share(co.fuel)
    return ClassPhysics(
        sheet=sheet,
        fuel_energy_per_m=energy_m,
        fuel_mass_per_m=mass_m,
        fuel_volume_per_m=per_m.fuel_volume_per_m,
        co2_ttw_per_m=per_m.co2_ttw_per_m,
        ch4_per_m=co.methane_slip * ch4_share * mass_m,
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


# ----------------------------------------------------------------------------- money


@dataclass(frozen=True)
class _Plan:
    """Physics of every option × class, and the yearly arrays the money needs."""

    inputs: StudyInputs
    physics: dict[tuple[str, str], ClassPhysics]
    active: dict[str, np.ndarray]  # by class: 1 in years 1..min(H, life), shape (H+1,)
    catalyst_cost: dict[tuple[str, str], np.ndarray]  # shape (H+1,), nominal km
    nox_t: dict[tuple[str, str], np.ndarray]  # fleet tonnes by year, shape (H+1,)
    replacements: dict[tuple[str, str], np.ndarray]  # fleet catalyst replacements by year
    price_factor: dict[str, float]  # by fuel id: currency/J per unit of price value
    responses: dict[tuple[str, str], list[Response]]  # physics inputs with a distribution


@dataclass(frozen=True)
class Response:
    """How one option-class's money-relevant physics answers one uncertain physics input.

    Attributes
    ----------
    path : str
        Key path of the input.
    nodes : numpy.ndarray
        Input values it was evaluated at (quantiles of its distribution), increasing.
    energy : numpy.ndarray
        Fuel energy per distance at each node [J/m].
    tailpipe_co2e : numpy.ndarray
        Tailpipe CO2e per distance at each node [kg/m].
    catalyst : numpy.ndarray
        Catalyst and reductant cost by year at each node, shape (nodes, H+1) [currency].
    """

    path: str
    nodes: np.ndarray
    energy: np.ndarray
    tailpipe_co2e: np.ndarray
    catalyst: np.ndarray


#: Quantiles at which an uncertain physics input is evaluated; draws between them are
#: interpolated linearly, draws beyond them held at the end values.
RESPONSE_QUANTILES = (0.01, 0.1, 0.3, 0.5, 0.7, 0.9, 0.99)


def _plan(inputs: StudyInputs) -> _Plan:
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
    return _Plan(inputs, physics, active, cat, nox, repl, factors, responses)


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
              months: int, run_years: int) -> Response:
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
        tailpipe.append(_tailpipe_co2e(ph, co2))
        catalyst.append(_yearly(ph, inputs.horizon_years, run_years)[0])
    return Response(u.path, nodes, np.array(energy), np.array(tailpipe), np.array(catalyst))


def _vary(c: FleetClass, co: ClassOption, field: str, value: float
          ) -> tuple[FleetClass, ClassOption]:
    """The class and option with one physics input set to ``value``."""
    if field in ("accessory_power", "extra_idle_share"):
        return replace(c, **{field: value}), co
    if field.startswith("aftertreatment."):
        device = replace(co.aftertreatment, **{field.split(".", 1)[1]: value})
        return c, replace(co, aftertreatment=device)
    return c, replace(co, **{field: value})


def _interp_rows(x: np.ndarray, nodes: np.ndarray, table: np.ndarray) -> np.ndarray:
    """Rows of ``table`` (one per node) interpolated linearly at each ``x``, ends held.

    Parameters
    ----------
    x : numpy.ndarray
        Input values, shape (n,).
    nodes : numpy.ndarray
        Increasing node values, shape (k,), k >= 1.
    table : numpy.ndarray
        Values at the nodes, shape (k,) or (k, m).

    Returns
    -------
    numpy.ndarray
        Shape (n, 1) or (n, m).
    """
    table = table.reshape(len(nodes), -1)
    if len(nodes) == 1:
        return np.broadcast_to(table[0], (len(x), table.shape[1])).copy()
    i = np.clip(np.searchsorted(nodes, x, side="right") - 1, 0, len(nodes) - 2)
    t = np.clip((x - nodes[i]) / (nodes[i + 1] - nodes[i]), 0.0, 1.0)[:, None]
    return table[i] * (1.0 - t) + table[i + 1] * t


def inputs_fuel(inputs: StudyInputs, option_id: str, class_id: str) -> Fuel:
    """The fuel an option gives a class."""
    option = next(o for o in inputs.options if o.id == option_id)
    return option.per_class[class_id].fuel


@dataclass(frozen=True)
class Money:
    """Yearly money and emissions of every option, draws along the first axis.

    Attributes
    ----------
    costs : dict of str to ndarray
        Costs by option, shape (n, H+1) [currency] (year 0 = conversion year).
    cash : dict of str to ndarray
        Cash flow by option (minus costs, plus residual value), shape (n, H+1).
    km : ndarray
        Fleet distance by year, shape (n, H+1) [m].
    co2e : dict of str to ndarray
        Well-to-wheel CO2e by option, shape (n, H+1) [kg].
    rate : ndarray
        Discount rate per draw, shape (n,).
    """

    costs: dict[str, np.ndarray]
    cash: dict[str, np.ndarray]
    km: np.ndarray
    co2e: dict[str, np.ndarray]
    rate: np.ndarray


def _money(plan: _Plan, params: Mapping[str, np.ndarray], n: int) -> Money:
    inputs = plan.inputs
    h = inputs.horizon_years
    years = np.arange(h + 1)

    def val(u: Uncertain) -> np.ndarray:
        return np.broadcast_to(np.asarray(params.get(u.path, u.nominal), dtype=float),
                               (n,))[:, None]

    rate = val(inputs.discount_rate)[:, 0]
    carbon = val(inputs.carbon_price)
    km_total = np.zeros((n, h + 1))
    costs, cash, co2e = {}, {}, {}
    for o in inputs.options:
        cost = np.zeros((n, h + 1))
        residual = np.zeros((n, h + 1))
        emissions = np.zeros((n, h + 1))
        any_active = np.zeros(h + 1)
        for c in inputs.classes:
            co = o.per_class[c.id]
            act = plan.active[c.id]
            any_active = np.maximum(any_active, act)
            km = val(c.km_per_year) * act * c.count
            if o.is_baseline:
                km_total += km
            fid = co.fuel.id
            energy, tailpipe, catalyst = _physics_draws(plan, o.id, c.id, co, params, n)
            price = val(inputs.prices[fid][1]) * plan.price_factor[fid]
            esc = (1.0 + val(inputs.escalation[fid])) ** np.maximum(years - 1, 0)
            co2e_m = val(inputs.upstream[fid]) * energy + tailpipe
            emissions += km * co2e_m
            cost += km * energy * price * esc
            cost += km * co2e_m * carbon
            upkeep = val(c.upkeep_per_year) + val(co.upkeep_change_per_year)
            cost += upkeep * c.count * act
            cost += val(co.tank_inspection_cost) * c.count * act * _inspections(
                co.tank_inspection_interval, h)
            cost += catalyst * (val(c.km_per_year) / c.km_per_year.nominal)
            if co.converts:
                capital = val(co.conversion_cost) * c.count
                cost[:, :1] += capital + val(co.downtime_days) * val(c.daily_revenue) * c.count
                life = c.remaining_life_years
                if life > h:
                    residual[:, -1:] += capital * (life - h) / life
        cost += val(o.programme_upkeep_per_year) * any_active
        cost[:, :1] += val(o.programme_capital)
        costs[o.id] = cost
        cash[o.id] = residual - cost
        co2e[o.id] = emissions
    return Money(costs, cash, km_total, co2e, rate)


def _physics_draws(plan: _Plan, oid: str, cid: str, co: ClassOption,
                   params: Mapping[str, np.ndarray], n: int
                   ) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Fuel energy [J/m], tailpipe CO2e [kg/m] (both (n, 1)) and catalyst cost by year
    ((n, H+1)) for each draw: nominal physics plus each drawn input's effect, taken one at a
    time from its response (first order: effects of several inputs add)."""
    ph = plan.physics[oid, cid]
    energy = np.full((n, 1), ph.fuel_energy_per_m)
    tailpipe = np.full((n, 1), _tailpipe_co2e(ph, co))
    catalyst = np.broadcast_to(plan.catalyst_cost[oid, cid], (n, len(plan.active[cid]))).copy()
    for r in plan.responses[oid, cid]:
        if r.path not in params:
            continue
        x = np.broadcast_to(np.asarray(params[r.path], dtype=float), (n,))
        energy += _interp_rows(x, r.nodes, r.energy) - ph.fuel_energy_per_m
        tailpipe += _interp_rows(x, r.nodes, r.tailpipe_co2e) - _tailpipe_co2e(ph, co)
        catalyst += _interp_rows(x, r.nodes, r.catalyst) - plan.catalyst_cost[oid, cid]
    return energy, tailpipe, catalyst


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
    say("physics and chemistry (cached after the first run)")
    plan = _plan(inputs)
    say("money")
    det = _money(plan, {}, 1)
    n = inputs.draws if draws is None else check_draws(draws, inputs, "draws")
    base = inputs.baseline.id
    mc: dict[str, np.ndarray] = {}
    paybacks: dict[str, np.ndarray] = {}
    if n > 0:
        say(f"Monte Carlo, {n} draws")
        samples = econ.sample_inputs(inputs.uncertain, n, inputs.seed)
        money = _money(plan, samples, n)
        for o in inputs.candidates:
            diff = money.cash[o.id] - money.cash[base]
            mc[o.id] = np.asarray(econ.npv(money.rate, diff)).reshape(n)
            paybacks[o.id] = np.asarray(econ.discounted_payback(money.rate, diff)
                                        ).reshape(n)
    colours = {o.id: PALETTE[i % len(PALETTE)] for i, o in enumerate(inputs.options)}
    per_km = _frame("per_km", _per_km_rows(plan, det))
    result = StudyResult(
        title=inputs.title,
        currency=inputs.currency,
        candidates=_candidates_table(plan, det, per_km, mc, paybacks, colours),
        per_km=per_km,
        cash_flows=_cash_flow_table(plan, det),
        fleet_years=_fleet_years_table(plan, det),
        nox_monthly=_nox_monthly_table(plan),
        storage=_storage_table(plan),
        monte_carlo=_monte_carlo_table(mc),
        tornado=_tornado_table(plan) if n > 0 else _empty("tornado"),
        operating_points=_operating_points_table(plan),
        flame=_flame_table(plan),
        catalyst=_catalyst_table(plan),
        assumptions=_assumptions(study, n),
        sources=_sources(inputs),
    )
    say("done")
    return result


def _empty(name: str) -> pd.DataFrame:
    return pd.DataFrame({c: pd.Series(dtype=float) for c in COLUMNS[name]})


def _frame(name: str, rows: list[dict]) -> pd.DataFrame:
    return pd.DataFrame(rows, columns=list(COLUMNS[name])) if rows else _empty(name)


def _per_km_rows(plan: _Plan, det: Money) -> list[dict]:
    inputs = plan.inputs
    rate = float(det.rate[0])
    rows = []
    for o in inputs.options:
        for c in inputs.classes:
            co = o.per_class[c.id]
            ph = plan.physics[o.id, c.id]
            km_m = c.km_per_year.nominal
            fid = co.fuel.id
            price = inputs.prices[fid][1].nominal * plan.price_factor[fid]
            co2e_m = (inputs.upstream[fid].nominal * ph.fuel_energy_per_m
                      + _tailpipe_co2e(ph, co))
            run_years = int(plan.active[c.id].sum())
            cat_year = plan.catalyst_cost[o.id, c.id].sum() / max(run_years, 1) / c.count
            inspections = _inspections(co.tank_inspection_interval, inputs.horizon_years)
            cat_year += (co.tank_inspection_cost.nominal
                         * float((inspections * plan.active[c.id]).sum()) / max(run_years, 1))
            fuel_cost = ph.fuel_energy_per_m * price + co2e_m * inputs.carbon_price.nominal
            upkeep = (c.upkeep_per_year.nominal + co.upkeep_change_per_year.nominal
                      + cat_year) / km_m
            capital = 0.0
            if co.converts:
                crf = float(econ.capital_recovery_factor(rate, c.remaining_life_years))
                capital = co.conversion_cost.nominal * crf / km_m
            nox_mean = float(ph.monthly["tailpipe_g_per_km"].mean())
            rows.append({
                "candidate": o.id, "vehicle_class": c.id, "fuel": fid,
                "fuel_energy_mj_per_km": ph.fuel_energy_per_m * 1e-3,
                "fuel_l_per_100km": ph.fuel_volume_per_m * 1e8,
                "fuel_kg_per_100km": ph.fuel_mass_per_m * 1e5,
                "co2_ttw_g_per_km": ph.co2_ttw_per_m * 1e6,
                "co2e_wtw_g_per_km": co2e_m * 1e6,
                "nox_engine_out_g_per_km": ph.engine_out_nox_per_m * 1e6,
                "nox_g_per_km": nox_mean,
                "cost_fuel_per_km": fuel_cost * 1e3,
                "cost_upkeep_per_km": upkeep * 1e3,
                "cost_capital_per_km": capital * 1e3,
                "cost_per_km": (fuel_cost + upkeep + capital) * 1e3,
                "share_out_of_map": ph.share_out_of_map,
                "share_full_load": ph.share_full_load,
            })
    return rows


def _inspections(interval: int, horizon: int) -> np.ndarray:
    """1 in the years a tank inspection falls due (every ``interval`` years), else 0."""
    years = np.arange(horizon + 1)
    if interval <= 0:
        return np.zeros(horizon + 1)
    return ((years >= 1) & (years % interval == 0)).astype(float)


def _tailpipe_co2e(ph: ClassPhysics, co: ClassOption) -> float:
    """Tailpipe CO2e per distance: CO2, slipped methane and N2O on AR6 GWP-100 [kg/m]."""
    return float(co2e(ph.co2_ttw_per_m, ph.ch4_per_m, co.n2o_per_m))


def _candidates_table(plan: _Plan, det: Money, per_km: pd.DataFrame,
                      mc: Mapping[str, np.ndarray], paybacks: Mapping[str, np.ndarray],
                      colours: Mapping[str, str]) -> pd.DataFrame:
    inputs = plan.inputs
    per_km = per_km.copy()
    weights = {c.id: c.count * c.km_per_year.nominal for c in inputs.classes}
    per_km["w"] = per_km["vehicle_class"].map(weights)
    rate = det.rate[0]
    base = inputs.baseline.id
    h = inputs.horizon_years
    rows = []
    for o in inputs.options:
        sub = per_km[per_km["candidate"] == o.id]

        def avg(col: str, _sub: pd.DataFrame = sub) -> float:
            return float(np.average(_sub[col], weights=_sub["w"]))

        diff = det.cash[o.id][0] - det.cash[base][0]
        is_base = o.is_baseline
        nox_year = sum(plan.nox_t[o.id, c.id] for c in inputs.classes) * 1e3
        nox_base = sum(plan.nox_t[base, c.id] for c in inputs.classes) * 1e3
        draws = mc.get(o.id)
        pct = np.percentile(draws, [10, 50, 90]) if draws is not None else [np.nan] * 3
        rows.append({
            "candidate": o.id, "name": o.name,
            "fuel": "/".join(dict.fromkeys(co.fuel.id for co in o.per_class.values())),
            "is_baseline": is_base, "colour": colours[o.id],
            "fuel_energy_mj_per_km": avg("fuel_energy_mj_per_km"),
            "co2_ttw_g_per_km": avg("co2_ttw_g_per_km"),
            "co2e_wtw_g_per_km": avg("co2e_wtw_g_per_km"),
            "nox_g_per_km": avg("nox_g_per_km"),
            "cost_per_km": avg("cost_per_km"),
            "levelised_cost_per_km": float(econ.levelised_cost(rate, det.costs[o.id][0],
                                                               det.km[0])) * 1e3,
            "npv_vs_baseline": np.nan if is_base else float(econ.npv(rate, diff)),
            "payback_years": np.nan if is_base else float(econ.simple_payback(diff)),
            "discounted_payback_years": np.nan if is_base else float(
                econ.discounted_payback(rate, diff)),
            "cost_per_t_co2e_avoided": np.nan if is_base else float(econ.abatement_cost(
                rate, det.costs[o.id][0] - det.costs[base][0],
                det.co2e[base][0] - det.co2e[o.id][0])) * 1e3,
            "cost_per_kg_nox_avoided": np.nan if is_base else float(econ.abatement_cost(
                rate, det.costs[o.id][0] - det.costs[base][0], nox_base - nox_year)),
            "p_npv_positive": np.nan if draws is None else float(
                econ.probability_positive(draws)),
            "p_payback_within_horizon": np.nan if draws is None else float(
                econ.probability_payback_within(paybacks[o.id], h)),
            "npv_p10": pct[0], "npv_p50": pct[1], "npv_p90": pct[2],
        })
    return _frame("candidates", rows)


def _cash_flow_table(plan: _Plan, det: Money) -> pd.DataFrame:
    inputs = plan.inputs
    rate = float(det.rate[0])
    factors = np.asarray(econ.discount_factors(rate, inputs.horizon_years)).reshape(-1)
    rows = []
    base = det.cash[inputs.baseline.id][0]
    for o in inputs.options:
        flows = det.cash[o.id][0]
        diff = flows - base
        disc = diff * factors
        cum = np.cumsum(disc)
        for y in range(inputs.horizon_years + 1):
            rows.append({"candidate": o.id, "year": inputs.start_year + y,
                         "cash_flow": flows[y], "cash_flow_vs_baseline": diff[y],
                         "discounted_vs_baseline": disc[y],
                         "cumulative_discounted_vs_baseline": cum[y]})
    return _frame("cash_flows", rows)


def _fleet_years_table(plan: _Plan, det: Money) -> pd.DataFrame:
    inputs = plan.inputs
    rows = []
    for o in inputs.options:
        for y in range(inputs.horizon_years + 1):
            energy = ttw = nox = 0.0
            repl = 0.0
            for c in inputs.classes:
                ph = plan.physics[o.id, c.id]
                km = c.km_per_year.nominal * c.count * plan.active[c.id][y]
                energy += km * ph.fuel_energy_per_m
                ttw += km * ph.co2_ttw_per_m
                nox += plan.nox_t[o.id, c.id][y]
                repl += plan.replacements[o.id, c.id][y]
            rows.append({"candidate": o.id, "year": inputs.start_year + y,
                         "fuel_energy_gj": energy / 1e9, "co2_ttw_t": ttw / 1e3,
                         "co2e_wtw_t": det.co2e[o.id][0][y] / 1e3, "nox_t": nox,
                         "catalyst_replacements": repl, "cost_total": det.costs[o.id][0][y]})
    return _frame("fleet_years", rows)


def _nox_monthly_table(plan: _Plan) -> pd.DataFrame:
    frames = []
    for (oid, cid), ph in plan.physics.items():
        m = ph.monthly
        frames.append(pd.DataFrame({
            "candidate": oid, "vehicle_class": cid, "month": m["month"],
            "catalyst_efficiency": m["efficiency"], "nox_g_per_km": m["tailpipe_g_per_km"],
            "replaced": m["replacements"] > 0}))
    return pd.concat(frames, ignore_index=True)[list(COLUMNS["nox_monthly"])]


def _storage_table(plan: _Plan) -> pd.DataFrame:
    rows = [{"candidate": oid, "vehicle_class": cid,
             "fuel": inputs_fuel(plan.inputs, oid, cid).id, **ph.storage}
            for (oid, cid), ph in plan.physics.items()]
    return _frame("storage", rows)


def _monte_carlo_table(mc: Mapping[str, np.ndarray]) -> pd.DataFrame:
    frames = [pd.DataFrame({"candidate": oid, "draw": np.arange(len(v)),
                            "npv_vs_baseline": v}) for oid, v in mc.items()]
    return pd.concat(frames, ignore_index=True) if frames else _empty("monte_carlo")


def _tornado_table(plan: _Plan) -> pd.DataFrame:
    inputs = plan.inputs
    dists = inputs.uncertain
    if not dists:
        return _empty("tornado")
    base = inputs.baseline.id
    units = {u.path: (u.unit, u.scale) for u in all_uncertain(inputs)}
    frames = []
    for o in inputs.candidates:
        def f(params: dict[str, np.ndarray], _oid: str = o.id) -> np.ndarray:
            n = len(next(iter(params.values())))
            money = _money(plan, params, n)
            return np.asarray(econ.npv(money.rate,
                                       money.cash[_oid] - money.cash[base])).reshape(n)

        t = econ.tornado(f, dists)
        t = t[t["swing"] > 1e-9 * max(float(t["swing"].max()), 1.0)]
        if t.empty:  # no input moves this candidate's NPV (drowned by larger terms)
            continue
        scale = t["input"].map(lambda p: units[p][1])
        frames.append(pd.DataFrame({
            "candidate": o.id,
            "input": t["input"].map(lambda p: f"{p} [{units[p][0]}]" if units[p][0] else p),
            "low_value": t["low_value"] * scale, "high_value": t["high_value"] * scale,
            "npv_at_low": t["output_low"], "npv_at_high": t["output_high"],
            "swing": t["swing"]}))
    return pd.concat(frames, ignore_index=True) if frames else _empty("tornado")


def _operating_points_table(plan: _Plan) -> pd.DataFrame:
    frames = []
    for (oid, cid), ph in plan.physics.items():
        c = next(k for k in plan.inputs.classes if k.id == cid)
        per_year = c.km_per_year.nominal / ph.duty.energy.distance  # profile passes per year
        p = ph.duty.points
        frames.append(pd.DataFrame({
            "candidate": oid, "vehicle_class": cid, "engine_speed_rpm": p["engine_speed_rpm"],
            "torque_nm": p["torque_nm"], "hours": p["seconds"] * per_year / 3600.0,
            "brake_efficiency": p["brake_efficiency"]}))
    return pd.concat(frames, ignore_index=True)[list(COLUMNS["operating_points"])]


def _flame_table(plan: _Plan) -> pd.DataFrame:
    rows = []
    seen = set()
    for o in plan.inputs.options:
        for co in o.per_class.values():
            key = (o.id, co.fuel.id)
            if key in seen or (not co.converts and not o.is_baseline):
                continue
            seen.add(key)
            table = nox_sweep(co.fuel, engine_preset(co.engine), phi=list(FLAME_PHI))
            for _, r in table.iterrows():
                rows.append({"candidate": o.id, "fuel": co.fuel.id, "phi": r["phi"],
                             "flame_temperature_k": r["flame_temperature_k"],
                             "no_ppm": r["no_ppm"]})
    return _frame("flame", rows)


def _catalyst_table(plan: _Plan) -> pd.DataFrame:
    rows = []
    for (oid, cid), ph in plan.physics.items():
        co = next(o for o in plan.inputs.options if o.id == oid).per_class[cid]
        rows.append({"candidate": oid, "vehicle_class": cid, "device": co.aftertreatment.name,
                     "replacements": ph.replacements,
                     "replacement_cost": float(ph.yearly["replacement_cost"].sum()),
                     "reductant_cost": float(ph.yearly["reductant_cost"].sum()),
                     "best_interval_months": ph.best_interval_months,
                     "best_total_cost": ph.best_total_cost})
    return _frame("catalyst", rows)


def _assumptions(study: Study, draws: int) -> dict[str, str]:
    i = study.inputs
    out = {
        "study": i.title,
        "demo": "yes" if i.fictional else "no",
        "question": i.notes,
        "fictional demo data": "yes: every number is invented" if i.fictional else "no",
        "currency": i.currency,
        "programme": f"{i.start_year}, {i.horizon_years} years",
        "discount rate": f"{i.discount_rate.nominal:.1%} a year, real (prices in today's "
                         "money, escalation on top)",
        "carbon price": f"{i.carbon_price.nominal * 1e3:g} {i.currency}/t CO2e, on well-to-wheel "
                        "CO2e, counted with fuel costs",
        "NOx damage cost": f"{i.nox_damage_cost.nominal:g} {i.currency}/kg: finds the catalyst "
                           "replacement interval that would minimise upkeep plus NOx damage, "
                           "shown beside each device's own policy; not in the NPV",
        "Monte Carlo": f"{draws} draws, seed {i.seed}; uncertain inputs: "
                       f"{', '.join(i.uncertain) or 'none'}",
        "input hash": study.digest(),
        "uncertain physics inputs": "evaluated at P1, P10, P30, P50, P70, P90 and P99 and "
                                    "interpolated per draw; effects of several such inputs "
                                    "add (first order)",
        "engine-out NOx": "screening model: baseline measured or typical engine-out NOx scaled "
                          "by the flame-chemistry propensity of each fuel",
        "classes past their remaining life": "drop out of every option alike (replacement "
                                             "vehicles are outside the study)",
    }
    return out


def _sources(inputs: StudyInputs) -> dict[str, str]:
    out = {f"upstream CO2e of {fid}": src for fid, src in inputs.upstream_sources.items()}
    for o in inputs.options:
        for cid, co in o.per_class.items():
            for section, src in co.fuel.sources:
                out.setdefault(f"fuel {co.fuel.id} [{section}]", src)
            if co.engine_out_nox is None and o.is_baseline:
                out[f"engine-out NOx, {o.id}/{cid}"] = DEFAULT_ENGINE_OUT[co.engine].source
    out["thermochemistry"] = "Cantera with GRI-Mech 3.0 and NASA Glenn species data"
    out["GWP-100"] = "IPCC AR6 WG1 Table 7.15 (CH4 fossil 29.8, N2O 273)"
    return out
