"""The unified spectrum of Elfouhaily, Chapron, Katsaros & Vandemark (1997) and its spreading."""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy import integrate

from oceanfield.physics import spectra
from oceanfield.physics.seastate import SeaState, height_period, wind_sea
from oceanfield.physics.spreading import elfouhaily_delta, elfouhaily_spreading, spreading


def test_peak_wavenumber_and_phase_speed_at_full_development():
    """Ωc = 0.84, U10 = 10 m/s → kp = 0.0692 rad/m, c_p = 11.9 m/s (Elfouhaily et al. 1997,
    kp = (g/U10²)Ωc²; the check values as printed by implementations citing the paper)."""
    kp = spectra.elfouhaily_peak_wavenumber(10.0, 0.84, gravity=9.81)
    assert kp == pytest.approx(0.0692, abs=5e-5)
    assert math.sqrt(9.81 / kp) == pytest.approx(11.9, abs=0.05)


def test_fetch_law_limits():
    """Ωc = 0.84 tanh[(X/X0)^0.4]^-0.75 (Elfouhaily et al. 1997, eq. 37): 0.84 at infinite
    fetch, 0.84·tanh(1)^-0.75 = 1.0304 at X = X0 (derived), young seas above."""
    g, u = spectra.GRAVITY, 10.0
    assert spectra.elfouhaily_inverse_wave_age(u, None) == 0.84
    at_scale = spectra.elfouhaily_inverse_wave_age(u, 2.2e4 * u**2 / g, gravity=g)
    assert at_scale == pytest.approx(0.84 * math.tanh(1.0) ** -0.75, rel=1e-12)
    assert at_scale == pytest.approx(1.0304, abs=1e-4)
    assert spectra.elfouhaily_inverse_wave_age(u, 1e9) == pytest.approx(0.84, rel=1e-6)


def test_curvature_plateau_is_set_by_alpha_m():
    """At k = k_m the long-wave part has died away and B = B_h = α_m/2 (c_m/c = 1, F_m = 1):
    the high-k plateau of the curvature spectrum is α_m/2 (Elfouhaily et al. 1997, eqs 40–44)."""
    for u in (5.0, 10.0, 15.0):
        k = np.array([spectra.ELFOUHAILY_MINIMUM_WAVENUMBER])
        curvature = k**3 * spectra.elfouhaily(k, wind_speed=u)
        ustar = spectra.elfouhaily_friction_velocity(u, 0.84)
        alpha_m = spectra.elfouhaily_alpha_m(ustar)
        assert curvature[0] == pytest.approx(alpha_m / 2, rel=0.01)
    # the friction velocity of the log profile: u*/U10 ≈ 0.039 at 10 m/s, C_D ≈ 1.5e-3
    # (common practice: neutral drag coefficients 1.2–1.6e-3 at 10 m/s)
    assert spectra.elfouhaily_friction_velocity(10.0, 0.84) ** 2 / 100.0 == pytest.approx(1.45e-3, rel=0.1)


def test_alpha_m_branches_meet():
    """α_m = 0.01 at u* = c_m from both branches (Elfouhaily et al. 1997, eq. 44)."""
    assert spectra.elfouhaily_alpha_m(0.23) == pytest.approx(0.01, rel=1e-12)
    assert spectra.elfouhaily_alpha_m(0.23 * math.e) == pytest.approx(0.04, rel=1e-12)


def test_variance_is_finite_and_matches_the_sea_state():
    """∫S(k)dk through SeaState (S(ω) = S(k)/c_g) equals the direct k integral (Parseval of
    the change of variable), to 1e-4."""
    sea = SeaState((wind_sea(10.0, spectrum="elfouhaily"),), surface_tension=0.0728)
    k = np.geomspace(1e-4, 5e4, 400001)
    direct = integrate.trapezoid(spectra.elfouhaily(k, wind_speed=10.0), k)
    assert sea.statistics().m0 == pytest.approx(direct, rel=1e-4)
    # slope variance as a k integral, both ways
    k_high = 2 * math.pi / 0.01
    kk = k[k < k_high]
    assert sea.slope_variance(1e-4, k_high) == pytest.approx(
        integrate.trapezoid(kk**2 * spectra.elfouhaily(kk, wind_speed=10.0), kk), rel=1e-4
    )


# Cox & Munk (1954), clean surface: mss = 0.003 + 5.12e-3 U ± 0.004, U at 12.5 m. The total
# as quoted in Advances in Geosciences ("Rough sea surface reflection: Cox and Munk MSS",
# eq. 3; the ± 0.004 from memory); its two components, up-wind 3.16e-3 U and cross-wind
# 0.003 + 1.92e-3 U, as in Mobley's Ocean Optics Web Book ("Cox-Munk sea surface slope
# statistics").
def cox_munk(u):
    return 0.003 + 5.12e-3 * u


@pytest.mark.parametrize("wind", [7.0, 10.0, 12.0, 15.0])
def test_mean_square_slope_to_one_centimetre_against_cox_munk(wind):
    """mss of a fully developed unified spectrum over waves longer than 1 cm within 15 % of
    Cox & Munk's clean-surface fit (Elfouhaily et al. 1997 built the spectrum to match it)."""
    sea = SeaState((wind_sea(wind, spectrum="elfouhaily"),))
    mss = sea.slope_variance(1e-4, 2 * math.pi / 0.01)
    assert mss == pytest.approx(cox_munk(wind), rel=0.15)


def test_mean_square_slope_at_three_metres_per_second_within_cox_munks_scatter():
    """At 3 m/s the long-wave part alone gives 0.021 against Cox & Munk's 0.018: 20 % high,
    outside 15 %, but inside their fit's own ± 0.004 (Cox & Munk 1954)."""
    sea = SeaState((wind_sea(3.0, spectrum="elfouhaily"),))
    mss = sea.slope_variance(1e-4, 2 * math.pi / 0.01)
    assert abs(mss - cox_munk(3.0)) < 0.004
    assert mss / cox_munk(3.0) == pytest.approx(1.20, abs=0.03)


def test_spreading_integrates_to_one_and_narrows_at_the_peak():
    """Φ = (1 + Δ cos 2θ)/2π integrates to 1 for any Δ; Δ → tanh(ln2/4 + 4) ≈ 0.999 at the
    peak (c = c_p, short-wave term negligible) and small in between (Elfouhaily et al. 1997)."""
    theta = np.linspace(-math.pi, math.pi, 4001)
    for delta in (0.0, 0.3, 0.99):
        assert integrate.trapezoid(elfouhaily_spreading(theta, delta), theta) == pytest.approx(1.0, abs=1e-12)
        value = spreading("elfouhaily", theta, 1.0, delta=delta, suppress_opposing=True)
        assert integrate.trapezoid(value, theta) == pytest.approx(1.0, abs=1e-3)
    assert float(elfouhaily_delta(1.0, 0.0, 0.0)) == pytest.approx(math.tanh(math.log(2) / 4 + 4), rel=1e-12)
    component = wind_sea(10.0, spectrum="elfouhaily", spreading="elfouhaily")
    deltas = component.elfouhaily_delta(np.array([0.0692, 5.0, 370.0]), spectra.GRAVITY)
    assert deltas[0] > 0.99 and deltas[1] < 0.3 and 0.2 < deltas[2] < 0.6
    with pytest.raises(ValueError, match="delta"):
        spreading("elfouhaily", theta, 1.0)


def test_sizing_errors_name_the_key():
    with pytest.raises(ValueError, match="spectrum: 'elfouhaily' cannot be sized by height and period"):
        height_period(2.0, 8.0, spectrum="elfouhaily")
