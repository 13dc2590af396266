"""Compile every kernel of a frame once, into numba's on-disk cache (for farm images).

Knows nothing of presets or files beyond numba's own cache.

The kernels (``_kernels``) compile on their first call and numba caches the machine code
on disk (``cache=True``), in ``__pycache__`` beside the package or under the folder named
by the ``NUMBA_CACHE_DIR`` environment variable. A fresh install therefore pays several
seconds of compilation on its first render, and so does every farm node whose package
folder is read-only or whose cache is lost. :func:`compile_kernels` synthesises a small
frame through every path a render can take (plain, velocity, lingering foam), and sums
the waves at a point as the shot commands (probe, float, scene) do, so that running it
once while a farm image is built leaves every kernel compiled in that cache; it also runs a
vessel's wake once (frame and point sums). The look's kernels are run by the command line
(``look.writing.compile_look_kernels``), since the look sits above this room.
Machine code is cached per CPU model: build the image on the nodes' kind of CPU.
"""

from __future__ import annotations

import math
import time

__all__ = ["compile_kernels"]

_RESOLUTION = 32  # the kernels' machine code depends on array types, not sizes


def compile_kernels() -> float:
    """Run every frame path once on a tiny tile; returns the seconds it took."""
    from ..physics.seastate import SeaState, wind_sea
    from .probes import surface_at
    from .synth import Ocean
    from .tile import Tile

    started = time.perf_counter()
    sea = SeaState((wind_sea(8.0, fetch=20e3, direction=math.radians(30.0)),))
    tile = Tile(64.0, _RESOLUTION)
    for options in ({}, {"velocity": True}, {"foam_memory": 1.0, "foam_samples": 2}, {"loop_period": 20.0}):
        ocean = Ocean(sea, tile, seed=1, **options)
        ocean.frame(0.5, buffer=ocean.new_buffer())
    # the exact sums at points of `probe`, `float` and `scene` (the rest position's inversion included)
    surface_at(ocean.modes(), [3.0], [4.0], [0.5], method="exact")
    # and their sampled form (many points: the frame's grids, surface._nufft), the same kernel
    surface_at(ocean.modes(), [3.0], [4.0], [0.5], method="sampled")
    _wake_kernels_once()
    return time.perf_counter() - started


def _wake_kernels_once() -> None:
    """A vessel's wake (`vessels` in a preset): a frame with and without velocity, and its
    sums at a few points (direct) and at many (the non-uniform FFT's path)."""
    import numpy as np

    from .wake import Course, Hull, Wake, WakeRegion

    course = Course(times=np.array([0.0, 4.0]), x=np.array([4.0, 28.0]), y=np.array([16.0, 16.0]))
    for velocity in (False, True):
        wake = Wake([(Hull(6.0, 2.0, 0.4), course)], WakeRegion(0.0, 0.0, 32.0, _RESOLUTION),
                    lookback=4.0, velocity=velocity)
        wake.frame(3.0)
    for count in (1, 64):
        wake.surface_at(np.full(count, 10.0), np.linspace(8.0, 24.0, count), np.full(count, 3.0))
