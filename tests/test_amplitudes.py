"""Lattice amplitudes (surface/amplitudes.py and Ocean._build): cell-integrated spectrum,
variance as requested per ring of equal |k|, and heights that stay Gaussian."""

from __future__ import annotations

import math

import numpy as np
import pytest

from oceanfield import Ocean, SeaState, Tile, height_period, load_preset, wind_sea
from oceanfield.preset import list_presets
from oceanfield.surface.amplitudes import cell_variance, feature_width, ring_scale

SIGMAS = 4.0  # a statistical check allows four standard errors (false alarm < 1e-4)


def _swell(spread_deg: float = 8.0) -> SeaState:
    """A narrow far swell (γ = 6, 8° spread): the hardest shape for a coarse lattice."""
    return SeaState((height_period(1.8, 15.0, gamma=6.0, spread=math.radians(spread_deg)),))


def _cells(sea: SeaState, tile: Tile, **options) -> np.ndarray:
    ny, nx = tile.wave_indices()
    return np.where(tile.carried(ny, nx), cell_variance(sea, tile.dk, ny, nx, **options), 0.0)


# -- cell integration -------------------------------------------------------------------


@pytest.mark.parametrize(
    "sea",
    [
        _swell(),
        SeaState((wind_sea(12.3, fetch=60e3, gamma=3.3, spreading="mitsuyasu", suppress_opposing=True),)),
    ],
    ids=["narrow swell", "wind sea cut at 90 degrees"],
)
def test_cells_integrate_the_spectrum_to_m0(sea):
    """∫Ψ dkx dky = m0 (DESIGN.md, "Spectrum to lattice"): on a tile 2.9 peak wavelengths
    wide the cells' sum equals m0 less what lies beyond the Nyquist disc (the sea's own
    band variance) within 3e-4 (the rule's accuracy, checked below against a finer one),
    so it never reads above 100 % — where sampling Ψ at the cell centres reads up to
    103.5 % for such seas (the old rule)."""
    statistics = sea.statistics()
    tile = Tile(2.9 * statistics.peak_wavelength, 512)
    assert sea.band_variance(0.0, 0.5 * tile.dk) / statistics.m0 < 1e-6  # nothing inside the centre cell
    resolved = 1.0 - sea.band_variance(tile.nyquist, math.inf) / statistics.m0
    captured = _cells(sea, tile).sum() / statistics.m0
    assert captured == pytest.approx(resolved, abs=3e-4)
    assert captured <= 1.0


def test_cell_rule_agrees_with_a_rule_of_twice_the_order():
    """The quadrature's own error: halving the assumed feature width doubles every rule's
    order; cells holding ≥ 1 % of the variance change by < 0.5 %, the total by < 2e-4."""
    sea = _swell()
    tile = Tile(1024.0, 128)
    width = feature_width(sea)
    coarse, fine = _cells(sea, tile, width=width), _cells(sea, tile, width=width / 2)
    big = fine > 0.01 * fine.sum()
    assert big.sum() >= 3
    np.testing.assert_allclose(coarse[big], fine[big], rtol=5e-3)
    assert coarse.sum() == pytest.approx(fine.sum(), rel=2e-4)


def test_feature_width_is_the_narrowest_spread():
    """cos-2s with s: circular spread √(2/(s+1)) (Kuik et al. 1988), here 8° = 0.1396 rad
    (below the JONSWAP peak's 0.14): the rule reads it from the spreading, within 1 %."""
    assert feature_width(_swell(8.0)) == pytest.approx(math.radians(8.0), rel=1e-2)
    assert feature_width(_swell(30.0)) == pytest.approx(0.14, rel=1e-12)


# -- variance as requested --------------------------------------------------------------


def test_ring_scale():
    np.testing.assert_allclose(ring_scale([4.0, 0.0, 1.0], [1.0, 3.0, 0.0]), [0.5, 1.0, 0.0])


@pytest.mark.parametrize("name", [name for name, _, _ in list_presets()])
def test_every_shipped_preset_holds_its_requested_hs_for_any_seed(name):
    """Issue 11: a tile's realised Hs (4√ of its time-averaged variance Σ2|h0|²) within
    2 % of the requested Hs = 4√m0 (WMO-No. 702; CEM II-1-147) for every shipped preset,
    here for its own seed and one other (tools/sea_tables.py hs runs all 20 seeds), at
    the preset's own tile and resolution."""
    preset = load_preset(name)
    hs = preset.sea_state().statistics().hs
    tile = Tile(preset.tile.size_m, preset.tile.resolution)
    for seed in (preset.seed, 1):
        ocean = Ocean(preset.sea_state(), tile, seed=seed, fold_threshold=0.0)
        assert ocean.realised_hs == pytest.approx(hs, rel=0.02), seed
        # and the rescale is exact: the tile holds the lattice's target to float32
        assert ocean.realised_variance == pytest.approx(ocean.lattice_variance, rel=1e-5)


def test_random_heights_keep_their_scatter():
    """wave_heights='random' keeps the Rayleigh amplitudes: over 20 seeds the realised
    variance of a narrow swell on 2.9 peak wavelengths scatters with the relative std
    √(Σe²)/Σe (e: expected variance per ±k pair, exponential), within 4 standard errors
    of a sample std (1/√(2(n−1)))."""
    sea = _swell()
    tile = Tile(1024.0, 64)
    variances = np.array(
        [Ocean(sea, tile, seed=seed, fold_threshold=0.0, wave_heights="random").realised_variance for seed in range(20)]
    )
    cells = _cells(sea, tile)
    pairs = cells + np.roll(cells[::-1, ::-1], 1, axis=(0, 1))
    predicted = math.sqrt(0.5 * (pairs**2).sum()) / (0.5 * pairs.sum())
    measured = variances.std(ddof=1) / variances.mean()
    assert predicted > 0.1  # few waves: the scatter the default removes is large
    assert measured == pytest.approx(predicted, rel=SIGMAS / math.sqrt(2 * (variances.size - 1)))


def test_every_wavenumber_band_of_a_frame_holds_its_cell_integrated_target():
    """Issue 11's check: half-octave band energies within 10 % of the cell-integrated target
    in every band holding > 5 % of the variance, measured on frames (mean of 8 over a peak
    period, the FFT of the height map) of fresh_chop's tile — bands placed both on the
    lattice (|n| from 2^(j/2)) and on the spectral peak (kp·2^(i/2)). The time average
    leaves the standing-wave beat of opposed waves, a few per cent here."""
    preset = load_preset("fresh_chop", overrides=["tile.resolution=128"])
    ocean = Ocean.from_preset(preset, foam_memory=0.0)
    tile, sea = ocean.tile, ocean.sea_state
    n = tile.resolution
    ny, nx = tile.wave_indices()
    k = np.broadcast_to(np.hypot(nx, ny) * tile.dk, (n, n))
    target = _cells(sea, tile)
    period = sea.statistics().tp
    power = np.zeros((n, n))
    for i in range(8):
        power += np.abs(np.fft.fft2(ocean.frame(period * i / 8).height.astype(np.float64)) / n**2) ** 2 / 8
    kp = 2 * math.pi / sea.statistics().peak_wavelength
    for edges in (tile.dk * 2 ** (np.arange(0, 17) / 2), kp * 2 ** (np.arange(-8, 10) / 2)):
        band = np.digitize(k, edges)
        expected = np.bincount(band.ravel(), target.ravel())
        measured = np.bincount(band.ravel(), power.ravel(), minlength=expected.size)
        big = expected > 0.05 * expected.sum()
        assert big.sum() >= 3
        np.testing.assert_allclose(measured[big], expected[big], rtol=0.10)


def test_preview_and_final_share_their_long_waves():
    """Same tile and seed at 64² and 256²: every ring wholly inside the smaller lattice
    (q < 32²) gets the same factor, so those waves' amplitudes agree to float32."""
    sea = SeaState((wind_sea(10.0),))
    small = Ocean(sea, Tile(256.0, 64), seed=5, fold_threshold=0.0)
    large = Ocean(sea, Tile(256.0, 256), seed=5, fold_threshold=0.0)
    index = np.fft.fftfreq(64, 1.0 / 64).astype(int)
    rows, columns = np.meshgrid(index % 256, index % 256, indexing="ij")
    inside = (index[:, None] ** 2 + index[None, :] ** 2) < 32**2
    np.testing.assert_allclose(small.amplitudes[inside], large.amplitudes[rows, columns][inside], rtol=1e-6, atol=0)
    assert np.count_nonzero(small.amplitudes[inside]) > 0.9 * (inside.sum() - 1)


def test_heights_stay_gaussian():
    """Linear elevation is Gaussian: E h³ = 0 and E h⁴ = 3 (E h²)² (Longuet-Higgins 1952;
    Tucker, Challenor & Carter 1984 on simulated seas). Per seed, the tile's mean h³/V^1.5
    and h⁴/V² with V the lattice variance, over 80 seeds: the means within 4 standard
    errors (from the seeds' own spread) of 0 and 3. Rescaling 'as requested' bounds this
    for a wind sea of this size to an excess kurtosis near −0.05 (the sphere's projection,
    −6Σv²/(d+2)/V² over rings), well inside the test's resolution."""
    sea = SeaState((wind_sea(10.0),))
    tile = Tile(4 * sea.statistics().peak_wavelength, 64)
    third, fourth = [], []
    for seed in range(80):
        # linear heights: the second-order bound waves skew them on purpose (tests/test_bound.py)
        ocean = Ocean(sea, tile, seed=seed, lateral_factor=0.0, fold_threshold=0.0, bound_waves=False)
        h = ocean.frame(2.0).height.astype(np.float64) / math.sqrt(ocean.lattice_variance)
        third.append(np.mean(h**3))
        fourth.append(np.mean(h**4))
    for values, expected in ((np.array(third), 0.0), (np.array(fourth), 3.0)):
        error = values.std(ddof=1) / math.sqrt(values.size)
        assert abs(values.mean() - expected) <= SIGMAS * error, (values.mean(), error)
