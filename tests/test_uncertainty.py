"""Tests of workbench.models.economics.uncertainty: truncation and the Gaussian copula.

References: scipy.stats (truncnorm, triang, spearmanr) as the reference library; the rank
correlation of a Gaussian copula, rho_S = (6 / pi) asin(R / 2) (Kruskal, 1958, JASA 53,
"Ordinal measures of association", from memory).
"""

from __future__ import annotations

import numpy as np
import pytest
from numpy.testing import assert_allclose
from scipy import stats

from workbench.core.errors import InputError
from workbench.models.economics import Correlation, Distribution, sample, sample_inputs

N = 40_000


def test_truncated_normal_matches_scipy_truncnorm():
    # A price of mean 0.8, sd 0.5 cut at 0 (P(x < 0) = 5.5 % before the cut).
    d = Distribution("normal", mean=0.8, sd=0.5, lower=0.0)
    ref = stats.truncnorm((0.0 - 0.8) / 0.5, np.inf, loc=0.8, scale=0.5)
    q = np.array([0.001, 0.1, 0.5, 0.9, 0.999])
    assert_allclose(d.ppf(q), ref.ppf(q), rtol=1e-10)
    assert_allclose(d.expected_value(), ref.mean(), rtol=1e-10)
    draws = sample(d, N, np.random.default_rng(3))
    assert draws.min() >= 0.0
    # 4 standard errors of the mean: a false failure about once in 16 000 runs.
    assert abs(draws.mean() - ref.mean()) < 4 * ref.std() / np.sqrt(N)


def test_untruncated_normal_draws_as_before():
    # No range: the same generator calls as before truncation existed (seeded runs unchanged).
    d = Distribution("normal", mean=3.0, sd=0.5)
    assert_allclose(sample(d, 5, np.random.default_rng(1)),
                    np.random.default_rng(1).normal(3.0, 0.5, 5), rtol=0)


def test_normal_mean_outside_the_range_is_refused():
    with pytest.raises(InputError, match="outside the input's range"):
        Distribution("normal", mean=-0.1, sd=0.5, lower=0.0, where="prices.lpg")


def _pair(r: float) -> Correlation:
    return Correlation(("a", "b"), ((1.0, r), (r, 1.0)))


def test_copula_with_normal_inputs_has_the_given_correlation():
    # Normal marginals: the draws are the normal scores themselves, so Pearson r = R.
    # Standard error of r is about (1 - R^2) / sqrt(N) = 0.0018; tolerance 0.01.
    dists = {"a": Distribution("normal", mean=1.0, sd=0.2),
             "b": Distribution("normal", mean=5.0, sd=2.0)}
    x = sample_inputs(dists, N, 11, correlation=_pair(0.8))
    assert abs(np.corrcoef(x["a"], x["b"])[0, 1] - 0.8) < 0.01


def test_copula_keeps_each_marginal_and_gives_the_rank_correlation():
    # Triangular marginals (as the demo's prices): the Gaussian copula's rank correlation is
    # (6 / pi) asin(R / 2) = 0.786 for R = 0.8; each input keeps its own distribution
    # (Kolmogorov-Smirnov against scipy.stats.triang, p > 0.001).
    dists = {"a": Distribution("triangular", low=1.45, mode=1.62, high=1.85),
             "b": Distribution("triangular", low=0.70, mode=0.82, high=0.98),
             "c": Distribution("uniform", low=0.0, high=1.0)}
    x = sample_inputs(dists, N, 5, correlation=_pair(0.8))
    rho = stats.spearmanr(x["a"], x["b"]).statistic
    assert abs(rho - 6 / np.pi * np.arcsin(0.4)) < 0.01
    ref = stats.triang((0.82 - 0.70) / 0.28, loc=0.70, scale=0.28)
    assert stats.kstest(x["b"], ref.cdf).pvalue > 1e-3
    assert abs(stats.spearmanr(x["a"], x["c"]).statistic) < 0.02  # independent of the others


def test_copula_is_seeded_and_studies_without_correlations_draw_as_before():
    dists = {"a": Distribution("uniform", low=0.0, high=1.0),
             "b": Distribution("uniform", low=0.0, high=1.0),
             "c": Distribution("normal", mean=0.0, sd=1.0)}
    one = sample_inputs(dists, 100, 9, correlation=Correlation(("a", "b"),
                                                               ((1.0, 0.5), (0.5, 1.0))))
    two = sample_inputs(dists, 100, 9, correlation=Correlation(("a", "b"),
                                                               ((1.0, 0.5), (0.5, 1.0))))
    for k in dists:
        assert_allclose(one[k], two[k], rtol=0)
    assert list(one) == list(dists)
    plain = sample_inputs(dists, 100, 9)
    gen = np.random.default_rng(9)  # one generator, inputs in order: the draws of before
    for k, d in dists.items():
        assert_allclose(plain[k], sample(d, 100, gen), rtol=0)


@pytest.mark.parametrize(("matrix", "message"), [
    (((1.0, 0.9, 0.9), (0.9, 1.0, -0.9), (0.9, -0.9, 1.0)), "positive semi-definite"),
    (((1.0, 0.5, 0.0), (0.4, 1.0, 0.0), (0.0, 0.0, 1.0)), "not symmetric"),
    (((1.0, 0.5, 0.0), (0.5, 0.9, 0.0), (0.0, 0.0, 1.0)), "diagonal"),
    (((1.0, 1.5, 0.0), (1.5, 1.0, 0.0), (0.0, 0.0, 1.0)), "between -1 and 1"),
    (((1.0, 0.5), (0.5, 1.0)), "3 x 3"),
])
def test_bad_correlation_matrices_are_refused(matrix, message):
    # Three inputs correlated +0.9, +0.9 and -0.9 cannot exist together (the matrix has a
    # negative eigenvalue, 1 - 1.8 = -0.8: linear algebra, no source needed).
    with pytest.raises(InputError, match=message):
        Correlation(("a", "b", "c"), matrix)
