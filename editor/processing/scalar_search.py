"""Bounded one-dimensional minimisation (Brent's method), for the likelihood searches of the cleaning tools.

Brent, R. P. (1973), *Algorithms for Minimization without Derivatives*, ch. 5: golden-section
steps, replaced by a parabola through the three best points whenever that parabola's minimum
falls well inside the bracket and the step shrinks fast enough. The same algorithm as
``scipy.optimize.minimize_scalar(method="bounded")``, written here so that the batch command
does not pay the import of ``scipy.optimize`` (about 0.15 s) for one scalar search.
"""
from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Callable

#: Golden-section fraction (3 - sqrt 5) / 2.
GOLDEN = 0.5 * (3.0 - math.sqrt(5.0))
#: Relative tolerance added to ``xatol``: the square root of the double-precision machine epsilon.
SQRT_EPS = math.sqrt(2.220446049250313e-16)


@dataclass(frozen=True)
class ScalarMinimum:
    """Result of :func:`bounded_minimum`: the abscissa, the function value there, evaluations made."""

    x: float
    fun: float
    evaluations: int
    converged: bool


def bounded_minimum(func: Callable[[float], float], lo: float, hi: float, xatol: float = 1e-5,
                    max_evaluations: int = 500) -> ScalarMinimum:
    """Minimise ``func`` on ``[lo, hi]`` to an abscissa tolerance of about ``xatol``.

    ``func`` may return ``inf`` (treated as a very bad value); a NaN is treated as ``inf``.
    The ends themselves are never evaluated.
    """
    if not lo < hi:
        raise ValueError(f"need lo < hi, got {lo!r}, {hi!r}")

    def f(value: float) -> float:
        out = float(func(value))
        return out if out == out else math.inf  # NaN -> inf

    a, b = float(lo), float(hi)
    x = w = v = a + GOLDEN * (b - a)
    fx = fw = fv = f(x)
    step = previous = 0.0
    count = 1
    converged = False
    while count < max_evaluations:
        middle = 0.5 * (a + b)
        tol1 = SQRT_EPS * abs(x) + xatol / 3.0
        tol2 = 2.0 * tol1
        if abs(x - middle) <= tol2 - 0.5 * (b - a):
            converged = True
            break
        use_golden = True
        if abs(previous) > tol1:
            # parabola through (x, fx), (w, fw), (v, fv)
            r = (x - w) * (fx - fv)
            q = (x - v) * (fx - fw)
            p = (x - v) * q - (x - w) * r
            q = 2.0 * (q - r)
            if q > 0.0:
                p = -p
            q = abs(q)
            older, previous = previous, step
            if (math.isfinite(p) and math.isfinite(q) and abs(p) < abs(0.5 * q * older)
                    and q * (a - x) < p < q * (b - x)):
                step = p / q
                u = x + step
                if u - a < tol2 or b - u < tol2:  # not too close to the bracket's ends
                    step = tol1 if x < middle else -tol1
                use_golden = False
        if use_golden:
            previous = (b - x) if x < middle else (a - x)
            step = GOLDEN * previous
        u = x + (step if abs(step) >= tol1 else math.copysign(tol1, step))
        fu = f(u)
        count += 1
        if fu <= fx:
            if u < x:
                b = x
            else:
                a = x
            v, fv, w, fw, x, fx = w, fw, x, fx, u, fu
        else:
            if u < x:
                a = u
            else:
                b = u
            if fu <= fw or w == x:
                v, fv, w, fw = w, fw, u, fu
            elif fu <= fv or v == x or v == w:
                v, fv = u, fu
    return ScalarMinimum(x=x, fun=fx, evaluations=count, converged=converged)


def most_likely(loglik: Callable[[float], float], bounds: tuple[float, float],
                tolerance: float) -> tuple[float, float]:
    """The maximum-likelihood search every tool uses (smoothing strength, gap filling, catch-up check).

    Maximise ``loglik(v)`` for ``v`` between ``10**bounds[1]`` and ``10**bounds[0]``, searching in
    log10 v to ``tolerance`` with :func:`bounded_minimum`. Returns ``(v, loglik(v))``. The bounds of a
    process noise q are :data:`editor.processing.smoothing.LOG10_Q_RANGE`.
    """
    hi, lo = bounds
    best = bounded_minimum(lambda log10_value: -loglik(10.0 ** log10_value), lo, hi, tolerance)
    return float(10.0 ** best.x), float(-best.fun)


__all__ = ["ScalarMinimum", "bounded_minimum", "most_likely"]
