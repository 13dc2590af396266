"""Spectral tools of the analyzer: the Hann window, the seam test, a frequency spectrum, a peak.

`hann_window` (Harris 1978), `seam_ratio` (whether frames repeat across their edges, so
need no window), `frequency_spectrum` (one-sided S(ω) of point time series) and the
parabola-refined peak of a sampled curve. Knows nothing of files, of synthesis or of
sea states.

References
----------
Harris, F. J. (1978). On the use of windows for harmonic analysis with the discrete
Fourier transform. Proc. IEEE 66(1), 51–83 (Hann window, equivalent noise bandwidth 1.5 bins).
"""

from __future__ import annotations

import math

import numpy as np
from numpy.typing import ArrayLike, NDArray

__all__ = ["frequency_spectrum", "hann_window", "seam_ratio"]


def hann_window(n: int) -> NDArray[np.float64]:
    """The periodic ("DFT-even") Hann window of n points, w_j = ½ − ½cos(2πj/n) (Harris 1978)."""
    return 0.5 - 0.5 * np.cos(2.0 * np.pi * np.arange(n) / n)


def seam_ratio(heights: ArrayLike) -> float:
    """RMS jump across the edges of frames over the RMS step between neighbouring texels.

    ``heights`` is one frame (n, n) or several (T, n, n), pooled. About 1 for a field that
    repeats across its edges, above 1.4 for a resolved one that does not (see
    ``measure``'s `_SEAM_RATIO_PERIODIC`); nan for constant frames.
    """
    h = np.asarray(heights, dtype=np.float64)
    inner = np.concatenate([np.diff(h, axis=-1).ravel(), np.diff(h, axis=-2).ravel()])
    seam = np.concatenate([(h[..., :, 0] - h[..., :, -1]).ravel(), (h[..., 0, :] - h[..., -1, :]).ravel()])
    inner_rms = math.sqrt(float(np.mean(inner**2)))
    if inner_rms == 0.0:
        return math.nan
    return math.sqrt(float(np.mean(seam**2))) / inner_rms


def frequency_spectrum(series: ArrayLike, fps: float) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
    """One-sided frequency spectrum S(ω) in m²·s/rad of time series, averaged over points.

    Parameters
    ----------
    series : array_like, shape (T, P)
        P time series of height in metres, T ≥ 2 samples at ``fps`` frames per second.
    fps : float
        Frames per second.

    Returns
    -------
    omega : ndarray
        ω_m = 2π m fps / T for m = 1 … T//2, rad/s.
    density : ndarray
        S(ω_m) with Σ S Δω ≈ the series' variance: Hann-windowed periodograms, divided by
        mean(w²) for the window's energy loss (Harris 1978).
    """
    x = np.asarray(series, dtype=np.float64)
    t = x.shape[0]
    w = hann_window(t)
    x = x - (w @ x) / w.sum()  # the window-weighted mean: no leakage from the mean
    spectrum = np.fft.rfft(x * w[:, None], axis=0) / t
    power = np.mean(np.abs(spectrum) ** 2, axis=1) / np.mean(w**2)
    d_omega = 2.0 * math.pi * fps / t
    one_sided = 2.0 * power[1:]
    if t % 2 == 0:
        one_sided[-1] = power[-1]  # the Nyquist bin has no mirror
    omega = d_omega * np.arange(1, t // 2 + 1)
    return omega, one_sided / d_omega


def _peak(x: NDArray[np.float64], y: NDArray[np.float64]) -> float:
    """Abscissa of the maximum of y(x) on a uniform grid, refined by a parabola through
    the three samples around it (common practice); nan if y holds no energy."""
    if y.size == 0 or not np.any(y > 0):
        return math.nan
    i = int(np.argmax(y))
    if 0 < i < y.size - 1:
        below, top, above = y[i - 1], y[i], y[i + 1]
        curvature = below - 2.0 * top + above
        offset = 0.5 * (below - above) / curvature if curvature < 0 else 0.0
        return float(x[i] + offset * (x[i + 1] - x[i]))
    return float(x[i])
