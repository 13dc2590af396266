"""Tests for oceanfield.physics._brent: Brent's root and minimum, against scipy's to the bit.

The package uses these instead of ``scipy.optimize`` (whose import alone costs a farm
chunk about a tenth of a second); they must return exactly what scipy's ``brentq`` and
bounded ``minimize_scalar`` return, so the foam threshold and the spectral peak, and with
them every rendered frame, are the same bits as before.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy import optimize

from oceanfield.physics._brent import bounded_minimum, bracketed_root


def _cases(seed: int, count: int):
    rng = np.random.default_rng(seed)
    for _ in range(count):
        a, b, c = rng.normal(size=3)
        yield lambda x, a=a, b=b, c=c: math.tanh(3.0 * (x - a)) + 0.3 * b * math.sin(5.0 * x) + 0.05 * c * x**3


def test_the_root_is_scipys_brentq_to_the_bit():
    checked = 0
    for f in _cases(1, 300):
        low, high = -6.0, 7.0
        if f(low) * f(high) >= 0:
            continue
        for xtol, rtol in ((2e-12, 4 * np.finfo(float).eps), (1e-9, 1e-12), (1e-3, 1e-6)):
            expected = optimize.brentq(f, low, high, xtol=xtol, rtol=rtol)
            assert bracketed_root(f, low, high, xtol=xtol, rtol=rtol) == expected
        checked += 1
    assert checked > 200


def test_a_root_at_a_bound_and_a_missing_bracket():
    assert bracketed_root(lambda x: x - 1.0, 1.0, 3.0) == 1.0
    assert bracketed_root(lambda x: x - 3.0, 1.0, 3.0) == 3.0
    with pytest.raises(ValueError, match="same sign"):
        bracketed_root(lambda x: x * x + 1.0, -1.0, 1.0)


def test_the_minimum_is_scipys_bounded_minimize_scalar_to_the_bit():
    for f in _cases(2, 200):
        g = lambda x, f=f: f(x) ** 2 + 0.1 * math.cos(7.0 * x)  # noqa: E731 - several minima
        for low, high, xatol in ((-3.0, 4.0, 1e-5), (0.5, 0.9, 1e-10 * 0.9), (-1.0, -1.0 + 1e-6, 1e-9)):
            expected = optimize.minimize_scalar(g, bounds=(low, high), method="bounded", options={"xatol": xatol}).x
            assert bounded_minimum(g, low, high, xatol=xatol) == expected


def test_the_minimum_of_a_parabola_and_bad_bounds():
    # the vertex of (x − 0.3)² to the tolerance asked (Brent 1973, ch. 5: parabolic steps
    # find a parabola's vertex at once)
    assert bounded_minimum(lambda x: (x - 0.3) ** 2, -2.0, 5.0, xatol=1e-10) == pytest.approx(0.3, abs=1e-9)
    with pytest.raises(ValueError, match="bounds"):
        bounded_minimum(lambda x: x, 2.0, 1.0)
