"""The composite map (surface/composite.py): non-uniform FFTs against the exact sums.

The reference is the exact Fourier sum of every held wave (chirp z-transform, exact to
rounding; itself tested against term-by-term sums in test_bands.py). The promise is an
error under 1e-6 of each field's standard deviation (DEVELOPERS.md, surface.bands).
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from oceanfield.physics.seastate import SeaState, wind_sea
from oceanfield.surface.bands import Band, BandStack
from oceanfield.surface.composite import composite_sums
from oceanfield.surface.tile import Tile

OF_SIGMA = 1e-6


def _stack(bound_waves: bool, fft_workers: int = 1) -> BandStack:
    sea = SeaState((wind_sea(8.0),))
    bands = [Band(Tile(60.0, 64), 0.0, 2.5), Band(Tile(19.843, 48), 2.5, math.inf)]
    return BandStack(sea, bands, seed=3, fft_workers=fft_workers, bound_waves=bound_waves)


@pytest.mark.parametrize("bound_waves", [False, True])
@pytest.mark.parametrize("extent,resolution,origin", [(60.0, 128, (0.0, 0.0)),  # band 0 by its FFT
                                                      (47.0, 100, (3.0, -8.0))])  # every band a NUFFT
def test_every_field_matches_the_exact_sums(bound_waves, extent, resolution, origin):
    stack = _stack(bound_waves)
    spacing = extent / resolution
    fast = composite_sums(stack, 2.3, spacing=spacing, resolution=resolution, origin=origin)
    exact = composite_sums(stack, 2.3, spacing=spacing, resolution=resolution, origin=origin, exact=True)
    for part in (np.real, np.imag):  # the eight real fields, two a complex sum
        for got, want in zip(part(fast), part(exact)):
            assert np.abs(got - want).max() < OF_SIGMA * want.std()


def test_the_fields_agree_with_the_exact_composite_to_float32():
    stack = _stack(True)
    fast = stack.composite(1.1, extent=47.0, resolution=96, origin=(1.0, 2.0))
    exact = stack.composite(1.1, extent=47.0, resolution=96, origin=(1.0, 2.0), exact=True)
    for name in ("height", "displacement_x", "displacement_y", "jacobian", "normal"):
        got, want = getattr(fast, name), getattr(exact, name)
        # float32 storage: half an ulp of values near 1 (the Jacobian, normals) is 6e-8
        np.testing.assert_allclose(got, want, rtol=0, atol=OF_SIGMA * float(want.std()) + 1.2e-7)


def test_the_composite_is_the_same_bits_on_any_thread_count():
    one = _stack(True, fft_workers=1).composite(0.7, extent=60.0, resolution=128)
    two = _stack(True, fft_workers=2).composite(0.7, extent=60.0, resolution=128)
    for name in ("height", "displacement_x", "displacement_y", "jacobian", "normal", "foam"):
        np.testing.assert_array_equal(getattr(one, name), getattr(two, name))
    again = _stack(True, fft_workers=2).composite(0.7, extent=60.0, resolution=128)
    np.testing.assert_array_equal(again.height, two.height)


def test_a_pickled_stack_makes_the_same_composite():
    import pickle

    stack = _stack(True)
    before = stack.composite(0.3, extent=47.0, resolution=64)
    copy = pickle.loads(pickle.dumps(stack))
    assert "_composite_lattices" not in copy.__dict__  # the per-grid tables are remade, not shipped
    np.testing.assert_array_equal(copy.composite(0.3, extent=47.0, resolution=64).height, before.height)
