"""Height shape of a surface: resampling the displaced surface, skewness, crests and troughs
(analysis/shape.py)."""

from __future__ import annotations

import math

import numpy as np
import pytest

from oceanfield.analysis.shape import combine_shapes, height_shape, resample_displaced
from tolerances import ROUNDOFF


def _rows(profile: np.ndarray, rows: int = 8) -> np.ndarray:
    return np.tile(profile, (rows, 1))


def test_stokes_profile_crests_troughs_and_skewness():
    """η = a cos φ + b cos 2φ (Stokes' second-order profile, b = ½ka²): crests a + b,
    troughs a − b, mean 0, skewness (3/4)a²b / ((a² + b²)/2)^{3/2} (derived: only
    E[cos²φ cos 2φ] = 1/4 survives in E η³)."""
    n, waves, a, b = 512, 8, 1.0, 0.08
    phase = 2 * math.pi * waves * np.arange(n) / n
    shape = height_shape(_rows(a * np.cos(phase) + b * np.cos(2 * phase)))
    assert shape.waves == 8 * waves
    assert shape.mean == pytest.approx(0.0, abs=1e-12)
    assert shape.mean_crest == pytest.approx(a + b, rel=1e-9)
    assert shape.mean_trough == pytest.approx(a - b, rel=1e-9)
    assert shape.crest_trough_ratio == pytest.approx((a + b) / (a - b), rel=1e-9)
    expected = 0.75 * a * a * b / ((a * a + b * b) / 2) ** 1.5
    assert shape.skewness == pytest.approx(expected, rel=1e-9)
    # along the other axis the same surface, transposed
    assert height_shape(_rows(a * np.cos(phase) + b * np.cos(2 * phase)).T, axis=0).mean_crest == pytest.approx(a + b)


def test_top_tenth_crest_ranks_crests():
    """The top tenth is the mean of the highest tenth of the crests, in units of σ."""
    n = 400
    phase = 2 * math.pi * 20 * np.arange(n) / n
    amplitude = 1.0 + 0.5 * (np.arange(n) // 20 == 3)  # one wave of 20 is 1.5 high
    shape = height_shape(_rows(amplitude * np.sin(phase), rows=1))
    assert shape.waves == 20
    assert shape.top_tenth_crest == pytest.approx((1.5 + 1.0) / 2 / shape.std, rel=1e-3)


def _trochoid(a: float, k: float, x: np.ndarray) -> np.ndarray:
    """Exact height at x of the Gerstner wave x = x₀ − a sin kx₀, z = a cos kx₀ (Newton)."""
    x0 = x.copy()
    for _ in range(60):
        x0 -= (x0 - a * np.sin(k * x0) - x) / (1.0 - a * k * np.cos(k * x0))
    return a * np.cos(k * x0)


@pytest.mark.parametrize("steepness", [0.1, 0.3])
def test_resampled_gerstner_wave_is_the_trochoid(steepness):
    """Points at x₀ − a sin kx₀ with height a cos kx₀ (Gerstner 1802; Tessendorf 2001, §8 of
    our physics sheet) resampled onto the grid give the trochoid's heights; its mean level
    is −½ka² (Lamb 1932, Hydrodynamics §251: ∫ a cos θ (1 − ka cos θ) dθ / 2π)."""
    n, size, waves = 128, 64.0, 4
    k = 2 * math.pi * waves / size
    a = steepness / k
    x0 = np.arange(n) * size / n
    height = _rows(a * np.cos(k * x0), rows=n)
    dx = _rows(-a * np.sin(k * x0), rows=n)
    eta, moving = resample_displaced(height, dx, np.zeros_like(dx), size / n)
    assert moving == 0.0
    exact = _trochoid(a, k, x0)
    np.testing.assert_allclose(eta[0], exact, rtol=0, atol=2e-3 * a)
    assert height_shape(eta).mean == pytest.approx(-0.5 * k * a * a, rel=1e-2)


def test_resampling_without_displacement_is_the_identity():
    rng = np.random.default_rng(0)
    height = rng.normal(size=(32, 32))
    eta, moving = resample_displaced(height, np.zeros((32, 32)), np.zeros((32, 32)), 1.0)
    np.testing.assert_allclose(eta, height, rtol=0, atol=ROUNDOFF)
    assert moving == 0.0


def test_combine_shapes_gives_the_mean_and_its_standard_error():
    n = 256
    phase = 2 * math.pi * 4 * np.arange(n) / n
    shapes = [height_shape(_rows(a * np.cos(phase) + 0.05 * np.cos(2 * phase))) for a in (0.9, 1.0, 1.1)]
    combined = combine_shapes(shapes)
    values = np.array([s.skewness for s in shapes])
    assert combined["skewness"][0] == pytest.approx(values.mean(), rel=ROUNDOFF)
    assert combined["skewness"][1] == pytest.approx(values.std(ddof=1) / math.sqrt(3), rel=ROUNDOFF)
    assert combined["mean_over_std"][0] == pytest.approx(np.mean([s.mean / s.std for s in shapes]), abs=1e-12)


def test_bad_arrays_are_named():
    with pytest.raises(ValueError, match="height: shape"):
        resample_displaced(np.zeros((4, 5)), np.zeros((4, 5)), np.zeros((4, 5)), 1.0)
    with pytest.raises(ValueError, match="displacement: shapes"):
        resample_displaced(np.zeros((4, 4)), np.zeros((4, 5)), np.zeros((4, 4)), 1.0)
    with pytest.raises(ValueError, match="axis: 2"):
        height_shape(np.zeros((4, 4)), axis=2)
