"""A band stack's frame spreads its bands over threads without changing a bit.

``BandStack.frames`` runs small bands whole on a pool, and wide bands' pair sums and
spectra there before their transforms on all threads; every band must come out the same
bits as its own ``Ocean.frame``, on one thread or several, with or without the caller's
buffers, with bound waves, lingering foam and velocity.
"""

from __future__ import annotations

import math
import pickle

import numba
import numpy as np
import pytest

from oceanfield.physics.seastate import SeaState, wind_sea
from oceanfield.surface.bands import Band, BandStack
from oceanfield.surface.tile import Tile


def _bands():
    # one band wide enough (256²) to take the all-threads path, three small ones
    return [
        Band(Tile(400.0, 256), 0.0, 1.5),
        Band(Tile(40.0 * math.sqrt(2), 64), 1.5, 5.0),
        Band(Tile(6.0 * math.sqrt(7) / 2, 48), 5.0, 20.0),
        Band(Tile(1.3 * math.sqrt(13) / 3, 32), 20.0, 60.0),
    ]


def _sea():
    return SeaState((wind_sea(14.0, fetch=60e3),))


def _packed(fields):
    """Every map of a band's Fields as one byte string."""
    maps = (fields.height, fields.displacement_x, fields.displacement_y, fields.jacobian, fields.normal, fields.foam)
    parts = [np.ascontiguousarray(a).tobytes() for a in maps]
    if fields.velocity is not None:
        parts.append(np.ascontiguousarray(fields.velocity).tobytes())
    return b"".join(parts)


@pytest.fixture(scope="module")
def stacks():
    sea = _sea()
    options = dict(seed=11, bound_waves=True, foam_memory=1.5, foam_samples=2, velocity=True)
    return BandStack(sea, _bands(), fft_workers=2, **options), BandStack(sea, _bands(), fft_workers=1, **options)


def test_every_band_is_the_bits_of_its_own_ocean_frame(stacks):
    threaded, serial = stacks
    assert threaded._wide == (0,) and all(ocean.bound is not None for ocean in threaded.oceans)
    previous = numba.get_num_threads()
    numba.set_num_threads(min(2, numba.config.NUMBA_NUM_THREADS))
    try:
        buffers = threaded.new_buffers()
        for t in (0.0, 3.7):
            alone = [ocean.frame(t) for ocean in threaded.oceans]
            for frames in (threaded.frames(t, buffers=buffers), threaded.frames(t), serial.frames(t)):
                assert [_packed(f) for f in frames] == [_packed(f) for f in alone]
        assert numba.get_num_threads() == min(2, numba.config.NUMBA_NUM_THREADS)  # the caller's count is kept
    finally:
        numba.set_num_threads(previous)


def test_frames_fill_the_given_buffers(stacks):
    threaded, _ = stacks
    buffers = threaded.new_buffers()
    frames = threaded.frames(1.0, buffers=buffers)
    for fields, buffer in zip(frames, buffers):
        assert np.shares_memory(fields.height, buffer)


def test_wrong_buffers_and_times_are_refused(stacks):
    threaded, _ = stacks
    buffers = threaded.new_buffers()
    with pytest.raises(ValueError, match=r"buffers: a list of 3 is not allowed; allowed: one buffer per band \(4\)"):
        threaded.frames(0.0, buffers=buffers[:3])
    buffers[2] = buffers[1]
    with pytest.raises(ValueError, match=r"buffer: .* shape \(4, 64, 64\) is not allowed"):
        threaded.frames(0.0, buffers=buffers)
    with pytest.raises(ValueError, match="t: nan"):
        threaded.frames(float("nan"))


def test_a_pickled_stack_makes_its_own_pool(stacks):
    threaded, _ = stacks
    threaded.frames(0.5)
    copy = pickle.loads(pickle.dumps(threaded))
    assert copy._executor is None
    assert [_packed(f) for f in copy.frames(0.5)] == [_packed(f) for f in threaded.frames(0.5)]
