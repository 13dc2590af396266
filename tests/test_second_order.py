"""Second-order kernels and the statistics they predict (physics/second_order.py)."""

from __future__ import annotations

import math

import numpy as np
import pytest

from oceanfield.physics.second_order import (
    bound_wave_kernel_matrix,
    bound_wave_kernels,
    second_order_statistics,
    tayfun_crest_trough_ratio,
    tayfun_top_tenth_crest,
)
from tolerances import PRINTED_4_FIGURES, ROUNDOFF


@pytest.mark.parametrize("k", [0.01, 0.1, 2.0])
def test_one_deep_water_wave_has_the_stokes_harmonic(k):
    """One deep-water wave a cos φ carries ½ka² cos 2φ and no mean change
    (Stokes 1847; Longuet-Higgins 1963, deep-water limit of the sum kernel)."""
    b_plus, b_minus = bound_wave_kernels(k, 0.0, k, 0.0)
    assert b_plus == pytest.approx(0.5 * k, rel=ROUNDOFF)
    assert b_minus == pytest.approx(0.0, abs=ROUNDOFF * k)


@pytest.mark.parametrize("kh", [0.5, 1.0, 2.0, 4.0])
def test_one_wave_in_finite_depth_has_the_stokes_second_order_profile(kh):
    """Stokes' second-order profile in depth h: η₂ = (ka²/4) cosh kh (2 + cosh 2kh)/sinh³ kh
    · cos 2φ (Dean & Dalrymple 1991, Water Wave Mechanics for Engineers and Scientists,
    ch. 11); the mean level of the train is set down by a²k/(2 sinh 2kh) (Longuet-Higgins &
    Stewart 1964, Deep-Sea Res. 11)."""
    k, depth = 0.2, kh / 0.2
    b_plus, b_minus = bound_wave_kernels(0.0, k, 0.0, k, depth=depth)
    stokes = k * math.cosh(kh) * (2.0 + math.cosh(2.0 * kh)) / (4.0 * math.sinh(kh) ** 3)
    assert b_plus == pytest.approx(stokes, rel=1e-10)
    assert b_minus == pytest.approx(-k / (2.0 * math.sinh(2.0 * kh)), rel=1e-10)


@pytest.mark.parametrize(("k1", "k2"), [(0.1, 0.05), (0.3, 0.1), (1.0, 0.9)])
def test_two_collinear_deep_water_waves(k1, k2):
    """Two waves travelling the same way in deep water: B⁺ = (k₁ + k₂)/4, B⁻ = −|k₁ − k₂|/4
    (Longuet-Higgins 1963, J. Fluid Mech. 17), so B⁺ + B⁻ = ½ min(k₁, k₂); symmetric."""
    b_plus, b_minus = bound_wave_kernels(k1, 0.0, k2, 0.0)
    assert b_plus == pytest.approx((k1 + k2) / 4.0, rel=1e-12)
    assert b_minus == pytest.approx(-abs(k1 - k2) / 4.0, rel=1e-9)
    swapped = bound_wave_kernels(k2, 0.0, k1, 0.0)
    assert swapped[0] == pytest.approx(b_plus, rel=1e-12)
    assert swapped[1] == pytest.approx(b_minus, rel=1e-9)


def test_kernels_are_symmetric_and_rotate_with_the_pair():
    """B±(k₁, k₂) = B±(k₂, k₁), and turning both waves together changes nothing (the
    kernels depend on lengths and the angle between them only)."""
    rng = np.random.default_rng(3)
    k1 = rng.uniform(0.05, 0.5, (50, 2))
    k2 = rng.uniform(-0.5, 0.5, (50, 2))
    for depth in (math.inf, 12.0):
        a = bound_wave_kernels(k1[:, 0], k1[:, 1], k2[:, 0], k2[:, 1], depth=depth)
        b = bound_wave_kernels(k2[:, 0], k2[:, 1], k1[:, 0], k1[:, 1], depth=depth)
        c, s = math.cos(0.7), math.sin(0.7)
        r1 = k1 @ np.array([[c, s], [-s, c]])
        r2 = k2 @ np.array([[c, s], [-s, c]])
        r = bound_wave_kernels(r1[:, 0], r1[:, 1], r2[:, 0], r2[:, 1], depth=depth)
        for x, y, z in zip(a, b, r):
            np.testing.assert_allclose(x, y, rtol=1e-9, atol=1e-12)
            np.testing.assert_allclose(x, z, rtol=1e-9, atol=1e-12)


@pytest.mark.parametrize("depth", [math.inf, 30.0, 4.0])
def test_the_pair_matrix_is_the_broadcast_kernels_to_the_bit(depth):
    """``bound_wave_kernel_matrix`` evaluates half the pairs and mirrors them: it must give
    exactly the numbers of the broadcast formula (the bound waves of every frame depend on
    them), also for opposed waves of one length (k⁺ = 0) and the diagonal (k⁻ = 0)."""
    rng = np.random.default_rng(11)
    n = rng.integers(-30, 31, size=(300, 2))
    n = np.concatenate([n[(n != 0).any(axis=1)], [[5, 2], [-5, -2], [0, 7], [0, -7]]])
    kx, ky = n[:, 1] * 0.049087385212340517, n[:, 0] * 0.049087385212340517  # a 128 m tile's lattice
    matrix = bound_wave_kernel_matrix(kx, ky, depth=depth)
    broadcast = bound_wave_kernels(kx[:, None], ky[:, None], kx[None, :], ky[None, :], depth=depth)
    for got, expected in zip(matrix, broadcast):
        assert got.shape == (kx.size, kx.size)
        assert np.array_equal(got, expected)


def test_narrow_band_skewness_is_three_k_sigma():
    """A narrow band of deep-water waves skews by λ₃ = 3kσ (Tayfun 1980, J. Geophys. Res.
    85(C3); Longuet-Higgins 1963): 9 waves within ±1 % of k and ±1° of one direction."""
    k = 0.12
    angles = np.radians(np.linspace(-1.0, 1.0, 3))
    lengths = k * np.linspace(0.99, 1.01, 3)
    kk, aa = np.meshgrid(lengths, angles)
    variance = np.full(kk.size, 0.3 / kk.size)
    stats = second_order_statistics(kk.ravel() * np.cos(aa.ravel()), kk.ravel() * np.sin(aa.ravel()), variance)
    # the band's ±1 % in k puts min(k₁, k₂) up to 1 % below k
    assert stats.skewness == pytest.approx(3.0 * k * math.sqrt(0.3), rel=1e-2)
    assert stats.mean_level == pytest.approx(0.0, abs=1e-12)
    assert stats.std == pytest.approx(math.sqrt(0.3), rel=ROUNDOFF)


def test_broad_band_unidirectional_skewness_is_the_min_k_integral():
    """One direction of deep water: λ₃ = (3/σ³) ∬ S S min(k₁, k₂) (Srokosz & Longuet-Higgins
    1986, J. Fluid Mech. 164; from memory), here over a discrete Pierson–Moskowitz-like
    set of 200 wavenumbers."""
    k = np.linspace(0.02, 0.6, 200)
    variance = k**-3 * np.exp(-1.25 * (0.08 / k) ** 2) * (k[1] - k[0])
    stats = second_order_statistics(k, np.zeros_like(k), variance)
    sigma = math.sqrt(variance.sum())
    expected = 3.0 / sigma**3 * float(variance @ np.minimum(k[:, None], k[None, :]) @ variance)
    assert stats.skewness == pytest.approx(expected, rel=1e-9)


def test_spreading_lowers_the_skewness():
    """Waves crossing at an angle bind less than collinear ones (B⁺ + B⁻ falls from k at
    0° to about k/4 at 90° for equal lengths), so a spread sea skews less than a
    long-crested one of the same spectrum."""
    k = np.full(21, 0.1)
    narrow = np.radians(np.linspace(-2, 2, 21))
    wide = np.radians(np.linspace(-40, 40, 21))
    v = np.full(21, 0.05)
    long_crested = second_order_statistics(k * np.cos(narrow), k * np.sin(narrow), v).skewness
    spread = second_order_statistics(k * np.cos(wide), k * np.sin(wide), v).skewness
    assert 0.7 * long_crested < spread < 0.97 * long_crested


def test_tayfun_crest_statistics():
    """Tayfun (1980): mean crest / mean trough = (√(π/2) + μ)/(√(π/2) − μ); at μ = 0 the top
    tenth of crests average half of H1/10 = 5.091 σ (Longuet-Higgins 1952, J. Mar. Res. 11,
    as tabulated in CEM II-1)."""
    assert tayfun_crest_trough_ratio(0.0) == 1.0
    root = math.sqrt(math.pi / 2.0)
    assert tayfun_crest_trough_ratio(0.06) == pytest.approx((root + 0.06) / (root - 0.06), rel=ROUNDOFF)
    assert tayfun_top_tenth_crest(0.0) == pytest.approx(5.091 / 2.0, rel=PRINTED_4_FIGURES)
    # crest = ξ + ½μξ²: the top tenth's mean square ξ² is ξ₁₀² + 2 = 2 ln 10 + 2
    assert tayfun_top_tenth_crest(0.1) - tayfun_top_tenth_crest(0.0) == pytest.approx(
        0.05 * (2.0 * math.log(10.0) + 2.0), rel=ROUNDOFF)
