"""Money over time: discounting, annuities, payback, levelised and abatement cost, uncertainty.

Pure, vectorised numpy functions; the study layer decides what the cash flows and inputs are.

Conventions
-----------
- A cash-flow array has the years along its **last axis**: index ``t = 0`` is now (the
  conversion outlay), index ``t`` is the end of year ``t``. Any leading axes (Monte Carlo draws,
  candidates) broadcast against the rate, which is a fraction per year (0.08, not 8).
- Money is in the study currency [currency]; activity in SI ([m] driven, [kg] avoided), so a
  levelised cost comes out per metre and an abatement cost per kilogram. Scale at the interface.
- Monte Carlo draws are a leading axis: ``sample`` returns shape ``(n,)`` per input.
"""

from __future__ import annotations

from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass, field, fields
from typing import Literal

import numpy as np
import pandas as pd
from numpy.typing import ArrayLike, NDArray
from scipy.special import ndtri

from workbench.core.errors import InputError

__all__ = [
    "Distribution",
    "abatement_cost",
    "annuity_factor",
    "capital_recovery_factor",
    "discount_factors",
    "discounted_payback",
    "escalate",
    "levelised_cost",
    "npv",
    "probability_payback_within",
    "probability_positive",
    "residual_value",
    "sample",
    "sample_inputs",
    "simple_payback",
    "summarise",
    "tornado",
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
    """Price in each year, growing at a constant yearly escalation.

    Parameters
    ----------
    price : float or array
        Price in year 0 [currency per unit].
    escalation : float or array
        Yearly escalation [-] (real if the discount rate is real); broadcasts with ``price``.
    years : array
        Years [year] (``np.arange(n + 1)`` for a cash-flow row).

    Returns
    -------
    ndarray
        Shape ``broadcast(price, escalation) + (len(years),)``: ``price (1 + e) ** years``.
    """
    p = np.asarray(price, dtype=float)[..., None]
    e = np.asarray(escalation, dtype=float)[..., None]
    return p * (1.0 + e) ** np.asarray(years, dtype=float)


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


# --- uncertainty -------------------------------------------------------------------------------

Kind = Literal["fixed", "uniform", "triangular", "normal", "lognormal"]
#: Parameters each distribution kind takes.
DISTRIBUTION_PARAMETERS: dict[str, tuple[str, ...]] = {
    "fixed": ("value",),
    "uniform": ("low", "high"),
    "triangular": ("low", "mode", "high"),
    "normal": ("mean", "sd"),
    "lognormal": ("mean", "sd"),
}


@dataclass(frozen=True)
class Distribution:
    """An uncertain input: its kind and the parameters that kind takes.

    Attributes
    ----------
    kind : {"fixed", "uniform", "triangular", "normal", "lognormal"}
        ``fixed`` takes ``value``; ``uniform`` takes ``low``, ``high``; ``triangular`` takes
        ``low``, ``mode``, ``high``; ``normal`` and ``lognormal`` take ``mean``, ``sd`` of the
        input itself (for the lognormal, ``mean > 0``).
    value, low, mode, high, mean, sd : float or None
        In the input's own unit.
    where : str
        Key path used in error messages (``"uncertainty.diesel_price"``).

    Raises
    ------
    InputError
        Unknown kind, a missing, extra or non-finite parameter, ``low > high``, a mode outside
        ``[low, high]``, ``sd < 0``, or a lognormal ``mean <= 0``.
    """

    kind: Kind
    value: float | None = None
    low: float | None = None
    mode: float | None = None
    high: float | None = None
    mean: float | None = None
    sd: float | None = None
    where: str = field(default="distribution", compare=False)

    def __post_init__(self) -> None:
        w = self.where
        if self.kind not in DISTRIBUTION_PARAMETERS:
            kinds = ", ".join(DISTRIBUTION_PARAMETERS)
            raise InputError(f"{w}.kind", f"unknown kind {self.kind!r}; use one of {kinds}")
        wanted = DISTRIBUTION_PARAMETERS[self.kind]
        for name in ("value", "low", "mode", "high", "mean", "sd"):
            v = getattr(self, name)
            if name not in wanted:
                if v is not None:
                    raise InputError(
                        f"{w}.{name}",
                        f"a {self.kind} distribution takes {', '.join(wanted)}, not {name}",
                    )
            elif isinstance(v, bool) or not isinstance(v, int | float) or not np.isfinite(v):
                raise InputError(
                    f"{w}.{name}",
                    f"a {self.kind} distribution needs a finite number for {name}, got {v!r}",
                )
        lo, hi = self.low, self.high
        if lo is not None and hi is not None and lo > hi:
            raise InputError(f"{w}.low", f"low ({lo}) is above high ({hi}); swap them")
        if self.mode is not None and not lo <= self.mode <= hi:  # type: ignore[operator]
            raise InputError(
                f"{w}.mode", f"mode ({self.mode}) must lie between low ({lo}) and high ({hi})"
            )
        if self.sd is not None and self.sd < 0:
            raise InputError(f"{w}.sd", f"sd ({self.sd}) must be zero or positive")
        if self.kind == "lognormal" and self.mean <= 0:  # type: ignore[operator]
            raise InputError(
                f"{w}.mean",
                f"a lognormal input must have a positive mean, got "
                f"{self.mean}; use a normal distribution",
            )

    @classmethod
    def from_mapping(cls, spec: Mapping[str, object] | float, *, where: str) -> Distribution:
        """Build from a study-file table: ``{kind = "triangular", low = 1, mode = 2, high = 4}``.

        Parameters
        ----------
        spec : mapping or float
            A table with ``kind`` and that kind's parameters, or a bare number (fixed).
        where : str
            Key path of the table, named in errors.

        Returns
        -------
        Distribution
        """
        if isinstance(spec, int | float) and not isinstance(spec, bool):
            return cls("fixed", value=float(spec), where=where)
        if not isinstance(spec, Mapping):
            raise InputError(where, f"expected a number or a table with 'kind', got {spec!r}")
        names = {f.name for f in fields(cls)} - {"where"}
        unknown = set(spec) - names
        if unknown:
            raise InputError(
                f"{where}.{sorted(unknown)[0]}",
                f"unknown key; a distribution takes {', '.join(sorted(names))}",
            )
        if "kind" not in spec:
            kinds = ", ".join(DISTRIBUTION_PARAMETERS)
            raise InputError(f"{where}.kind", f"missing; use one of {kinds}")
        return cls(**spec, where=where)  # type: ignore[arg-type]

    @property
    def _lognormal_mu_sigma(self) -> tuple[float, float]:
        s2 = np.log1p((self.sd / self.mean) ** 2)  # type: ignore[operator]
        return float(np.log(self.mean) - s2 / 2.0), float(np.sqrt(s2))  # type: ignore[arg-type]

    @property
    def spread_is_zero(self) -> bool:
        """True when every draw equals the same number (fixed, ``low == high`` or ``sd == 0``)."""
        if self.kind in ("uniform", "triangular"):
            return self.low == self.high
        return self.kind == "fixed" or self.sd == 0

    def expected_value(self) -> float:
        """Analytic mean of the distribution [input unit]."""
        if self.kind == "fixed":
            return float(self.value)  # type: ignore[arg-type]
        if self.kind == "uniform":
            return (self.low + self.high) / 2.0  # type: ignore[operator]
        if self.kind == "triangular":
            return (self.low + self.mode + self.high) / 3.0  # type: ignore[operator]
        return float(self.mean)  # type: ignore[arg-type]

    def ppf(self, q: ArrayLike) -> FloatArray | float:
        """Quantile function: the value below which a fraction ``q`` of draws fall.

        Parameters
        ----------
        q : float or array
            Probability in [0, 1] (0.1 for P10).

        Returns
        -------
        float or ndarray
            [input unit]
        """
        p = np.asarray(q, dtype=float)
        if self.spread_is_zero:
            return _out(np.full(p.shape, self.expected_value()))
        if self.kind == "uniform":
            return _out(self.low + p * (self.high - self.low))  # type: ignore[operator]
        if self.kind == "triangular":
            lo, c, hi = self.low, self.mode, self.high
            f_c = (c - lo) / (hi - lo)  # type: ignore[operator]
            left = lo + np.sqrt(p * (hi - lo) * (c - lo))  # type: ignore[operator]
            right = hi - np.sqrt((1.0 - p) * (hi - lo) * (hi - c))  # type: ignore[operator]
            return _out(np.where(p <= f_c, left, right))
        if self.kind == "normal":
            return _out(self.mean + self.sd * ndtri(p))  # type: ignore[operator]
        mu, sigma = self._lognormal_mu_sigma
        return _out(np.exp(mu + sigma * ndtri(p)))


def sample(dist: Distribution, n: int, rng: np.random.Generator) -> FloatArray:
    """Draw ``n`` values of an input.

    Parameters
    ----------
    dist : Distribution
        The input's distribution.
    n : int
        Number of draws.
    rng : numpy.random.Generator
        Seeded generator (``np.random.default_rng(seed)``).

    Returns
    -------
    ndarray
        Shape ``(n,)`` [input unit]; every draw is exactly the value when the spread is zero.
    """
    if dist.spread_is_zero:
        return np.full(n, dist.expected_value())
    if dist.kind == "uniform":
        return rng.uniform(dist.low, dist.high, n)
    if dist.kind == "triangular":
        return rng.triangular(dist.low, dist.mode, dist.high, n)
    if dist.kind == "normal":
        return rng.normal(dist.mean, dist.sd, n)
    mu, sigma = dist._lognormal_mu_sigma
    return rng.lognormal(mu, sigma, n)


def sample_inputs(
    dists: Mapping[str, Distribution], n: int, rng: np.random.Generator | int | None
) -> dict[str, FloatArray]:
    """Draw ``n`` values of every input, in the mapping's order, from one generator.

    Parameters
    ----------
    dists : mapping of str to Distribution
        The uncertain inputs by name.
    n : int
        Number of draws.
    rng : numpy.random.Generator or int or None
        A generator, or a seed for ``np.random.default_rng``.

    Returns
    -------
    dict of str to ndarray
        Each of shape ``(n,)``.
    """
    gen = np.random.default_rng(rng)
    return {name: sample(d, n, gen) for name, d in dists.items()}


def tornado(
    f: Callable[[dict[str, FloatArray]], ArrayLike],
    dists: Mapping[str, Distribution],
    *,
    low: float = 0.10,
    high: float = 0.90,
    base: Mapping[str, float] | None = None,
) -> pd.DataFrame:
    """One-at-a-time sensitivity: swing each uncertain input from its P10 to its P90.

    Parameters
    ----------
    f : callable
        Vectorised output: takes a dict of equal-length arrays (one per input) and returns one
        number per element.
    dists : mapping of str to Distribution
        All inputs of ``f``; fixed ones stay at their value and get no row.
    low, high : float, optional
        Probabilities of the low and high settings [-] (P10 and P90 by default).
    base : mapping of str to float, optional
        Where the other inputs are held; each distribution's median (P50) by default.

    Returns
    -------
    pandas.DataFrame
        One row per uncertain input, largest swing first, columns ``input``, ``low_value``,
        ``high_value``, ``output_low``, ``output_high``, ``swing`` (``|output_high -
        output_low|``) and ``output_base``.

    Notes
    -----
    ``f`` is called once, on ``1 + 2k`` cases (the base case, then each input low and high).
    """
    held = {k: float(d.ppf(0.5)) for k, d in dists.items()} | dict(base or {})
    varied = [k for k, d in dists.items() if not d.spread_is_zero]
    m = 1 + 2 * len(varied)
    cases = {k: np.full(m, v) for k, v in held.items()}
    settings = {k: (float(dists[k].ppf(low)), float(dists[k].ppf(high))) for k in varied}
    for i, k in enumerate(varied):
        cases[k][1 + 2 * i : 3 + 2 * i] = settings[k]
    out = np.asarray(f(cases), dtype=float)
    if out.shape != (m,):
        raise ValueError(f"f must return one number per case, shape ({m},), not {out.shape}")
    table = pd.DataFrame(
        {
            "input": varied,
            "low_value": [settings[k][0] for k in varied],
            "high_value": [settings[k][1] for k in varied],
            "output_low": out[1::2],
            "output_high": out[2::2],
        }
    )
    table["swing"] = (table["output_high"] - table["output_low"]).abs()
    table["output_base"] = out[0]
    return table.sort_values("swing", ascending=False, kind="stable").reset_index(drop=True)


def summarise(
    samples: Mapping[str, ArrayLike], *, percentiles: Sequence[float] = (10, 50, 90)
) -> pd.DataFrame:
    """Mean, standard deviation and percentiles of Monte Carlo outputs.

    Parameters
    ----------
    samples : mapping of str to array
        Draws of each output (draws along the first axis); NaN draws (e.g. no payback) are
        left out and counted in ``n_nan``.
    percentiles : sequence of float, optional
        In percent (10 gives column ``p10``).

    Returns
    -------
    pandas.DataFrame
        Index ``output``; columns ``mean``, ``sd``, ``p<q>`` …, ``n``, ``n_nan``.
    """
    rows = []
    for name, x in samples.items():
        a = np.asarray(x, dtype=float).ravel()
        ok = a[~np.isnan(a)]
        row: dict[str, float | str] = {"output": name}
        row["mean"] = float(np.mean(ok)) if ok.size else np.nan
        row["sd"] = float(np.std(ok, ddof=1)) if ok.size > 1 else np.nan
        for q in percentiles:
            row[f"p{q:g}"] = float(np.percentile(ok, q)) if ok.size else np.nan
        row["n"] = a.size
        row["n_nan"] = a.size - ok.size
        rows.append(row)
    return pd.DataFrame(rows).set_index("output")


def probability_positive(samples: ArrayLike) -> FloatArray | float:
    """Share of draws above zero (e.g. of NPV); NaN draws count as not positive.

    Parameters
    ----------
    samples : array
        Draws along the first axis.

    Returns
    -------
    float or ndarray
        [-] in [0, 1].
    """
    return _out(np.mean(np.asarray(samples, dtype=float) > 0.0, axis=0))


def probability_payback_within(paybacks: ArrayLike, horizon: float) -> FloatArray | float:
    """Share of draws whose payback comes within ``horizon`` years; NaN (never) counts as not.

    Parameters
    ----------
    paybacks : array
        Payback times [year], draws along the first axis.
    horizon : float
        [year]

    Returns
    -------
    float or ndarray
        [-] in [0, 1].
    """
    return _out(np.mean(np.asarray(paybacks, dtype=float) <= horizon, axis=0))
