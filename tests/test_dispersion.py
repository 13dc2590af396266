"""Tests for oceanfield.physics.dispersion: ω(k, h) with gravity, depth and surface tension."""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy import optimize

from oceanfield.physics.constants import GRAVITY
from oceanfield.physics.dispersion import (
    angular_frequency,
    check_depth,
    group_velocity,
    phase_velocity,
    wavenumber,
)
from tolerances import (
    CAPILLARY,
    CEM_EXAMPLE,
    DERIVATIVE,
    FENTON_MCKEE,
    ROOT,
    ROUNDOFF,
)

G_981 = 9.81  # the value of g the published examples below were worked with


def _brentq_wavenumber(omega: float, depth: float, gravity: float = GRAVITY,
                       tension_over_density: float = 0.0) -> float:
    """Independent root of ω² = (g k + (τ/ρ) k³) tanh(k h), by bracketing (scipy brentq)."""

    def residual(k: float) -> float:
        tanh_kh = 1.0 if math.isinf(depth) else math.tanh(k * depth)
        return (gravity * k + tension_over_density * k**3) * tanh_kh - omega**2

    high = max(omega**2 / gravity, omega / math.sqrt(gravity * min(depth, 1e300))) * 2.0 + 1e-12
    while residual(high) < 0:
        high *= 2.0
    return optimize.brentq(residual, 0.0, high, xtol=1e-300, rtol=4 * np.finfo(float).eps, maxiter=500)


# -- limits -------------------------------------------------------------------------------


def test_deep_water_phase_speed_is_g_over_omega():
    """Deep water: c = g/ω and c_g = c/2 exactly (Stewart 2008, §16.2, eqs 16.8–16.9)."""
    k = np.geomspace(1e-4, 1e3, 50)
    omega = angular_frequency(k)
    np.testing.assert_allclose(phase_velocity(k), GRAVITY / omega, rtol=ROUNDOFF)
    np.testing.assert_allclose(group_velocity(k), phase_velocity(k) / 2.0, rtol=ROUNDOFF)


def test_finite_depth_tends_to_deep_water_when_depth_exceeds_half_a_wavelength():
    """h ≥ L/2: c within 0.2 % of its deep-water value √(g/k) (Stewart 2008, §16.2
    deep-water limit; 0.2 % derived: √tanh(π) = 0.9981)."""
    k = np.geomspace(1e-3, 10.0, 40)
    for factor in (0.5, 1.0, 3.0):
        depth = factor * 2 * np.pi / k  # h = factor · L
        ratio = np.array([phase_velocity(kk, h) for kk, h in zip(k, depth)]) / phase_velocity(k)
        assert np.all(ratio <= 1.0) and np.all(ratio > 1 - 2e-3)
    assert phase_velocity(k, 0.5 * 2 * np.pi / k[0])[0] / phase_velocity(k[0]) == pytest.approx(
        math.sqrt(math.tanh(math.pi)), rel=ROUNDOFF
    )
    # and the limit itself: tanh(kh) = 1 to double precision at kh = 40
    assert phase_velocity(1.0, 40.0) == pytest.approx(phase_velocity(1.0), rel=ROUNDOFF)


def test_shallow_water_speed_is_sqrt_gh():
    """Shallow water: c = c_g = √(g h) (Stewart 2008, §16.2, eq. 16.10); within 1.6 % for
    h < L/20 (derived: tanh(π/10)/(π/10) = 0.968, square root 0.984)."""
    for depth in (0.01, 1.0, 10.0, 4000.0):
        shallow = math.sqrt(GRAVITY * depth)
        k = 1e-5 / depth  # kh = 1e-5: the limit to 1e-10
        assert phase_velocity(k, depth) == pytest.approx(shallow, rel=1e-9)
        assert group_velocity(k, depth) == pytest.approx(shallow, rel=1e-9)
        k_twentieth = 2 * np.pi / (20 * depth)  # h = L/20
        assert abs(phase_velocity(k_twentieth, depth) / shallow - 1) < 0.016
        # exact at k = 0, without warnings (pytest turns them into errors)
        assert phase_velocity(0.0, depth) == pytest.approx(shallow, rel=ROUNDOFF)
        assert group_velocity(0.0, depth) == pytest.approx(shallow, rel=ROUNDOFF)


@pytest.mark.parametrize("depth", [np.inf, 5.0])
@pytest.mark.parametrize("tension", [0.0, 0.0728])
@pytest.mark.parametrize("shape", [(), (3,), (2, 3, 4)])
def test_zero_wavenumber_and_frequency_without_warnings(depth, tension, shape):
    """At k = 0 and ω = 0: ω = 0, k = 0, c and c_g = √(gh) (or inf in deep water), no NaN,
    no warning, any array shape (Stewart 2008, §16.2 limits)."""
    zeros = np.zeros(shape)
    physics = dict(surface_tension=tension, density=1025.0)
    assert np.all(angular_frequency(zeros, depth, **physics) == 0.0)
    assert np.all(wavenumber(zeros, depth, **physics) == 0.0)
    limit = np.inf if np.isinf(depth) else math.sqrt(GRAVITY * depth)
    assert np.all(phase_velocity(zeros, depth, **physics) == limit)
    assert np.all(group_velocity(zeros, depth, **physics) == limit)
    assert wavenumber(zeros, depth).shape == shape
    mixed = np.array([0.0, 1.0, 0.0])
    assert np.all(np.isfinite(wavenumber(mixed, depth, **physics)))


# -- wavelengths --------------------------------------------------------------------------


@pytest.mark.parametrize("depth", [3.0, 5.0, 10.0, 20.0, 50.0, 200.0])
def test_wavelength_of_a_10_s_wave_matches_an_independent_root(depth):
    """L(T = 10 s, h) against scipy's brentq on the same dispersion relation
    (Stewart 2008, eq. 16.3), 1e-10 relative."""
    omega = 2 * np.pi / 10.0
    expected = 2 * np.pi / _brentq_wavenumber(omega, depth, G_981)
    assert 2 * np.pi / wavenumber(omega, depth, gravity=G_981) == pytest.approx(expected, rel=ROOT)


def test_coastal_engineering_manual_example_ii_1_1():
    """USACE (2002) Coastal Engineering Manual EM 1110-2-1100, Part II-1, Example II-1-1:
    T = 10 s, d = 3 m → L = 53.2 m, C = 5.32 m/s, d/L = 0.05641, L0 = 156 m (g = 9.81)."""
    omega = 2 * np.pi / 10.0
    k = float(wavenumber(omega, 3.0, gravity=G_981))
    length = 2 * np.pi / k
    assert length == pytest.approx(53.2, rel=CEM_EXAMPLE)
    assert float(phase_velocity(k, 3.0, gravity=G_981)) == pytest.approx(5.32, rel=CEM_EXAMPLE)
    assert 3.0 / length == pytest.approx(0.05641, rel=CEM_EXAMPLE)
    deep_length = 2 * np.pi / float(wavenumber(omega, gravity=G_981))
    assert deep_length == pytest.approx(156.0, rel=CEM_EXAMPLE)
    # L0 = g T² / 2π exactly in deep water (CEM II-1, eq. II-1-9)
    assert deep_length == pytest.approx(G_981 * 10.0**2 / (2 * np.pi), rel=ROUNDOFF)


def test_fenton_mckee_explicit_wavelength_agrees_within_stated_error():
    """Fenton & McKee (1990), Coastal Eng. 14, 499–513: L ≈ (gT²/2π) tanh^{2/3}[(2π√(h/g)/T)^{3/2}]
    is within 1.7 % of the exact wavelength everywhere (abstract)."""
    period = np.geomspace(0.5, 30.0, 60)[:, None]
    depth = np.geomspace(0.05, 5000.0, 80)[None, :]
    deep = GRAVITY * period**2 / (2 * np.pi)
    approx = deep * np.tanh((2 * np.pi * np.sqrt(depth / GRAVITY) / period) ** 1.5) ** (2.0 / 3.0)
    exact = np.empty_like(approx)
    for j, h in enumerate(depth[0]):
        exact[:, j] = 2 * np.pi / wavenumber(2 * np.pi / period[:, 0], h)
    worst = np.max(np.abs(approx / exact - 1))
    assert worst < FENTON_MCKEE
    # the approximation's error is real (1.66 % near ω√(h/g) ≈ 0.58, derived): the test can fail
    assert worst > 0.01


# -- group velocity -----------------------------------------------------------------------


@pytest.mark.parametrize("depth", [0.5, 3.0, 20.0, 300.0, np.inf])
@pytest.mark.parametrize("tension", [0.0, 0.0728])
def test_group_velocity_is_the_derivative_of_omega(depth, tension):
    """c_g = dω/dk (Stewart 2008, eq. 16.7) against a central difference of ω(k)."""
    k = np.geomspace(1e-3, 3e3, 60)
    step = 1e-5 * k
    physics = dict(surface_tension=tension, density=1025.0)
    numerical = (angular_frequency(k + step, depth, **physics) - angular_frequency(k - step, depth, **physics)) / (
        2 * step
    )
    np.testing.assert_allclose(group_velocity(k, depth, **physics), numerical, rtol=DERIVATIVE)


@pytest.mark.parametrize("depth", [0.5, 3.0, 20.0, 300.0])
def test_group_velocity_closed_form(depth):
    """Gravity waves: c_g = (c/2)[1 + 2kh / sinh(2kh)] (Stewart 2008, eq. 16.11)."""
    k = np.geomspace(1e-4, 1.0, 50)
    c = phase_velocity(k, depth)
    expected = 0.5 * c * (1 + 2 * k * depth / np.sinh(2 * k * depth))
    np.testing.assert_allclose(group_velocity(k, depth), expected, rtol=ROUNDOFF)


@pytest.mark.parametrize(
    "depth, group",
    # T = 10 s, g = 9.81 (derived from the exact relation; PHYSICS tables print 4 figures)
    [(3.0, 5.105), (5.0, 6.327), (10.0, 8.070), (20.0, 9.274), (50.0, 8.553), (200.0, 7.807)],
)
def test_group_velocity_of_a_10_s_wave(depth, group):
    """c_g of a 10 s wave at six depths (derived from Stewart 2008 eqs 16.3, 16.11; 4 figures)."""
    k = wavenumber(2 * np.pi / 10.0, depth, gravity=G_981)
    assert float(group_velocity(k, depth, gravity=G_981)) == pytest.approx(group, rel=2e-4)


# -- surface tension ----------------------------------------------------------------------


def test_capillary_gravity_minimum_phase_speed():
    """Deep water, τ = 0.072 N/m, ρ = 1000 kg/m³: c² = g/k + τk/ρ is least at
    k = √(ρg/τ), λ = 1.702 cm, c_min = 0.2306 m/s (Lamb 1932, Hydrodynamics §267;
    Fitzpatrick, Oscillations and Waves, capillary waves)."""
    physics = dict(surface_tension=0.072, density=1000.0)
    result = optimize.minimize_scalar(
        lambda k: float(phase_velocity(k, **physics)), bounds=(50.0, 2000.0), method="bounded",
        options={"xatol": 1e-8},
    )
    assert 2 * np.pi / result.x == pytest.approx(0.01702, rel=CAPILLARY)
    assert result.fun == pytest.approx(0.2306, rel=CAPILLARY)
    # at the minimum c_g = c (derived: dc/dk = 0 ⇔ c_g = c)
    assert float(group_velocity(result.x, **physics)) == pytest.approx(result.fun, rel=1e-6)


def test_capillary_gravity_group_to_phase_ratio():
    """Deep water: c_g/c = ½(1 + 3τk²/ρg)/(1 + τk²/ρg) (derived from Lamb 1932, §267)."""
    tension, density = 0.0728, 1025.0
    k = np.geomspace(1.0, 1e4, 40)
    x = tension * k**2 / (density * GRAVITY)
    expected = 0.5 * (1 + 3 * x) / (1 + x)
    ratio = group_velocity(k, surface_tension=tension, density=density) / phase_velocity(
        k, surface_tension=tension, density=density
    )
    np.testing.assert_allclose(ratio, expected, rtol=ROUNDOFF)


# -- the inverse ------------------------------------------------------------------------


DEPTHS = [*np.geomspace(0.01, 1e4, 13), np.inf]
FREQUENCIES = np.geomspace(1e-3, 1e3, 121)


@pytest.mark.parametrize("tension", [0.0, 0.0728])
def test_inverse_converges_for_every_depth_and_frequency(tension):
    """k(ω, h) inverts ω(k, h) to 1e-10 (Stewart 2008, eq. 16.3; Lamb 1932 §267 with τ)
    for h from 1 cm to 10 km and deep, ω from 1e-3 to 1e3 rad/s: the residual in ω is
    below 5e-11 (k's error is at most twice ω's), and a scipy brentq root agrees."""
    physics = dict(surface_tension=tension, density=1025.0)
    for depth in DEPTHS:
        k = wavenumber(FREQUENCIES, depth, **physics)
        assert np.all(np.isfinite(k)) and np.all(k > 0)
        back = angular_frequency(k, depth, **physics)
        np.testing.assert_allclose(back, FREQUENCIES, rtol=ROOT / 2)
        for omega, found in zip(FREQUENCIES[::12], k[::12]):
            expected = _brentq_wavenumber(omega, depth, GRAVITY, tension / 1025.0)
            assert found == pytest.approx(expected, rel=ROOT)


@settings(max_examples=50, deadline=None)
@given(
    omega=st.floats(1e-3, 1e3),
    depth=st.one_of(st.floats(1e-2, 1e4), st.just(math.inf)),
    tension=st.sampled_from([0.0, 0.072, 0.0728]),
    density=st.floats(990.0, 1030.0),
)
def test_inverse_round_trip_property(omega, depth, tension, density):
    """Property: ω(k(ω, h)) = ω, with k finite and positive (Stewart 2008, eq. 16.3)."""
    physics = dict(surface_tension=tension, density=density)
    k = wavenumber(np.array([omega, 0.0]), depth, **physics)
    assert np.all(np.isfinite(k)) and k[0] > 0 and k[1] == 0
    assert float(angular_frequency(k[0], depth, **physics)) == pytest.approx(omega, rel=ROOT / 2)
    assert np.isfinite(group_velocity(k[0], depth, **physics)) and group_velocity(k[0], depth, **physics) > 0


# -- bad input ----------------------------------------------------------------------------


@pytest.mark.parametrize("bad", [0.0, -1.0, math.nan, -math.inf, "deep", None])
@pytest.mark.parametrize("function", [angular_frequency, group_velocity, phase_velocity, wavenumber])
def test_bad_depth_names_the_parameter(function, bad):
    """A depth ≤ 0, NaN or not a number is refused with the parameter, value and range."""
    with pytest.raises(ValueError, match=r"^depth: .*allowed: > 0 metres or inf \(deep\)"):
        function(1.0, bad)


def test_check_depth_accepts_inf_and_positive():
    """Deep water is inf; any positive depth passes through as a float."""
    assert check_depth(np.inf) == math.inf
    assert check_depth(3) == 3.0
    with pytest.raises(ValueError, match=r"^water_depth: -2"):
        check_depth(-2, "water_depth")


def test_standard_gravity_is_the_defined_value():
    """GRAVITY is standard gravity, 9.80665 m/s² exactly (3rd CGPM 1901; scipy.constants.g)."""
    import scipy.constants

    assert GRAVITY == scipy.constants.g == 9.80665
