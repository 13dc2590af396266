"""Tests for oceanfield.surface.folding: the spectrum-only estimates against the full measurement.

The lattice sums (variance, the covariance of the lateral displacement's derivatives) are
checked against the exact sums over every carried lattice point; the folded share against
the share of negative Jacobians measured on synthesised frames, averaged over seeds (the
estimate is the expectation over seeds; one realisation scatters around it).
"""

from __future__ import annotations

import numpy as np
import pytest

from oceanfield.preset import load_preset
from oceanfield.preset.stats import fold_fraction
from oceanfield.surface.folding import derivative_covariance, folded_share_estimate, lattice_variance
from oceanfield.surface.synth import Ocean
from oceanfield.surface.tile import Tile

#: The polar part of the quadrature against the exact lattice sum: measured agreement is
#: within 0.7 % on the shipped seas at 64²–512² (the lattice's own sampling of Ψ).
_QUADRATURE_RTOL = 0.015


def _exact_sums(sea, tile, lateral_factor):
    """Sums over every carried lattice point of its cell's variance (the amplitudes' own,
    ``amplitudes.cell_variance``) times the moment's weight at the cell's centre."""
    from oceanfield.surface.amplitudes import cell_variance

    ny, nx = tile.wave_indices()
    carried = tile.carried(ny, nx)
    ny = np.broadcast_to(ny, carried.shape)[carried]
    nx = np.broadcast_to(nx, carried.shape)[carried]
    kx, ky = nx * tile.dk, ny * tile.dk
    energy = cell_variance(sea, tile.dk, ny, nx)
    k2 = kx * kx + ky * ky
    lam2 = lateral_factor**2
    covariance = lam2 * np.array([np.sum(energy * kx**4 / k2), np.sum(energy * ky**4 / k2),
                                  np.sum(energy * kx**2 * ky**2 / k2), np.sum(energy * kx**3 * ky / k2)])
    return float(np.sum(energy)), covariance


@pytest.mark.parametrize(
    ("name", "resolution"),
    [("fresh_chop", 256), ("swell_under_wind_sea", 128), ("shallow_coastal", 64), ("long_swell", 512)],
)
def test_lattice_sums_match_the_exact_sums_over_the_lattice(name, resolution):
    preset = load_preset(name, overrides=(f"tile.resolution={resolution}",))
    sea, tile = preset.sea_state(), Tile(preset.tile.size_m, resolution)
    variance, exact = _exact_sums(sea, tile, 1.7)
    assert lattice_variance(sea, tile) == pytest.approx(variance, rel=_QUADRATURE_RTOL)
    covariance = derivative_covariance(sea, tile, 1.7)
    estimated = np.array([covariance[0, 0], covariance[1, 1], covariance[2, 2], covariance[0, 2]])
    # The mixed moment kx³ky vanishes for a sea symmetric about an axis: compare it on the
    # scale of the variances.
    assert estimated[:3] == pytest.approx(exact[:3], rel=_QUADRATURE_RTOL)
    assert abs(estimated[3] - exact[3]) <= _QUADRATURE_RTOL * max(exact[:2])


def test_folded_share_is_the_seed_average_of_the_measured_share():
    """fresh_chop at lateral factor 5 on 256² folds about 5 % of its surface: the estimate
    lies within the scatter of the mean over five seeds (one seed's share scatters by
    about ±0.7 points; 3σ of the mean of five is 1 point)."""
    measured = []
    for seed in range(5):
        preset = load_preset("fresh_chop", overrides=("tile.resolution=256", "surface.lateral_factor=5",
                                                      f"seed={seed}"))
        ocean = Ocean.from_preset(preset, velocity=False, foam_memory=0.0)
        period = preset.sea_state().statistics().tp
        measured.append(fold_fraction(ocean, times=[period * i / 6 for i in range(6)]))
    estimate = folded_share_estimate(preset.sea_state(), Tile(preset.tile.size_m, 256), 5.0)
    assert 0.03 < estimate < 0.08
    assert estimate == pytest.approx(float(np.mean(measured)), abs=0.01)


def test_no_lateral_displacement_never_folds():
    preset = load_preset("storm_force_ten", overrides=("tile.resolution=64",))
    assert folded_share_estimate(preset.sea_state(), Tile(preset.tile.size_m, 64), 0.0) == 0.0


def test_band_moments_by_quadrature_match_the_exact_band_sums():
    """A band's variance and mean-square slope (k_low ≤ |k| < k_high), as `stats` takes
    them beyond 2048², against the exact sums over the band's lattice (surface.bands)."""
    from oceanfield.surface.bands import Band, band_moments
    from oceanfield.surface.folding import lattice_moments

    preset = load_preset("fresh_chop", overrides=("tile.resolution=512",))
    sea, tile = preset.sea_state(), Tile(preset.tile.size_m, 512)
    for low, high in ((0.0, float("inf")), (0.3, 2.5), (1.0, 6.0)):
        variance, slope = lattice_moments(sea, tile, wavenumber_range=(low, high))
        exact_variance, exact_slope = band_moments(sea, Band(tile, low, high))
        assert variance == pytest.approx(exact_variance, rel=_QUADRATURE_RTOL)
        assert slope == pytest.approx(exact_slope, rel=_QUADRATURE_RTOL)
