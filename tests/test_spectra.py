"""Tests for oceanfield.physics.spectra: frequency spectra S(ω) and the TMA depth factor.

The shapes are checked against ``wavespectra`` (a general-purpose ocean-wave-spectra
library, test-only oracle) in Hz: E(f) = 2π S(ω = 2πf). The oracle tests are skipped where
wavespectra is not installed; every other check stands on its own published value.
"""

from __future__ import annotations

import itertools
import math
import warnings

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy import integrate

from oceanfield.physics import spectra
from oceanfield.physics.constants import GRAVITY, WIND_RATIO_19_5_TO_10
from oceanfield.physics.dispersion import wavenumber
from tolerances import (
    CHEN_THOMSON_WAVENUMBER,
    DEPTH_FACTOR_TABLE,
    FROM_MEMORY_LOOSE,
    PRINTED_3_FIGURES,
    PRINTED_4_FIGURES,
    ROUNDOFF,
    SAME_FORMULA,
    TMA_AGAINST_APPROXIMATE_WAVENUMBER,
    TMA_HEIGHT,
)

G_981 = 9.81  # the value of g the published examples below were worked with

# Oracle grid: 0.02–1 Hz in 0.0005 Hz steps, and the parameter grid it is checked over.
FREQ_HZ = np.arange(0.02, 1.0 + 1e-9, 0.0005)
PEAKS_HZ = (0.05, 0.1, 0.2, 0.5)
ALPHAS = (0.0081, 0.01, 0.02)
GAMMAS = (1.0, 2.0, 3.3, 5.0, 7.0)
DEPTHS = (2.0, 5.0, 10.0, 20.0, 50.0, 200.0)


def _hz(function, freq_hz, **parameters):
    """oceanfield's S(ω) written per Hz: E(f) = 2π S(2πf), with ωp = 2π fp."""
    parameters = dict(parameters)
    parameters["peak_frequency"] = 2 * np.pi * parameters.pop("fp")
    return 2 * np.pi * function(2 * np.pi * np.asarray(freq_hz), **parameters)


def _oracle(function, *args, **kwargs) -> np.ndarray:
    """Call a wavespectra constructor and return plain numpy values.

    Its TMA evaluates sinh(2kh) even where it overflows (deep water at high frequency, where
    2kh/sinh(2kh) → 0 is what it wants): that one RuntimeWarning is silenced, nothing else.
    """
    with warnings.catch_warnings():
        warnings.filterwarnings("ignore", "overflow encountered in sinh", RuntimeWarning)
        return np.asarray(function(*args, **kwargs).values, dtype=np.float64)


def _relative_error(ours: np.ndarray, theirs: np.ndarray) -> float:
    """Largest |ours/theirs − 1| where the oracle is not underflowed to (nearly) zero."""
    resolved = theirs > 1e-250
    assert resolved.sum() > 0.5 * theirs.size
    assert np.all(ours[~resolved] < 1e-240)
    return float(np.max(np.abs(ours[resolved] / theirs[resolved] - 1)))


# -- against wavespectra ------------------------------------------------------------------


def test_pierson_moskowitz_matches_wavespectra():
    """Pierson & Moskowitz (1964) shape against wavespectra.construct.frequency.pierson_moskowitz
    (same formula, g = 9.80665 in both), relative error < 1e-6 over fp × α."""
    frequency = pytest.importorskip("wavespectra.construct.frequency")
    worst = 0.0
    for fp, alpha in itertools.product(PEAKS_HZ, ALPHAS):
        theirs = _oracle(frequency.pierson_moskowitz, FREQ_HZ, fp, alpha=alpha)
        ours = _hz(spectra.pierson_moskowitz, FREQ_HZ, fp=fp, alpha=alpha)
        worst = max(worst, _relative_error(ours, theirs))
    print(f"Pierson–Moskowitz vs wavespectra: largest relative error {worst:.2e}")
    assert worst < SAME_FORMULA


def test_jonswap_matches_wavespectra():
    """JONSWAP (Hasselmann et al. 1973, eq. 2.8) against wavespectra.construct.frequency.jonswap
    over fp × α × γ and two pairs of peak widths, relative error < 1e-6."""
    frequency = pytest.importorskip("wavespectra.construct.frequency")
    worst = 0.0
    for fp, alpha, gamma, (sa, sb) in itertools.product(
        PEAKS_HZ, ALPHAS, GAMMAS, [(0.07, 0.09), (0.05, 0.12)]
    ):
        theirs = _oracle(frequency.jonswap, FREQ_HZ, fp, alpha=alpha, gamma=gamma, sigma_a=sa, sigma_b=sb)
        ours = _hz(spectra.jonswap, FREQ_HZ, fp=fp, alpha=alpha, gamma=gamma, sigma_a=sa, sigma_b=sb)
        worst = max(worst, _relative_error(ours, theirs))
    print(f"JONSWAP vs wavespectra: largest relative error {worst:.2e}")
    assert worst < SAME_FORMULA


def test_tma_depth_factor_formula_matches_wavespectra():
    """Kitaigorodskii et al. (1975) φ = tanh²(kh)/[1 + 2kh/sinh 2kh], as in Bouws et al. (1985):
    wavespectra's tma/jonswap ratio against ours evaluated at wavespectra's own wavenumber
    (same formula, relative error < 1e-6)."""
    pytest.importorskip("wavespectra")
    from wavespectra.construct import frequency
    from wavespectra.core.utils import wavenuma

    worst = 0.0
    for fp, depth in itertools.product(PEAKS_HZ, DEPTHS):
        ratio = _oracle(frequency.tma, FREQ_HZ, fp, depth) / np.maximum(
            _oracle(frequency.jonswap, FREQ_HZ, fp), 1e-300
        )
        resolved = _oracle(frequency.jonswap, FREQ_HZ, fp) > 1e-250
        ours = spectra.depth_factor_from_wavenumber(np.asarray(wavenuma(FREQ_HZ, depth)), depth)
        worst = max(worst, float(np.max(np.abs(ours[resolved] / ratio[resolved] - 1))))
    print(f"TMA depth factor (same k) vs wavespectra: largest relative error {worst:.2e}")
    assert worst < SAME_FORMULA


def test_tma_matches_wavespectra_within_its_wavenumber_approximation():
    """TMA (Bouws et al. 1985) against wavespectra.construct.frequency.tma. wavespectra takes k
    from the Chen & Thomson polynomial (`wavenuma`, stated error ≤ 0.07 % at 10 s, and 1/g
    written 0.10194), so k agrees to 0.15 % and the spectrum to twice that (φ ∝ k² when
    shallow); both errors measured here are reported."""
    pytest.importorskip("wavespectra")
    from wavespectra.construct import frequency
    from wavespectra.core.utils import wavenuma

    worst_k = worst_spectrum = 0.0
    for depth in DEPTHS:
        exact = wavenumber(2 * np.pi * FREQ_HZ, depth)
        worst_k = max(worst_k, float(np.max(np.abs(np.asarray(wavenuma(FREQ_HZ, depth)) / exact - 1))))
    for fp, alpha, gamma, depth in itertools.product(PEAKS_HZ, ALPHAS, (1.0, 3.3, 7.0), DEPTHS):
        theirs = _oracle(frequency.tma, FREQ_HZ, fp, depth, alpha=alpha, gamma=gamma)
        ours = _hz(spectra.tma, FREQ_HZ, fp=fp, depth=depth, alpha=alpha, gamma=gamma)
        worst_spectrum = max(worst_spectrum, _relative_error(ours, theirs))
    print(f"TMA vs wavespectra: wavenumber {worst_k:.2e}, spectrum {worst_spectrum:.2e} (relative)")
    assert worst_k < CHEN_THOMSON_WAVENUMBER
    assert worst_spectrum < TMA_AGAINST_APPROXIMATE_WAVENUMBER


def test_hz_and_angular_forms_carry_the_same_variance():
    """∫S(ω)dω = ∫E(f)df with E(f) = 2π S(2πf) (WMO-No. 702 moment convention)."""
    omega_peak = 2 * np.pi * 0.1
    m0_omega = integrate.quad(lambda w: spectra.jonswap(w, peak_frequency=omega_peak), 0.1, 20, limit=200)[0]
    m0_hz = integrate.quad(lambda f: _hz(spectra.jonswap, f, fp=0.1), 0.1 / (2 * np.pi), 20 / (2 * np.pi), limit=200)[0]
    assert m0_hz == pytest.approx(m0_omega, rel=1e-10)


# -- Pierson–Moskowitz --------------------------------------------------------------------


def test_pierson_moskowitz_peak_frequency_relation():
    """ωp = (4β/5)^¼ g/U19.5 = 0.8772 g/U19.5 (Pierson & Moskowitz 1964, β = 0.74, peak by
    differentiation: derived), so c_p = g/ωp = 1.14 U19.5 (Stewart 2008, §16.5); U10 is
    converted with U19.5 = 1.026 U10 (Stewart 2008, §16.5)."""
    for wind in (5.0, 10.0, 20.0):
        peak = spectra.pierson_moskowitz_peak_frequency(wind, height=19.5)
        assert peak * wind / GRAVITY == pytest.approx(0.8772, rel=PRINTED_4_FIGURES)
        assert GRAVITY / peak / wind == pytest.approx(1.14, rel=PRINTED_3_FIGURES)
        assert spectra.pierson_moskowitz_peak_frequency(wind / WIND_RATIO_19_5_TO_10) == pytest.approx(
            peak, rel=ROUNDOFF
        )
    with pytest.raises(ValueError, match=r"^height: 15\.0 .*allowed: 10\.0 or 19\.5"):
        spectra.pierson_moskowitz_peak_frequency(10.0, height=15.0)


@pytest.mark.parametrize("function", [spectra.pierson_moskowitz, spectra.jonswap])
def test_spectrum_peaks_at_peak_frequency(function):
    """The maximum of PM and JONSWAP lies at ωp (Hasselmann et al. 1973: both factors peak there)."""
    peak = 0.7
    omega = peak * (1 + np.linspace(-1e-3, 1e-3, 2001))
    density = function(omega, peak_frequency=peak)
    assert omega[np.argmax(density)] == pytest.approx(peak, rel=2e-6)


def test_pierson_moskowitz_peak_density():
    """S(ωp) = α g² ωp⁻⁵ e^{−5/4} = 3.595 m²s/rad at U19.5 = 15 m/s, g = 9.81 (derived from
    Pierson & Moskowitz 1964; 4 figures)."""
    peak = spectra.pierson_moskowitz_peak_frequency(15.0, height=19.5, gravity=G_981)
    value = spectra.pierson_moskowitz(peak, peak_frequency=peak, gravity=G_981)
    assert float(value) == pytest.approx(3.595, rel=PRINTED_4_FIGURES)


def test_jonswap_with_gamma_one_is_pierson_moskowitz():
    """γ = 1 turns JONSWAP into Pierson–Moskowitz exactly (Hasselmann et al. 1973)."""
    omega = np.geomspace(0.1, 30, 500)
    np.testing.assert_allclose(
        spectra.jonswap(omega, peak_frequency=0.9, gamma=1.0),
        spectra.pierson_moskowitz(omega, peak_frequency=0.9),
        rtol=ROUNDOFF,
    )


@pytest.mark.parametrize("gamma, ratio", [(2.0, 1.2456), (3.3, 1.5249), (5.0, 1.8584), (7.0, 2.2252)])
def test_jonswap_variance_gain_over_pierson_moskowitz(gamma, ratio):
    """m0(γ)/m0(1) at the same α and ωp (derived from Hasselmann et al. 1973; 5 figures)."""
    def m0(g: float) -> float:
        def density(w: float) -> float:
            return float(spectra.jonswap(w, peak_frequency=1.0, gamma=g))

        return integrate.quad(density, 0, 1, limit=200)[0] + integrate.quad(density, 1, np.inf, limit=200)[0]

    assert m0(gamma) / m0(1.0) == pytest.approx(ratio, abs=1e-4)


# -- JONSWAP fetch laws -------------------------------------------------------------------


@pytest.mark.parametrize("wind, fetch", [(5.0, 2.0e3), (10.0, 1.0e4), (20.0, 1.0e5), (30.0, 5.0e5)])
def test_fetch_laws(wind, fetch):
    """α = 0.076 (U10²/(F g))^0.22 and ωp = 22 (g²/(U10 F))^⅓ (Stewart 2008, eqs 16.37–16.38,
    after Hasselmann et al. 1973); the dimensionless originals α = 0.076 x̃^−0.22 and
    fp U10/g = 3.5 x̃^−0.33, x̃ = gF/U10² (Hasselmann et al. 1973; from memory, loose)."""
    alpha = spectra.jonswap_fetch_alpha(wind, fetch, gravity=G_981)
    peak = spectra.jonswap_fetch_peak_frequency(wind, fetch, gravity=G_981)
    assert alpha == pytest.approx(0.076 * (wind**2 / (fetch * G_981)) ** 0.22, rel=ROUNDOFF)
    assert peak == pytest.approx(22.0 * (G_981**2 / (wind * fetch)) ** (1 / 3), rel=ROUNDOFF)
    x = G_981 * fetch / wind**2
    assert alpha == pytest.approx(0.076 * x**-0.22, rel=ROUNDOFF)
    assert peak / (2 * np.pi) * wind / G_981 == pytest.approx(3.5 * x**-0.33, rel=FROM_MEMORY_LOOSE)


def test_fetch_law_example_20_m_s_100_km():
    """U10 = 20 m/s, F = 100 km, g = 9.81 (x̃ = 2452.5): α = 0.01365, ωp = 0.800 rad/s,
    Tp = 7.85 s (Stewart 2008, eqs 16.37–16.38 evaluated)."""
    assert G_981 * 1e5 / 20.0**2 == pytest.approx(2452.5, rel=ROUNDOFF)
    alpha = spectra.jonswap_fetch_alpha(20.0, 1e5, gravity=G_981)
    peak = spectra.jonswap_fetch_peak_frequency(20.0, 1e5, gravity=G_981)
    assert alpha == pytest.approx(0.01365, rel=PRINTED_4_FIGURES)
    assert peak == pytest.approx(0.800, rel=PRINTED_3_FIGURES)
    assert 2 * np.pi / peak == pytest.approx(7.85, rel=PRINTED_3_FIGURES)


# -- TMA depth factor ---------------------------------------------------------------------


@pytest.mark.parametrize(
    "omega_h, phi", [(0.5, 0.1248), (1.0, 0.4828), (1.25, 0.7038), (1.5, 0.8785), (2.0, 0.9934)]
)
@pytest.mark.parametrize("depth", [2.0, 30.0])
def test_depth_factor_table(omega_h, phi, depth):
    """φ(ω_h), ω_h = ω√(h/g) (Kitaigorodskii, Krasitskii & Zaslavskii 1975; 4 decimals)."""
    omega = omega_h * math.sqrt(GRAVITY / depth)
    assert float(spectra.depth_factor_kitaigorodskii(omega, depth)) == pytest.approx(phi, abs=DEPTH_FACTOR_TABLE)


def test_depth_factor_limits():
    """φ → ω_h²/2 in shallow water and → 1 in deep water (Kitaigorodskii et al. 1975);
    exactly 1 for h = inf, and 0 at ω = 0 without warnings."""
    depth = 10.0
    omega_h = np.array([1e-4, 1e-3, 1e-2])
    omega = omega_h * math.sqrt(GRAVITY / depth)
    np.testing.assert_allclose(spectra.depth_factor_kitaigorodskii(omega, depth), omega_h**2 / 2, rtol=1e-4)
    deep = spectra.depth_factor_kitaigorodskii(np.array([10.0, 30.0, 1e3]) * math.sqrt(GRAVITY / depth), depth)
    np.testing.assert_allclose(deep, 1.0, rtol=1e-12)
    assert np.all(spectra.depth_factor_kitaigorodskii(np.geomspace(0.01, 100, 7), np.inf) == 1.0)
    assert float(spectra.depth_factor_kitaigorodskii(0.0, depth)) == 0.0
    phi = spectra.depth_factor_kitaigorodskii(np.geomspace(1e-3, 1e3, 200), depth)
    assert np.all(np.diff(phi) >= 0) and np.all((phi >= 0) & (phi <= 1))


@pytest.mark.parametrize("depth, hs", [(np.inf, 4.938), (20.0, 3.529), (10.0, 2.665), (5.0, 1.949)])
def test_tma_integrated_height(depth, hs):
    """TMA Hs = 4√m0 at α = 0.0081, γ = 3.3, fp = 0.1 Hz, g = 9.80665: 4.938 m (deep), 3.529
    (20 m), 2.665 (10 m), 1.949 (5 m) — Bouws et al. (1985) as implemented by wavespectra 4.9.0
    `construct.frequency.tma`, integrated (4 figures)."""
    peak = 2 * np.pi * 0.1

    def density(w: float) -> float:
        return float(spectra.tma(w, peak_frequency=peak, depth=depth))  # depth inf: φ = 1

    m0 = integrate.quad(density, 0, peak, limit=200)[0] + integrate.quad(density, peak, np.inf, limit=200)[0]
    assert 4 * math.sqrt(m0) == pytest.approx(hs, rel=TMA_HEIGHT)


# -- property-based -----------------------------------------------------------------------

_OMEGAS = st.lists(
    st.one_of(st.floats(-10.0, 1e6), st.floats(0.0, 1e-30), st.sampled_from([0.0, 5e-324, 1e-300])),
    min_size=1,
    max_size=20,
)


@settings(max_examples=50, deadline=None)
@given(
    omega=_OMEGAS,
    peak=st.floats(0.05, 50.0),
    alpha=st.floats(1e-5, 1.0),
    gamma=st.floats(1.0, 10.0),
    depth=st.one_of(st.floats(0.05, 1e4), st.just(math.inf)),
    wind=st.floats(0.5, 75.0),
    cutoff=st.floats(0.0, 10.0),
)
def test_spectra_finite_and_non_negative(omega, peak, alpha, gamma, depth, wind, cutoff):
    """Property: every spectrum is finite and ≥ 0 for any ω (0, negative, subnormal, large),
    positive at ωp, and raises no warning (warnings are errors here)."""
    omega = np.array(omega)
    values = [
        spectra.pierson_moskowitz(omega, peak_frequency=peak, alpha=alpha),
        spectra.jonswap(omega, peak_frequency=peak, alpha=alpha, gamma=gamma),
        spectra.tma(omega, peak_frequency=peak, alpha=alpha, gamma=gamma, depth=depth),
        spectra.phillips(omega, wind_speed=wind, alpha=alpha, cutoff_length=cutoff),
    ]
    for value in values:
        assert value.shape == omega.shape
        assert np.all(np.isfinite(value)) and np.all(value >= 0)
        assert np.all(value[omega <= 0] == 0)
    at_peak = spectra.tma(np.array([peak]), peak_frequency=peak, alpha=alpha, gamma=gamma, depth=depth)
    assert at_peak[0] > 0


def test_registry_lists_every_spectrum():
    """One registry names every model (STYLE: one entry per published formula)."""
    assert set(spectra.SPECTRA) == {"jonswap", "pierson_moskowitz", "tma", "phillips", "elfouhaily"}
    assert spectra.SPECTRA["tma"] is spectra.tma
