"""The wake's formulas (physics/wake.py): published angles, the patch spectrum, the closed form."""

from __future__ import annotations

import math

import numpy as np
import pytest

from oceanfield.physics import wake
from oceanfield.physics.constants import GRAVITY
from oceanfield.physics.dispersion import angular_frequency

from tolerances import ROUNDOFF, SAME_FORMULA


def test_kelvin_half_angle_is_arcsin_one_third():
    """Kelvin (1887); Lamb (1932) §256: sin α = 1/3, α = 19°28′ (19.47°)."""
    assert math.degrees(wake.kelvin_half_angle()) == pytest.approx(19.4712206, abs=1e-6)


def test_the_deep_water_rays_peak_at_the_kelvin_angle_with_cusp_waves_at_35_26_degrees():
    """Lamb (1932) §256: tan α = tanθ/(1 + 2tan²θ) is largest at tanθ = 1/√2 (θ = 35°16′),
    where α = arcsin(1/3); the crests there make 90° − 35.26° = 54.74° with the track."""
    theta = np.linspace(0.0, 0.5 * math.pi, 200001)
    alpha = wake.stationary_ray_angle(theta)
    i = int(np.argmax(alpha))
    assert alpha[i] == pytest.approx(wake.kelvin_half_angle(), abs=1e-9)
    assert theta[i] == pytest.approx(wake.kelvin_cusp_wave_angle(), abs=1e-4)
    assert math.degrees(wake.kelvin_cusp_wave_angle()) == pytest.approx(35.2644, abs=1e-4)
    assert math.degrees(wake.kelvin_cusp_crest_angle()) == pytest.approx(54.7356, abs=1e-4)


def test_havelock_angle_is_kelvin_in_deep_water_and_widens_toward_ninety_degrees_at_critical_speed():
    """Havelock (1908): unchanged from Kelvin's 19.47° for small Fh, widening as Fh → 1,
    90° at Fh = 1, arcsin(1/Fh) above."""
    assert math.degrees(wake.havelock_half_angle(0.0)) == pytest.approx(19.4712206, abs=1e-6)
    assert math.degrees(wake.havelock_half_angle(0.3)) == pytest.approx(19.4712, abs=0.01)
    angles = [wake.havelock_half_angle(f) for f in (0.6, 0.7, 0.8, 0.9, 0.95, 0.99)]
    assert all(b > a for a, b in zip(angles, angles[1:]))
    assert math.degrees(angles[-1]) > 60.0
    assert math.degrees(wake.havelock_half_angle(1.0)) == pytest.approx(90.0, abs=ROUNDOFF)
    for f in (1.2, 1.5, 2.0, 4.0):
        assert wake.havelock_half_angle(f) == pytest.approx(math.asin(1.0 / f), abs=ROUNDOFF)


def test_havelock_angle_refuses_negative_or_nan():
    for bad in (-0.1, float("nan"), float("inf")):
        with pytest.raises(ValueError, match="depth_froude"):
            wake.havelock_half_angle(bad)


def test_finite_depth_rays_approach_the_deep_water_rays_for_short_waves():
    """n = c_g/c → ½ where kh ≫ 1, so the finite-depth ray angle tends to Kelvin's."""
    theta = np.radians([20.0, 35.26, 60.0])
    assert wake.stationary_ray_angle(theta, 0.2) == pytest.approx(wake.stationary_ray_angle(theta), abs=1e-9)


def test_patch_spectrum_matches_a_quadrature_of_the_gaussian_patch():
    """F(k) = ∫ f e^{−ik·ξ} dξ of f = exp(−π(ξ/ℓ)² − π(ζ/b)²), by the trapezoid rule."""
    length, beam = 12.0, 4.0
    ell, b = wake.patch_lengths(length, beam)
    xi = np.linspace(-4 * ell, 4 * ell, 801)
    zeta = np.linspace(-4 * b, 4 * b, 401)
    f = np.exp(-math.pi * (xi[:, None] / ell) ** 2 - math.pi * (zeta[None, :] / b) ** 2)
    for ka, kc in ((0.0, 0.0), (0.3, 0.0), (0.0, 0.9), (0.25, -0.6)):
        integrand = f * np.exp(-1j * (ka * xi[:, None] + kc * zeta[None, :]))
        numeric = np.trapezoid(np.trapezoid(integrand, zeta, axis=1), xi).real
        assert wake.pressure_patch_spectrum(ka, kc, length, beam) == pytest.approx(numeric, rel=1e-9)
    # the displaced volume: F(0) = C_B·L·B
    assert wake.pressure_patch_spectrum(0.0, 0.0, length, beam) == pytest.approx(
        wake.BLOCK_COEFFICIENT * length * beam, rel=ROUNDOFF)


@pytest.mark.parametrize("damping", [0.0, 0.05])
def test_segment_response_matches_a_quadrature_of_its_integral(damping):
    """J± = ∫ e^{−ik·x_s(τ)} e^{−(ε ∓ iω)(t−τ)} dτ over one constant-velocity piece,
    against a fine trapezoid rule, including a wave near the steady resonance ω = k·V."""
    vx, vy = 5.0, 1.0
    kx = np.array([0.2, -0.35, 0.0, 0.39])
    ky = np.array([0.1, 0.05, 0.4, 0.0])
    omega = angular_frequency(np.hypot(kx, ky))
    kx[3] = GRAVITY / vx**2  # deep water, ky = 0: ω = √(gk) = k·V at k = g/V², the transverse wave
    omega[3] = math.sqrt(GRAVITY * kx[3])
    age_end, duration, end_x, end_y = 2.0, 7.0, 3.0, -4.0
    tau = np.linspace(-duration, 0.0, 200001)  # τ − τb
    x = end_x + vx * tau
    y = end_y + vy * tau
    age = age_end - tau
    plus, minus = wake.segment_response(kx, ky, omega, age_end=age_end, duration=duration, end_x=end_x,
                                        end_y=end_y, velocity_x=vx, velocity_y=vy, damping=damping)
    for i in range(kx.size):
        position = np.exp(-1j * (kx[i] * x + ky[i] * y))
        for sign, got in ((1.0, plus[i]), (-1.0, minus[i])):
            numeric = np.trapezoid(position * np.exp(-(damping - sign * 1j * omega[i]) * age), tau)
            assert got == pytest.approx(numeric, rel=1e-8, abs=1e-10)


def test_segment_response_of_zero_duration_is_zero_and_small_z_is_stable():
    j = wake.segment_response(0.1, 0.0, 1.0, age_end=1.0, duration=0.0, end_x=0.0, end_y=0.0,
                              velocity_x=0.0, velocity_y=0.0)
    assert j[0] == 0 and j[1] == 0
    # ω ± k·V tiny: the series branch, continuous with the direct formula
    near = [wake.segment_response(1.0, 0.0, 1.0, age_end=0.0, duration=1.0, end_x=0.0, end_y=0.0,
                                  velocity_x=-1.0 + d, velocity_y=0.0)[0] for d in (0.0099, 0.0101)]
    assert near[0] == pytest.approx(near[1], rel=1e-3)


def test_froude_numbers():
    """Fr_L = U/√(gL), Fh = U/√(gh) (Havelock 1908)."""
    assert wake.hull_froude_number(5.0, 10.0) == pytest.approx(5.0 / math.sqrt(GRAVITY * 10.0), rel=SAME_FORMULA)
    assert wake.depth_froude_number(5.0, 2.5) == pytest.approx(5.0 / math.sqrt(GRAVITY * 2.5), rel=SAME_FORMULA)
    assert wake.depth_froude_number(5.0, np.inf) == 0.0
