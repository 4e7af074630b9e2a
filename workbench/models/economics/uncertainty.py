"""Uncertain inputs: distributions, seeded sampling, one-at-a-time sensitivity, summaries.

Monte Carlo draws are a leading axis: :func:`sample` returns shape ``(n,)`` per input.
"""

from __future__ import annotations

from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass, field, fields
from typing import Literal

import numpy as np
import pandas as pd
from numpy.typing import ArrayLike
from scipy.special import ndtr, ndtri

from workbench.core.errors import InputError
from workbench.models.economics.finance import FloatArray, _out

__all__ = [
    "DISTRIBUTION_PARAMETERS",
    "Correlation",
    "Distribution",
    "probability_payback_within",
    "probability_positive",
    "sample",
    "sample_inputs",
    "summarise",
    "tornado",
]

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
    lower, upper : float or None
        Range of the input [input unit]: a ``normal`` distribution is truncated to it (its
        quantile function renormalised over the range, so no draw leaves it; a price, a
        distance or a cost cannot draw below 0). The study file sets them from each input's
        valid range; other kinds must lie within it already.
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
    lower: float | None = None
    upper: float | None = None
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
        if (self.lower is not None and self.upper is not None
                and not self.lower < self.upper):
            raise InputError(w, f"range {self.lower}..{self.upper} is empty")
        if self.kind == "normal" and not self._in_range(self.mean):  # type: ignore[arg-type]
            raise InputError(f"{w}.mean", f"mean ({self.mean}) lies outside the input's "
                             f"range {self.lower}..{self.upper}")
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
        names = {f.name for f in fields(cls)} - {"where", "lower", "upper"}
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

    def _in_range(self, x: float) -> bool:
        return ((self.lower is None or x >= self.lower)
                and (self.upper is None or x <= self.upper))

    @property
    def truncated(self) -> bool:
        """True for a normal distribution cut to its input's range."""
        return (self.kind == "normal" and bool(self.sd)
                and (self.lower is not None or self.upper is not None))

    @property
    def _standard_range(self) -> tuple[float, float]:
        """Ends of the range in standard units of the normal (infinite when open)."""
        mean, sd = float(self.mean), float(self.sd)  # type: ignore[arg-type]
        alpha = -np.inf if self.lower is None else (self.lower - mean) / sd
        beta = np.inf if self.upper is None else (self.upper - mean) / sd
        return alpha, beta

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
        """Analytic mean of the distribution [input unit] (of the truncated normal when cut).

        Notes
        -----
        Truncated to ``[a, b]`` in standard units ``alpha, beta``:
        ``mean + sd (phi(alpha) - phi(beta)) / (Phi(beta) - Phi(alpha))``.
        """
        if self.kind == "fixed":
            return float(self.value)  # type: ignore[arg-type]
        if self.kind == "uniform":
            return (self.low + self.high) / 2.0  # type: ignore[operator]
        if self.kind == "triangular":
            return (self.low + self.mode + self.high) / 3.0  # type: ignore[operator]
        if self.truncated:
            alpha, beta = self._standard_range
            density = np.exp(-0.5 * np.square([alpha, beta])) / np.sqrt(2.0 * np.pi)
            mass = ndtr(beta) - ndtr(alpha)
            return float(self.mean + self.sd * (density[0] - density[1]) / mass)  # type: ignore[operator]
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
            if self.truncated:
                pa, pb = ndtr(self._standard_range)
                p = pa + p * (pb - pa)
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
    if dist.truncated:
        return np.asarray(dist.ppf(rng.uniform(0.0, 1.0, n)), dtype=float)
    if dist.kind == "normal":
        return rng.normal(dist.mean, dist.sd, n)
    mu, sigma = dist._lognormal_mu_sigma
    return rng.lognormal(mu, sigma, n)


@dataclass(frozen=True)
class Correlation:
    """Rank-style correlation between uncertain inputs, drawn through a Gaussian copula.

    Attributes
    ----------
    names : tuple of str
        The correlated inputs, in the matrix's order.
    matrix : tuple of tuple of float
        Correlation matrix of the inputs' normal scores [-]: symmetric, ones on the diagonal,
        entries in [-1, 1], positive semi-definite.
    where : str
        Key path named in errors (``"correlations"``).

    Raises
    ------
    InputError
        A matrix that is not square over ``names``, not symmetric, has a diagonal other than 1,
        an entry outside [-1, 1], or is not positive semi-definite (the correlations contradict
        each other); a name given twice.

    Notes
    -----
    Each draw takes standard normal scores ``z ~ N(0, R)`` (``z = A g`` with ``A A^T = R``
    from the eigen-decomposition, ``g`` independent standard normals), turns them into
    probabilities ``u = Phi(z)`` and each input into its own quantile ``x_i = F_i^-1(u_i)``.
    Every input keeps its own distribution; ``R`` is the correlation of the normal scores
    (for two inputs, Spearman's rank correlation is ``(6 / pi) asin(R / 2)``, within 0.02 of
    ``R``).
    """

    names: tuple[str, ...]
    matrix: tuple[tuple[float, ...], ...]
    where: str = field(default="correlations", compare=False)

    def __post_init__(self) -> None:
        w = self.where
        if len(set(self.names)) != len(self.names):
            dup = next(x for x in self.names if self.names.count(x) > 1)
            raise InputError(w, f"{dup} is named twice; name each input once")
        m = np.asarray(self.matrix, dtype=float)
        k = len(self.names)
        if m.shape != (k, k):
            raise InputError(w, f"the matrix must be {k} x {k}, one row and column per input "
                             f"({', '.join(self.names)})")
        if not np.all(np.isfinite(m)):
            raise InputError(w, "correlations must be finite numbers")
        if not np.allclose(m, m.T, rtol=0, atol=1e-12):
            i, j = np.argwhere(np.abs(m - m.T) > 1e-12)[0]
            raise InputError(w, f"not symmetric: {self.names[i]} ~ {self.names[j]} is {m[i, j]} "
                             f"one way and {m[j, i]} the other")
        if not np.allclose(np.diag(m), 1.0, rtol=0, atol=1e-12):
            raise InputError(w, "the diagonal (an input with itself) must be 1")
        if np.any(np.abs(m) > 1.0):
            raise InputError(w, "a correlation must lie between -1 and 1")
        smallest = float(np.linalg.eigvalsh(m).min())
        if smallest < -1e-9:
            raise InputError(w, f"the correlations contradict each other (the matrix is not "
                             f"positive semi-definite, smallest eigenvalue {smallest:.3g}); "
                             "lower some of them")

    def scores(self, n: int, rng: np.random.Generator) -> FloatArray:
        """Correlated standard normal scores, shape (n, len(names))."""
        values, vectors = np.linalg.eigh(np.asarray(self.matrix, dtype=float))
        root = vectors * np.sqrt(np.clip(values, 0.0, None))
        return rng.standard_normal((n, len(self.names))) @ root.T


def sample_inputs(
    dists: Mapping[str, Distribution], n: int, rng: np.random.Generator | int | None,
    *, correlation: Correlation | None = None,
) -> dict[str, FloatArray]:
    """Draw ``n`` values of every input from one generator, correlated ones through a copula.

    Parameters
    ----------
    dists : mapping of str to Distribution
        The uncertain inputs by name.
    n : int
        Number of draws.
    rng : numpy.random.Generator or int or None
        A generator, or a seed for ``np.random.default_rng``.
    correlation : Correlation, optional
        Correlation between some of the inputs (names of ``dists``); the others are drawn
        independently.

    Returns
    -------
    dict of str to ndarray
        Each of shape ``(n,)``, in the mapping's order.

    Notes
    -----
    Independent inputs are drawn first, in the mapping's order, then the correlated ones
    (:class:`Correlation`): the same seed gives the same draws, and a study without
    correlations draws what it drew before they existed.
    """
    gen = np.random.default_rng(rng)
    together = () if correlation is None else correlation.names
    unknown = [k for k in together if k not in dists]
    if unknown:
        raise InputError(correlation.where, f"{unknown[0]} is not an uncertain input")  # type: ignore[union-attr]
    out = {name: sample(d, n, gen) for name, d in dists.items() if name not in together}
    if correlation is not None:
        u = ndtr(correlation.scores(n, gen))
        for i, name in enumerate(together):
            out[name] = np.asarray(dists[name].ppf(u[:, i]), dtype=float).reshape(n)
    return {name: out[name] for name in dists}


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
