"""Money over time: discounting, annuities, escalation, payback, levelised and abatement cost.

Pure, vectorised numpy functions; :mod:`workbench.models.economics.cashflow` builds the
programme's cash flows from them.

Conventions
-----------
- A cash-flow array has the years along its **last axis**: index ``t = 0`` is now (the
  conversion outlay), index ``t`` is the end of year ``t``. Any leading axes (Monte Carlo draws,
  candidates) broadcast against the rate, which is a fraction per year (0.08, not 8).
- Prices are today's in year 1, the first year of running, and grow by the escalation from
  year 2 on: ``p_t = p (1 + e) ** max(t - 1, 0)`` (:func:`escalate`).
- Money is in the study currency [currency]; activity in SI ([m] driven, [kg] avoided), so a
  levelised cost comes out per metre and an abatement cost per kilogram. Scale at the interface.
"""

from __future__ import annotations

from collections.abc import Callable
from typing import Any, Literal

import numpy as np
from numpy.typing import ArrayLike, NDArray

__all__ = [
    "abatement_cost",
    "annuity_factor",
    "break_even",
    "capital_recovery_factor",
    "discount_factors",
    "discounted_payback",
    "escalate",
    "levelised_cost",
    "npv",
    "residual_value",
    "simple_payback",
]

FloatArray = NDArray[np.float64]


def _out(x: FloatArray) -> FloatArray | float:
    """A 0-d result as a Python float, anything else unchanged."""
    return float(x) if np.ndim(x) == 0 else x


def discount_factors(rate: ArrayLike, n_years: int) -> FloatArray:
    """Present-value factors (P/F) for the end of years 0 … n_years.

    Parameters
    ----------
    rate : float or array
        Discount rate per year [-], > -1.
    n_years : int
        Last year.

    Returns
    -------
    ndarray
        Shape ``np.shape(rate) + (n_years + 1,)``: ``(1 + rate) ** -t``.
    """
    r = np.asarray(rate, dtype=float)[..., None]
    return (1.0 + r) ** -np.arange(n_years + 1, dtype=float)


def npv(rate: ArrayLike, cash_flows: ArrayLike) -> FloatArray | float:
    """Net present value of cash flows at the end of years 0, 1, …

    Parameters
    ----------
    rate : float or array
        Discount rate per year [-]; broadcasts against the leading axes of ``cash_flows``.
    cash_flows : array
        [currency], years along the last axis, index 0 undiscounted.

    Returns
    -------
    float or ndarray
        [currency], the leading shape of ``cash_flows`` broadcast with ``rate``.

    Notes
    -----
    ``NPV = sum_t CF_t / (1 + r) ** t``, the convention of ``numpy_financial.npv``.
    """
    cf = np.asarray(cash_flows, dtype=float)
    return _out(np.sum(cf * discount_factors(rate, cf.shape[-1] - 1), axis=-1))


def capital_recovery_factor(rate: ArrayLike, n_years: ArrayLike) -> FloatArray | float:
    """Capital recovery factor (A/P): the level yearly payment that repays 1 over n years.

    Parameters
    ----------
    rate : float or array
        Interest rate per year [-]; 0 gives ``1 / n``.
    n_years : float or array
        Number of yearly payments, > 0.

    Returns
    -------
    float or ndarray
        [1/year] ``r (1 + r)**n / ((1 + r)**n - 1)``.
    """
    r = np.asarray(rate, dtype=float)
    n = np.asarray(n_years, dtype=float)
    g = (1.0 + r) ** n
    with np.errstate(divide="ignore", invalid="ignore"):
        crf = np.where(r == 0.0, 1.0 / n, r * g / (g - 1.0))
    return _out(crf)


def annuity_factor(rate: ArrayLike, n_years: ArrayLike) -> FloatArray | float:
    """Present worth of 1 per year for n years (P/A), the inverse of the capital recovery factor.

    Parameters
    ----------
    rate : float or array
        Interest rate per year [-].
    n_years : float or array
        Number of yearly payments.

    Returns
    -------
    float or ndarray
        [year] ``((1 + r)**n - 1) / (r (1 + r)**n)``; ``n`` when ``r = 0``.
    """
    return _out(1.0 / np.asarray(capital_recovery_factor(rate, n_years)))


def escalate(price: ArrayLike, escalation: ArrayLike, years: ArrayLike) -> FloatArray:
    """Price in each programme year, today's in year 1 and growing at a constant escalation.

    Parameters
    ----------
    price : float or array
        Today's price [currency per unit].
    escalation : float or array
        Yearly escalation [-] (real if the discount rate is real); broadcasts with ``price``.
    years : array
        Programme years [year] (``np.arange(n + 1)`` for a cash-flow row; year 0 is the
        conversion year, year 1 the first year of running).

    Returns
    -------
    ndarray
        Shape ``broadcast(price, escalation) + (len(years),)``:
        ``price (1 + e) ** max(t - 1, 0)``.

    Notes
    -----
    Costs of year ``t`` fall at its end (index ``t`` of a cash-flow row); the first year of
    running is priced at today's prices, so escalation starts to act in year 2.
    """
    p = np.asarray(price, dtype=float)[..., None]
    e = np.asarray(escalation, dtype=float)[..., None]
    return p * (1.0 + e) ** np.maximum(np.asarray(years, dtype=float) - 1.0, 0.0)


def _payback(flows: FloatArray) -> FloatArray | float:
    """First time the cumulative sum of ``flows`` climbs back to zero after going negative."""
    cum = np.cumsum(flows, axis=-1)
    t = np.arange(flows.shape[-1])
    negative = cum < 0.0
    first_negative = np.argmax(negative, axis=-1)
    back = (cum >= 0.0) & (t > first_negative[..., None])
    k = np.argmax(back, axis=-1)
    before = np.take_along_axis(cum, np.maximum(k - 1, 0)[..., None], axis=-1)[..., 0]
    step = np.take_along_axis(flows, k[..., None], axis=-1)[..., 0]
    with np.errstate(divide="ignore", invalid="ignore"):
        years = (k - 1) - before / step
    years = np.where(back.any(axis=-1), years, np.nan)
    return _out(np.where(negative.any(axis=-1), years, 0.0))


def simple_payback(cash_flows: ArrayLike) -> FloatArray | float:
    """Undiscounted payback time [year], fractional, NaN when not within the horizon.

    Parameters
    ----------
    cash_flows : array
        [currency], years along the last axis (index 0 = outlay now).

    Returns
    -------
    float or ndarray
        [year] First time the cumulative cash flow climbs back to zero after going negative,
        interpolating linearly within the year (flows spread evenly over the year); 0 when it
        never goes negative; NaN when it has not climbed back by the last year.
    """
    return _payback(np.asarray(cash_flows, dtype=float))


def discounted_payback(rate: ArrayLike, cash_flows: ArrayLike) -> FloatArray | float:
    """Discounted payback time [year]: :func:`simple_payback` of the discounted cash flows.

    Parameters
    ----------
    rate : float or array
        Discount rate per year [-].
    cash_flows : array
        [currency], years along the last axis.

    Returns
    -------
    float or ndarray
        [year], NaN when the discounted cumulative cash flow stays negative over the horizon.
    """
    cf = np.asarray(cash_flows, dtype=float)
    return _payback(cf * discount_factors(rate, cf.shape[-1] - 1))


def levelised_cost(rate: ArrayLike, costs: ArrayLike, activity: ArrayLike) -> FloatArray | float:
    """Levelised cost: present value of costs over present value of activity.

    Parameters
    ----------
    rate : float or array
        Discount rate per year [-].
    costs : array
        Yearly costs [currency], years along the last axis.
    activity : array
        Yearly activity on the same years, e.g. distance driven [m].

    Returns
    -------
    float or ndarray
        [currency per unit of activity], e.g. [currency/m]; NaN when there is no activity.

    Notes
    -----
    ``LC = sum_t C_t (1+r)^-t / sum_t A_t (1+r)^-t``: the constant price per unit of activity
    whose revenue has the same present value as the costs.
    """
    pv_a = np.asarray(npv(rate, activity))
    with np.errstate(divide="ignore", invalid="ignore"):
        return _out(np.where(pv_a > 0.0, np.asarray(npv(rate, costs)) / pv_a, np.nan))


def abatement_cost(
    rate: ArrayLike,
    extra_cost: ArrayLike,
    avoided: ArrayLike,
    *,
    discount_avoided: bool = True,
) -> FloatArray | float:
    """Cost per unit of emission avoided by switching from the baseline to a candidate.

    Parameters
    ----------
    rate : float or array
        Discount rate per year [-].
    extra_cost : array
        Candidate's cost minus the baseline's each year [currency], years along the last axis
        (negative when the candidate saves money).
    avoided : array
        Baseline's emission minus the candidate's each year [kg] (CO2e or NOx).
    discount_avoided : bool, optional
        Discount the avoided emissions like money (levelised, the default) or sum them.

    Returns
    -------
    float or ndarray
        [currency/kg]; negative when the switch saves money; NaN when nothing is avoided.
        Multiply by 1000 for currency per tonne.
    """
    av = np.asarray(avoided, dtype=float)
    amount = np.asarray(npv(rate, av)) if discount_avoided else np.sum(av, axis=-1)
    with np.errstate(divide="ignore", invalid="ignore"):
        return _out(np.where(amount > 0.0, np.asarray(npv(rate, extra_cost)) / amount, np.nan))


def break_even(f: Callable[[Any], Any], x0: float | ArrayLike, *, steps: int = 4
               ) -> float | NDArray[np.float64]:
    """Where a function of one input, linear or nearly so, crosses zero (secant steps).

    Parameters
    ----------
    f : callable
        The output (e.g. an NPV [currency]) as a function of the input. Several functions
        at once: give ``x0`` as an array, one start per function, and ``f`` maps an array of
        inputs (one per function) to the array of their outputs; each secant step is then one
        call of ``f`` for all of them.
    x0 : float or array_like
        Starting value of the input (its nominal value); the second point is 25 % above it
        (1 when it is 0).
    steps : int, optional
        Secant steps; one is exact for a linear ``f``, the rest guard against curvature.

    Returns
    -------
    float or numpy.ndarray
        The input value where ``f`` is zero; NaN when ``f`` does not change with the input,
        or crosses zero only below zero. An array (one root per function) for an array
        ``x0``.

    Notes
    -----
    Secant step: :math:`x_{k+1} = x_k - f(x_k) (x_k - x_{k-1}) / (f(x_k) - f(x_{k-1}))`;
    a function whose last two outputs no longer differ stops moving, and so does one whose
    output at the latest step is within 1e-12 of its size at the two starts (rounding).
    """
    xa = np.asarray(x0, dtype=float)
    scalar = xa.ndim == 0

    def at(x: NDArray[np.float64]) -> NDArray[np.float64]:
        return np.asarray(f(float(x) if scalar else x), dtype=float)

    xb = np.where(xa != 0.0, xa * 1.25, 1.0)
    ya, yb = at(xa), at(xb)
    scale = np.maximum(np.maximum(np.abs(ya), np.abs(yb)), 1.0)
    root = np.full(xa.shape, np.nan)
    moving = np.ones(xa.shape, dtype=bool)
    for k in range(steps):
        # a flat function never crosses; a root found to rounding (|f| ~ 1e-12 of the
        # function's own size: a linear f after one step) needs no more calls
        moving &= ~(np.abs(yb - ya) <= 1e-12 * np.maximum(np.maximum(np.abs(ya), np.abs(yb)),
                                                          1.0))
        if k:
            moving &= ~(np.abs(yb) <= 1e-12 * scale)
        if not moving.any():
            break
        with np.errstate(divide="ignore", invalid="ignore"):
            step = np.where(moving, xb - yb * (xb - xa) / (yb - ya), xb)
        xa, xb = xb, step
        ya, yb = yb, np.where(moving, at(xb), yb)
        root = np.where(moving, xb, root)
    out = np.where(np.isfinite(root) & (root >= 0), root, np.nan)
    return float(out) if scalar else out


def residual_value(
    cost: ArrayLike,
    age: ArrayLike,
    *,
    life: ArrayLike | None = None,
    method: Literal["straight_line", "declining_balance"] = "straight_line",
    yearly_loss: ArrayLike | None = None,
) -> FloatArray | float:
    """Value left in an asset (conversion kit, tank) at a given age.

    Parameters
    ----------
    cost : float or array
        First cost [currency].
    age : float or array
        Age [year].
    life : float or array, optional
        Useful life [year], for ``"straight_line"``.
    method : {"straight_line", "declining_balance"}
        Straight line to zero at ``life``, or a constant fraction ``yearly_loss`` lost a year.
    yearly_loss : float or array, optional
        Fraction of value lost each year [-], for ``"declining_balance"``.

    Returns
    -------
    float or ndarray
        [currency] ``cost max(0, 1 - age/life)`` or ``cost (1 - yearly_loss) ** age``.
    """
    c = np.asarray(cost, dtype=float)
    a = np.asarray(age, dtype=float)
    if method == "straight_line":
        if life is None:
            raise ValueError("straight_line residual value needs life")
        return _out(c * np.clip(1.0 - a / np.asarray(life, dtype=float), 0.0, 1.0))
    if method == "declining_balance":
        if yearly_loss is None:
            raise ValueError("declining_balance residual value needs yearly_loss")
        return _out(c * (1.0 - np.asarray(yearly_loss, dtype=float)) ** a)
    raise ValueError(f"unknown residual value method {method!r}")


