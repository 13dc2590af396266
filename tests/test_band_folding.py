"""The folded share of a band stack's summed surface: estimate against realised frames.

The bands' derivatives add and their amplitudes are independent, so the summed surface's
derivative covariance is the sum of the bands' (``folding.folded_share_of_bands``). The
check is the share of J < 0 measured on the bands' summed frames (the composite's exact
sums on a grid as fine as the finest band), averaged over seeds, times and places.
"""

from __future__ import annotations

import math

import numpy as np

from oceanfield.physics.seastate import SeaState, wind_sea
from oceanfield.preset.schema import load_preset
from oceanfield.preset.stats import expected_folded_share, fold_warning, summed_surface_shares
from oceanfield.surface.bands import Band, BandStack
from oceanfield.surface.folding import folded_share_estimate, folded_share_of_bands
from oceanfield.surface.tile import Tile


def test_summed_bands_fold_as_their_summed_covariance_predicts():
    # 14 m/s over 60 km (peak wavelength 54 m) at lateral factor 5: band 0 alone would fold
    # about 2 % of its surface, the second band alone about 1 %, the sum about 9 %.
    sea = SeaState((wind_sea(14.0, fetch=60e3),))
    small = 200.0 / (4.0 * math.sqrt(2.0))
    bands = [Band(Tile(200.0, 128), 0.0, 1.5), Band(Tile(small, 128), 1.5, 11.0)]
    lateral = 5.0
    estimate = folded_share_of_bands(sea, bands, lateral)
    alone = folded_share_estimate(sea, bands[0].tile, lateral, wavenumber_range=(0.0, 1.5))
    measured, foamed, modelled = [], [], []
    for seed in range(3):
        stack = BandStack(sea, bands, seed=seed, lateral_factor=lateral, fold_threshold=0.0, bound_waves=False)
        modelled.append(summed_surface_shares(stack.oceans))  # what `stats` reports
        for i in range(3):
            for origin in ((0.0, 0.0), (100.0, 60.0)):
                # two of the small band's tiles at its own spacing: every wave of both bands
                fields = stack.composite(5.88 * i / 3, extent=2 * small, resolution=256, origin=origin)
                measured.append(float(np.mean(fields.jacobian < 0.0)))
            # foam as the bands' maps are combined (their maximum): independent bands, so
            # the share clear of foam is the product of each band's measured clear share
            clear = [1.0 - float(np.mean(band.foam > 0.5)) for band in stack.frames(5.88 * i / 3)]
            foamed.append(1.0 - float(np.prod(clear)))
    share = float(np.mean(measured))
    # 18 samples of a share near 0.09 scatter by about ±0.002 (standard error, measured);
    # 15 % of the share allows for the estimate's own sampling error (±0.0013) and more
    assert abs(share - estimate) <= 0.15 * estimate, (share, estimate)
    assert share > 3.0 * alone  # band 0 alone misses most of the folding
    # The shares `stats` reports for a banded preset (Gaussian models of the summed Jacobian
    # and of each band's, from each stack's realised amplitudes) against the frames, to 15 %.
    folded_model = float(np.mean([m[0] for m in modelled]))
    foam_model = float(np.mean([m[1] for m in modelled]))
    assert abs(share - folded_model) <= 0.15 * folded_model, (share, folded_model)
    assert abs(float(np.mean(foamed)) - foam_model) <= 0.15 * foam_model, (np.mean(foamed), foam_model)


def test_a_banded_preset_warns_of_folding_its_first_band_alone_would_not_show():
    preset = load_preset("open_ocean_horizon", overrides=("surface.lateral_factor=4",))
    share = expected_folded_share(preset)
    assert 0.10 < share < 0.15  # 0.120 from the summed covariance of its bands
    assert fold_warning(preset) == (
        "surface.lateral_factor: 4 folds 12 % of the surface over itself (more than 10 %); "
        "crests will look torn: lower it"
    )


def test_one_band_is_the_single_tile_estimate():
    preset = load_preset("moderate_breeze", overrides=("surface.lateral_factor=4", "tile.resolution=128"))
    tile = Tile(preset.tile.size_m, 128)
    assert expected_folded_share(preset) == folded_share_estimate(preset.sea_state(), tile, 4.0)


def test_stats_of_a_banded_preset_report_the_summed_surface():
    """`stats` of open_ocean_horizon: the foam share is the wind's whitecap share, which
    band 0's foam map carries (see the next test), and the folded share is the summed
    surface's."""
    from oceanfield.preset.stats import sea_report

    report = sea_report(load_preset("open_ocean_horizon", overrides=("surface.lateral_factor=4",)))
    assert abs(report["foam_surface_share"] - report["whitecap_coverage"]) <= 1e-3 * report["whitecap_coverage"] + 1e-6
    assert abs(report["folded_surface_share"] - 0.120) <= 0.01  # the expected share above, to its sampling


def test_a_banded_sea_foams_as_the_wind_calls_for_in_its_maps():
    """open_ocean_horizon at 9.5 m/s calls for whitecaps on 0.83 % of the surface (Monahan &
    O'Muircheartaigh 1980). The band holding the peak carries them: its foam map exceeds ½
    on that share of its frames, the finer bands' maps on none (so their maximum, the
    README's combination, shows the wind's share), and the composite solves its own
    threshold on the waves it holds: its foam covers the same share. (Before, one threshold
    calibrated on the summed Jacobian left every map bare: 0.0000 % in each band.)"""
    from oceanfield.preset.banding import band_stack

    preset = load_preset("open_ocean_horizon", overrides=("bands.reach_m=1500", "bands.max_resolution=512"))
    stack = band_stack(preset, foam_memory=0.0)
    coverage = stack.oceans[0].whitecap_coverage
    assert 0.005 < coverage < 0.012
    assert stack.whitecap_band == 0
    shares = np.array([[float(np.mean(band.foam > 0.5)) for band in stack.frames(t)] for t in (0.0, 9.0, 23.0)])
    # a 512² band-0 frame holds ~2000 foamed texels in patches of a few: its share scatters
    # by about 10 % of itself frame to frame (measured); three frames, 15 %
    assert abs(shares[:, 0].mean() - coverage) <= 0.15 * coverage, (shares[:, 0], coverage)
    assert shares[:, 1:].max() == 0.0
    composite = [float(np.mean(stack.composite(t, extent=1500.0, resolution=384).foam > 0.5)) for t in (0.0, 9.0)]
    assert abs(np.mean(composite) - coverage) <= 0.2 * coverage, (composite, coverage)
