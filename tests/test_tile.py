"""Tests for oceanfield.surface.tile: the periodic wavenumber lattice of one square tile.

The lattice is checked on what it hands out (indices, wavenumbers, the carried set,
texel positions) against the periodicity argument it rests on: a wave repeats across a
tile of side L only if it has a whole number of wavelengths across it, k = 2πn/L
(Tessendorf 2001, "Simulating Ocean Water", §"Practical Ocean Wave Algorithm").
"""

from __future__ import annotations

import dataclasses
import math

import numpy as np
import pytest

from oceanfield.surface.tile import MIN_RESOLUTION, Tile

from tolerances import ROUNDOFF

RESOLUTIONS = (16, 48, 64, 96, 256)


@pytest.mark.parametrize("n", RESOLUTIONS)
def test_spacing_lattice_step_and_nyquist(n):
    """Δx = L/N, Δk = 2π/L and the Nyquist wavenumber π/Δx (a wave two texels long)."""
    tile = Tile(137.5, n)
    assert tile.spacing == pytest.approx(137.5 / n, rel=ROUNDOFF)
    assert tile.dk == pytest.approx(2 * math.pi / 137.5, rel=ROUNDOFF)
    assert tile.nyquist == pytest.approx(2 * math.pi / (2 * tile.spacing), rel=ROUNDOFF)


@pytest.mark.parametrize("n", RESOLUTIONS)
def test_wave_indices_follow_the_fft_layout(n):
    """Index arrays in numpy's FFT order, as broadcastable column (ny) and row (nx)."""
    tile = Tile(50.0, n)
    ny, nx = tile.wave_indices()
    assert ny.shape == (n, 1) and nx.shape == (1, n)
    expected = np.fft.fftfreq(n, d=1.0 / n)
    np.testing.assert_array_equal(ny.ravel(), expected)
    np.testing.assert_array_equal(nx.ravel(), expected)
    assert ny.dtype.kind == "i"
    # A block of rows is the same slice of the full lattice.
    rows = slice(3, 11)
    np.testing.assert_array_equal(tile.wave_indices(rows)[0], ny[rows])


@pytest.mark.parametrize("n", (16, 48, 64))
def test_every_lattice_wave_repeats_across_the_tile(n):
    """e^{ik·x} has the same value at x and x + L for every lattice wavenumber, which is
    what makes a tile seamless (checked on sampled waves, not on the formula for k)."""
    tile = Tile(73.0, n)
    ky, kx = tile.wavenumbers()
    y, x = tile.positions()
    for shift in ((tile.size, 0.0), (0.0, tile.size)):
        for iy, ix in ((1, 2), (n // 2 - 1, 3), (n - 5, n // 2 + 1)):
            k = (kx[0, ix], ky[iy, 0])
            phase0 = k[0] * x + k[1] * y
            phase1 = k[0] * (x + shift[0]) + k[1] * (y + shift[1])
            np.testing.assert_allclose(np.exp(1j * phase1), np.exp(1j * phase0), atol=1e-10)


@pytest.mark.parametrize("n", RESOLUTIONS)
def test_carried_set(n):
    """Carried: not the mean, not the unpaired Nyquist row and column, |n| ≤ N/2; and the
    set is symmetric under k → −k, so every carried wave has its mirror (a real field)."""
    tile = Tile(10.0, n)
    ny, nx = tile.wave_indices()
    carried = np.broadcast_to(tile.carried(ny, nx), (n, n))
    half = n // 2
    assert not carried[0, 0]
    assert not carried[half, :].any()
    assert not carried[:, half].any()
    radius2 = nx * nx + ny * ny
    assert not (carried & (radius2 > half * half)).any()
    # Everything else inside the circle is carried.
    inside = (radius2 <= half * half) & (nx != -half) & (ny != -half) & (radius2 > 0)
    np.testing.assert_array_equal(carried, inside)
    mirrored = np.roll(carried[::-1, ::-1], 1, axis=(0, 1))
    np.testing.assert_array_equal(carried, mirrored)
    # Wavenumbers carried never exceed the Nyquist wavenumber.
    ky, kx = tile.wavenumbers()
    assert np.hypot(kx, ky)[carried].max() <= tile.nyquist * (1 + ROUNDOFF)


def test_positions_are_texel_corners():
    """Texel (iy, ix) sits at (x, y) = (ix, iy)·L/N (DEVELOPERS.md, axes convention)."""
    tile = Tile(20.0, 16)
    y, x = tile.positions()
    assert y.shape == (16, 1) and x.shape == (1, 16)
    assert x[0, 0] == 0.0 and y[0, 0] == 0.0
    assert x[0, 5] == pytest.approx(5 * 20.0 / 16, rel=ROUNDOFF)
    assert x[0, -1] == pytest.approx(20.0 - 20.0 / 16, rel=ROUNDOFF)


def test_numpy_numbers_are_accepted_and_normalised():
    tile = Tile(np.float32(25.0), np.int64(32))
    assert type(tile.size) is float and type(tile.resolution) is int
    assert tile == Tile(25.0, 32)


def test_frozen():
    with pytest.raises(dataclasses.FrozenInstanceError):
        Tile(10.0, 16).size = 5.0  # type: ignore[misc]


@pytest.mark.parametrize("size", [0, 0.0, -1.0, math.nan, math.inf, -math.inf, True, "10", None])
def test_bad_size(size):
    with pytest.raises(ValueError, match=r"tile size: .* allowed: a finite length > 0 metres") as info:
        Tile(size, 64)
    assert repr(size) in str(info.value)


@pytest.mark.parametrize("resolution", [0, -64, 63, 15, 14, MIN_RESOLUTION - 2, 64.0, True, "64", None])
def test_bad_resolution(resolution):
    with pytest.raises(ValueError, match=r"tile resolution: .* allowed: an even integer >= 16") as info:
        Tile(100.0, resolution)
    assert repr(resolution) in str(info.value)
