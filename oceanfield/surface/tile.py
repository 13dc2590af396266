"""The periodic wavenumber lattice of one square ocean tile.

Knows nothing of physics or files.

A tile of side L metres sampled N×N repeats seamlessly because every wave on it has a
whole number of wavelengths across it: k = 2π(nx, ny)/L with integer wave indices
−N/2 ≤ nx, ny < N/2. Arrays follow the FFT layout (index 0 holds n = 0, the upper half
holds the negative indices) and are indexed [iy, ix].
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from numpy.typing import NDArray

__all__ = ["Tile", "MIN_RESOLUTION"]

#: Smallest resolution accepted: below it a tile holds too few waves to look like a sea.
MIN_RESOLUTION: int = 16


@dataclass(frozen=True)
class Tile:
    """A square periodic patch of ocean.

    Parameters
    ----------
    size : float
        Side length L in metres (> 0).
    resolution : int
        Texels per side N: even and ≥ 16 (powers of two are fastest).
    """

    size: float
    resolution: int

    def __post_init__(self) -> None:
        size = self.size
        if isinstance(size, bool) or not isinstance(size, (int, float, np.floating, np.integer)) \
                or not math.isfinite(size) or size <= 0:
            raise ValueError(f"tile size: {size!r} is not allowed; allowed: a finite length > 0 metres")
        n = self.resolution
        if isinstance(n, bool) or not isinstance(n, (int, np.integer)) or n < MIN_RESOLUTION or n % 2:
            raise ValueError(
                f"tile resolution: {n!r} is not allowed; allowed: an even integer >= {MIN_RESOLUTION}"
            )
        object.__setattr__(self, "size", float(size))
        object.__setattr__(self, "resolution", int(n))

    @property
    def spacing(self) -> float:
        """Texel spacing L/N in metres."""
        return self.size / self.resolution

    @property
    def dk(self) -> float:
        """Lattice spacing Δk = 2π/L in rad/m."""
        return 2.0 * math.pi / self.size

    @property
    def nyquist(self) -> float:
        """Largest wavenumber carried, π N / L in rad/m (a wavelength of two texels)."""
        return math.pi * self.resolution / self.size

    def wave_indices(self, rows: slice = slice(None)) -> tuple[NDArray[np.int64], NDArray[np.int64]]:
        """Integer wave indices (ny, nx) in FFT layout, as broadcastable column and row."""
        n = np.fft.fftfreq(self.resolution, d=1.0 / self.resolution).astype(np.int64)
        return n[rows][:, None], n[None, :]

    def wavenumbers(self, rows: slice = slice(None)) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
        """(ky, kx) in rad/m in FFT layout, as broadcastable column and row."""
        ny, nx = self.wave_indices(rows)
        return ny * self.dk, nx * self.dk

    def carried(self, ny: NDArray[np.int64], nx: NDArray[np.int64]) -> NDArray[np.bool_]:
        """Which wave indices carry energy: not the mean, not the unpaired Nyquist row and
        column, and no wavelength shorter than two texels (|k| ≤ π N / L)."""
        half = self.resolution // 2
        return (
            ((nx != 0) | (ny != 0))
            & (nx != -half)
            & (ny != -half)
            & (nx * nx + ny * ny <= half * half)
        )

    def positions(self) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
        """Texel positions (y, x) in metres, as broadcastable column and row."""
        x = np.arange(self.resolution) * self.spacing
        return x[:, None], x[None, :]
