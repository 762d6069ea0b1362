"""Confidence intervals (deid/eval/intervals.py) against SciPy and a hand-worked case."""

from __future__ import annotations

import doctest

import numpy as np
import pytest
from scipy.stats import beta, binomtest, bootstrap

import deid.eval.intervals as intervals_module
from deid.eval.intervals import Interval, beta_cdf, beta_ppf, bootstrap_ratios, clopper_pearson


@pytest.mark.parametrize(
    ("k", "n"),
    [
        (0, 1),
        (1, 1),
        (0, 7),
        (6, 7),
        (3, 10),
        (50, 100),
        (97, 100),
        (1, 1000),
        (9990, 10000),
        (499_500, 500_000),
    ],
)
def test_clopper_pearson_matches_scipy_binomtest(k: int, n: int) -> None:
    ours = clopper_pearson(k, n)
    assert ours is not None
    # Reference: SciPy's exact (Clopper-Pearson) interval of a binomial proportion.
    theirs = binomtest(k, n).proportion_ci(confidence_level=0.95, method="exact")
    assert ours.low == pytest.approx(theirs.low, abs=1e-10)
    assert ours.high == pytest.approx(theirs.high, abs=1e-10)


def test_clopper_pearson_other_level_and_edges() -> None:
    ours = clopper_pearson(4, 20, confidence=0.99)
    theirs = binomtest(4, 20).proportion_ci(confidence_level=0.99, method="exact")  # SciPy reference
    assert (ours.low, ours.high) == pytest.approx((theirs.low, theirs.high), abs=1e-10)  # type: ignore[union-attr]
    assert clopper_pearson(0, 0) is None
    with pytest.raises(ValueError):
        clopper_pearson(5, 4)


def test_clopper_pearson_all_successes_by_hand() -> None:
    # For k = n the lower bound solves p**n = alpha/2, so for n = 10 at 95%:
    # p = 0.025 ** (1/10) = 0.69150289; the upper bound is 1.
    interval = clopper_pearson(10, 10)
    assert interval == Interval(pytest.approx(0.025 ** (1 / 10), abs=1e-12), 1.0, "clopper-pearson")


@pytest.mark.parametrize(
    ("x", "a", "b"), [(0.3, 2.0, 5.0), (0.9, 0.5, 0.5), (0.999, 800.0, 2.0), (0.01, 1.0, 300.0)]
)
def test_beta_cdf_and_ppf_match_scipy(x: float, a: float, b: float) -> None:
    # Reference: scipy.stats.beta distribution functions.
    assert beta_cdf(x, a, b) == pytest.approx(beta.cdf(x, a, b), abs=1e-12)
    assert beta_ppf(0.2, a, b) == pytest.approx(beta.ppf(0.2, a, b), abs=1e-10)


def note_counts(seed: int, notes: int = 40) -> tuple[np.ndarray, np.ndarray]:
    rng = np.random.default_rng(seed)
    den = rng.integers(1, 30, size=notes)
    num = rng.binomial(den, 0.9)
    return num, den


def test_bootstrap_is_reproducible_and_seeded() -> None:
    num, den = note_counts(1)
    first = bootstrap_ratios(num[:, None], den[:, None], seed=7)
    again = bootstrap_ratios(num[:, None], den[:, None], seed=7)
    other = bootstrap_ratios(num[:, None], den[:, None], seed=8)
    assert first == again
    assert first != other  # the seed is really used


def test_bootstrap_contains_point_estimate_and_agrees_with_scipy() -> None:
    num, den = note_counts(3)
    ours = bootstrap_ratios(np.column_stack([num, den - num]), np.column_stack([den, den]), n_resamples=4000)
    point = num.sum() / den.sum()
    assert ours[0] is not None and ours[0].contains(point)
    assert ours[1] is not None and ours[1].contains(1 - point)

    def ratio(a: np.ndarray, b: np.ndarray, axis: int) -> np.ndarray:
        return a.sum(axis=axis) / b.sum(axis=axis)

    # Reference: SciPy's percentile bootstrap, resampling the (num, den) pairs of whole notes.
    # Different random draws, so the bounds agree only to Monte Carlo error (common practice: ~0.01).
    theirs = bootstrap(
        (num, den),
        ratio,
        paired=True,
        vectorized=True,
        n_resamples=4000,
        method="percentile",
        random_state=np.random.default_rng(0),
    ).confidence_interval
    assert ours[0].low == pytest.approx(theirs.low, abs=0.01)
    assert ours[0].high == pytest.approx(theirs.high, abs=0.01)


def test_bootstrap_with_empty_denominators() -> None:
    result = bootstrap_ratios([[1, 0], [2, 0]], [[2, 0], [2, 0]], n_resamples=50)
    assert result[1] is None
    assert result[0] is not None and result[0].contains(0.75)
    assert bootstrap_ratios(np.zeros((0, 3)), np.zeros((0, 3))) == [None, None, None]


def test_doctests() -> None:
    assert doctest.testmod(intervals_module).attempted > 0
    assert doctest.testmod(intervals_module).failed == 0
