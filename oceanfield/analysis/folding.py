"""Folding: the Jacobian of a lateral displacement map, negative where the surface folds.

Spectral derivatives for frames that repeat across their edges, central differences for
those that do not. Knows nothing of files or of synthesis.
"""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike, NDArray

__all__ = ["lateral_jacobian"]


def lateral_jacobian(
    displacement_x: ArrayLike, displacement_y: ArrayLike, spacing: float, *, periodic: bool
) -> NDArray[np.float64]:
    """Jacobian determinant of the lateral map (x, y) → (x + Dx, y + Dy), dimensionless.

    J = (1 + ∂Dx/∂x)(1 + ∂Dy/∂y) − (∂Dx/∂y)(∂Dy/∂x); J < 0 where the surface folds.
    Derivatives are spectral for periodic frames, second-order central differences
    otherwise. ``spacing`` is the texel size in metres, displacements in metres.
    """
    dx = np.asarray(displacement_x, dtype=np.float64)
    dy = np.asarray(displacement_y, dtype=np.float64)
    if periodic:
        n_rows, n_cols = dx.shape
        ky = 2.0 * np.pi * np.fft.fftfreq(n_rows, d=spacing)[:, None]
        kx = 2.0 * np.pi * np.fft.rfftfreq(n_cols, d=spacing)[None, :]
        if n_rows % 2 == 0:
            ky[n_rows // 2] = 0.0  # the unpaired Nyquist row has no odd derivative
        if n_cols % 2 == 0:
            kx[:, -1] = 0.0
        fx, fy = np.fft.rfft2(dx), np.fft.rfft2(dy)
        shape = dx.shape
        dxdx = np.fft.irfft2(1j * kx * fx, s=shape)
        dxdy = np.fft.irfft2(1j * ky * fx, s=shape)
        dydx = np.fft.irfft2(1j * kx * fy, s=shape)
        dydy = np.fft.irfft2(1j * ky * fy, s=shape)
    else:
        dxdy, dxdx = np.gradient(dx, spacing)
        dydy, dydx = np.gradient(dy, spacing)
    return (1.0 + dxdx) * (1.0 + dydy) - dxdy * dydx
