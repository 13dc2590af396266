"""Bands of tiles: disjoint wavenumbers, own amplitude streams, layout, composite, repetition."""

from __future__ import annotations

import math
import numpy as np
import pytest

from oceanfield.physics.seastate import SeaState, wind_sea
from oceanfield.surface.bands import Band, BandStack, band_moments, fourier_sum, layout_bands
from oceanfield.surface.synth import Ocean, amplitude_noise
from oceanfield.surface.tile import Tile

ONE_CM = 2 * math.pi / 0.01


def _sea(wind=10.0):
    return SeaState(
        (wind_sea(wind, spectrum="elfouhaily", spreading="elfouhaily", suppress_opposing=True),),
        surface_tension=0.0728,
    )


@pytest.fixture(scope="module")
def layout():
    return layout_bands(_sea(), reach=300.0, shortest_wavelength=0.01, resolution=256)


def test_band_zero_is_bit_identical_to_a_single_tile():
    sea = SeaState((wind_sea(10.0),))
    tile = Tile(128.0, 32)
    single = Ocean(sea, tile, seed=5, fft_workers=1).frame(1.25)
    stack = BandStack(sea, [Band(tile, 0.0, math.inf)], seed=5, fft_workers=1)
    banded = stack.frames(1.25)[0]
    for name in ("height", "displacement_x", "displacement_y", "jacobian", "foam"):
        assert np.array_equal(getattr(single, name), getattr(banded, name))
    ny, nx = tile.wave_indices()
    assert np.array_equal(amplitude_noise(5, ny, nx), amplitude_noise(5, ny, nx, 0))
    assert not np.array_equal(amplitude_noise(5, ny, nx, 1), amplitude_noise(5, ny, nx, 0))


def test_changing_one_band_leaves_the_others_bit_identical():
    sea = _sea()
    bands = [Band(Tile(200.0, 64), 0.0, 0.9), Band(Tile(20.0 * math.sqrt(2), 64), 0.9, 5.0),
             Band(Tile(3.0, 32), 5.0, 30.0)]
    a = BandStack(sea, bands, seed=9)
    changed = list(bands)
    changed[1] = Band(Tile(20.0 * math.sqrt(2), 128), 0.9, 5.0)
    b = BandStack(sea, changed, seed=9)
    assert np.array_equal(a.oceans[0].amplitudes, b.oceans[0].amplitudes)
    assert np.array_equal(a.oceans[2].amplitudes, b.oceans[2].amplitudes)
    # the changed band keeps its long waves (same (seed, band, nx, ny) keys)
    assert np.array_equal(a.oceans[1].amplitudes[:4, :4], b.oceans[1].amplitudes[:4, :4])


def test_overlapping_bands_are_refused():
    sea = _sea()
    with pytest.raises(ValueError, match="overlap"):
        BandStack(sea, [Band(Tile(100.0, 32), 0.0, 2.0), Band(Tile(10.0, 32), 1.0, 5.0)])


def test_layout_covers_the_range_once_with_incommensurate_tiles(layout):
    bands = layout.bands
    assert bands[0].k_low == 0.0 and bands[-1].k_high == pytest.approx(ONE_CM)
    for a, b in zip(bands[:-1], bands[1:]):
        assert b.k_low == a.k_high  # contiguous and disjoint: every k in exactly one band
        assert a.k_high <= a.tile.nyquist * (1 + 1e-12)
    assert bands[-1].k_high <= bands[-1].tile.nyquist * (1 + 1e-12)
    sizes = [b.tile.size for b in bands]
    for i, a in enumerate(sizes):
        for b in sizes[i + 1:]:
            ratio = max(a, b) / min(a, b)
            # within 16 periods of the larger tile no whole number of the smaller tile's
            # periods comes within 1 % of one of them: the sum does not repeat there
            assert min(abs(q * ratio - round(q * ratio)) for q in range(1, 17)) >= 0.01


def test_variance_and_slope_accounting(layout):
    """Σ band variances equals the spectrum's variance over the covered wavenumbers to 1 %
    (DESIGN: lattice sum Σ Ψ Δk² → ∫Ψ d²k), the slope variance likewise; each band's
    Ocean holds the variance its lattice carries."""
    sea = _sea()
    moments = [band_moments(sea, band) for band in layout.bands]
    k_low = 0.5 * layout.bands[0].tile.dk
    variance = sum(m[0] for m in moments)
    slope = sum(m[1] for m in moments)
    assert variance == pytest.approx(sea.band_variance(k_low, ONE_CM), rel=0.01)
    assert slope == pytest.approx(sea.slope_variance(k_low, ONE_CM), rel=0.01)
    small = Band(layout.bands[-1].tile, layout.bands[-1].k_low, layout.bands[-1].k_high)
    ocean = Ocean(sea, small.tile, band=3, wavenumber_range=(small.k_low, small.k_high))
    assert ocean.lattice_variance == pytest.approx(band_moments(sea, small)[0], rel=1e-12)


@pytest.mark.parametrize("wind", [7.0, 12.0, 15.0])
def test_band_stack_slopes_match_cox_munk(wind):
    """Bands reaching 1 cm of a fully developed unified-spectrum sea: the mean-square slope
    of the band lattices within 15 % of Cox & Munk (1954) clean surface, 0.003 + 5.12e-3 U
    (total from memory; components confirmed, see tests/test_elfouhaily.py)."""
    sea = _sea(wind)
    layout = layout_bands(sea, reach=150.0, shortest_wavelength=0.01, resolution=256, max_resolution=512)
    mss = sum(band_moments(sea, band)[1] for band in layout.bands)
    assert mss == pytest.approx(0.003 + 5.12e-3 * wind, rel=0.15)


def test_fourier_sum_is_exact_off_the_lattice():
    rng = np.random.default_rng(1)
    n = 16
    c = rng.normal(size=(n, n)) + 1j * rng.normal(size=(n, n))
    dk, spacing, count, origin = 2 * math.pi / 7.3, 0.37, 11, (1.1, -2.3)
    got = fourier_sum(c, dk, spacing, count, origin)
    idx = np.fft.fftfreq(n, d=1.0 / n)
    kx = idx[None, :] * dk
    ky = idx[:, None] * dk
    worst = 0.0
    for i in range(count):
        for j in range(count):
            x, y = origin[0] + j * spacing, origin[1] + i * spacing
            direct = np.sum(c * np.exp(1j * (kx * x + ky * y)))
            worst = max(worst, abs(direct - got[i, j]))
    assert worst < 1e-9 * np.abs(c).sum()


def test_composite_of_one_band_on_its_own_grid_is_its_frame():
    sea = SeaState((wind_sea(10.0),))
    tile = Tile(150.0, 32)
    stack = BandStack(sea, [Band(tile, 0.0, math.inf)], seed=2, lateral_factor=0.8, fft_workers=1)
    frame = stack.frames(3.0)[0]
    composite = stack.composite(3.0, extent=tile.size, resolution=tile.resolution)
    scale = float(np.abs(frame.height).max())
    assert np.abs(composite.height - frame.height).max() < 1e-5 * scale
    assert np.abs(composite.displacement_x - frame.displacement_x).max() < 1e-5 * scale
    assert np.abs(composite.jacobian - frame.jacobian).max() < 1e-4
    assert np.abs(composite.normal - frame.normal).max() < 1e-4
    assert np.abs(composite.foam - frame.foam).max() < 1e-3
    # a composite twice as wide at the same texel repeats the single tile exactly
    wide = stack.composite(3.0, extent=2 * tile.size, resolution=2 * tile.resolution)
    assert np.abs(wide.height[:32, 32:] - frame.height).max() < 1e-5 * scale


def test_composite_does_not_repeat_within_the_reach():
    """A single tile's autocorrelation is 1 at its own period; the bands' composite stays
    below 0.35 (height) and 0.5 (slope) at every shift within the reach where a sea that
    never repeats has decorrelated (issue checks)."""
    sea = _sea(10.0)
    layout = layout_bands(sea, reach=300.0, shortest_wavelength=0.01, resolution=256, max_resolution=512)
    stack = BandStack(sea, layout.bands, seed=4, fft_workers=1)
    height = stack.repetition(300.0, count=128)
    slope = stack.repetition(300.0, slope=True, count=128)
    assert height["max_where_decorrelated"] < 0.35
    assert slope["max_where_decorrelated"] < 0.5
    single = BandStack(sea, [layout.bands[1]], seed=4)
    value, _ = single.autocorrelation(layout.bands[1].tile.size, 3)
    assert value[0, 1] == pytest.approx(1.0, abs=1e-9)  # one tile: 1.0 at its period


def test_analyzer_times_a_composite_sequence_right():
    """The analyzer on a non-periodic composite of two bands finds g_eff/g = 1 ± 0.01 (the
    issue's figure): the bands keep each wave's deep-water frequency ω² = gk (Stewart 2008)."""
    from oceanfield.analysis.measure import analyze_heights
    from oceanfield.physics.constants import GRAVITY
    from oceanfield.physics.seastate import height_period

    sea = SeaState((height_period(1.0, 4.0, spread=math.radians(25)),))
    wavelength = GRAVITY * 4.0**2 / (2 * math.pi)
    extent = 16 * wavelength
    bands = [Band(Tile(2 * extent, 128), 0.0, 0.45), Band(Tile(extent * math.sqrt(7) / 8, 64), 0.45, 2.0)]
    stack = BandStack(sea, bands, seed=11, fft_workers=1)
    fps = 3.0
    heights = np.stack([stack.composite(i / fps, extent=extent, resolution=96).height for i in range(96)])
    result = analyze_heights(heights, extent, fps)
    assert not result.periodic
    assert result.dispersion.g_ratio == pytest.approx(1.0, abs=0.01)
