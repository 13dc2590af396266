"""Tests for oceanfield.physics.spreading: directional distributions D(θ; ω/ωp)."""

from __future__ import annotations

import importlib
import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy import integrate

from tolerances import (
    FROM_MEMORY,
    NORMALISATION,
    ROUNDOFF,
    SAME_FORMULA,
    SECH2_WIDTH,
    SPREAD_CONSTANT,
)

# The package re-exports the function `spreading`, which shadows the module of that name as
# an attribute of `oceanfield`; take the module itself from the import system.
sp = importlib.import_module("oceanfield.physics.spreading")

# Models of (θ, ω/ωp); the elfouhaily model takes Δ(k) instead (tests/test_elfouhaily.py).
MODELS = tuple(name for name in sp.SPREADING if name != "elfouhaily")
RATIOS = np.geomspace(0.1, 10.0, 9)
EXPONENTS = (0.01, 0.1, 0.5, 1.0, 2.0, 10.0, 100.0, 1000.0)


def _integral(function, *, low: float = -math.pi, high: float = math.pi) -> float:
    """∫ function(θ) dθ by adaptive quadrature, split at 0 (the peak) and ±π/2 (where the
    opposing half is cut), to 1e-13 relative."""
    edges = [e for e in (-math.pi, -math.pi / 2, 0.0, math.pi / 2, math.pi) if low <= e <= high]
    edges = sorted({low, *edges, high})
    total = 0.0
    for a, b in zip(edges[:-1], edges[1:]):
        total += integrate.quad(function, a, b, limit=500, epsabs=0.0, epsrel=1e-13)[0]
    return total


def _model(name, ratio, **options):
    return lambda theta: float(sp.spreading(name, theta, ratio, **options))


# -- normalisation ------------------------------------------------------------------------


@pytest.mark.parametrize("suppress", [False, True])
@pytest.mark.parametrize("name", MODELS)
def test_every_model_integrates_to_one(name, suppress):
    """∫D dθ over (−π, π] = 1 for every model at ω/ωp from 0.1 to 10, with and without the
    opposing half (Longuet-Higgins et al. 1963; Mitsuyasu et al. 1975; Hasselmann et al.
    1980; Donelan et al. 1985; Banner 1990: each a probability density in direction)."""
    worst = 0.0
    for ratio in RATIOS:
        for wave_age in (0.5, sp.DEFAULT_INVERSE_WAVE_AGE, 3.0):
            total = _integral(_model(name, ratio, inverse_wave_age=wave_age, suppress_opposing=suppress))
            worst = max(worst, abs(total - 1))
            if name in ("cos2s", "cos2"):
                break  # these do not depend on the wave age
    assert worst < NORMALISATION


@pytest.mark.parametrize("suppress", [False, True])
@pytest.mark.parametrize("s", EXPONENTS)
def test_cos2s_integrates_to_one_for_any_exponent(s, suppress):
    """G(s) cos^{2s}(θ/2) integrates to 1 for s from 0.01 to 1000 (Longuet-Higgins et al. 1963)."""
    assert _integral(_model("cos2s", 1.0, s=s, suppress_opposing=suppress)) == pytest.approx(1.0, abs=NORMALISATION)


@pytest.mark.parametrize("s", [1.0, 2.0, 5.0, 10.0, 20.0])
def test_suppressing_the_opposing_half_only_rescales(s):
    """With the opposing half dropped, the forward half keeps its shape, scaled by
    1/I_{1/2}(½, s+½) (derived: the forward share of cos-2s is a regularised incomplete beta)."""
    forward = _integral(_model("cos2s", 1.0, s=s), low=-math.pi / 2, high=math.pi / 2)
    assert float(sp.cos2s_forward_fraction(s)) == pytest.approx(forward, rel=NORMALISATION)
    theta = np.linspace(-math.pi, math.pi, 721)
    full = sp.spreading("cos2s", theta, 1.0, s=s)
    cut = sp.spreading("cos2s", theta, 1.0, s=s, suppress_opposing=True)
    inside = np.abs(theta) <= math.pi / 2
    np.testing.assert_allclose(cut[inside], full[inside] / forward, rtol=NORMALISATION)
    assert np.all(cut[~inside] == 0.0)


# -- cos-2s -------------------------------------------------------------------------------


@pytest.mark.parametrize(
    "s, constant", [(1.0, 0.318310), (2.0, 0.424413), (5.0, 0.646725), (10.0, 0.903278), (20.0, 1.269475)]
)
def test_cos2s_normalisation_constant(s, constant):
    """G(s) = Γ(s+1)/(2√π Γ(s+½)) (Longuet-Higgins, Cartwright & Smith 1963; 6 decimals)."""
    assert float(sp.cos2s_normalisation(s)) == pytest.approx(constant, abs=SPREAD_CONSTANT)


def test_cos2s_normalisation_for_large_exponents():
    """G(s) → √(s/4π)(1 + 1/(8s)) for large s (Stirling's series for the gamma ratio), finite
    up to s = 1e6."""
    s = np.array([1e3, 1e4, 1e6])
    np.testing.assert_allclose(sp.cos2s_normalisation(s), np.sqrt(s / (4 * np.pi)) * (1 + 1 / (8 * s)), rtol=1e-6)


@pytest.mark.parametrize("s", [0.5, 1.0, 2.0, 5.0, 10.0, 20.0, 100.0])
def test_cos2s_mean_resultant_and_spread(s):
    """R1 = ∫D cos θ dθ = s/(s+1) and σθ = √(2(1 − R1)) = √(2/(s+1)) (Kuik, van Vledder &
    Holthuijsen 1988, circular spread; R1 of cos-2s from memory, checked by integration)."""
    r1 = _integral(lambda theta: float(sp.cos2s(theta, s)) * math.cos(theta))
    assert r1 == pytest.approx(s / (s + 1), rel=NORMALISATION)
    assert float(sp.directional_spread(s)) == pytest.approx(math.sqrt(2 * (1 - r1)), rel=1e-8)
    assert float(sp.cos2s_exponent(sp.directional_spread(s))) == pytest.approx(s, rel=ROUNDOFF)


@pytest.mark.parametrize(
    "s, degrees", [(1.0, 57.30), (2.0, 46.78), (5.0, 33.08), (10.0, 24.43), (20.0, 17.68)]
)
def test_cos2s_spread_in_degrees(s, degrees):
    """σθ = √(2/(s+1)) in degrees (Kuik et al. 1988 definition; 2 decimals, derived)."""
    assert math.degrees(float(sp.directional_spread(s))) == pytest.approx(degrees, abs=0.005)


def test_cos2s_matches_wavespectra_cartwright():
    """cos-2s against wavespectra.construct.direction.cartwright (Longuet-Higgins/Cartwright 1963)
    with s = 2/σθ² − 1. Cartwright's is normalised per degree by the sum over the grid given,
    so the shapes are compared after the same normalisation (relative error < 1e-6), with and
    without the opposing half; mean directions include ones that wrap across 0°/360°."""
    direction = pytest.importorskip("wavespectra.construct.direction")
    grid_deg = np.arange(0.0, 360.0, 0.5) + 0.25  # never exactly ±90° from the means below
    step = math.radians(0.5)
    worst = 0.0
    for mean_deg in (0.0, 90.0, 179.5, 270.0, 355.0):
        for spread_deg in (10.0, 20.0, 30.0, 45.0, 60.0, 80.0):
            s = float(sp.cos2s_exponent(math.radians(spread_deg)))
            for under_90 in (False, True):
                theirs = np.asarray(direction.cartwright(grid_deg, mean_deg, spread_deg, under_90=under_90))
                theirs = theirs * 180.0 / math.pi  # per degree → per radian
                ours = sp.spreading(
                    "cos2s", np.radians(grid_deg) - math.radians(mean_deg), 1.0, s=s, suppress_opposing=under_90
                )
                ours = ours / (ours.sum() * step)
                resolved = theirs > 1e-250
                assert np.all(ours[~resolved] < 1e-240)
                worst = max(worst, float(np.max(np.abs(ours[resolved] / theirs[resolved] - 1))))
    print(f"cos-2s vs wavespectra cartwright: largest relative error {worst:.2e}")
    assert worst < SAME_FORMULA


def test_cos_squared_is_the_phillips_directional_factor():
    """D = cos²θ/π: Tessendorf's (2001) |k̂·ŵ|², normalised; as much energy opposing as following."""
    theta = np.linspace(-math.pi, math.pi, 37)
    np.testing.assert_allclose(sp.spreading("cos2", theta, 1.0), np.cos(theta) ** 2 / math.pi, rtol=ROUNDOFF)
    np.testing.assert_allclose(
        sp.spreading("cos2", theta, 1.0), sp.spreading("cos2", theta + math.pi, 1.0), rtol=1e-9, atol=1e-15
    )


# -- frequency-dependent exponents ----------------------------------------------------------


@pytest.mark.parametrize("inverse_wave_age, s_max", [(1.0, 11.5), (0.83, 18.3), (2.0, 2.03)])
def test_mitsuyasu_peak_exponent(inverse_wave_age, s_max):
    """s_max = 11.5 (U10/c_p)^−2.5 (Mitsuyasu et al. 1975, eq. 25; from memory, loose)."""
    assert sp.mitsuyasu_peak_exponent(inverse_wave_age) == pytest.approx(s_max, rel=FROM_MEMORY)


def test_mitsuyasu_exponent_shape():
    """s = s_max (ω/ωp)⁵ below the peak and s_max (ω/ωp)^−2.5 above (Mitsuyasu et al. 1975)."""
    s_max = sp.mitsuyasu_peak_exponent(0.9)
    ratio = np.array([0.5, 1.0, 2.0])
    expected = s_max * np.array([0.5**5, 1.0, 2.0**-2.5])
    np.testing.assert_allclose(sp.mitsuyasu_exponent(ratio, 0.9), expected, rtol=ROUNDOFF)
    # continuous at the peak
    assert float(sp.mitsuyasu_exponent(1 + 1e-12, 0.9)) == pytest.approx(s_max, rel=1e-9)


def test_hasselmann_exponents():
    """s = 6.97 (ω/ωp)^4.06 below the peak; 9.77 (ω/ωp)^μ above, μ = −2.33 − 1.45 (U10/c_p − 1.17)
    (Hasselmann, Dunckel & Ewing 1980, eqs 41–42)."""
    assert float(sp.hasselmann_exponent(0.5)) == pytest.approx(6.97 * 0.5**4.06, rel=ROUNDOFF)
    assert float(sp.hasselmann_exponent(1 - 1e-12)) == pytest.approx(6.97, rel=1e-9)
    assert float(sp.hasselmann_exponent(1.0)) == pytest.approx(9.77, rel=ROUNDOFF)
    assert float(sp.hasselmann_exponent(2.0, 1.17)) == pytest.approx(9.77 * 2.0**-2.33, rel=ROUNDOFF)
    assert float(sp.hasselmann_exponent(2.0, 2.0)) == pytest.approx(9.77 * 2.0 ** (-2.33 - 1.45 * 0.83), rel=ROUNDOFF)


# -- sech² (Donelan–Banner) ---------------------------------------------------------------


@pytest.mark.parametrize(
    "ratio, beta", [(0.6, 1.3435), (0.95, 2.4372), (1.0, 2.2800), (2.0, 0.9603), (3.0, 0.6942)]
)
def test_donelan_banner_width(ratio, beta):
    """β = 2.61(ω/ωp)^1.3 (0.56–0.95), 2.28(ω/ωp)^−1.3 (0.95–1.6) (Donelan, Hamilton & Hui 1985,
    eq. 8.9); β = 10^{−0.4 + 0.8393 exp[−0.567 ln((ω/ωp)²)]} above 1.6 (Banner 1990); 4 decimals."""
    assert float(sp.donelan_banner_beta(ratio)) == pytest.approx(beta, abs=SECH2_WIDTH)


def test_donelan_banner_width_is_continuous_at_1_6():
    """Both forms give β ≈ 1.238 at ω/ωp = 1.6 (Donelan et al. 1985; Banner 1990), to a unit
    in the third decimal (Banner's form gives 1.23750, Donelan's 1.23760)."""
    below = float(sp.donelan_banner_beta(1.6 * (1 - 1e-12)))
    above = float(sp.donelan_banner_beta(1.6))
    assert below == pytest.approx(1.238, abs=1e-3)
    assert above == pytest.approx(1.238, abs=1e-3)
    assert abs(below - above) < 2e-4


def test_donelan_banner_width_held_below_published_range():
    """Below ω/ωp = 0.56 β is held at its value there (common practice), so it stays continuous."""
    held = float(sp.donelan_banner_beta(0.56))
    assert held == pytest.approx(2.61 * 0.56**1.3, rel=ROUNDOFF)
    np.testing.assert_allclose(sp.donelan_banner_beta(np.array([0.01, 0.1, 0.3])), held, rtol=ROUNDOFF)


@pytest.mark.parametrize("ratio", [0.6, 0.8, 0.95, 1.0, 1.3, 2.0, 3.0, 6.0])
def test_donelan_banner_mean_resultant(ratio):
    """R1 = π/(2β sinh(π/2β)) for (β/2)sech²(βθ) on the whole line (derived from Donelan et al.
    1985). On (−π, π] the renormalised density differs by at most 3(1 − tanh βπ)."""
    beta = float(sp.donelan_banner_beta(ratio))
    r1 = _integral(lambda theta: float(sp.donelan_banner(theta, ratio)) * math.cos(theta))
    line = math.pi / (2 * beta * math.sinh(math.pi / (2 * beta)))
    assert r1 == pytest.approx(line, abs=3 * (1 - math.tanh(beta * math.pi)) + 1e-9)


def test_donelan_banner_peak_value():
    """D(0) = β/(2 tanh βπ): the published β/2 rescaled to integrate to 1 on (−π, π] (derived)."""
    for ratio in (0.7, 1.0, 2.0):
        beta = float(sp.donelan_banner_beta(ratio))
        assert float(sp.donelan_banner(0.0, ratio)) == pytest.approx(beta / (2 * math.tanh(beta * math.pi)), rel=ROUNDOFF)


# -- shapes, wrapping, names ----------------------------------------------------------------


@pytest.mark.parametrize("name", MODELS)
def test_periodic_symmetric_and_broadcast(name):
    """D(θ) = D(θ + 2π) = D(−θ) ≥ 0, and θ (n, 1) with ω/ωp (1, m) broadcasts to (n, m)."""
    theta = np.linspace(-3.0, 3.0, 13)[:, None]
    ratio = np.array([0.5, 1.0, 2.5])[None, :]
    value = sp.spreading(name, theta, ratio)
    assert value.shape == (13, 3)
    assert np.all(value >= 0) and np.all(np.isfinite(value))
    np.testing.assert_allclose(sp.spreading(name, theta + 2 * math.pi, ratio), value, rtol=1e-9, atol=1e-300)
    np.testing.assert_allclose(sp.spreading(name, -theta, ratio), value, rtol=1e-9, atol=1e-300)


def test_wrap_angle():
    """Angles wrap into (−π, π]; −π maps to π."""
    np.testing.assert_allclose(sp.wrap_angle([0.0, 3 * math.pi, -math.pi, 7.0]), [0.0, math.pi, math.pi, 7.0 - 2 * math.pi])


@settings(max_examples=50, deadline=None)
@given(
    name=st.sampled_from(MODELS),
    theta=st.floats(-100.0, 100.0),
    ratio=st.floats(1e-3, 1e3),
    s=st.floats(0.01, 1e4),
    wave_age=st.floats(0.2, 5.0),
    suppress=st.booleans(),
)
def test_spreading_finite_property(name, theta, ratio, s, wave_age, suppress):
    """Property: every model is finite and ≥ 0 over the whole valid parameter space."""
    value = sp.spreading(name, theta, ratio, s=s, inverse_wave_age=wave_age, suppress_opposing=suppress)
    assert np.isfinite(value) and value >= 0


@pytest.mark.parametrize("name", ["cos2s ", "Mitsuyasu", "sech2", ""])
def test_unknown_model_is_refused(name):
    """An unknown name raises ValueError listing the valid ones."""
    with pytest.raises(ValueError, match=r"^spreading: .* is not a model; allowed: cos2s, cos2, mitsuyasu"):
        sp.spreading(name, 0.0, 1.0)
