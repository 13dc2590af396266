"""Tests for oceanfield.seastate: components, constructors, moments and statistics."""

from __future__ import annotations

import math
import re

import numpy as np
import pytest
from hypothesis import assume, given, settings
from hypothesis import strategies as st
from scipy import integrate

from oceanfield.physics import spectra
from oceanfield.physics.constants import GRAVITY, WIND_RATIO_19_5_TO_10
from oceanfield.physics.dispersion import wavenumber
from oceanfield.physics.seastate import (
    BEAUFORT,
    Component,
    SeaState,
    beaufort_force,
    beaufort_sea,
    beaufort_wind_speed,
    height_period,
    wind_sea,
)
from tolerances import (
    MOMENT,
    NORMALISATION,
    PERIOD_RATIO,
    PRINTED_3_FIGURES,
    PRINTED_4_FIGURES,
    ROUNDOFF,
    SPECTRAL_INTEGRAL,
)

G_981 = 9.81  # the value of g the published check values below were worked with


def _stats(*components, **sea):
    return SeaState(components, **sea).statistics()


def _quad_moment(sea: SeaState, order: int) -> float:
    """m_n = ∫ω^n S(ω) dω by scipy's adaptive quadrature, split at each component's peak."""
    peaks = sorted(c.peak_frequency for c in sea.components)
    edges = [0.0, *(p * f for p in peaks for f in (0.5, 1.0, 2.0)), np.inf]
    edges = sorted(set(edges))

    def integrand(w: float) -> float:
        return w**order * float(sea.frequency_spectrum(np.array([w]))[0])

    return sum(
        integrate.quad(integrand, a, b, limit=400, epsabs=0.0, epsrel=1e-11)[0] for a, b in zip(edges[:-1], edges[1:])
    )


def _angle_difference(a: float, b: float) -> float:
    return abs(math.remainder(a - b, 2 * math.pi))


# -- Pierson–Moskowitz fully developed sea --------------------------------------------------


@pytest.mark.parametrize("wind_19_5, hs, tp", [(10.0, 2.133, 7.30), (15.0, 4.799, 10.95), (20.0, 8.532, 14.60)])
def test_fully_developed_sea(wind_19_5, hs, tp):
    """A fully developed sea: Hs = 2√(α/β) U19.5²/g = 0.2092 U19.5²/g and Tp = 2π U19.5/(0.8772 g)
    (Pierson & Moskowitz 1964, α = 8.1e-3, β = 0.74; g = 9.81; 0.5 %, as the printed rounding allows)."""
    component = wind_sea(wind_19_5 / WIND_RATIO_19_5_TO_10, gravity=G_981)
    assert component.spectrum == "pierson_moskowitz"
    stats = _stats(component, gravity=G_981)
    assert stats.hs == pytest.approx(hs, rel=PRINTED_3_FIGURES)
    assert stats.tp == pytest.approx(tp, rel=PRINTED_3_FIGURES)
    # the dimensionless height, exactly 2√(α/β) (derived from Pierson & Moskowitz 1964)
    assert stats.hs * G_981 / wind_19_5**2 == pytest.approx(2 * math.sqrt(8.1e-3 / 0.74), rel=1e-6)
    assert stats.hs * G_981 / wind_19_5**2 == pytest.approx(0.21, rel=PRINTED_3_FIGURES)  # Stewart 2008, §16.5


def test_fully_developed_sea_from_wind_at_10_m():
    """U10 = 15 m/s → Hs = 5.05 m, Tp = 11.24 s (Pierson & Moskowitz 1964 with U19.5 = 1.026 U10,
    Stewart 2008 §16.5; g = 9.81; derived, 0.5 %)."""
    stats = _stats(wind_sea(15.0, gravity=G_981), gravity=G_981)
    assert stats.hs == pytest.approx(5.05, rel=PRINTED_3_FIGURES)
    assert stats.tp == pytest.approx(11.24, rel=PRINTED_3_FIGURES)


# -- JONSWAP fetch-limited growth -----------------------------------------------------------


def test_fetch_limited_example_20_m_s_100_km():
    """U10 = 20 m/s, F = 100 km: α = 0.01365, ωp = 0.800 rad/s (Stewart 2008, eqs 16.37–16.38,
    after Hasselmann et al. 1973) and, integrating the γ = 3.3 spectrum, Hs = 3.95 m (derived);
    g = 9.81."""
    component = wind_sea(20.0, fetch=1.0e5, gravity=G_981)
    assert component.spectrum == "jonswap" and component.gamma == 3.3
    assert component.alpha == pytest.approx(0.01365, rel=PRINTED_4_FIGURES)
    assert component.peak_frequency == pytest.approx(0.800, rel=PRINTED_3_FIGURES)
    stats = _stats(component, gravity=G_981)
    assert stats.hs == pytest.approx(3.95, rel=PRINTED_3_FIGURES)
    assert stats.tp == pytest.approx(7.85, rel=PRINTED_3_FIGURES)


@pytest.mark.parametrize("wind, fetch", [(8.0, 5.0e3), (12.0, 3.0e4), (20.0, 1.0e5), (30.0, 3.0e5)])
def test_fetch_limited_parameters_follow_the_laws(wind, fetch):
    """A fetch-limited wind sea takes α and ωp from the JONSWAP laws (Stewart 2008, eqs 16.37–16.38)."""
    component = wind_sea(wind, fetch=fetch)
    assert component.spectrum == "jonswap"
    assert component.alpha == pytest.approx(0.076 * (wind**2 / (fetch * GRAVITY)) ** 0.22, rel=ROUNDOFF)
    assert component.peak_frequency == pytest.approx(22.0 * (GRAVITY**2 / (wind * fetch)) ** (1 / 3), rel=ROUNDOFF)


@pytest.mark.parametrize("wind", [10.0, 20.0])
def test_height_grows_with_fetch_and_saturates(wind):
    """Hs rises with fetch (Hasselmann et al. 1973) and stops at the fully developed sea
    (Pierson & Moskowitz 1964); beyond the switch the sea *is* the fully developed one
    (common practice: seas saturate)."""
    developed = wind_sea(wind)
    developed_hs = 4 * math.sqrt(SeaState((developed,)).moment(0))
    heights, names = [], []
    for fetch in np.geomspace(1e3, 5e6, 30):
        component = wind_sea(wind, fetch=fetch)
        heights.append(4 * math.sqrt(SeaState((component,)).moment(0)))
        names.append(component.spectrum)
        if component.spectrum == "pierson_moskowitz":
            assert component == developed
    heights = np.array(heights)
    assert np.all(np.diff(heights) >= 0)
    assert names[0] == "jonswap" and names[-1] == "pierson_moskowitz"
    assert np.all(heights <= developed_hs * (1 + ROUNDOFF))
    assert heights[-1] == pytest.approx(developed_hs, rel=ROUNDOFF)


# -- (Hs, Tp) form --------------------------------------------------------------------------


@pytest.mark.parametrize(
    "spectrum, gamma, depth",
    [("jonswap", g, np.inf) for g in (1.0, 2.0, 3.3, 5.0, 7.0)]
    + [("pierson_moskowitz", 1.0, np.inf)]
    + [("tma", 3.3, h) for h in (3.0, 10.0, 40.0)],
)
def test_height_period_sizes_the_sea_exactly(spectrum, gamma, depth):
    """4√m0 = Hs to 1e-9 (Hm0, WMO-No. 702), by the module's moments and by scipy quad."""
    component = height_period(2.5, 7.0, spectrum=spectrum, gamma=gamma, depth=depth)
    sea = SeaState((component,), depth=depth)
    assert sea.statistics().hs == pytest.approx(2.5, rel=NORMALISATION)
    assert 4 * math.sqrt(_quad_moment(sea, 0)) == pytest.approx(2.5, rel=NORMALISATION)
    if spectrum == "tma":
        # The depth factor moves the peak; the parameter is set so the actual peak is Tp.
        assert sea.statistics().tp == pytest.approx(7.0, rel=1e-8)
    else:
        assert component.peak_frequency == pytest.approx(2 * np.pi / 7.0, rel=ROUNDOFF)


@pytest.mark.parametrize("gamma, tm01, tm02", [(3.3, 0.8343, 0.7774), (1.0, 0.7718, 0.7104)])
def test_mean_periods_over_peak_period(gamma, tm01, tm02):
    """Tm01/Tp and Tm02/Tp of the DNV-RP-C205 (Hs, Tp) JONSWAP form (derived; 4 decimals)."""
    stats = _stats(height_period(2.5, 7.0, gamma=gamma))
    assert stats.tm01 / stats.tp == pytest.approx(tm01, abs=PERIOD_RATIO)
    assert stats.tm02 / stats.tp == pytest.approx(tm02, abs=PERIOD_RATIO)


def test_pierson_moskowitz_shape_against_mhkit():
    """Where mhkit is installed: its (Hs, Tp) PM and JONSWAP shapes (DNV-RP-C205 / IEC TS
    62600-2) equal ours up to the constant (mhkit scales by 1 − 0.287 ln γ, we fit 4√m0)."""
    resource = pytest.importorskip("mhkit.wave.resource")
    f = np.linspace(0.01, 2.0, 1991)
    for spectrum, gamma in (("pierson_moskowitz", 1.0), ("jonswap", 3.3)):
        if spectrum == "pierson_moskowitz":
            theirs = np.asarray(resource.pierson_moskowitz_spectrum(f.copy(), 10.0, 2.0)).ravel()
        else:
            theirs = np.asarray(resource.jonswap_spectrum(f.copy(), 10.0, 2.0, gamma=gamma)).ravel()
        component = height_period(2.0, 10.0, spectrum=spectrum, gamma=gamma)
        ours = 2 * np.pi * SeaState((component,)).frequency_spectrum(2 * np.pi * f)
        resolved = theirs > 1e-200
        np.testing.assert_allclose(ours[resolved] / ours.max(), theirs[resolved] / theirs.max(), rtol=1e-6)


# -- moments and statistics -----------------------------------------------------------------


def _mixed_sea() -> SeaState:
    """A wind sea over a long swell in 25 m of water, with surface tension."""
    return SeaState(
        (
            height_period(2.0, 8.0, direction=0.3),
            height_period(1.0, 14.0, gamma=5.0, spectrum="tma", direction=-1.0, spread=math.radians(10)),
        ),
        depth=25.0,
        surface_tension=0.0728,
    )


@pytest.mark.parametrize("order", [0, 1, 2])
def test_moments_match_adaptive_quadrature(order):
    """m_n = ∫ω^n S(ω) dω (WMO-No. 702) against scipy quad on the same S(ω), within 0.1 %."""
    sea = _mixed_sea()
    assert sea.moment(order) == pytest.approx(_quad_moment(sea, order), rel=MOMENT)


def test_statistics_from_moments():
    """Hm0 = 4√m0, Tm01 = 2π m0/m1, Tm02 = 2π√(m0/m2) with ω moments (WMO-No. 702)."""
    sea = _mixed_sea()
    stats = sea.statistics()
    m0, m1, m2 = (sea.moment(n) for n in (0, 1, 2))
    assert stats.m0 == pytest.approx(m0, rel=ROUNDOFF)
    assert stats.hs == pytest.approx(4 * math.sqrt(m0), rel=ROUNDOFF)
    assert stats.tm01 == pytest.approx(2 * np.pi * m0 / m1, rel=ROUNDOFF)
    assert stats.tm02 == pytest.approx(2 * np.pi * math.sqrt(m0 / m2), rel=ROUNDOFF)
    # the total is the sum of the parts (variance adds for independent systems)
    parts = sea.component_statistics()
    assert sum(p.m0 for p in parts) == pytest.approx(stats.m0, rel=ROUNDOFF)


def test_peak_period_and_wavelength_deep_water():
    """Tp = 2π/ωp, and in deep water λp = g Tp²/2π (Stewart 2008, §16.2), c_g = c/2."""
    stats = _stats(height_period(3.0, 9.0, gamma=3.3))
    assert stats.tp == pytest.approx(9.0, rel=1e-6)
    assert stats.peak_wavelength == pytest.approx(GRAVITY * stats.tp**2 / (2 * np.pi), rel=1e-9)
    assert stats.peak_group_speed == pytest.approx(stats.peak_phase_speed / 2, rel=1e-9)


def test_peak_of_two_systems_is_the_higher_one():
    """Tp is the period of the spectrum's global maximum (WMO-No. 702): the swell's here."""
    stats = _stats(height_period(1.0, 6.0), height_period(2.0, 13.0, gamma=7.0))
    assert stats.tp == pytest.approx(13.0, rel=1e-6)
    stats = _stats(height_period(3.0, 6.0), height_period(0.3, 13.0))
    # the other system's tail tilts the sum, moving its maximum by ~1e-5 of the period
    assert stats.tp == pytest.approx(6.0, rel=1e-4)


def test_peak_wavelength_finite_depth():
    """λp = 2π/k(ωp, h) from the finite-depth dispersion relation (Stewart 2008, eq. 16.3)."""
    stats = _stats(height_period(1.5, 10.0, gamma=3.3), depth=8.0)
    assert stats.peak_wavelength == pytest.approx(2 * np.pi / float(wavenumber(2 * np.pi / stats.tp, 8.0)), rel=1e-9)
    assert stats.peak_wavelength < GRAVITY * stats.tp**2 / (2 * np.pi)


def test_significant_steepness():
    """S_p = 2π Hs/(g Tp²) (DNV-RP-C205 §3.5.5.4, from memory), which is Hs/λp in deep water."""
    stats = _stats(height_period(2.5, 7.0))
    assert stats.significant_steepness == pytest.approx(2 * np.pi * 2.5 / (GRAVITY * stats.tp**2), rel=1e-9)
    assert stats.significant_steepness == pytest.approx(stats.hs / stats.peak_wavelength, rel=1e-9)


@pytest.mark.parametrize("degrees", [0.0, 30.0, 90.0, -120.0, 179.0, 180.0, -179.0, 181.0, 540.0])
def test_mean_direction_of_a_single_system(degrees):
    """The mean direction atan2(b1, a1) of one system is its own direction, across ±180°
    (Kuik, van Vledder & Holthuijsen 1988)."""
    stats = _stats(height_period(2.0, 8.0, direction=math.radians(degrees)))
    assert _angle_difference(stats.mean_direction, math.radians(degrees)) < 1e-9
    assert -math.pi < stats.mean_direction <= math.pi


@pytest.mark.parametrize("spreading", ["mitsuyasu", "hasselmann", "donelan_banner", "cos2"])
def test_mean_direction_for_each_spreading_model(spreading):
    """Symmetric spreading keeps the mean direction (Kuik et al. 1988); wrapped across 180°."""
    for suppress in (False, True):
        component = height_period(2.0, 8.0, direction=math.radians(-178.0), spreading=spreading,
                                  wind_speed=12.0, suppress_opposing=suppress)
        stats = _stats(component)
        if spreading == "cos2" and not suppress:
            assert stats.directional_spread == pytest.approx(math.sqrt(2.0), rel=1e-6)  # R1 = 0
            continue
        assert _angle_difference(stats.mean_direction, math.radians(-178.0)) < 1e-9


@pytest.mark.parametrize("spread_degrees", [10.0, 30.0, 60.0])
def test_directional_spread_round_trip(spread_degrees):
    """σθ = √(2(1 − R1)) measured on the sea equals the spread it was built with (Kuik et al. 1988;
    cos-2s with s = 2/σθ² − 1, Longuet-Higgins et al. 1963)."""
    stats = _stats(height_period(2.0, 8.0, spread=math.radians(spread_degrees)))
    assert math.degrees(stats.directional_spread) == pytest.approx(spread_degrees, abs=1e-6)


def test_two_crossing_systems():
    """Equal systems at ±45°: mean direction 0 and R1 = cos 45° · s/(s+1), so the spread widens
    to √(2(1 − R1)) (derived from Kuik et al. 1988)."""
    s = 10.0
    one = height_period(2.0, 8.0, direction=math.radians(45.0))
    other = height_period(2.0, 8.0, direction=math.radians(-45.0))
    stats = _stats(one, other)
    single = _stats(one)
    assert abs(stats.mean_direction) < 1e-9
    expected = math.sqrt(2 * (1 - math.cos(math.pi / 4) * s / (s + 1)))
    assert stats.directional_spread == pytest.approx(expected, rel=1e-9)
    assert stats.directional_spread > single.directional_spread
    assert single.directional_spread == pytest.approx(math.sqrt(2 / (s + 1)), rel=1e-9)


def test_band_variance_splits_additively():
    """The variance in [0, ∞) is m0, and bands add up (WMO-No. 702: m0 is the variance)."""
    sea = _mixed_sea()
    m0 = sea.moment(0)
    assert sea.band_variance(0.0, np.inf) == pytest.approx(m0, rel=NORMALISATION)
    cuts = [0.0, 0.02, 0.05, 0.1, 0.3, 1.0, 10.0, np.inf]
    bands = [sea.band_variance(a, b) for a, b in zip(cuts[:-1], cuts[1:])]
    assert all(b >= 0 for b in bands)
    assert sum(bands) == pytest.approx(m0, rel=NORMALISATION)
    assert sea.band_variance(0.1, 0.1) == 0.0


def test_directional_spectrum_integrates_to_m0():
    """∫Ψ(kx, ky) dkx dky = m0 with Ψ = S(ω) D(θ; ω) (dω/dk)/k (the design's spectrum-to-lattice
    convention), on a polar grid, in finite depth with frequency-dependent spreading."""
    sea = SeaState((height_period(2.0, 8.0, direction=0.3, spreading="mitsuyasu", wind_speed=12.0),), depth=25.0)
    u = np.linspace(math.log(1e-3), math.log(30.0), 2001)
    k = np.exp(u)
    theta = np.linspace(-math.pi, math.pi, 361)[:-1]
    kk, tt = np.meshgrid(k, theta, indexing="ij")
    psi = sea.directional_spectrum(kk * np.cos(tt), kk * np.sin(tt))
    total = integrate.trapezoid(psi.sum(axis=1) * (2 * math.pi / theta.size) * k * k, u)
    assert total == pytest.approx(sea.moment(0), rel=SPECTRAL_INTEGRAL)
    assert float(sea.directional_spectrum(0.0, 0.0)) == 0.0


def test_phillips_component_reproduces_the_wavenumber_form():
    """A Phillips component spread by cos²θ/π gives Tessendorf's (2001) P_h(k) = A exp(−1/(kL)²)
    |k̂·ŵ|² exp(−k²l²)/k⁴ with A = α/2π (derived: Ψ = S(ω) D (dω/dk)/k, deep water)."""
    wind, cutoff, alpha = 12.0, 0.3, 8.1e-3
    component = Component("phillips", spectra.phillips_peak_frequency(wind), alpha, gamma=1.0, wind_speed=wind,
                          direction=0.4, spreading="cos2", cutoff_length=cutoff)
    sea = SeaState((component,))
    kx, ky = np.meshgrid(np.linspace(-2, 2, 41), np.linspace(-2, 2, 41))
    expected = spectra.phillips_wavenumber(kx, ky, amplitude=alpha / (2 * np.pi), wind_speed=wind,
                                           wind_direction=0.4, cutoff_length=cutoff)
    np.testing.assert_allclose(sea.directional_spectrum(kx, ky), expected, rtol=1e-9, atol=1e-300)


# -- Beaufort -------------------------------------------------------------------------------

# WMO Beaufort scale as reproduced by the UK Met Office: force → wind at 10 m in m/s
# (lowest, highest), probable and maximum wave height in m.
WMO_BEAUFORT = {
    0: (0.0, 0.2, None, None),
    1: (0.3, 1.5, 0.1, 0.1),
    2: (1.6, 3.3, 0.2, 0.3),
    3: (3.4, 5.4, 0.6, 1.0),
    4: (5.5, 7.9, 1.0, 1.5),
    5: (8.0, 10.7, 2.0, 2.5),
    6: (10.8, 13.8, 3.0, 4.0),
    7: (13.9, 17.1, 4.0, 5.5),
    8: (17.2, 20.7, 5.5, 7.5),
    9: (20.8, 24.4, 7.0, 10.0),
    10: (24.5, 28.4, 9.0, 12.5),
    11: (28.5, 32.6, 11.5, 16.0),
    12: (32.7, None, 14.0, None),
}


def test_beaufort_table():
    """The module's table is the WMO scale (UK Met Office reproduction)."""
    assert set(BEAUFORT) == set(WMO_BEAUFORT)
    for force, (low, high, probable, highest) in WMO_BEAUFORT.items():
        ours = BEAUFORT[force]
        assert ours[0] == low and ours[1] == high
        if probable is not None:
            assert ours[2] == probable
        if highest is not None:
            assert ours[3] == highest


@pytest.mark.parametrize("force", range(13))
def test_beaufort_midpoint_maps_back(force):
    """Each force's representative speed (the middle of its WMO range) lies in that force."""
    low, high, _, _ = WMO_BEAUFORT[force]
    speed = beaufort_wind_speed(force)
    if high is not None:
        assert speed == pytest.approx(0.5 * (low + high), rel=ROUNDOFF)
    else:
        assert speed > low
    assert beaufort_force(speed) == force
    assert beaufort_force(low) == force
    if high is not None:
        assert beaufort_force(high) == force


def test_beaufort_statistics_field():
    """A wind-driven sea reports its wind's force; one without wind, the force whose WMO probable
    height is nearest its Hs."""
    assert _stats(wind_sea(12.3)).beaufort == 6
    assert _stats(height_period(3.0, 8.0)).beaufort == 6
    assert _stats(height_period(0.6, 4.0)).beaufort == 3


def test_stronger_wind_gives_higher_longer_waves():
    """As the wind rises the peak moves to lower frequency and Hs rises (common practice;
    Pierson & Moskowitz 1964: ωp ∝ 1/U, Hs ∝ U²), by Beaufort force and at a fixed fetch."""
    seas = [SeaState((beaufort_sea(force),)) for force in range(1, 13)]
    peaks = np.array([s.peak_frequency() for s in seas])
    heights = np.array([4 * math.sqrt(s.moment(0)) for s in seas])
    assert np.all(np.diff(peaks) < 0) and np.all(np.diff(heights) > 0)
    seas = [SeaState((wind_sea(u, fetch=5.0e4),)) for u in (2.0, 4.0, 6.0, 8.0, 12.0, 20.0, 30.0, 40.0)]
    peaks = np.array([s.peak_frequency() for s in seas])
    heights = np.array([4 * math.sqrt(s.moment(0)) for s in seas])
    assert np.all(np.diff(peaks) < 0) and np.all(np.diff(heights) > 0)


# -- property-based -------------------------------------------------------------------------


@settings(max_examples=50, deadline=None)
@given(
    hs=st.floats(0.01, 20.0),
    tp=st.floats(1.0, 25.0),
    gamma=st.floats(1.0, 10.0),
    spectrum=st.sampled_from(["jonswap", "pierson_moskowitz", "tma"]),
    depth=st.one_of(st.floats(1.0, 1e3), st.just(math.inf)),
    spreading=st.sampled_from(["cos2s", "cos2", "mitsuyasu", "hasselmann", "donelan_banner"]),
)
def test_height_period_property(hs, tp, gamma, spectrum, depth, spreading):
    """Property: over the valid (Hs, Tp, γ, depth) space the sea is sized exactly (4√m0 = Hs),
    its moments are positive and finite, and no NaN reaches the directional spectrum. Seas
    steeper than the breaking limit Hs/λ0 = 1/7 (Michell 1893, for a single deep-water wave;
    from memory) or higher than 0.78 h (McCowan 1894; from memory) are outside it."""
    assume(hs * 2 * math.pi / (GRAVITY * tp**2) <= 1 / 7 and hs <= 0.78 * depth)
    component = height_period(hs, tp, spectrum=spectrum, gamma=gamma, depth=depth, spreading=spreading)
    sea = SeaState((component,), depth=depth)
    moments = [sea.moment(n) for n in (0, 1, 2)]
    assert all(math.isfinite(m) and m > 0 for m in moments)
    assert 4 * math.sqrt(moments[0]) == pytest.approx(hs, rel=NORMALISATION)
    k = np.linspace(-1.0, 1.0, 9) * 4 * float(wavenumber(component.peak_frequency, depth))
    psi = sea.directional_spectrum(k[None, :], k[:, None])
    assert np.all(np.isfinite(psi)) and np.all(psi >= 0)


@settings(max_examples=50, deadline=None)
@given(
    wind=st.floats(0.5, 75.0),
    fetch=st.one_of(st.none(), st.floats(100.0, 5.0e6)),
    spectrum=st.sampled_from(["jonswap", "pierson_moskowitz", "tma", "phillips"]),
    depth=st.one_of(st.floats(1.0, 1e3), st.just(math.inf)),
)
def test_wind_sea_property(wind, fetch, spectrum, depth):
    """Property: any valid wind sea has finite positive moments and a finite, non-negative spectrum."""
    component = wind_sea(wind, fetch=fetch, spectrum=spectrum, depth=depth)
    sea = SeaState((component,), depth=depth)
    moments = [sea.moment(n) for n in (0, 1, 2)]
    assert all(math.isfinite(m) and m > 0 for m in moments)
    omega = np.geomspace(1e-3, 1e3, 50) * component.peak_frequency
    density = sea.frequency_spectrum(np.concatenate([[0.0], omega]))
    assert np.all(np.isfinite(density)) and np.all(density >= 0)


# -- bad input ------------------------------------------------------------------------------


def _refused(name: str, value, allowed: str) -> str:
    """The one-line message pattern: parameter, the value received, what is allowed."""
    return rf"^{re.escape(name)}: {re.escape(repr(value))} .*allowed: {re.escape(allowed)}"


NOT_FINITE = [math.nan, math.inf, -math.inf]


@pytest.mark.parametrize("value", [*NOT_FINITE, -5.0, 0.0, 76.0, "strong", True, None])
def test_bad_wind_speed(value):
    """Wind speed at 10 m: > 0 and ≤ 75 m/s."""
    with pytest.raises(ValueError, match=_refused("wind_speed", value, "> 0 and <= 75")):
        wind_sea(value)
    if value is not None:
        with pytest.raises(ValueError, match=_refused("wind_speed", value, "> 0 and <= 75")):
            height_period(2.0, 8.0, wind_speed=value)


@pytest.mark.parametrize("value", [*NOT_FINITE, -1.0, 0.0, 6.0e6, "far"])
def test_bad_fetch(value):
    """Fetch: > 0 and ≤ 5000 km."""
    with pytest.raises(ValueError, match=_refused("fetch", value, "> 0 and <= 5e+06")):
        wind_sea(10.0, fetch=value)


@pytest.mark.parametrize("value", [math.nan, -math.inf, -1.0, 0.0, "shallow"])
def test_bad_depth(value):
    """Depth: > 0 metres, or inf for deep water."""
    pattern = _refused("depth", value, "> 0 metres or inf (deep)")
    with pytest.raises(ValueError, match=pattern):
        wind_sea(10.0, depth=value)
    with pytest.raises(ValueError, match=pattern):
        height_period(2.0, 8.0, depth=value)
    with pytest.raises(ValueError, match=pattern):
        SeaState((height_period(2.0, 8.0),), depth=value)


@pytest.mark.parametrize("value", [*NOT_FINITE, -1.0, 0.0, 41.0, "big"])
def test_bad_significant_height(value):
    """Hs: > 0 and ≤ 40 m."""
    with pytest.raises(ValueError, match=_refused("hs", value, "> 0 and <= 40")):
        height_period(value, 8.0)


@pytest.mark.parametrize("value", [*NOT_FINITE, -1.0, 0.0, 61.0, False])
def test_bad_peak_period(value):
    """Tp: > 0 and ≤ 60 s."""
    with pytest.raises(ValueError, match=_refused("tp", value, "> 0 and <= 60")):
        height_period(2.0, value)


@pytest.mark.parametrize("value", [*NOT_FINITE, 0.5, 0.0, 11.0])
def test_bad_gamma(value):
    """Peak enhancement γ: ≥ 1 and ≤ 10."""
    pattern = _refused("gamma", value, ">= 1 and <= 10")
    with pytest.raises(ValueError, match=pattern):
        wind_sea(10.0, fetch=1e4, gamma=value)
    with pytest.raises(ValueError, match=pattern):
        height_period(2.0, 8.0, gamma=value)
    with pytest.raises(ValueError, match=pattern):
        Component("jonswap", 1.0, 0.01, gamma=value)


@pytest.mark.parametrize("value", [*NOT_FINITE, -0.1, 0.0, math.radians(0.4), math.radians(81.0)])
def test_bad_spread(value):
    """Directional spread σθ: 0.5° to 80°, in radians (Kuik et al. 1988: σθ < √2 rad)."""
    pattern = _refused("spread", value, f">= {math.radians(0.5):g} and <= {math.radians(80.0):g}")
    with pytest.raises(ValueError, match=pattern):
        height_period(2.0, 8.0, spread=value)
    with pytest.raises(ValueError, match=pattern):
        wind_sea(10.0, spreading="cos2s", spread=value)


@pytest.mark.parametrize("value", [*NOT_FINITE, 2.0e6, "north"])
def test_bad_direction(value):
    """Direction: a finite angle in radians, |θ| ≤ 1e6."""
    pattern = _refused("direction", value, "> -1e+06 and <= 1e+06")
    with pytest.raises(ValueError, match=pattern):
        height_period(2.0, 8.0, direction=value)
    with pytest.raises(ValueError, match=pattern):
        wind_sea(10.0, direction=value)


@pytest.mark.parametrize("value", ["JONSWAP", "bretschneider", ""])
def test_unknown_spectrum(value):
    """An unknown spectrum name lists the valid ones."""
    pattern = _refused("spectrum", value, "jonswap, pierson_moskowitz, tma, phillips")
    for build in (lambda: wind_sea(10.0, spectrum=value), lambda: height_period(2.0, 8.0, spectrum=value),
                  lambda: Component(value, 1.0, 0.01)):
        with pytest.raises(ValueError, match=pattern):
            build()


def test_impossibly_steep_sea_names_height_and_period():
    """Hs = 15 m at Tp = 1 s has no spectrum of sane scale: the message names hs and tp, not the
    derived Phillips constant."""
    with pytest.raises(ValueError, match=r"^hs: 15\.0 is too high for tp: 1\.0 .*allowed: alpha <= 1000"):
        height_period(15.0, 1.0, gamma=1.0)


def test_phillips_cannot_be_sized_by_height():
    """Phillips has no (Hs, Tp) form here; the message says what to use."""
    with pytest.raises(ValueError, match=r"^spectrum: 'phillips' cannot be sized .*allowed: jonswap"):
        height_period(2.0, 8.0, spectrum="phillips")
    with pytest.raises(ValueError, match=r"^wind_speed: None .*allowed: > 0 m/s"):
        Component("phillips", 1.0, 0.01)


@pytest.mark.parametrize("value", ["cos2S", "sech2", ""])
def test_unknown_spreading(value):
    """An unknown spreading name lists the valid ones."""
    pattern = _refused("spreading", value, "cos2s, cos2, mitsuyasu, hasselmann, donelan_banner")
    for build in (lambda: wind_sea(10.0, spreading=value), lambda: height_period(2.0, 8.0, spreading=value),
                  lambda: Component("jonswap", 1.0, 0.01, spreading=value)):
        with pytest.raises(ValueError, match=pattern):
            build()


@pytest.mark.parametrize("value", [0, 13, -1, 2.5, True, math.nan, "6", None])
def test_bad_beaufort_force(value):
    """A Beaufort sea needs an integer force from 1 to 12 (force 0 is calm: no waves)."""
    with pytest.raises(ValueError, match=_refused("beaufort", value, "an integer force from 1 to 12")):
        beaufort_sea(value)


@pytest.mark.parametrize("value", [13, -1, 2.5, True, math.nan, "six"])
def test_bad_beaufort_for_wind_speed(value):
    """The wind speed of a force exists for integer forces 0–12 only."""
    with pytest.raises(ValueError, match=rf"^beaufort: {re.escape(repr(value))} .*allowed: "):
        beaufort_wind_speed(value)


@pytest.mark.parametrize("value", [*NOT_FINITE, -0.1, 80.0])
def test_bad_wind_speed_for_beaufort_force(value):
    """The force of a wind speed needs a finite speed from 0 to 75 m/s."""
    with pytest.raises(ValueError, match=_refused("wind_speed", value, ">= 0 and <= 75")):
        beaufort_force(value)


@pytest.mark.parametrize(
    "name, value, allowed",
    [
        ("gravity", math.nan, "> 0 and <= 1000"),
        ("gravity", -9.8, "> 0 and <= 1000"),
        ("surface_tension", -0.07, ">= 0 and <= 1"),
        ("density", 0.0, "> 0 and <= 100000"),
    ],
)
def test_bad_fluid(name, value, allowed):
    """Gravity, surface tension and density of the sea are checked where it is built."""
    with pytest.raises(ValueError, match=_refused(name, value, allowed)):
        SeaState((height_period(2.0, 8.0),), **{name: value})
    if name == "gravity":
        with pytest.raises(ValueError, match=_refused(name, value, allowed)):
            wind_sea(10.0, gravity=value)
        with pytest.raises(ValueError, match=_refused(name, value, allowed)):
            height_period(2.0, 8.0, gravity=value)


@pytest.mark.parametrize(
    "field, value, allowed",
    [
        ("peak_frequency", 0.0, "> 0 and <= 10000"),
        ("alpha", -1.0, "> 0 and <= 1000"),
        ("spread_s", 0.0, "> 0 and <= 1e+06"),
        ("cutoff_length", -1.0, ">= 0 and <= 1000"),
        ("wind_speed", math.nan, "> 0 and <= 75"),
    ],
)
def test_bad_component_field(field, value, allowed):
    """A Component checks each field it is built with."""
    arguments = {"spectrum": "jonswap", "peak_frequency": 1.0, "alpha": 0.01, field: value}
    with pytest.raises(ValueError, match=_refused(field, value, allowed)):
        Component(**arguments)


def test_empty_sea_is_refused():
    """A sea needs at least one component."""
    with pytest.raises(ValueError, match=r"^components: .*allowed: one or more components"):
        SeaState(())


def test_fetch_limited_pierson_moskowitz_keeps_its_shape():
    """A Pierson–Moskowitz sea with a fetch takes the JONSWAP fetch laws' peak and level
    (Hasselmann et al. 1973; Stewart 2008 eqs 16.37–16.38) but keeps the PM shape: JONSWAP
    with γ = 1 is exactly PM, so no peak enhancement is added behind the user's back."""
    component = wind_sea(12.0, fetch=50e3, spectrum="pierson_moskowitz")
    assert component.gamma == 1.0
    assert component.peak_frequency == pytest.approx(22.0 * (GRAVITY**2 / (12.0 * 50e3)) ** (1 / 3), rel=1e-12)
    omega = np.linspace(0.3, 4.0, 50)
    pm = spectra.pierson_moskowitz(omega, peak_frequency=component.peak_frequency, alpha=component.alpha)
    np.testing.assert_allclose(SeaState((component,)).frequency_spectrum(omega), pm, rtol=1e-12)


def test_statistics_are_computed_once_per_set_of_components():
    """A one-component sea's own figures are its total (the render's warnings and its
    Ocean's bound waves ask for both); a second call returns the first result."""
    sea = SeaState((wind_sea(9.0, fetch=40e3),))
    total = sea.statistics()
    assert sea.component_statistics()[0] is total
    assert sea.statistics() is total
    two = SeaState((wind_sea(9.0, fetch=40e3), wind_sea(5.0, fetch=10e3, direction=1.0)))
    own = two.component_statistics()
    assert own[0] is not two.statistics()
    assert own[0].hs == pytest.approx(total.hs, rel=1e-12)  # the same component, the same figures


def test_a_one_way_sea_is_evaluated_where_it_runs_and_is_the_same_bits():
    """Where every component drops its opposing waves, Ψ is evaluated on the half-planes
    they run in only; the values must be those of evaluating every point (the amplitudes
    of every frame depend on them), and exactly 0 where no component runs."""
    sea = SeaState((
        wind_sea(11.0, fetch=60e3, direction=0.4, suppress_opposing=True),
        wind_sea(6.0, fetch=8e3, direction=2.0, spreading="mitsuyasu", suppress_opposing=True),
    ))
    n = np.arange(-64, 64)
    kx, ky = n[None, :] * 0.05, n[:, None] * 0.05
    psi = sea.directional_spectrum(kx, ky)
    whole = sea._directional_spectrum(kx, ky)
    assert psi.shape == (128, 128)
    assert np.array_equal(psi, whole)
    theta = np.arctan2(ky, kx) + 0.0 * kx
    behind = (np.cos(theta - 0.4) < -1e-9) & (np.cos(theta - 2.0) < -1e-9)
    assert behind.sum() > 1000 and np.all(psi[behind] == 0.0)
