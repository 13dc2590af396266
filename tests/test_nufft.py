"""Lattice sums at points off the lattice (surface/_nufft.py) against plain numpy sums.

The references are the sums themselves, term by term (Σ c e^{i k·x} with numpy), and the
chirp-z evaluation ``bands.fourier_sum`` on grids; the tolerance is the precision the
module promises: 1e-6 of the field's standard deviation (DEVELOPERS.md, surface.bands).
"""

from __future__ import annotations

import numpy as np
import pytest

from oceanfield.surface._nufft import DEFAULT_EPS, crop_lattice, lattice_at_points, lattice_on_grid, lattices_on_grid
from oceanfield.surface.bands import fourier_sum

#: The promise: error under 1e-6 of the field's standard deviation.
OF_SIGMA = 1e-6


def _lattice(n: int, lead: tuple = (2,), seed: int = 0) -> np.ndarray:
    rng = np.random.default_rng(seed)
    return rng.normal(size=lead + (n, n)) + 1j * rng.normal(size=lead + (n, n))


def _direct(c: np.ndarray, dk: float, x: np.ndarray, y: np.ndarray) -> np.ndarray:
    """Σ c[ny, nx] e^{i dk (nx x + ny y)} term by term."""
    n_y = np.fft.fftfreq(c.shape[-2], 1.0 / c.shape[-2])
    n_x = np.fft.fftfreq(c.shape[-1], 1.0 / c.shape[-1])
    return np.einsum("...ij,mi,mj->...m", c, np.exp(1j * dk * np.outer(y, n_y)), np.exp(1j * dk * np.outer(x, n_x)))


def _error(value: np.ndarray, reference: np.ndarray) -> float:
    return float(np.abs(value - reference).max() / reference.real.std())


@pytest.mark.parametrize("shape", [(32, 32), (24, 40)])
def test_points_match_the_direct_sums(shape):
    rng = np.random.default_rng(1)
    c = rng.normal(size=(3,) + shape) + 1j * rng.normal(size=(3,) + shape)
    dk = 2 * np.pi / 80.0
    x, y = rng.uniform(-500, 500, 64), rng.uniform(-500, 500, 64)
    assert _error(lattice_at_points(c, dk, x, y), _direct(c, dk, x, y)) < OF_SIGMA


def test_a_single_wave_lands_where_its_phase_says():
    c = np.zeros((8, 8), complex)
    c[0, 1] = 1.0  # e^{i dk x}
    c[-1, 0] = 2.0  # 2 e^{−i dk y}
    dk = 2 * np.pi / 8.0
    value = lattice_at_points(c, dk, [2.0, 0.0], [0.0, 2.0])
    np.testing.assert_allclose(value, [1j + 2.0, 1.0 - 2j], atol=1e-8)


@pytest.mark.parametrize("spacing,count", [(100 / 128, 90), (0.93, 91), (2.7, 64)])
def test_grids_match_the_chirp_z_sums(spacing, count):
    """Commensurate (an FFT: exact), off-lattice (NUFFTs) and coarser than the lattice."""
    c = _lattice(48)
    dk = 2 * np.pi / 100.0
    reference = fourier_sum(c, dk, spacing, count, (3.0, -5.0))
    assert _error(lattice_on_grid(c, dk, spacing, count, (3.0, -5.0)), reference) < OF_SIGMA


def test_several_lattices_sum_onto_one_grid():
    first, second = _lattice(40, seed=2), _lattice(26, seed=3)
    dk1, dk2 = 2 * np.pi / 100.0, 2 * np.pi / (100.0 / np.sqrt(2))
    spacing = 100.0 / 128  # the first lattice commensurate, the second not
    reference = fourier_sum(first, dk1, spacing, 80, (1.0, 2.0)) + fourier_sum(second, dk2, spacing, 80, (1.0, 2.0))
    value = lattices_on_grid([(first, dk1), (second, dk2)], spacing, 80, (1.0, 2.0))
    assert _error(value, reference) < OF_SIGMA


def test_the_results_are_the_same_bits_on_any_thread_count_of_the_ffts():
    c = _lattice(64)
    dk = 2 * np.pi / 100.0
    one = lattices_on_grid([(c, dk), (c[..., :30, :30], dk * 1.37)], 0.61, 96, fft_workers=1)
    two = lattices_on_grid([(c, dk), (c[..., :30, :30], dk * 1.37)], 0.61, 96, fft_workers=2)
    np.testing.assert_array_equal(one, two)


def test_the_default_precision_is_finer_than_finufft_default():
    assert DEFAULT_EPS <= 1e-8


def test_a_cropped_lattice_sums_the_same_where_the_rest_is_zero():
    c = _lattice(32)
    n = np.fft.fftfreq(32, 1.0 / 32)
    outside = (np.abs(n)[:, None] >= 9) | (np.abs(n)[None, :] >= 9) | (n[:, None] == -9) | (n[None, :] == -9)
    c[..., outside] = 0.0
    small = crop_lattice(c, 9)
    assert small.shape[-2:] == (18, 18)
    dk = 2 * np.pi / 50.0
    x, y = np.linspace(0, 70, 11), np.linspace(-5, 30, 11)
    np.testing.assert_allclose(_direct(small, dk, x, y), _direct(c, dk, x, y), rtol=0, atol=1e-10)
    assert crop_lattice(c, 16) is c
