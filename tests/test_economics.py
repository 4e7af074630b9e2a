"""Tests of workbench.models.economics against numpy-financial, interest tables, closed forms."""

from __future__ import annotations

import numpy as np
import numpy_financial as npf
import pandas as pd
import pytest
from numpy.testing import assert_allclose, assert_array_equal
from scipy import stats

from workbench.core.errors import InputError
from workbench.models import economics as econ
from workbench.models.economics import (
    Distribution,
    abatement_cost,
    annuity_factor,
    capital_recovery_factor,
    discount_factors,
    discounted_payback,
    escalate,
    levelised_cost,
    npv,
    probability_payback_within,
    probability_positive,
    residual_value,
    sample,
    sample_inputs,
    simple_payback,
    summarise,
    tornado,
)

RNG_FLOWS = np.random.default_rng(20240601)
FLOWS = np.column_stack([-RNG_FLOWS.uniform(5e3, 2e4, 50), RNG_FLOWS.uniform(-5e2, 4e3, (50, 12))])
RATES = RNG_FLOWS.uniform(0.0, 0.15, 50)


# --- discounting against numpy-financial -------------------------------------------------------


def test_npv_matches_numpy_financial_row_by_row():
    # Reference: numpy-financial 1.0 npv (t = 0 undiscounted, same convention). Float rounding.
    expected = [npf.npv(r, cf) for r, cf in zip(RATES, FLOWS, strict=True)]
    assert_allclose(npv(RATES, FLOWS), expected, rtol=1e-12)
    # one rate broadcast over many rows, and a single row giving a float
    assert_allclose(npv(0.07, FLOWS), [npf.npv(0.07, cf) for cf in FLOWS], rtol=1e-12)
    assert isinstance(npv(0.07, FLOWS[0]), float)


def test_npv_of_monte_carlo_draws_times_candidates():
    # draws x candidates x years, a rate per draw: the leading axes broadcast (numpy rules).
    cf = FLOWS[:48].reshape(8, 6, 13)
    r = RATES[:8, None]
    assert npv(r, cf).shape == (8, 6)
    assert_allclose(npv(r, cf)[3, 4], npf.npv(RATES[3], cf[3, 4]), rtol=1e-12)


# numpy-financial's own pv divides by a zero rate before choosing the r = 0 branch: its warning.
@pytest.mark.filterwarnings("ignore:invalid value encountered in divide:RuntimeWarning")
@pytest.mark.parametrize("rate", [0.0, 0.03, 0.1, 0.25])
@pytest.mark.parametrize("n", [1, 5, 12, 30])
def test_annuities_match_numpy_financial(rate, n):
    # Reference: numpy-financial pmt (payment repaying pv = 1) and pv (of payments of 1).
    assert_allclose(capital_recovery_factor(rate, n), -npf.pmt(rate, n, 1.0), rtol=1e-12)
    assert_allclose(annuity_factor(rate, n), npf.pv(rate, n, -1.0), rtol=1e-12)


def test_interest_tables():
    # Standard compound-interest tables as printed in engineering-economy texts (e.g. Newnan,
    # Eschenbach & Lavelle, Engineering Economic Analysis, appendix of interest tables), values
    # from memory, printed to 4-5 significant figures: rtol is half a unit in the last place.
    assert_allclose(capital_recovery_factor(0.10, 10), 0.16275, rtol=5e-5)  # (A/P, 10 %, 10)
    assert_allclose(annuity_factor(0.10, 10), 6.1446, rtol=1e-5)  # (P/A, 10 %, 10)
    assert_allclose(discount_factors(0.10, 10)[-1], 0.3855, rtol=2e-4)  # (P/F, 10 %, 10)
    assert_allclose(capital_recovery_factor(0.08, 5), 0.25046, rtol=2e-5)  # (A/P, 8 %, 5)
    assert_allclose(annuity_factor(0.08, 5), 3.9927, rtol=2e-5)  # (P/A, 8 %, 5)


def test_annuity_is_vectorised_and_exact_at_zero_rate():
    out = capital_recovery_factor(np.array([0.0, 0.1]), np.array([10, 10]))
    assert_allclose(out, [0.1, 0.16274539488251152], rtol=1e-12)  # 1/n at r = 0 (definition)


def test_escalation_matches_future_value():
    # Reference: numpy-financial fv of a present amount compounding at the escalation rate,
    # counted from year 1 (the glossary's convention: year 1 at today's prices, so year t has
    # grown t - 1 times; year 0, the conversion year, buys no fuel and is at today's prices).
    years = np.arange(11)
    out = escalate(np.array([1.45, 0.9]), np.array([0.02, 0.035]), years)
    assert out.shape == (2, 11)
    assert_allclose(out[1, 1:], npf.fv(0.035, years[1:] - 1, 0, -0.9), rtol=1e-12)
    assert_allclose(out[:, :2], [[1.45, 1.45], [0.9, 0.9]], rtol=0)
    assert_allclose(out[0, 3], 1.45 * 1.02 * 1.02, rtol=1e-15)  # by hand: two years' growth


# --- payback ------------------------------------------------------------------------------------


def test_simple_payback_by_hand():
    # Fact of the trade (common practice, no source): 1000 outlay, 300 a year -> 1000/300 years.
    assert_allclose(simple_payback([-1000, 300, 300, 300, 300, 300]), 10 / 3, rtol=1e-12)


def test_discounted_payback_of_an_exact_annuity_is_its_term():
    # Reference: numpy-financial pv: an outlay of pv(r, 7, -A) is repaid by 7 payments of A,
    # so the discounted cumulative cash flow reaches zero exactly at year 7.
    outlay = npf.pv(0.08, 7, -2500.0)
    cf = np.r_[-outlay, np.full(10, 2500.0)]
    assert_allclose(discounted_payback(0.08, cf), 7.0, rtol=1e-9)


def test_discounted_payback_brackets_with_numpy_financial():
    # Reference: numpy-financial npv of the first k+1 flows: negative at the whole year before the
    # payback and not negative after it; the fraction is the share of the next discounted flow
    # needed to close the gap (flows spread evenly through the year, common practice).
    pb = discounted_payback(RATES, FLOWS)
    checked = 0
    for r, cf, p in zip(RATES, FLOWS, pb, strict=True):
        if np.isnan(p):  # never: every prefix of the flows has a negative NPV
            assert max(npf.npv(r, cf[: k + 1]) for k in range(len(cf))) < 0
            continue
        k = int(np.floor(p))
        gap = npf.npv(r, cf[: k + 1])
        assert gap < 0 <= npf.npv(r, cf[: k + 2]) + 1e-9
        assert_allclose(p - k, -gap / (cf[k + 1] / (1 + r) ** (k + 1)), rtol=1e-9)
        checked += 1
    assert 20 < checked < len(RATES)  # both branches exercised


def test_payback_never_none_and_vectorised():
    cf = np.array(
        [
            [-1000, 100, 100, 100, 100],  # never within the horizon
            [0, 0, 50, 50, 50],  # no outlay: pays back at once
            [-1000, 600, 600, 600, 600],  # 1 + 400/600 years
            [0, -1000, 600, 600, 600],  # outlay a year late: 2 + 400/600 years
        ],
        dtype=float,
    )
    out = simple_payback(cf)
    assert np.isnan(out[0])
    assert_allclose(out[1:], [0.0, 1 + 4 / 6, 2 + 4 / 6], rtol=1e-12)
    assert np.isnan(discounted_payback(0.1, [-1000, 300, 300, 300]))  # 746 < 1000 (P/A 10 %, 3)


# --- levelised and abatement cost ---------------------------------------------------------------


def test_levelised_cost_is_annualised_capital_plus_running_cost_per_km():
    # Identity of engineering economics (common practice, no source): for an outlay I now and
    # level cost c and distance d each year, LC = (I (A/P, r, n) + c) / d; A/P from numpy-financial.
    n, r, outlay, c, d = 8, 0.07, 4200.0, 3100.0, 60_000e3
    costs = np.r_[outlay, np.full(n, c)]
    dist = np.r_[0.0, np.full(n, d)]
    expected = (outlay * -npf.pmt(r, n, 1.0) + c) / d
    assert_allclose(levelised_cost(r, costs, dist), expected, rtol=1e-12)
    assert np.isnan(levelised_cost(r, costs, np.zeros(n + 1)))


def test_abatement_cost():
    # 1000 a year more for 10 t a year less: 100 per tonne = 0.1 per kg (definition).
    extra = np.r_[0.0, np.full(10, 1000.0)]
    avoided = np.r_[0.0, np.full(10, 10_000.0)]
    assert_allclose(abatement_cost(0.06, extra, avoided), 0.1, rtol=1e-12)
    # Undiscounted tonnes: PV(cost) / sum(tonnes) = 1000 (P/A, 6 %, 10) / 100 000 kg.
    assert_allclose(
        abatement_cost(0.06, extra, avoided, discount_avoided=False),
        1000 * npf.pv(0.06, 10, -1.0) / 100_000,
        rtol=1e-12,
    )
    assert abatement_cost(0.06, -extra, avoided) < 0  # the switch saves money
    assert np.isnan(abatement_cost(0.06, extra, -avoided))  # nothing avoided


def test_residual_value():
    assert_allclose(residual_value(4000.0, [0, 3, 6, 9], life=6), [4000, 2000, 0, 0])
    assert_allclose(
        residual_value(4000.0, 3, method="declining_balance", yearly_loss=0.2), 4000 * 0.8**3
    )
    with pytest.raises(ValueError, match="unknown residual"):
        residual_value(1.0, 1.0, method="sum_of_digits")  # type: ignore[arg-type]
    with pytest.raises(ValueError, match="needs life"):
        residual_value(1.0, 1.0)


# --- distributions -----------------------------------------------------------------------------


@pytest.mark.parametrize(
    ("spec", "where", "match"),
    [
        ({"kind": "uniform", "low": 2.0, "high": 1.0}, "u.x.low", "above high"),
        ({"kind": "triangular", "low": 1.0, "mode": 3.0, "high": 2.0}, "u.x.mode", "between"),
        ({"kind": "normal", "mean": 1.0, "sd": -0.1}, "u.x.sd", "zero or positive"),
        ({"kind": "lognormal", "mean": 0.0, "sd": 0.1}, "u.x.mean", "positive mean"),
        ({"kind": "gamma", "mean": 1.0}, "u.x.kind", "unknown kind"),
        ({"kind": "uniform", "low": 1.0, "high": 2.0, "mean": 1.5}, "u.x.mean", "not mean"),
        ({"kind": "uniform", "low": 1.0}, "u.x.high", "needs a finite number"),
        ({"kind": "normal", "mean": np.nan, "sd": 1.0}, "u.x.mean", "needs a finite number"),
        ({"kind": "fixed", "value": True}, "u.x.value", "needs a finite number"),
        ({"kind": "fixed", "value": "1.4"}, "u.x.value", "needs a finite number"),
        ({"kind": "fixed", "value": 1.0, "spread": 2}, "u.x.spread", "unknown key"),
        ({"value": 1.0}, "u.x.kind", "missing"),
        ("1.4", "u.x", "expected a number or a table"),
    ],
)
def test_distributions_reject_bad_parameters(spec, where, match):
    with pytest.raises(InputError, match=match) as exc:
        Distribution.from_mapping(spec, where="u.x")
    assert exc.value.where == where


def test_distribution_from_a_number_is_fixed():
    assert Distribution.from_mapping(1.45, where="p") == Distribution("fixed", value=1.45)


TRI = Distribution("triangular", low=1.0, mode=1.4, high=2.2)
CASES = [
    (Distribution("uniform", low=1.0, high=3.0), stats.uniform(loc=1.0, scale=2.0)),
    (TRI, stats.triang(c=0.4 / 1.2, loc=1.0, scale=1.2)),
    (Distribution("normal", mean=5.0, sd=0.7), stats.norm(5.0, 0.7)),
]


@pytest.mark.parametrize(("dist", "ref"), CASES)
def test_quantiles_match_scipy(dist, ref):
    # Reference: scipy.stats ppf of the same distribution. Float rounding only.
    q = np.array([0.0, 0.05, 0.1, 0.5, 0.9, 0.95, 1.0])
    assert_allclose(dist.ppf(q[1:-1]), ref.ppf(q[1:-1]), rtol=1e-12)
    assert_allclose(dist.expected_value(), ref.mean(), rtol=1e-12)


def test_lognormal_is_set_by_the_mean_and_sd_of_the_input():
    # Reference: scipy.stats.lognorm moments; sigma^2 = ln(1 + sd^2/mean^2), mu = ln(mean) -
    # sigma^2/2 (standard lognormal moment relations). Float rounding only.
    d = Distribution("lognormal", mean=2.0, sd=0.5)
    s2 = np.log1p(0.0625)
    ref = stats.lognorm(s=np.sqrt(s2), scale=np.exp(np.log(2.0) - s2 / 2))
    assert_allclose([ref.mean(), ref.std()], [2.0, 0.5], rtol=1e-12)
    assert_allclose(d.ppf([0.1, 0.5, 0.9]), ref.ppf([0.1, 0.5, 0.9]), rtol=1e-12)


# --- Monte Carlo -------------------------------------------------------------------------------


def _linear(p: dict[str, np.ndarray]) -> np.ndarray:
    return 3.0 * p["a"] - 2.0 * p["b"] + 5.0 * p["c"] + 0.5 * p["d"] + 7.0


def test_zero_spread_reproduces_the_deterministic_result_exactly():
    dists = {
        "a": Distribution("fixed", value=1.3),
        "b": Distribution("uniform", low=0.7, high=0.7),
        "c": Distribution("triangular", low=2.1, mode=2.1, high=2.1),
        "d": Distribution("lognormal", mean=4.2, sd=0.0),
    }
    deterministic = _linear({"a": 1.3, "b": 0.7, "c": 2.1, "d": 4.2})
    draws = _linear(sample_inputs(dists, 1000, 42))
    assert_array_equal(draws, np.full(1000, deterministic))
    assert_array_equal(
        sample(Distribution("normal", mean=3.0, sd=0.0), 5, np.random.default_rng()),
        np.full(5, 3.0),
    )


def test_monte_carlo_mean_converges_to_the_analytic_mean():
    # E[f] of a linear f is f of the means; Var[f] = sum coef^2 Var (independent inputs). The
    # variances are the textbook ones: uniform (b-a)^2/12, triangular (a^2+b^2+c^2-ab-ac-bc)/18,
    # normal sd^2, lognormal sd^2. Tolerance: 4 standard errors of the mean (a false failure has
    # probability 6e-5 for an arbitrary seed; this seed is fixed).
    lo, md, hi = 1.0, 1.4, 2.2
    dists = {
        "a": Distribution("uniform", low=1.0, high=3.0),
        "b": TRI,
        "c": Distribution("normal", mean=0.9, sd=0.2),
        "d": Distribution("lognormal", mean=4.0, sd=1.5),
    }
    var = (
        9.0 * 4.0 / 12.0
        + 4.0 * (lo**2 + md**2 + hi**2 - lo * md - lo * hi - md * hi) / 18.0
        + 25.0 * 0.04
        + 0.25 * 2.25
    )
    mean = _linear({k: d.expected_value() for k, d in dists.items()})
    n = 200_000
    out = _linear(sample_inputs(dists, n, np.random.default_rng(7)))
    assert abs(out.mean() - mean) < 4.0 * np.sqrt(var / n)
    # sd of a sample sd is about sd/sqrt(2n) = 0.16 % here; 2 % allows for the lognormal's tail.
    assert_allclose(out.std(ddof=1), np.sqrt(var), rtol=0.02)


def test_sampling_is_reproducible_with_a_seed():
    dists = {"a": TRI, "b": Distribution("normal", mean=1.0, sd=0.1)}
    one, two = sample_inputs(dists, 10, 3), sample_inputs(dists, 10, 3)
    assert_array_equal(one["a"], two["a"])
    assert_array_equal(one["b"], two["b"])
    assert not np.array_equal(one["a"], sample_inputs(dists, 10, 4)["a"])


def test_tornado_of_a_linear_function():
    # For a linear f the swing of an input is |coefficient| x (P90 - P10); for a normal input
    # P90 - P10 = 2 x 1.28155 sd (standard normal table, z at 0.90 = 1.2816, from memory).
    dists = {
        "a": Distribution("uniform", low=1.0, high=3.0),
        "b": TRI,
        "c": Distribution("normal", mean=0.9, sd=0.2),
        "d": Distribution("fixed", value=4.0),
    }
    calls = []

    def f(p):
        calls.append(len(p["a"]))
        return _linear(p)

    table = tornado(f, dists)
    assert calls == [7]  # one vectorised call: base + 2 per uncertain input
    assert list(table.columns) == [
        "input",
        "low_value",
        "high_value",
        "output_low",
        "output_high",
        "swing",
        "output_base",
    ]
    assert list(table["input"]) == ["a", "c", "b"]  # d is fixed; largest swing first
    swing = dict(zip(table["input"], table["swing"], strict=True))
    assert_allclose(swing["a"], 3.0 * 1.6, rtol=1e-12)
    assert_allclose(swing["c"], 5.0 * 2 * 0.2 * 1.28155, rtol=1e-5)
    assert_allclose(swing["b"], 2.0 * (TRI.ppf(0.9) - TRI.ppf(0.1)), rtol=1e-12)
    medians = {"a": 2.0, "b": TRI.ppf(0.5), "c": 0.9, "d": 4.0}
    assert_allclose(table["output_base"], _linear(medians), rtol=1e-12)
    row_b = table.set_index("input").loc["b"]
    assert row_b["output_low"] > row_b["output_high"]  # b's coefficient is negative


def test_tornado_rejects_a_function_that_does_not_return_one_value_per_case():
    with pytest.raises(ValueError, match="one number per case"):
        tornado(lambda p: np.zeros(2), {"a": TRI})


def test_summary_and_probabilities():
    x = np.r_[np.arange(1.0, 101.0), np.nan]
    table = summarise({"npv": x, "payback": x - 50.0}, percentiles=(10, 50, 90))
    assert isinstance(table, pd.DataFrame)
    # numpy percentile (linear interpolation) of 1..100 as the reference.
    assert_allclose(table.loc["npv", ["p10", "p50", "p90"]], np.percentile(x[:-1], [10, 50, 90]))
    assert_allclose(table.loc["npv", "mean"], 50.5)
    assert table.loc["npv", "n"] == 101 and table.loc["npv", "n_nan"] == 1
    assert_allclose(probability_positive(x - 50.0), 50 / 101)  # NaN counts as not positive
    assert_allclose(probability_payback_within(np.array([1.0, 4.0, 6.0, np.nan]), 5.0), 0.5)
    two = probability_positive(np.array([[1.0, -1.0], [2.0, 3.0]]))
    assert_allclose(two, [1.0, 0.5])  # draws along the first axis


def test_break_even_finds_the_root_of_a_linear_npv():
    # Closed form: NPV(x) = a - b x is zero at x = a / b; one secant step is exact.
    assert econ.break_even(lambda x: 3.0 - 2.0 * x, 0.8) == pytest.approx(1.5, rel=1e-12)
    # A mildly curved NPV (x^2 term) still converges within the guard steps: root of
    # 10 - 4 x - 0.1 x^2 is (-4 + sqrt(16 + 4)) / 0.2 (quadratic formula).
    root = (-4 + (16 + 4) ** 0.5) / 0.2
    assert econ.break_even(lambda x: 10 - 4 * x - 0.1 * x * x, 1.0) == pytest.approx(root,
                                                                                    rel=1e-9)


def test_break_even_is_nan_without_a_root_at_or_above_zero():
    assert np.isnan(econ.break_even(lambda x: 5.0, 1.0))  # does not depend on the input
    assert np.isnan(econ.break_even(lambda x: 1.0 + x, 2.0))  # zero only at x = -1
