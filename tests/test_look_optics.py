"""The look's optics and sky against their sources."""

from __future__ import annotations

import math

import numpy as np
import pytest

from oceanfield.look import (EARTH_RADIUS, SUN_ANGULAR_RADIUS, Sky, air_mass, cox_munk_slope_variance,
                             fresnel_unpolarised, horizon_dip, tone_map)


def test_fresnel_at_normal_incidence_is_the_textbook_value():
    """R(0) = ((n − 1)/(n + 1))² = 0.0204 for n = 1.333 (Born & Wolf §1.5)."""
    assert fresnel_unpolarised(1.0) == pytest.approx(((1.333 - 1) / 2.333) ** 2, rel=1e-12)
    assert fresnel_unpolarised(1.0) == pytest.approx(0.0204, abs=5e-5)
    assert fresnel_unpolarised(0.0) == pytest.approx(1.0)


def test_fresnel_matches_the_angle_form_of_the_equations():
    """r_s = −sin(i − t)/sin(i + t), r_p = tan(i − t)/tan(i + t) (Fresnel 1823; Born & Wolf
    §1.5 eqs. for the reflected amplitudes), with Snell's law sin t = sin i / n."""
    i = np.radians(np.linspace(1.0, 89.0, 40))
    t = np.arcsin(np.sin(i) / 1.333)
    expected = 0.5 * ((np.sin(i - t) / np.sin(i + t)) ** 2 + (np.tan(i - t) / np.tan(i + t)) ** 2)
    np.testing.assert_allclose(fresnel_unpolarised(np.cos(i)), expected, rtol=1e-10)


def test_brewster_angle_reflects_only_the_s_polarisation():
    """At tan i_B = n the p reflection vanishes (Brewster 1815): R = r_s²/2, 0.0369 for water."""
    i = math.atan(1.333)
    t = math.asin(math.sin(i) / 1.333)
    r_s = math.sin(i - t) / math.sin(i + t)
    assert fresnel_unpolarised(math.cos(i)) == pytest.approx(0.5 * r_s**2, rel=1e-10)


def test_cox_and_munk_total_slope_variance():
    """The paper fits the total, 0.003 + 5.12e-3 U ± 0.004 (0.054 at 10 m/s; PHYSICS.md §11),
    apart from its two components, which sum to 0.003 + 5.08e-3 U: within the total's
    scatter at every wind the fits cover (Cox & Munk 1954: up to 14 m/s)."""
    for u in (1.0, 5.0, 10.0, 14.0):
        upwind, crosswind = cox_munk_slope_variance(u)
        assert upwind + crosswind == pytest.approx(0.003 + 5.12e-3 * u, abs=0.004)
    upwind, crosswind = cox_munk_slope_variance(10.0)
    assert upwind + crosswind == pytest.approx(0.0538, abs=1e-4)
    assert upwind > crosswind  # the upwind slopes are the steeper (Cox & Munk 1954)


def test_the_horizon_dip_is_the_tangent_to_the_sphere():
    """arccos(R/(R + h)) ≈ √(2h/R): 0.1015° at 10 m, 0.321° at 100 m."""
    for h in (1.0, 10.0, 100.0, 1000.0):
        assert float(horizon_dip(h)) == pytest.approx(math.sqrt(2.0 * h / EARTH_RADIUS), rel=1e-3)
    assert math.degrees(float(horizon_dip(10.0))) == pytest.approx(0.1015, abs=1e-4)


def test_the_suns_disc_is_a_quarter_degree_across():
    assert math.degrees(2 * SUN_ANGULAR_RADIUS) == pytest.approx(0.533, abs=1e-3)  # 31.99′ (Astronomical Almanac)


def test_air_mass_is_one_at_the_zenith_and_about_38_at_the_horizon():
    """Kasten & Young (1989): m(0°) = 1, m(60°) ≈ 1.99, m(90°) ≈ 38.09 (their table)."""
    assert float(air_mass(0.0)) == pytest.approx(1.0, abs=1e-3)
    assert float(air_mass(math.radians(60.0))) == pytest.approx(1.99, abs=0.01)
    assert float(air_mass(math.radians(90.0))) == pytest.approx(38.09, rel=0.01)


def test_the_sky_is_the_zenith_luminance_at_the_zenith():
    """Preetham et al. (1999): Y(θ, γ) = Y_z F(θ, γ)/F(0, θs), so the zenith is Y_z; and
    the sky is bluer at the zenith than at the horizon (Rayleigh scattering)."""
    sky = Sky(math.radians(30.0), 0.5, 3.0)
    zenith = sky.radiance(np.array([0.0, 0.0, 1.0]))
    luminance = zenith @ np.array([0.2126, 0.7152, 0.0722])  # sRGB's Y row (IEC 61966-2-1)
    assert luminance == pytest.approx(sky.zenith()[0], rel=2e-3)
    horizon = sky.radiance(np.array([-math.cos(0.5), -math.sin(0.5), 0.02]))
    assert zenith[2] / zenith[0] > horizon[2] / horizon[0]


def test_the_sun_dims_and_reddens_toward_the_horizon():
    high, low = Sky(math.radians(60.0), 0.0).sun_radiance(), Sky(math.radians(5.0), 0.0).sun_radiance()
    assert np.all(low < high)
    assert low[2] / low[0] < high[2] / high[0]


def test_the_downwelling_irradiance_of_a_sky_of_one_radiance_is_pi():
    """∫ L cos θ dω = π L over the hemisphere: the quadrature, with the sky's radiance set to 1."""
    sky = Sky(math.radians(45.0), 0.0)

    class Uniform(Sky):
        def radiance(self, directions):
            return np.ones(np.shape(directions))

        def sun_irradiance(self):
            return np.zeros(3)

    uniform = Uniform(sky.sun_elevation, sky.sun_azimuth)
    np.testing.assert_allclose(uniform.downwelling_irradiance(), math.pi, rtol=1e-3)


def test_the_airs_visual_range_is_tens_of_kilometres_in_a_clear_sky():
    """Koschmieder (1924): visual range 3.912/σ; a clear sky (T = 3) sees some 20 km, a very
    clear one (T = 2) about twice as far, thick haze (T = 8) a few km (Preetham et al.
    1999 relate turbidity to visibility in the same way; common practice)."""
    ranges = {t: 3.912 / Sky(0.5, 0.0, t).extinction()[1] for t in (2.0, 3.0, 8.0)}
    assert 15e3 < ranges[3.0] < 30e3
    assert ranges[2.0] > 1.8 * ranges[3.0]
    assert ranges[8.0] < 8e3
    red, green, blue = Sky(0.5, 0.0, 3.0).extinction()
    assert red < green < blue  # blue light is scattered most


@pytest.mark.parametrize("turbidity", [1.0, 11.0])
def test_turbidity_outside_the_model_is_refused(turbidity):
    with pytest.raises(ValueError, match="turbidity"):
        Sky(0.5, 0.0, turbidity)


def test_tone_map_is_srgb_of_the_highlight_curve():
    """0 → 0; the sRGB encoding of 0.18 through x(1 + x/64)/(1 + x) (IEC 61966-2-1)."""
    assert float(tone_map(np.array(0.0))) == 0.0
    x = 0.18 * (1 + 0.18 / 64) / 1.18
    assert float(tone_map(np.array(0.18))) == pytest.approx(1.055 * x ** (1 / 2.4) - 0.055, rel=1e-12)
    assert float(tone_map(np.array(8.0))) == pytest.approx(1.0)
