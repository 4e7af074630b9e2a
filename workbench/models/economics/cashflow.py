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

A programme may convert a class over several years (:attr:`ClassLine.phasing`: the share of
the class converted in each year); until converted, its vehicles run as :attr:`ClassLine.before`
(the baseline's line). Grants lower a year's capital in the year it is paid; a :class:`Loan`
replaces a share of each year's capital by level repayments (:func:`loan_schedule`).
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field

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
    "Loan",
    "Money",
    "NPVDraws",
    "NewVehicle",
    "OptionLines",
    "Response",
    "co2e_per_m",
    "cohorts",
    "compare",
    "converted_share",
    "cost_per_m",
    "inspection_years",
    "levelised_cost_per_m",
    "loan_schedule",
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
    tax_per_j : array
        Fuel tax per energy paid on top of ``price_per_j`` [currency/J], escalated as the
        price (:func:`escalate`); 0 when the price includes the taxes.
    """

    energy_per_m: ArrayLike
    price_per_j: ArrayLike
    escalation: ArrayLike
    upstream_co2e_per_j: ArrayLike
    upstream_by_year: bool = False
    tax_per_j: ArrayLike = 0.0


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
        Price of one new vehicle, paid in the year it is bought (year 0, or the year of its
        phase) [currency].
    resale_value : array
        What one new vehicle sells for when the class leaves the programme: at the horizon, or
        in the last year of the class's remaining life when that comes first
        (:func:`sold_year`) [currency].
    old_vehicle_sale : array
        What one replaced vehicle sells for, in the year it is replaced [currency].
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
    phasing : numpy.ndarray or None
        Share of the class converted in each programme year, shape (H+1,), summing to 1
        (conversions of year ``j`` run from year ``j + 1``); None converts the whole class in
        year 0. Needs ``before`` unless the share of year 0 is 1.
    before : ClassLine or None
        The line the class runs on until it is converted (the baseline's).
    grant_per_vehicle : array
        Grant per vehicle converted, received in the year of its conversion [currency].
    grant_share : array
        Grant as a share of the conversion capital, received with it [-].
    time_cost_per_m : array
        Cost of the time a converted vehicle loses going to refuel, per distance
        [currency/m] (detour per fill / distance per fill x cost per hour).
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
    phasing: np.ndarray | None = None
    before: ClassLine | None = None
    grant_per_vehicle: ArrayLike = 0.0
    grant_share: ArrayLike = 0.0
    time_cost_per_m: ArrayLike = 0.0
    new_vehicle: NewVehicle | None = None


@dataclass(frozen=True)
class Loan:
    """A share of an option's capital borrowed in the year it is spent, repaid as an annuity.

    Attributes
    ----------
    share : array
        Share of each year's capital (net of grants) borrowed [-].
    rate : array
        Loan interest rate per year, real like the discount rate [-].
    term_years : int
        Yearly repayments, the first a year after the money is borrowed.
    """

    share: ArrayLike
    rate: ArrayLike
    term_years: int


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
    programme_grant : array
        Grant towards the programme, received in year 0 [currency].
    loan : Loan or None
        Financing of the option's capital; None pays it upfront.
    """

    classes: Sequence[ClassLine]
    programme_capital: ArrayLike
    programme_upkeep_per_year: ArrayLike
    programme_grant: ArrayLike = 0.0
    loan: Loan | None = None


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
    capital : dict of str to ndarray
        Capital by option and year, conversions and programme, net of grants, before any
        financing, shape (n, H+1) [currency] (part of ``costs`` when paid upfront).
    grants : dict of str to ndarray
        Grants received by option and year, shape (n, H+1) [currency].
    financing : dict of str to ndarray
        Financing's net outflow by option: repayments and the balance settled at the horizon
        minus the money borrowed, shape (n, H+1) [currency] (part of ``costs``).
    loan_balance : dict of str to ndarray
        Loan balance left at the horizon after the year's repayment, shape (n,) [currency];
        it is settled in year H.
    tax : dict of str to ndarray
        Fuel tax paid by option and year (part of the fuel cost), shape (n, H+1) [currency].
    """

    costs: dict[str, np.ndarray]
    residual: dict[str, np.ndarray]
    carbon: dict[str, np.ndarray]
    cash: dict[str, np.ndarray]
    km: np.ndarray
    co2e: dict[str, np.ndarray]
    nox: dict[str, np.ndarray]
    rate: np.ndarray
    capital: dict[str, np.ndarray] = field(default_factory=dict)
    grants: dict[str, np.ndarray] = field(default_factory=dict)
    financing: dict[str, np.ndarray] = field(default_factory=dict)
    loan_balance: dict[str, np.ndarray] = field(default_factory=dict)
    tax: dict[str, np.ndarray] = field(default_factory=dict)


def _per_draw(x: ArrayLike, n: int) -> FloatArray:
    """A value per draw, shape (n,)."""
    a = np.asarray(x, dtype=float)
    if a.shape != (n,):  # a scalar or one value: broadcast (slow, so only when needed)
        a = np.broadcast_to(a, (n,))
    return a


def _column(x: ArrayLike, n: int) -> FloatArray:
    """A value per draw as a column, shape (n, 1)."""
    return _per_draw(x, n)[:, None]


def converted_share(phasing: ArrayLike | None, horizon: int) -> FloatArray:
    """Share of a class running converted in each programme year.

    Parameters
    ----------
    phasing : array or None
        Share of the class converted in each year ``j``, shape (H+1,), summing to 1; None
        converts it all in year 0.
    horizon : int
        Last programme year H.

    Returns
    -------
    numpy.ndarray
        ``f_t = sum_{j < t} s_j``, shape (H+1,) [-]: a vehicle converted in year ``j`` runs
        converted from year ``j + 1``.
    """
    s = np.zeros(horizon + 1)
    if phasing is None:
        s[0] = 1.0
    else:
        s = np.asarray(phasing, dtype=float).reshape(-1)
    out = np.zeros(horizon + 1)
    out[1:] = np.cumsum(s)[:-1]
    return out


def cohorts(x: ArrayLike, phasing: ArrayLike | None) -> FloatArray:
    """A yearly quantity of a class converted in year 0, for a class converted by phases.

    Parameters
    ----------
    x : array
        The quantity by programme year for the whole class converted in year 0, shape
        (..., H+1) (catalyst costs, NOx, tank inspections).
    phasing : array or None
        Share of the class converted in each year, shape (H+1,); None returns ``x``.

    Returns
    -------
    numpy.ndarray
        ``sum_j s_j x_{t-j}`` (``x_{t-j} = 0`` before the cohort's conversion), shape of ``x``:
        each cohort ages from its own conversion year. Cut it where the class stops running.
    """
    a = np.asarray(x, dtype=float)
    if phasing is None:
        return a
    out = np.zeros(a.shape)
    h1 = a.shape[-1]
    for j, share in enumerate(np.asarray(phasing, dtype=float).reshape(-1)):
        if share:
            out[..., j:] += share * a[..., :h1 - j]
    return out


def loan_schedule(borrowed: ArrayLike, rate: ArrayLike, term_years: int
                  ) -> tuple[FloatArray, FloatArray]:
    """Repayments by year and balance at the horizon of money borrowed year by year.

    Parameters
    ----------
    borrowed : array
        Money borrowed in each programme year, shape (n, H+1) or (H+1,) [currency].
    rate : array
        Loan interest rate per year, per draw, shape (n,) or a float [-].
    term_years : int
        Number of yearly repayments of each year's loan, >= 1.

    Returns
    -------
    tuple of numpy.ndarray
        Repayments by year, shape (n, H+1) [currency], and the balance still owed at the end of
        year H after that year's repayment, shape (n,) [currency].

    Notes
    -----
    Money ``B_j`` borrowed in year ``j`` is repaid by the annuity ``A_j = B_j r / (1 - (1 +
    r)^-N)`` (:func:`capital_recovery_factor`; ``B_j / N`` at ``r = 0``) in years ``j + 1 …
    j + N``. After ``k < N`` repayments it still owes ``B_j (1 + r)^k - A_j sum_{i<k} (1 +
    r)^i`` (Brealey, Myers & Allen, *Principles of Corporate Finance*, annuities, from memory).
    """
    b = np.atleast_2d(np.asarray(borrowed, dtype=float))
    n, h1 = b.shape
    r = _per_draw(rate, n)
    growth = (1.0 + r)[:, None]
    payment = b * np.asarray(capital_recovery_factor(r, term_years)).reshape(-1, 1)
    repay = np.zeros((n, h1))
    balance = np.zeros(n)
    for j in range(h1):
        if not np.any(b[:, j]):
            continue
        last = min(j + term_years, h1 - 1)
        repay[:, j + 1:last + 1] += payment[:, j:j + 1]
        k = h1 - 1 - j  # repayments made by the end of year H
        if k < term_years:
            paid_growth = np.sum(growth ** np.arange(k), axis=-1)
            balance += b[:, j] * growth[:, 0] ** k - payment[:, j] * paid_growth
    return repay, balance


@dataclass(frozen=True)
class _Terms:
    """One class line's share of an option's money (see :func:`programme_money`)."""

    km: FloatArray  # fleet distance by year, (n, H+1) [m]
    emitted: FloatArray  # well-to-wheel CO2e, (n, H+1) [kg]
    carbon: FloatArray  # carbon payments, (n, H+1)
    running: FloatArray  # fuel, carbon, upkeep, inspections, catalysts, time lost, (n, H+1)
    tax: FloatArray  # fuel tax within ``running``, (n, H+1)
    nox: FloatArray  # tailpipe NOx, (H+1,) [kg]
    capital: FloatArray | None  # conversion capital by year, gross, (n, H+1)
    grants: FloatArray | None  # grants received by year, (n, H+1)
    downtime: FloatArray | None  # revenue lost by year, (n, H+1)
    residual: FloatArray | None  # residual value at the horizon, (n, 1)
    resale: tuple[int, FloatArray] | None = None  # new vehicles' (year sold, value (n, 1))


def _class_terms(c: ClassLine, n: int, years: np.ndarray, carbon: FloatArray,
                 terms: dict[int, _Terms]) -> _Terms:
    """One class line's share of an option's money, kept in ``terms`` by the line's id
    (options sharing a line share its terms): a phased class's converted share runs as the
    line, the rest as :attr:`ClassLine.before`; capital, grants and downtime fall in the years
    of the conversions, each cohort keeps its own residual value."""
    if id(c) not in terms:
        terms[id(c)] = _line_terms(c, n, years, carbon, terms)
    return terms[id(c)]


def _line_terms(c: ClassLine, n: int, years: np.ndarray, carbon: FloatArray,
                terms: dict[int, _Terms]) -> _Terms:
    """:func:`_class_terms` of one line, worked out."""
    horizon = len(years) - 1
    act = c.active
    phased = c.phasing is not None and c.converts
    share = converted_share(c.phasing, horizon) if phased else None
    km_year = _column(c.km_per_year, n)
    km = km_year * act * c.count
    km_run = km if share is None else km * share
    co2e_m = _column(np.asarray(c.tailpipe_co2e_per_m).reshape(-1), n)
    fuel = np.zeros((n, horizon + 1))
    tax = np.zeros((n, horizon + 1))
    for p in c.parts:
        energy = _energy(p, n)
        growth = _per_draw(p.escalation, n)
        price = _per_draw(p.price_per_j, n)
        if np.any(np.asarray(p.tax_per_j, dtype=float)):
            taxed = km_run * energy * escalate(_per_draw(p.tax_per_j, n), growth, years)
            tax = tax + taxed
            fuel = fuel + taxed
        fuel = fuel + km_run * energy * escalate(price, growth, years)
        co2e_m = co2e_m + _upstream(p, n, horizon) * energy
    emitted = km_run * co2e_m
    phasing = c.phasing if phased else None
    cat = cohorts(c.catalyst_cost, phasing) * act * (km_year / c.km_per_year_nominal)
    visits = cohorts(inspection_years(c.tank_inspection_interval, horizon), phasing) * act
    upkeep = _column(c.upkeep_per_year, n) * c.count * act
    if share is not None:
        upkeep = upkeep * share
    paid = emitted * carbon
    running = (fuel + paid + upkeep + _column(c.tank_inspection_cost, n) * c.count * visits
               + cat + km_run * _column(c.time_cost_per_m, n))
    nox = cohorts(c.nox_mass, phasing) * act
    if share is not None:
        if c.before is None:
            raise ValueError("a class line converted by phases needs the line it runs on "
                             "before (before=)")
        rest = _class_terms(c.before, n, years, carbon, terms)
        keep = 1.0 - share  # the vehicles not yet converted
        emitted = emitted + rest.emitted * keep
        paid = paid + rest.carbon * keep
        running = running + rest.running * keep
        tax = tax + rest.tax * keep
        nox = nox + rest.nox * keep
    if not c.converts:
        return _Terms(km, emitted, paid, running, tax, nox, None, None, None, None)
    s = np.zeros(horizon + 1)
    s[0] = 1.0
    if phasing is not None:
        s = np.asarray(phasing, dtype=float).reshape(-1)
    cost = _column(c.conversion_cost, n) * c.count
    capital = cost * s
    grants = (_column(c.grant_per_vehicle, n) * c.count + _column(c.grant_share, n) * cost) * s
    downtime = _column(c.downtime_days, n) * _column(c.daily_revenue, n) * c.count * s
    residual = np.zeros((n, 1))
    for j in np.flatnonzero(s):
        residual = residual + residual_value(cost * s[j], horizon - j,
                                             life=c.remaining_life_years - j)
    resale = None
    if c.new_vehicle is not None:  # bought as the class converts, old ones sold then
        v = c.new_vehicle
        price = _column(v.purchase_price, n) * c.count
        capital = capital + (price - _column(v.old_vehicle_sale, n) * c.count) * s
        grants = grants + _column(c.grant_share, n) * price * s  # a share of the price too
        resale = (sold_year(act), _column(v.resale_value, n) * c.count)
    return _Terms(km, emitted, paid, running, tax, nox, capital, grants, downtime, residual,
                  resale)


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
    vehicles), the share ``f_t = sum_{j<t} s_j`` of it converted (``s_j`` converted in year
    ``j``; all in year 0 unless phased) and, for each energy carrier ``k`` it buys, energy per
    distance ``E_k``:

    - fuel ``f_t D_t sum_k E_k (p_k + x_k) (1 + e_k) ** max(t - 1, 0)`` (:func:`escalate`:
      today's price in year 1; the fuel tax ``x_k`` escalates with its price);
    - carbon ``f_t D_t (sum_k u_k,t E_k + T) c``, well-to-wheel CO2e (upstream ``u_k,t`` per J,
      constant or by year; tailpipe ``T`` per m) at the carbon price ``c``;
    - upkeep ``f_t U N a_t``; tank inspections, catalysts and reductant of each cohort from its
      own conversion year (:func:`cohorts`); time lost refuelling ``f_t D_t w``;
    - the not yet converted share ``1 - f_t`` runs as the line before conversion (the
      baseline's);
    - in year ``j``, the capital ``K N s_j`` less grants ``(G + g K) N s_j`` and downtime
      ``days R N s_j``;
    - in year H, each cohort's residual value ``K N s_j (1 - (H - j) / (L - j))`` for a
      remaining life ``L > H`` (:func:`residual_value`, straight line);
    - for a class whose vehicles are replaced by new ones (:class:`NewVehicle`): in year ``j``
      the purchase less the old vehicles' sale ``(P - S_old) N s_j``, as capital (a grant
      share ``g`` applies to the price too: ``g P N s_j``), and the new
      vehicles' resale ``V_new N`` in the year they leave the programme (:func:`sold_year`:
      the horizon, or the last year of the class's remaining life when that comes first).

    Programme upkeep falls in every year any class runs, programme capital and grant in year
    0. With a :class:`Loan`, a share of each year's capital net of grants is borrowed and
    repaid by :func:`loan_schedule`; the balance left at the horizon is settled in year H.
    """
    years = np.arange(horizon + 1)
    rate_n = _per_draw(rate, n)
    carbon = _column(carbon_price, n)
    km_total = np.zeros((n, horizon + 1))
    out: dict[str, dict[str, np.ndarray]] = {k: {} for k in (
        "costs", "residual", "carbon", "cash", "co2e", "nox", "capital", "grants",
        "financing", "loan_balance", "tax")}
    terms: dict[int, _Terms] = {}
    for oid, option in options.items():
        cost = np.zeros((n, horizon + 1))
        capital = np.zeros((n, horizon + 1))
        grants = np.zeros((n, horizon + 1))
        residual = np.zeros((n, horizon + 1))
        paid = np.zeros((n, horizon + 1))
        tax = np.zeros((n, horizon + 1))
        emissions = np.zeros((n, horizon + 1))
        nox_mass = np.zeros(horizon + 1)
        any_active = np.zeros(horizon + 1)
        for c in option.classes:
            t = _class_terms(c, n, years, carbon, terms)
            any_active = np.maximum(any_active, c.active)
            if oid == baseline:
                km_total += t.km
            emissions += t.emitted
            nox_mass = nox_mass + t.nox
            paid += t.carbon
            tax += t.tax
            cost += t.running
            if t.capital is not None:
                capital += t.capital
                grants += t.grants
                cost += t.downtime
                residual[:, -1:] += t.residual
            if t.resale is not None:
                year, value = t.resale
                residual[:, year:year + 1] += value
        cost += _column(option.programme_upkeep_per_year, n) * any_active
        capital[:, :1] += _column(option.programme_capital, n)
        grants[:, :1] += _column(option.programme_grant, n)
        net = capital - grants
        financing = np.zeros((n, horizon + 1))
        balance = np.zeros(n)
        if option.loan is not None:
            borrowed = _column(option.loan.share, n) * np.maximum(net, 0.0)
            repay, balance = loan_schedule(borrowed, _per_draw(option.loan.rate, n),
                                           option.loan.term_years)
            financing = repay - borrowed
            financing[:, -1] += balance
        cost += net + financing
        for key, value in (("costs", cost), ("residual", residual), ("carbon", paid),
                           ("cash", residual - cost), ("co2e", emissions), ("nox", nox_mass),
                           ("capital", capital), ("grants", grants), ("financing", financing),
                           ("loan_balance", balance), ("tax", tax)):
            out[key][oid] = value
    return Money(out["costs"], out["residual"], out["carbon"], out["cash"], km_total,
                 out["co2e"], out["nox"], rate_n, capital=out["capital"],
                 grants=out["grants"], financing=out["financing"],
                 loan_balance=out["loan_balance"], tax=out["tax"])


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
        ``fuel``: every carrier at today's prices (fuel tax included) plus the carbon payment
        on the well-to-wheel CO2e (:func:`co2e_per_m`, year 1);
        ``upkeep``: upkeep per vehicle-year, with catalysts, reductant and tank inspections
        averaged over the years the class runs, and the time lost refuelling; ``capital``: the
        conversion (capital less grants, and downtime) as a level yearly payment over the
        class's remaining life (capital recovery factor at the discount rate), and new
        vehicles' purchase less the old vehicles' sale and the discounted resale, as a level
        payment over the years they run; all per distance [currency/m]. Programme capital
        and upkeep (option-wide) and the residual value are not in it; the NPV and the
        levelised cost carry them.
    """
    km = _one(line.km_per_year)
    fuel = sum(_one(p.energy_per_m) * (_one(p.price_per_j) + _one(p.tax_per_j))
               for p in line.parts)
    run_years = max(float(line.active.sum()), 1.0)
    horizon = len(line.active) - 1
    catalyst = float(np.asarray(line.catalyst_cost).reshape(-1, horizon + 1)[0].sum())
    inspections = float((inspection_years(line.tank_inspection_interval, horizon)
                         * line.active).sum())
    upkeep_year = (_one(line.upkeep_per_year) + catalyst / line.count / run_years
                   + _one(line.tank_inspection_cost) * inspections / run_years)
    capital = 0.0
    if line.converts:
        cost = _one(line.conversion_cost)
        outlay = (cost * (1.0 - _one(line.grant_share)) - _one(line.grant_per_vehicle)
                  + _one(line.downtime_days) * _one(line.daily_revenue))
        capital = outlay * float(capital_recovery_factor(rate, line.remaining_life_years)) / km
    if line.new_vehicle is not None:
        v = line.new_vehicle
        years = sold_year(line.active)
        net = (_one(v.purchase_price) * (1.0 - _one(line.grant_share))
               - _one(v.old_vehicle_sale) - _one(v.resale_value) * (1.0 + rate) ** -years)
        capital += net * float(capital_recovery_factor(rate, max(years, 1))) / km
    return {"fuel": fuel + co2e_per_m(line) * carbon_price,
            "upkeep": upkeep_year / km + _one(line.time_cost_per_m), "capital": capital}
