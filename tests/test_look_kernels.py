"""The look's kernels against their numpy references, and the pyramid's bookkeeping."""

from __future__ import annotations

import math

import numpy as np
import pytest

from oceanfield import Ocean, SeaState, Tile, wind_sea
from oceanfield.look import Camera, Sky, render_pyramid
from oceanfield.look._kernels import shade_reference, sky_radiance_kernel, surface_reference
from oceanfield.look.optics import SUN_ANGULAR_RADIUS, WATER_REFRACTIVE_INDEX
from oceanfield.look.picture import DEEP_WATER_REFLECTANCE, FOAM_ALBEDO, extra_slope_variance
from oceanfield.look.pyramid import build_pyramid, resample_displaced
from oceanfield.surface.fields import Fields


@pytest.fixture(scope="module")
def sea_fields():
    sea = SeaState((wind_sea(12.0, fetch=40e3, direction=math.radians(30.0)),))
    ocean = Ocean(sea, Tile(64.0, 128), seed=3, lateral_factor=1.0)
    return ocean.frame(0.5), 64.0


def test_the_kernel_sky_is_the_numpy_sky():
    sky = Sky(math.radians(18.0), math.radians(70.0), 4.0)
    rng = np.random.default_rng(1)
    d = rng.normal(size=(200, 3))
    d[:, 2] = np.abs(d[:, 2])
    d /= np.linalg.norm(d, axis=1, keepdims=True)
    np.testing.assert_allclose(sky_radiance_kernel(d, sky.kernel_table(), sky.sun_direction), sky.radiance(d),
                               rtol=1e-12)


def test_each_pixel_is_the_reference_march_and_shading(sea_fields):
    """Hit points lie on the reference surface at their footprint, and their radiance is
    the numpy shading of the reference moments there (flat sea, 40 × 24 pixels)."""
    pyramid = build_pyramid([sea_fields])
    camera = Camera(6.0, math.radians(200.0), math.radians(-12.0), math.radians(70.0), 40, 24)
    sky = Sky(math.radians(20.0), math.radians(190.0), 3.0)
    unresolved = np.array([[0.01, 0.002], [0.002, 0.006]])
    image, distance = render_pyramid(pyramid, camera, sky, unresolved=unresolved, earth_radius=math.inf)
    rows, cols = np.nonzero(distance > 0)
    assert rows.size > 300
    pick = np.random.default_rng(0).choice(rows.size, 40, replace=False)
    rows, cols = rows[pick], cols[pick]
    d = np.array([camera.ray(r, c) for r, c in zip(rows, cols)])
    t = distance[rows, cols]
    points = np.array([camera.x, camera.y, camera.height]) + t[:, None] * d
    pixel_angle = 2.0 * camera.tan_half[0] / camera.width
    footprint = t * pixel_angle / np.sqrt(np.maximum(-d[:, 2], 1e-3))
    reference = surface_reference(pyramid, footprint, points[:, 0], points[:, 1])
    np.testing.assert_allclose(points[:, 2], reference[:, 0], atol=2e-4)  # the bisection's last bracket
    extra = extra_slope_variance(camera)
    covariance = reference[:, 3:6] + np.array([unresolved[0, 0] + extra, unresolved[1, 1] + extra, unresolved[0, 1]])
    downwelling = sky.downwelling_irradiance()
    expected = shade_reference(reference[:, 1:3], covariance, reference[:, 6], -d, sky, sky.sun_irradiance(),
                               np.asarray(DEEP_WATER_REFLECTANCE) * downwelling, FOAM_ALBEDO * downwelling / math.pi,
                               WATER_REFRACTIVE_INDEX)
    # the air between (Koschmieder 1924): dimmed toward the horizon's sky in the ray's azimuth
    kept = np.exp(-sky.extinction() * t[:, None])
    horizon = d * np.array([1.0, 1.0, 0.0]) / np.hypot(d[:, 0], d[:, 1])[:, None] + np.array([0.0, 0.0, 1e-3])
    expected = expected * kept + sky.radiance(horizon) * (1.0 - kept)
    # the kernel shades at its own hit, the reference at the same point: float32 data, float64 sums
    np.testing.assert_allclose(image[rows, cols], expected, rtol=2e-4)


def test_sky_pixels_are_the_sky_and_the_sun_disc(sea_fields):
    pyramid = build_pyramid([sea_fields])
    sky = Sky(math.radians(5.0), math.radians(0.0), 3.0)
    camera = Camera(3.0, 0.0, math.radians(5.0), math.radians(2.0), 32, 32)  # the sun fills the middle
    image, distance = render_pyramid(pyramid, camera, sky, earth_radius=math.inf)
    d = np.array([[camera.ray(r, c) for c in range(32)] for r in range(32)])
    sun = (d @ sky.sun_direction) >= math.cos(SUN_ANGULAR_RADIUS)
    assert 20 < sun.sum() < 400 and np.all(distance < 0)
    expected = sky.radiance(d) + sun[..., None] * sky.sun_radiance()
    np.testing.assert_allclose(image, expected, rtol=1e-9)


def test_the_pyramid_keeps_the_mean_and_the_slope_variance(sea_fields):
    """Law of total variance: at every level, the variance of the texels' mean slopes plus
    the mean of the variance inside them is the finest level's variance (box means)."""
    pyramid = build_pyramid([sea_fields])
    base = pyramid.data[: 128 * 128].astype(np.float64)
    total = base[:, 1].var() + base[:, 2].var()
    for level in range(int(pyramid.levels[0])):
        n, start = int(pyramid.side[0, level]), int(pyramid.offset[0, level])
        texels = pyramid.data[start:start + n * n].astype(np.float64)
        inside = np.mean(texels[:, 3] - texels[:, 1] ** 2 + texels[:, 4] - texels[:, 2] ** 2)
        between = np.mean((texels[:, 1] - base[:, 1].mean()) ** 2 + (texels[:, 2] - base[:, 2].mean()) ** 2)
        assert inside + between == pytest.approx(total, rel=1e-4)
        assert texels[:, 0].mean() == pytest.approx(base[:, 0].mean(), abs=1e-6)
    assert pyramid.side[0, -1] == 1 and pyramid.levels[0] == 8


def test_the_displaced_surface_is_resampled_onto_its_grid():
    """One wave h = A cos(kx₀), displaced x = x₀ − A sin(kx₀) (DESIGN: points move toward
    crests): the resampled height at grid point X is A cos(kx₀) with x₀ solving
    x₀ − A sin(kx₀) = X (Newton here, to 1e-12), within the bilinear error."""
    n, size, amplitude = 256, 64.0, 1.0  # steepness A k = 0.39
    k = 2.0 * math.pi / 16.0
    x0 = np.arange(n) * size / n
    row = np.cos(k * x0) * amplitude
    height = np.tile(row, (n, 1)).astype(np.float32)
    dx = np.tile(-amplitude * np.sin(k * x0), (n, 1)).astype(np.float32)
    zero = np.zeros((n, n), np.float32)
    slope = -amplitude * k * np.sin(k * x0) / (1.0 - amplitude * k * np.cos(k * x0))
    normal = np.zeros((n, n, 3), np.float32)
    norm = np.sqrt(1.0 + slope**2)
    normal[..., 0], normal[..., 2] = -slope / norm, 1.0 / norm
    fields = Fields(0.0, height, dx, zero, zero + 1.0, normal, zero)
    grid = resample_displaced(fields, size)
    target = x0.copy()
    rest = target.copy()
    for _ in range(50):
        rest -= (rest - amplitude * np.sin(k * rest) - target) / (1.0 - amplitude * k * np.cos(k * rest))
    # linear interpolation's bound Δ²/8 · max|h''| = Δ² A k² / 8 (0.0012 m here), with 10 % for the iteration
    bound = 1.1 * (size / n) ** 2 * amplitude * k * k / 8.0
    np.testing.assert_allclose(grid[0, :, 0], amplitude * np.cos(k * rest), atol=bound)
    # crests sharpen: the resampled crest is narrower than the trough
    above = np.mean(grid[0, :, 0] > 0.0)
    assert above < 0.5 - 0.05
