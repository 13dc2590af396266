"""The sinusoids an ocean is made of, as arrays: the exact form behind probes and bodies.

Knows nothing of presets or files, and nothing of how the amplitudes were drawn.

Every field of a frame is a sum of travelling sinusoids,

    F(x, y, t) = Re Σ_j c_j · exp(i (kx_j x + ky_j y − ω_j t)),

with one complex amplitude c_j per field (height, lateral displacement along x and y)
and a shared wave vector and frequency per mode. `WaveModes` holds those arrays for the
modes that carry energy. The FFT frame (``Ocean.frame``) evaluates the same sums on the
texel grid; the probes (``probes``) evaluate them at any point and time, with exact
derivatives (∂/∂x → i kx, ∂/∂t → −i ω).

Anything else that adds sinusoids to the surface plugs in here: a band of another tile
size is more modes with its own lattice's (kx, ky); a second-order bound wave is a mode
whose (k, ω) is the sum or difference of two free waves' and whose amplitudes the
second-order theory gives. `WaveModes.join` puts such sets together.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from numpy.typing import NDArray

__all__ = ["WaveModes"]

_ARRAYS = ("kx", "ky", "omega", "height", "lateral_x", "lateral_y", "lattice")


@dataclass(frozen=True, eq=False)
class WaveModes:
    """Travelling sinusoids: F(x, y, t) = Re Σ c · exp(i (kx x + ky y − ω t)).

    Attributes
    ----------
    kx, ky : NDArray[np.float64], shape (M,)
        Wave vector of each mode in rad/m (internal axes: x along image columns, y along
        rows); the mode travels along +k when ω > 0.
    omega : NDArray[np.float64], shape (M,)
        Angular frequency in rad/s.
    height : NDArray[np.complex128], shape (M,)
        Complex amplitude of the vertical displacement in metres.
    lateral_x, lateral_y : NDArray[np.complex128], shape (M,)
        Complex amplitudes of the lateral displacement along x and y in metres.
    lattice : NDArray[np.float64], shape (M,)
        The spacing dk in rad/m of the regular lattice the mode's wave vector lies on
        (k = (nx, ny)·dk, whole nx, ny: a tile's waves and their bound waves), NaN for a
        mode on none (the default). Probes use it to sum many points by non-uniform FFTs.
    """

    kx: NDArray[np.float64]
    ky: NDArray[np.float64]
    omega: NDArray[np.float64]
    height: NDArray[np.complex128]
    lateral_x: NDArray[np.complex128]
    lateral_y: NDArray[np.complex128]
    lattice: NDArray[np.float64] | None = None

    def __post_init__(self) -> None:
        for name in ("kx", "ky", "omega"):
            object.__setattr__(self, name, np.ascontiguousarray(getattr(self, name), dtype=np.float64).ravel())
        for name in ("height", "lateral_x", "lateral_y"):
            object.__setattr__(self, name, np.ascontiguousarray(getattr(self, name), dtype=np.complex128).ravel())
        lattice = np.full(self.kx.size, np.nan) if self.lattice is None else self.lattice
        object.__setattr__(self, "lattice", np.ascontiguousarray(np.broadcast_to(lattice, self.kx.shape)
                                                                  if np.ndim(lattice) == 0 else lattice,
                                                                  dtype=np.float64).ravel())
        sizes = {getattr(self, name).size for name in _ARRAYS}
        if len(sizes) != 1:
            raise ValueError(f"WaveModes: arrays of different lengths {sorted(sizes)}; allowed: one length")

    def __len__(self) -> int:
        return int(self.kx.size)

    @property
    def wavenumber(self) -> NDArray[np.float64]:
        """|k| of each mode in rad/m."""
        return np.hypot(self.kx, self.ky)

    @property
    def height_variance(self) -> float:
        """Time-averaged variance of the height the modes sum to, Σ |c|²/2, in m² (at one
        instant, modes k and −k of the same frequency interfere and the spatial variance
        differs from it)."""
        return float(np.sum(np.abs(self.height) ** 2) / 2.0)

    def select(self, keep: NDArray[np.bool_]) -> "WaveModes":
        """The modes where ``keep`` is true."""
        keep = np.asarray(keep, dtype=bool)
        return WaveModes(*(getattr(self, name)[keep] for name in _ARRAYS))

    def longer_than(self, wavelength: float) -> "WaveModes":
        """The modes whose wavelength 2π/|k| is at least ``wavelength`` metres."""
        return self.select(self.wavenumber <= 2.0 * np.pi / wavelength)

    @staticmethod
    def join(*parts: "WaveModes") -> "WaveModes":
        """One set holding every mode of ``parts`` (bands, bound waves, ...)."""
        return WaveModes(*(np.concatenate([getattr(p, name) for p in parts]) for name in _ARRAYS))
