"""Brent's bounded minimisation against scipy.optimize (the reference implementation of the same method)."""
import math

import numpy as np
import pytest
from scipy.optimize import minimize_scalar

from editor.processing.scalar_search import bounded_minimum

FUNCTIONS = [
    lambda x: (x - 1.3) ** 2,
    lambda x: math.cos(x) + 0.1 * x,
    lambda x: abs(x - 0.77) + 0.2,  # a kink: parabolic steps fail, golden steps carry on
    lambda x: math.exp(x) - 3 * x,  # minimum at ln 3 (closed form)
    lambda x: -math.exp(-(x + 2.5) ** 2 / 0.01),  # a narrow well
    lambda x: (x - 9.99) ** 4,  # minimum at the bracket's edge
]


@pytest.mark.parametrize("func", FUNCTIONS)
@pytest.mark.parametrize("bounds", [(-3.0, 4.0), (-8.0, 10.0), (0.0, 2.0)])
def test_same_minimum_and_evaluations_as_scipy(func, bounds):
    # scipy.optimize.minimize_scalar(method="bounded") implements the same algorithm (Brent 1973, ch. 5)
    ours = bounded_minimum(func, *bounds, xatol=0.002)
    ref = minimize_scalar(func, bounds=bounds, method="bounded", options={"xatol": 0.002})
    assert ours.x == pytest.approx(ref.x, abs=1e-9)
    assert ours.fun == pytest.approx(ref.fun, rel=1e-9, abs=1e-9)
    assert ours.evaluations == ref.nfev
    assert ours.converged


def test_closed_form_minimum_within_the_tolerance():
    # d/dx (e^x - 3x) = 0 at x = ln 3
    found = bounded_minimum(lambda x: math.exp(x) - 3 * x, -5.0, 5.0, xatol=1e-6)
    assert abs(found.x - math.log(3.0)) < 1e-6


def test_infinite_and_nan_values_are_avoided():
    # a function undefined on part of the interval (a likelihood that fails there)
    def func(x):
        return float("nan") if x < 0.5 else (x - 2.0) ** 2

    found = bounded_minimum(func, -4.0, 4.0, xatol=1e-4)
    assert abs(found.x - 2.0) < 1e-3 and np.isfinite(found.fun)
    with pytest.raises(ValueError):
        bounded_minimum(func, 1.0, 1.0)


def test_most_likely_finds_the_closed_form_variance_estimate():
    # The maximum-likelihood variance of zero-mean normal data is the mean of the squares: the textbook
    # closed form (common practice; set d/dv of the log-likelihood to zero). Searched in log10 v.
    from editor.processing.scalar_search import most_likely

    x = np.random.default_rng(4).normal(0.0, 3.0, 500)

    def loglik(v: float) -> float:
        return float(-0.5 * len(x) * np.log(2 * np.pi * v) - (x * x).sum() / (2 * v))

    v, value = most_likely(loglik, (4.0, -4.0), tolerance=1e-4)
    assert v == pytest.approx(np.mean(x * x), rel=1e-3)
    assert value == pytest.approx(loglik(np.mean(x * x)), abs=1e-3)
