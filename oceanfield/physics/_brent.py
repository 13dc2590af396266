"""Brent's methods for one scalar unknown: a bracketed root and a bounded minimum.

Knows nothing of waves, lattices or files: plain functions of one float.

The physics and the surface need two small searches, the foam threshold's quantile (a
root) and the peak of a spectrum (a minimum of −S). ``scipy.optimize`` has both, but
importing it costs a farm chunk about a tenth of a second; these are the same methods,
with the same steps and tolerances as scipy's ``brentq`` and bounded ``minimize_scalar``,
so they return the same numbers to the bit (tested against scipy).

References
----------
Brent, R. P. (1973). *Algorithms for Minimization without Derivatives*. Prentice-Hall:
chapter 4 (zero of a function: bisection safeguarding inverse quadratic interpolation)
and chapter 5 (minimum of a function: golden section safeguarding parabolic steps).
"""

from __future__ import annotations

import math
from typing import Callable

__all__ = ["bracketed_root", "bounded_minimum"]

#: 4 ε of a double: the relative tolerance below which a root is not refined further.
ROOT_RTOL = 8.881784197001252e-16
#: √ε used by the minimiser's relative tolerance (scipy's value, 2.2e-16 under the root).
_SQRT_EPS = math.sqrt(2.2e-16)
#: (3 − √5)/2: the golden-section fraction.
_GOLDEN = 0.5 * (3.0 - math.sqrt(5.0))


def bracketed_root(f: Callable[[float], float], low: float, high: float, *, xtol: float = 2e-12,
                   rtol: float = ROOT_RTOL, max_steps: int = 100) -> float:
    """A root of ``f`` between ``low`` and ``high`` (where f changes sign), Brent (1973) ch. 4.

    Keeps the root bracketed between the best estimate ``best`` and a point ``other`` of
    opposite sign; steps by inverse quadratic (or linear) interpolation through the last
    three points while that shrinks the bracket fast enough, else bisects. Stops when
    half the bracket is under (xtol + rtol·|best|)/2.

    Raises
    ------
    ValueError
        If f(low) and f(high) have the same sign, or the search does not converge.
    """
    previous, best = float(low), float(high)
    f_previous, f_best = f(previous), f(best)
    if f_previous * f_best > 0:
        raise ValueError(f"f({low!r}) and f({high!r}) have the same sign: no root is bracketed")
    if f_previous == 0:
        return previous
    if f_best == 0:
        return best
    other = f_other = 0.0
    step_before = step = 0.0
    for _ in range(max_steps):
        if f_previous * f_best < 0:  # the sign changed: the previous point bounds the bracket
            other, f_other = previous, f_previous
            step_before = step = best - previous
        if abs(f_other) < abs(f_best):  # keep the smaller |f| as the best estimate
            previous, best, other = best, other, best
            f_previous, f_best, f_other = f_best, f_other, f_best
        tolerance = (xtol + rtol * abs(best)) / 2
        half = (other - best) / 2
        if f_best == 0 or abs(half) < tolerance:
            return best
        if abs(step_before) > tolerance and abs(f_best) < abs(f_previous):
            if previous == other:  # two distinct points: secant
                trial = -f_best * (best - previous) / (f_best - f_previous)
            else:  # three: inverse quadratic interpolation
                slope_previous = (f_previous - f_best) / (previous - best)
                slope_other = (f_other - f_best) / (other - best)
                trial = -f_best * (f_other * slope_other - f_previous * slope_previous) / (
                    slope_other * slope_previous * (f_other - f_previous))
            if 2 * abs(trial) < min(abs(step_before), 3 * abs(half) - tolerance):
                step_before, step = step, trial
            else:
                step_before = step = half
        else:
            step_before = step = half
        previous, f_previous = best, f_best
        best += step if abs(step) > tolerance else (tolerance if half > 0 else -tolerance)
        f_best = f(best)
    raise ValueError(f"no root found between {low!r} and {high!r} in {max_steps} steps")


def bounded_minimum(f: Callable[[float], float], low: float, high: float, *, xatol: float = 1e-5,
                    max_evaluations: int = 500) -> float:
    """The abscissa of a minimum of ``f`` on [low, high], Brent (1973) ch. 5.

    Golden-section steps, replaced by a parabola through the three best points whenever
    that falls inside the interval and moves less than half the step before last. Stops
    when the best point is within 2·(√ε·|x| + xatol/3) of the interval's centre, less
    half its width.
    """
    a, b, xatol = float(low), float(high), float(xatol)
    if not (math.isfinite(a) and math.isfinite(b)) or a > b:
        raise ValueError(f"bounds: ({low!r}, {high!r}) is not allowed; allowed: finite low <= high")
    # best point x (value fx), second best w, the one before v
    v = w = x = a + _GOLDEN * (b - a)
    fv = fw = fx = f(x)
    step = before = 0.0
    evaluations = 1
    middle = 0.5 * (a + b)
    tol1 = _SQRT_EPS * abs(x) + xatol / 3.0
    tol2 = 2.0 * tol1
    while abs(x - middle) > tol2 - 0.5 * (b - a):
        golden = True
        if abs(before) > tol1:  # try a parabola through x, w, v
            golden = False
            r = (x - w) * (fx - fv)
            q = (x - v) * (fx - fw)
            p = (x - v) * q - (x - w) * r
            q = 2.0 * (q - r)
            if q > 0.0:
                p = -p
            q = abs(q)
            r, before = before, step
            if abs(p) < abs(0.5 * q * r) and q * (a - x) < p < q * (b - x):
                step = (p + 0.0) / q
                u = x + step
                if (u - a) < tol2 or (b - u) < tol2:  # too near a bound: a minimal step inwards
                    step = tol1 * (_sign(middle - x) + ((middle - x) == 0))
            else:
                golden = True
        if golden:
            before = (a - x) if x >= middle else (b - x)
            step = _GOLDEN * before
        u = x + (_sign(step) + (step == 0)) * max(abs(step), tol1)
        fu = f(u)
        evaluations += 1
        if fu <= fx:
            if u >= x:
                a = x
            else:
                b = x
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
        middle = 0.5 * (a + b)
        tol1 = _SQRT_EPS * abs(x) + xatol / 3.0
        tol2 = 2.0 * tol1
        if evaluations >= max_evaluations:
            break
    return x


def _sign(value: float) -> float:
    return float(value > 0) - float(value < 0)
