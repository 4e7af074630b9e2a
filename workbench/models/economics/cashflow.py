"""The programme's yearly cash flows: fuel, carbon, upkeep, catalysts, inspections, capital.

Every option of a study is a set of vehicle classes (:class:`ClassLine`), each carrying the
numbers its money needs, one value per Monte Carlo draw, and buying one or more energy carriers
(:class:`EnergyPart`: a fuel; a dual-fuel engine's diesel pilot and gas; grid electricity).
:func:`programme_money` turns them into yearly costs, residual values, carbon payments and
emissions (:class:`Money`), with the draws along the first axis and the programme years
``0 … H`` along the last (year 0 is the conversion year, year ``t`` ends ``t`` years later; see
:mod:`workbench.models.economics.finance`).

Physics inputs with a distribution enter as :class:`Response` tables: the option-class's energy
of each carrier, tailpipe CO2e and catalyst cost evaluated at quantiles of the input,
interpolated per draw by :func:`physics_draws`.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike

from workbench.models.economics.finance import (
    FloatArray,
    abatement_cost,
    capital_recovery_factor,
    discounted_payback,
    escalate,
    levelised_cost,
    npv,
    residual_value,
    simple_payback,
)

__all__ = [
    "ClassLine",
    "Comparison",
    "EnergyPart",
    "Money",
    "NPVDraws",
    "NewVehicle",
    "OptionLines",
    "Response",
    "co2e_per_m",
    "compare",
    "cost_per_m",
    "inspection_years",
    "levelised_cost_per_m",
    "net_cost",
    "npv_draws",
    "physics_draws",
    "programme_money",
    "sold_year",
]


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
        Energy per distance at each node [J/m]: shape (nodes,) for one carrier, (nodes, parts)
        for one column per carrier (the order of :attr:`ClassLine.parts`).
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


def physics_draws(energy: ArrayLike, tailpipe_co2e: float, catalyst: np.ndarray,
                  responses: Sequence[Response], draws: Mapping[str, ArrayLike], n: int
                  ) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Money-relevant physics of one option-class for each draw.

    Parameters
    ----------
    energy : float or array
        Nominal energy per distance [J/m]: one value, or one per carrier, shape (parts,).
    tailpipe_co2e : float
        Nominal tailpipe CO2e per distance [kg/m].
    catalyst : numpy.ndarray
        Nominal catalyst and reductant cost by year, shape (H+1,) [currency].
    responses : sequence of Response
        The option-class's answer to each uncertain physics input (energy columns as
        ``energy``).
    draws : mapping of str to array
        Drawn values by key path, each shape (n,); inputs not named keep their nominal effect.
    n : int
        Number of draws.

    Returns
    -------
    tuple of numpy.ndarray
        Energy per distance, shape (n, parts) (parts 1 for one value) [J/m], tailpipe CO2e,
        shape (n, 1) [kg/m], and catalyst cost by year, shape (n, H+1) [currency].

    Notes
    -----
    Nominal physics plus each drawn input's effect taken one at a time from its response
    (first order: the effects of several inputs add).
    """
    nominal = np.asarray(energy, dtype=float).reshape(-1)
    e = np.repeat(nominal[None, :], n, axis=0)
    t = np.full((n, 1), tailpipe_co2e)
    c = np.repeat(catalyst[None, :], n, axis=0)  # a copy per draw (quicker than broadcast)
    for r in responses:
        if r.path not in draws:
            continue
        x = np.broadcast_to(np.asarray(draws[r.path], dtype=float), (n,))
        e += _interp_rows(x, r.nodes, r.energy) - nominal
        t += _interp_rows(x, r.nodes, r.tailpipe_co2e) - tailpipe_co2e
        c += _interp_rows(x, r.nodes, r.catalyst) - catalyst
    return e, t, c


def inspection_years(interval: int, horizon: int) -> np.ndarray:
    """1 in the years a tank inspection falls due (every ``interval`` years), else 0.

    Parameters
    ----------
    interval : int
        Years between inspections; 0 or less for none.
    horizon : int
        Last programme year.

    Returns
    -------
    numpy.ndarray
        Shape (horizon + 1,).
    """
    years = np.arange(horizon + 1)
    if interval <= 0:
        return np.zeros(horizon + 1)
    return ((years >= 1) & (years % interval == 0)).astype(float)


@dataclass(frozen=True)
class EnergyPart:
    """One energy carrier an option on a class buys: a fuel, or grid electricity.

    Values that vary between Monte Carlo draws are arrays of shape (n,) (floats broadcast).

    Attributes
    ----------
    energy_per_m : array
        Energy bought per distance [J/m] (LHV for a fuel), shape (n,) or (n, 1).
    price_per_j : array
        Today's price per energy [currency/J] (LHV for a fuel).
    escalation : array
        Yearly escalation of the price [-] (:func:`escalate`).
    upstream_co2e_per_j : array
        Well-to-tank CO2e per energy [kg/J]: per draw, shape (n,) (or a float); or, with
        ``upstream_by_year``, a path over the programme years, shape (H+1,) or (n, H+1) (a
        grid's intensity falling year by year). A 2-D array is always a path.
    upstream_by_year : bool
        ``upstream_co2e_per_j`` is a path by programme year (a 1-D array of length H+1 would
        otherwise read as one value per draw whenever n = H+1).
    """

    energy_per_m: ArrayLike
    price_per_j: ArrayLike
    escalation: ArrayLike
    upstream_co2e_per_j: ArrayLike
    upstream_by_year: bool = False


def _upstream(part: EnergyPart, n: int, horizon: int) -> FloatArray:
    """A carrier's upstream CO2e per J as (n, 1) (per draw) or (1 or n, H+1) (by year)."""
    u = np.asarray(part.upstream_co2e_per_j, dtype=float)
    if u.ndim < 2 and not part.upstream_by_year:
        return _column(u, n)
    u = np.atleast_2d(u)
    if u.shape[-1] != horizon + 1 or u.shape[0] not in (1, n):
        raise ValueError(f"an upstream CO2e path by year has shape (H+1,) or (n, H+1) = "
                         f"({horizon + 1},) or ({n}, {horizon + 1}), not {u.shape}")
    return u


def _energy(part: EnergyPart, n: int) -> FloatArray:
    """A carrier's energy per distance as a column per draw, shape (n, 1)."""
    return _column(np.asarray(part.energy_per_m).reshape(-1), n)


@dataclass(frozen=True)
class NewVehicle:
    """A class's vehicles replaced by new ones (any drive: battery-electric, fuel cell or a new
    combustion vehicle), per vehicle; arrays of shape (n,) where they vary between draws.

    Attributes
    ----------
    purchase_price : array
        Price of one new vehicle, paid in year 0 [currency].
    resale_value : array
        What one new vehicle sells for when the class leaves the programme: at the horizon, or
        in the last year of the class's remaining life when that comes first [currency].
    old_vehicle_sale : array
        What one replaced vehicle sells for in year 0 [currency].
    """

    purchase_price: ArrayLike
    resale_value: ArrayLike
    old_vehicle_sale: ArrayLike


@dataclass(frozen=True)
class ClassLine:
    """One option on one vehicle class, as its cash flows need it.

    Values that vary between Monte Carlo draws are arrays of shape (n,) (floats broadcast);
    money per vehicle unless said otherwise.

    Attributes
    ----------
    count : int
        Vehicles in the class.
    active : numpy.ndarray
        1 in the programme years the class runs, else 0, shape (H+1,).
    km_per_year : array
        Distance per vehicle and year [m].
    km_per_year_nominal : float
        Distance per vehicle and year the catalyst costs were worked out for [m].
    parts : tuple of EnergyPart
        The energy carriers it buys, one or more (a dual-fuel engine's diesel pilot and gas).
    tailpipe_co2e_per_m : array
        Tailpipe CO2e per distance of all its carriers together [kg/m].
    catalyst_cost : numpy.ndarray
        Fleet catalyst and reductant cost by year at the nominal distance, shape (n, H+1) or
        (H+1,) [currency].
    upkeep_per_year : array
        Upkeep per vehicle and year, the option's change included [currency].
    tank_inspection_cost : array
        Cost of one tank inspection [currency].
    tank_inspection_interval : int
        Years between tank inspections; 0 for none.
    converts : bool
        The option converts this class (capital, downtime and residual value apply).
    conversion_cost : array
        Conversion capital per vehicle, spent in year 0 [currency].
    downtime_days : array
        Days off the road for the conversion [day].
    daily_revenue : array
        Revenue lost per vehicle and day off the road [currency].
    remaining_life_years : int
        Years the vehicles run from now; the conversion keeps value in proportion to the life
        left after the horizon (:func:`residual_value`, straight line).
    nox_mass : numpy.ndarray
        Fleet tailpipe NOx by year at the nominal distance, shape (H+1,) [kg].
    new_vehicle : NewVehicle, optional
        The class's vehicles replaced by new ones (a converted class only); None for a
        conversion of the vehicles the fleet has.
    """

    count: int
    active: np.ndarray
    km_per_year: ArrayLike
    km_per_year_nominal: float
    parts: tuple[EnergyPart, ...]
    tailpipe_co2e_per_m: ArrayLike
    catalyst_cost: np.ndarray
    upkeep_per_year: ArrayLike
    tank_inspection_cost: ArrayLike
    tank_inspection_interval: int
    converts: bool
    conversion_cost: ArrayLike
    downtime_days: ArrayLike
    daily_revenue: ArrayLike
    remaining_life_years: int
    nox_mass: np.ndarray
    new_vehicle: NewVehicle | None = None


@dataclass(frozen=True)
class OptionLines:
    """One option of a programme: its classes and its programme-wide money.

    Attributes
    ----------
    classes : sequence of ClassLine
        One per vehicle class.
    programme_capital : array
        Programme capital spent in year 0 (workshop, filling station) [currency].
    programme_upkeep_per_year : array
        Programme upkeep in every year any class runs [currency].
    """

    classes: Sequence[ClassLine]
    programme_capital: ArrayLike
    programme_upkeep_per_year: ArrayLike


@dataclass(frozen=True)
class Money:
    """Yearly money and emissions of every option, draws along the first axis.

    Attributes
    ----------
    costs : dict of str to ndarray
        Costs by option, carbon payments included, shape (n, H+1) [currency]
        (year 0 = conversion year).
    residual : dict of str to ndarray
        Residual value of the conversions at the horizon, in the last year, shape (n, H+1)
        [currency].
    carbon : dict of str to ndarray
        Carbon payments by option (part of ``costs``), shape (n, H+1) [currency].
    cash : dict of str to ndarray
        Cash flow by option: residual value minus costs, shape (n, H+1) [currency].
    km : ndarray
        Fleet distance by year, shape (n, H+1) [m].
    co2e : dict of str to ndarray
        Well-to-wheel CO2e by option, shape (n, H+1) [kg].
    nox : dict of str to ndarray
        Fleet tailpipe NOx by option at the nominal distance, shape (H+1,) [kg].
    rate : ndarray
        Discount rate per draw, shape (n,).
    """

    costs: dict[str, np.ndarray]
    residual: dict[str, np.ndarray]
    carbon: dict[str, np.ndarray]
    cash: dict[str, np.ndarray]
    km: np.ndarray
    co2e: dict[str, np.ndarray]
    nox: dict[str, np.ndarray]
    rate: np.ndarray


def _per_draw(x: ArrayLike, n: int) -> FloatArray:
    """A value per draw, shape (n,)."""
    a = np.asarray(x, dtype=float)
    if a.shape != (n,):  # a scalar or one value: broadcast (slow, so only when needed)
        a = np.broadcast_to(a, (n,))
    return a


def _column(x: ArrayLike, n: int) -> FloatArray:
    """A value per draw as a column, shape (n, 1)."""
    return _per_draw(x, n)[:, None]


def _class_terms(c: ClassLine, n: int, years: np.ndarray, carbon: FloatArray) -> tuple:
    """One class line's share of an option's money (see :func:`programme_money`): fleet
    distance, CO2e, the yearly costs (fuel, carbon, upkeep, inspections, catalysts), and for a
    converted class its year-0 capital with downtime and its residual values as (programme
    year, value per draw) pairs (else None)."""
    horizon = len(years) - 1
    act = c.active
    km_year = _column(c.km_per_year, n)
    km = km_year * act * c.count
    co2e_m = _column(np.asarray(c.tailpipe_co2e_per_m).reshape(-1), n)
    fuel = np.zeros((n, horizon + 1))
    for p in c.parts:
        energy = _energy(p, n)
        fuel = fuel + km * energy * escalate(_per_draw(p.price_per_j, n),
                                             _per_draw(p.escalation, n), years)
        co2e_m = co2e_m + _upstream(p, n, horizon) * energy
    emitted = km * co2e_m
    parts = (fuel,
             emitted * carbon,
             _column(c.upkeep_per_year, n) * c.count * act,
             (_column(c.tank_inspection_cost, n) * c.count * act
              * inspection_years(c.tank_inspection_interval, horizon)),
             c.catalyst_cost * (km_year / c.km_per_year_nominal))
    if not c.converts:
        return km, emitted, parts, None, None
    capital = _column(c.conversion_cost, n) * c.count
    first = capital + _column(c.downtime_days, n) * _column(c.daily_revenue, n) * c.count
    residual = [(horizon, residual_value(capital, horizon, life=c.remaining_life_years))]
    if c.new_vehicle is not None:
        v = c.new_vehicle
        first = first + (_column(v.purchase_price, n) - _column(v.old_vehicle_sale, n)) * c.count
        residual.append((sold_year(c.active), _column(v.resale_value, n) * c.count))
    return km, emitted, parts, first, residual


def sold_year(active: np.ndarray) -> int:
    """Programme year a class's new vehicles are sold: the last year the class runs (the
    horizon when it runs in none).

    Parameters
    ----------
    active : numpy.ndarray
        1 in the years the class runs, shape (H+1,).

    Returns
    -------
    int
    """
    running = np.flatnonzero(active)
    return int(running[-1]) if running.size else len(active) - 1


def programme_money(options: Mapping[str, OptionLines], *, baseline: str, rate: ArrayLike,
                    carbon_price: ArrayLike, horizon: int, n: int) -> Money:
    """Yearly costs, residual values, carbon payments and emissions of every option.

    Parameters
    ----------
    options : mapping of str to OptionLines
        The options by id, the baseline among them.
    baseline : str
        Id of the baseline option (its distance is the fleet distance).
    rate : array
        Discount rate per draw [-], shape (n,).
    carbon_price : array
        Carbon price on well-to-wheel CO2e per draw [currency/kg].
    horizon : int
        Last programme year H.
    n : int
        Number of draws.

    Returns
    -------
    Money

    Notes
    -----
    For each class, with distance ``D_t = km a_t N`` (``a_t`` 1 while the class runs, ``N``
    vehicles) and, for each energy carrier ``k`` it buys, energy per distance ``E_k``:

    - fuel ``D_t sum_k E_k p_k (1 + e_k) ** max(t - 1, 0)`` (:func:`escalate`: today's price
      in year 1);
    - carbon ``D_t (sum_k u_k,t E_k + T) c``, well-to-wheel CO2e (upstream ``u_k,t`` per J,
      constant or by year; tailpipe ``T`` per m) at the carbon price ``c``;
    - upkeep ``U N a_t``; tank inspections ``I N a_t`` in the years they fall due; catalysts and
      reductant in proportion to the distance driven;
    - in year 0, a converted class's capital ``K N`` and downtime ``days R N``;
    - in year H, a converted class's residual value ``K N (1 - H / L)`` for a remaining life
      ``L > H`` (:func:`residual_value`, straight line);
    - for a class whose vehicles are replaced by new ones (:class:`NewVehicle`): in year 0 the
      purchase less the old vehicles' sale ``(P - S_old) N``, and the new vehicles' resale
      ``V_new N`` in the year they leave the programme (:func:`sold_year`: the horizon, or the
      last year of the class's remaining life when that comes first).

    Programme upkeep falls in every year any class runs, programme capital in year 0.
    """
    years = np.arange(horizon + 1)
    rate_n = _per_draw(rate, n)
    carbon = _column(carbon_price, n)
    km_total = np.zeros((n, horizon + 1))
    costs, residuals, carbons, cash, co2e, nox = {}, {}, {}, {}, {}, {}
    terms: dict[int, tuple] = {}
    for oid, option in options.items():
        cost = np.zeros((n, horizon + 1))
        residual = np.zeros((n, horizon + 1))
        paid = np.zeros((n, horizon + 1))
        emissions = np.zeros((n, horizon + 1))
        nox_mass = np.zeros(horizon + 1)
        any_active = np.zeros(horizon + 1)
        for c in option.classes:
            if id(c) not in terms:  # options sharing a class line share its terms
                terms[id(c)] = _class_terms(c, n, years, carbon)
            km, emitted, parts, first_year, residual_end = terms[id(c)]
            any_active = np.maximum(any_active, c.active)
            if oid == baseline:
                km_total += km
            emissions += emitted
            nox_mass = nox_mass + c.nox_mass
            paid += parts[1]
            for part in parts:
                cost += part
            if first_year is not None:
                cost[:, :1] += first_year
                for year, value in residual_end:  # (year, value per draw (n, 1)) each
                    residual[:, year:year + 1] += value
        cost += _column(option.programme_upkeep_per_year, n) * any_active
        cost[:, :1] += _column(option.programme_capital, n)
        costs[oid], residuals[oid], carbons[oid] = cost, residual, paid
        cash[oid] = residual - cost
        co2e[oid] = emissions
        nox[oid] = nox_mass
    return Money(costs, residuals, carbons, cash, km_total, co2e, nox, rate_n)


def net_cost(money: Money, option: str, *, carbon: bool = True) -> np.ndarray:
    """An option's yearly net cost: costs minus residual value, the negative of its cash flow.

    Parameters
    ----------
    money : Money
        The programme's money.
    option : str
        Option id.
    carbon : bool, optional
        Keep the carbon payments in (the NPV's cost, the default) or take them out (the cost
        an abatement cost divides, which must not pay for the carbon it avoids).

    Returns
    -------
    numpy.ndarray
        Shape (n, H+1) [currency].
    """
    cost = money.costs[option] - money.residual[option]
    return cost if carbon else cost - money.carbon[option]


def levelised_cost_per_m(money: Money, option: str) -> FloatArray:
    """Levelised cost of an option: PV of its net cost (residual credited) over PV of distance.

    Parameters
    ----------
    money : Money
        The programme's money.
    option : str
        Option id.

    Returns
    -------
    numpy.ndarray
        Per draw, shape (n,) [currency/m].

    Notes
    -----
    ``LC = sum_t (C_t - V_t) (1+r)^-t / sum_t D_t (1+r)^-t``: the costs ``C`` (carbon
    payments in) less the residual value ``V`` at the horizon, as in the NPV.
    """
    return np.asarray(levelised_cost(money.rate, net_cost(money, option), money.km)).reshape(-1)


@dataclass(frozen=True)
class NPVDraws:
    """NPV and discounted payback of a candidate against the baseline, one value per draw.

    Attributes
    ----------
    npv : numpy.ndarray
        NPV of the candidate's cash flows minus the baseline's, shape (n,) [currency].
    discounted_payback : numpy.ndarray
        Discounted payback of that difference, shape (n,) [year]; NaN when not within the
        horizon.
    """

    npv: np.ndarray
    discounted_payback: np.ndarray


def npv_draws(money: Money, option: str, baseline: str) -> NPVDraws:
    """NPV ``sum_t (CF_cand - CF_base)_t (1+r)^-t`` and discounted payback, per draw.

    Parameters
    ----------
    money : Money
        The programme's money.
    option, baseline : str
        Option ids.

    Returns
    -------
    NPVDraws
    """
    diff = money.cash[option] - money.cash[baseline]
    return NPVDraws(np.asarray(npv(money.rate, diff), dtype=float).reshape(-1),
                    np.asarray(discounted_payback(money.rate, diff), dtype=float).reshape(-1))


@dataclass(frozen=True)
class Comparison:
    """A candidate against the baseline, one value per draw (shape (n,)).

    Attributes
    ----------
    npv : numpy.ndarray
        NPV of the candidate's cash flows minus the baseline's [currency].
    simple_payback, discounted_payback : numpy.ndarray
        Undiscounted and discounted payback of that difference [year]; NaN when not within
        the horizon.
    co2e_avoided, nox_avoided : numpy.ndarray
        Baseline's well-to-wheel CO2e (tailpipe NOx) minus the candidate's over the programme,
        undiscounted [kg]; negative when the candidate raises it.
    cost_per_kg_co2e_avoided, cost_per_kg_nox_avoided : numpy.ndarray
        Abatement cost [currency/kg]; NaN when nothing is avoided (see ``co2e_avoided``).
    """

    npv: np.ndarray
    simple_payback: np.ndarray
    discounted_payback: np.ndarray
    co2e_avoided: np.ndarray
    nox_avoided: np.ndarray
    cost_per_kg_co2e_avoided: np.ndarray
    cost_per_kg_nox_avoided: np.ndarray


def compare(money: Money, option: str, baseline: str) -> Comparison:
    """NPV, paybacks, emissions avoided and abatement costs of a candidate against the baseline.

    Parameters
    ----------
    money : Money
        The programme's money.
    option, baseline : str
        Option ids.

    Returns
    -------
    Comparison

    Notes
    -----
    With ``CF`` the cash flows (residual value minus costs) and ``P`` the carbon payments:

    - ``NPV = sum_t (CF_cand - CF_base)_t (1+r)^-t``;
    - the abatement cost divides the NPV's own net cost difference, without the carbon
      payments, by the discounted emission avoided ``A_t = E_base,t - E_cand,t``:
      ``(sum_t ((C - V - P)_cand - (C - V - P)_base)_t (1+r)^-t) / sum_t A_t (1+r)^-t``,
      defined when the denominator is positive.
    """
    rate = money.rate
    diff = money.cash[option] - money.cash[baseline]
    headline = npv_draws(money, option, baseline)
    extra = net_cost(money, option, carbon=False) - net_cost(money, baseline, carbon=False)
    co2e = money.co2e[baseline] - money.co2e[option]
    nox = np.broadcast_to(money.nox[baseline] - money.nox[option], diff.shape)

    def flat(x: ArrayLike) -> np.ndarray:
        return np.asarray(x, dtype=float).reshape(-1)

    return Comparison(
        npv=headline.npv, simple_payback=flat(simple_payback(diff)),
        discounted_payback=headline.discounted_payback,
        co2e_avoided=flat(co2e.sum(axis=-1)), nox_avoided=flat(nox.sum(axis=-1)),
        cost_per_kg_co2e_avoided=flat(abatement_cost(rate, extra, co2e)),
        cost_per_kg_nox_avoided=flat(abatement_cost(rate, extra, nox)))


def _one(x: ArrayLike, year: int | None = None) -> float:
    """The first draw of a value (of a path by year: its value in ``year``)."""
    a = np.asarray(x, dtype=float)
    return float(a.reshape(-1)[0] if year is None else np.atleast_2d(a)[0, year])


def co2e_per_m(line: ClassLine, *, year: int = 1) -> float:
    """Well-to-wheel CO2e per distance of one option on one class in a year, nominal values.

    Parameters
    ----------
    line : ClassLine
        The option-class, one draw (nominal).
    year : int, optional
        Programme year whose upstream intensity applies (a path by year); 1 by default.

    Returns
    -------
    float
        ``T + sum_k u_k E_k`` [kg/m]: tailpipe plus each carrier's upstream CO2e.
    """
    out = _one(line.tailpipe_co2e_per_m)
    for p in line.parts:
        by_year = p.upstream_by_year or np.ndim(p.upstream_co2e_per_j) == 2
        out += _one(p.upstream_co2e_per_j, year if by_year else None) * _one(p.energy_per_m)
    return out


def cost_per_m(line: ClassLine, *, rate: float, carbon_price: float) -> dict[str, float]:
    """Cost per distance of one option on one class in year 1, by item, at nominal values.

    Parameters
    ----------
    line : ClassLine
        The option-class, one draw (nominal).
    rate : float
        Discount rate [-], for the capital recovery factor.
    carbon_price : float
        [currency/kg CO2e].

    Returns
    -------
    dict of str to float
        ``fuel``: every carrier at today's prices plus the carbon payment on the well-to-wheel
        CO2e (:func:`co2e_per_m`, year 1);
        ``upkeep``: upkeep per vehicle-year, with catalysts, reductant and tank inspections
        averaged over the years the class runs; ``capital``: the conversion (capital and
        downtime) as a level yearly payment over the class's remaining life (capital recovery
        factor at the discount rate), and new vehicles' purchase less the old vehicles' sale
        and the discounted resale, as a level payment over the years they run; all per
        distance [currency/m]. Programme capital and
        upkeep (option-wide) and the residual value are not in it; the NPV and the levelised
        cost carry them.
    """
    km = _one(line.km_per_year)
    fuel = sum(_one(p.energy_per_m) * _one(p.price_per_j) for p in line.parts)
    run_years = max(float(line.active.sum()), 1.0)
    horizon = len(line.active) - 1
    catalyst = float(np.asarray(line.catalyst_cost).reshape(-1, horizon + 1)[0].sum())
    inspections = float((inspection_years(line.tank_inspection_interval, horizon)
                         * line.active).sum())
    upkeep_year = (_one(line.upkeep_per_year) + catalyst / line.count / run_years
                   + _one(line.tank_inspection_cost) * inspections / run_years)
    capital = 0.0
    if line.converts:
        outlay = (_one(line.conversion_cost)
                  + _one(line.downtime_days) * _one(line.daily_revenue))
        capital = outlay * float(capital_recovery_factor(rate, line.remaining_life_years)) / km
    if line.new_vehicle is not None:
        v = line.new_vehicle
        years = sold_year(line.active)
        net = (_one(v.purchase_price) - _one(v.old_vehicle_sale)
               - _one(v.resale_value) * (1.0 + rate) ** -years)
        capital += net * float(capital_recovery_factor(rate, max(years, 1))) / km
    return {"fuel": fuel + co2e_per_m(line) * carbon_price,
            "upkeep": upkeep_year / km, "capital": capital}
