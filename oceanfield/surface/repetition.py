"""Repetition: how much a band stack's composite repeats, from its bands' realised spectra.

The composite's autocorrelation on a grid of shifts, as exact Fourier sums of each band's
realised power (`autocorrelation`), beside what a sea that never repeats would show there;
and the largest correlation where that sea has decorrelated (`repetition`): what
:meth:`BandStack.autocorrelation` and :meth:`BandStack.repetition` compute.

Knows nothing of presets or files; it takes a ``bands.BandStack`` (duck-typed: its ``oceans``).
"""

from __future__ import annotations

import math
import numpy as np
from numpy.typing import NDArray

from .composite import fourier_sum

__all__ = ["autocorrelation", "repetition"]


def autocorrelation(
    stack,
    spacing: float,
    count: int,
    *,
    origin: tuple[float, float] = (0.0, 0.0),
    slope: bool = False,
) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
    """The composite's autocorrelation on a grid of shifts, and what a sea that never
    repeats would show there.

    Shifts (sx, sy) = origin + (j, i)·spacing, 0 ≤ i, j < count, in metres. Each band's
    realised autocovariance Σ P(k) cos(k·s), P = |h0(k)|² + |h0(−k)|² (the time average
    of |ĥ(k, t)|²; times |k|² for the slope vector with ``slope``) is an exact Fourier
    sum (:func:`fourier_sum`); the bands are independent, so the composite's is their
    sum over the total. The second array keeps each band's term only inside its own
    central period (|sx|, |sy| < half its tile): the same spectrum where nothing repeats.
    """
    terms = []
    for ocean in stack.oceans:
        h0 = ocean.amplitudes.astype(np.complex128)
        mirror = np.roll(h0[::-1, ::-1], 1, axis=(0, 1))
        power = np.abs(h0) ** 2 + np.abs(mirror) ** 2
        if slope:
            ky, kx = ocean.tile.wavenumbers()
            power = power * (kx * kx + ky * ky)
        terms.append((float(power.sum()), ocean.tile, power))
    total = sum(t[0] for t in terms)
    value = np.zeros((count, count))
    natural = np.zeros((count, count))
    sx = origin[0] + np.arange(count) * spacing
    sy = origin[1] + np.arange(count) * spacing
    for _, tile, power in terms:
        term = fourier_sum(power, tile.dk, spacing, count, origin).real / total
        value += term
        inside = (np.abs(sy)[:, None] < tile.size / 2) & (np.abs(sx)[None, :] < tile.size / 2)
        natural += np.where(inside, term, 0.0)
    return value, natural


def repetition(stack, extent: float, *, slope: bool = False, count: int = 256,
               decorrelated: float = 0.1) -> dict[str, float]:
    """How much the composite repeats within ``extent`` metres (a square from the origin).

    Shifts: a regular grid over the extent (``count``² shifts) and, for every band but
    the largest, the lattice of its own periods (i, j)·L_b up to ``count`` periods each
    way or the extent, where that band repeats exactly. Returns the largest composite
    autocorrelation at the shifts where a sea that never repeats has decorrelated (its
    autocorrelation below ``decorrelated``), the largest excess over that sea at any
    non-zero shift, and the number of shifts looked at.
    """
    worst = excess = 0.0
    looked = 0
    grids = [(extent / count, count)]
    for ocean in stack.oceans:
        if ocean.tile.size < extent:
            grids.append((ocean.tile.size, int(min(count, math.floor(extent / ocean.tile.size) + 1))))
    for spacing, n in grids:
        value, natural = autocorrelation(stack, spacing, n, slope=slope)
        value[0, 0] = natural[0, 0] = 0.0  # the zero shift
        looked += n * n - 1
        quiet = natural < decorrelated
        if quiet.any():
            worst = max(worst, float(value[quiet].max()))
        excess = max(excess, float((value - natural).max()))
    return {"max_where_decorrelated": worst, "max_excess": excess, "shifts": looked}
