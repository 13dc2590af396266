"""The folded share of a displaced surface and the lattice's variance, from the spectrum alone.

Knows nothing of presets or files: it takes a sea state, a tile and the lateral factor.

Synthesising frames to see how much of a surface folds costs an Ocean (amplitudes on the
whole lattice, compiled kernels) and a few frames; a farm chunk should not pay that to
print a warning. The Jacobian of the displaced surface,

    J = (1 + ∂Dx/∂x)(1 + ∂Dy/∂y) − (∂Dx/∂y)²,

depends at a point on three derivatives of the lateral displacement. Each is a sum of
many independent wave components (``synth``: ∂Dx/∂x = −λ Σ (kx²/k) ĥ, ∂Dy/∂y =
−λ Σ (ky²/k) ĥ, ∂Dx/∂y = −λ Σ (kx ky/k) ĥ), so by the central limit theorem they are
jointly Gaussian with zero mean and covariances λ² Σ (kx^a ky^b / k²) Ψ(k) Δk² with
a + b = 4, the lattice's fourth-order moments (the statistics of a Gaussian random
moving surface follow from its spectral moments: Longuet-Higgins 1957, Phil. Trans. R.
Soc. A 249; citation from memory). The share of the surface with J < 0, averaged over
space and time, is the probability that J < 0 for that Gaussian, evaluated here on a
fixed sample. Tested against the share measured on synthesised frames.

The sums run over the lattice exactly for the long waves (|n| ≤ ``_EXACT_INDEX``, where
the lattice's discreteness matters) and as a polar integral over the rest of the disk
the lattice carries (|k| ≤ Nyquist), where Ψ is smooth on the scale of a cell.
"""

from __future__ import annotations

import math
import numpy as np
from numpy.typing import NDArray

__all__ = [
    "derivative_covariance",
    "folded_share_estimate",
    "folded_share_of_bands",
    "folded_share_from_covariance",
    "lattice_moments",
    "lattice_variance",
]

#: Wave indices up to this |n| are summed exactly; beyond, integrated (a cell is then
#: under 3 % of |k|, and Ψ changes little across it).
_EXACT_INDEX = 32
_RADIAL_NODES = 512  # log-spaced |k| nodes of the polar integral
_ANGLE_NODES = 96  # directions (the periodic trapezoid rule converges fast in angle)
_SAMPLES = 1 << 16  # Gaussian sample for P(J < 0): standard error under 0.0013


def _exact_points(tile, k_low: float, k_high: float) -> tuple[NDArray[np.float64], NDArray[np.float64], float]:
    """(kx, ky) of the carried lattice points with |n| ≤ _EXACT_INDEX and k_low ≤ |k| <
    k_high, and the radius of the disk with their cells' area (where the integral takes over)."""
    half = tile.resolution // 2
    limit = min(_EXACT_INDEX, half)
    n = np.arange(-limit, limit + 1)
    ny, nx = np.meshgrid(n, n, indexing="ij")
    k2 = (nx * nx + ny * ny) * tile.dk**2
    inside = (nx * nx + ny * ny <= limit * limit) & tile.carried(ny, nx) & (k2 >= k_low**2) & (k2 < k_high**2)
    count = int(np.count_nonzero((nx * nx + ny * ny <= limit * limit)))  # with the mean's cell
    radius = math.sqrt(count / math.pi) * tile.dk
    return nx[inside] * tile.dk, ny[inside] * tile.dk, radius


def _polar_points(tile, inner: float, outer: float) -> tuple[NDArray[np.float64], NDArray[np.float64], NDArray[np.float64]]:
    """(kx, ky, area weight) of a polar quadrature over inner < |k| ≤ outer."""
    if inner >= outer:
        empty = np.zeros(0)
        return empty, empty, empty
    log_k = np.linspace(math.log(inner), math.log(outer), _RADIAL_NODES)
    k = np.exp(log_k)
    radial = np.full(_RADIAL_NODES, log_k[1] - log_k[0])
    radial[[0, -1]] *= 0.5  # trapezoid in ln k: dk = k d(ln k), and the area element k dk
    radial *= k * k
    theta = np.arange(_ANGLE_NODES) * (2.0 * math.pi / _ANGLE_NODES)
    weight = radial[:, None] * (2.0 * math.pi / _ANGLE_NODES)
    kx = k[:, None] * np.cos(theta)[None, :]
    ky = k[:, None] * np.sin(theta)[None, :]
    return kx.ravel(), ky.ravel(), np.broadcast_to(weight, kx.shape).ravel()


def _lattice_quadrature(sea_state, tile, wavenumber_range: tuple[float, float] | None = None,
                        ) -> tuple[NDArray[np.float64], NDArray[np.float64], NDArray[np.float64]]:
    """Nodes (kx, ky) and their Ψ × area in m², standing for the sum over the lattice
    (over its wave indices with k_low ≤ |k| < k_high, for a band)."""
    from .amplitudes import cell_variance

    k_low, k_high = wavenumber_range or (0.0, math.inf)
    ex, ey, radius = _exact_points(tile, k_low, k_high)
    px, py, pw = _polar_points(tile, max(radius, k_low), min(tile.nyquist, k_high))
    # The long waves' cells carry Ψ integrated over the cell, as the amplitudes do
    # (``amplitudes.cell_variance``); beyond, the integral over the disc is the cells' sum.
    n = np.rint(np.concatenate([ey, ex]) / tile.dk).astype(np.int64)
    exact = cell_variance(sea_state, tile.dk, n[:ey.size], n[ey.size:]) if ex.size else np.zeros(0)
    polar = np.asarray(sea_state.directional_spectrum(px, py), dtype=np.float64) * pw
    return np.concatenate([ex, px]), np.concatenate([ey, py]), np.concatenate([exact, polar])


def derivative_covariance(sea_state, tile, lateral_factor: float, *,
                          wavenumber_range: tuple[float, float] | None = None) -> NDArray[np.float64]:
    """Covariance (3×3) of (∂Dx/∂x, ∂Dy/∂y, ∂Dx/∂y) on the tile's lattice, in (m/m)².

    Parameters
    ----------
    sea_state : SeaState
        The sea (its ``directional_spectrum(kx, ky)`` in m⁴).
    tile : Tile
        The lattice: which wavenumbers carry energy.
    lateral_factor : float
        λ, the lateral displacement's scale.
    wavenumber_range : (float, float) or None
        A band's (k_low, k_high) in rad/m: only those wave indices count.
    """
    kx, ky, energy = _lattice_quadrature(sea_state, tile, wavenumber_range)
    k2 = kx * kx + ky * ky
    lam2 = float(lateral_factor) ** 2

    def moment(a: int, b: int) -> float:
        return lam2 * float(np.sum(energy * kx**a * ky**b / k2))

    xx, yy, xy = moment(4, 0), moment(0, 4), moment(2, 2)
    x_xy, y_xy = moment(3, 1), moment(1, 3)
    return np.array([[xx, xy, x_xy], [xy, yy, y_xy], [x_xy, y_xy, xy]])


def folded_share_estimate(sea_state, tile, lateral_factor: float, *,
                          wavenumber_range: tuple[float, float] | None = None) -> float:
    """Expected share of the surface whose Jacobian is negative (folded), from the spectrum.

    See the module notes; tested against the share measured on synthesised frames.
    Deterministic (a fixed Gaussian sample), and costs a few thousand spectrum values
    whatever the resolution.
    """
    if lateral_factor == 0:
        return 0.0
    return folded_share_from_covariance(
        derivative_covariance(sea_state, tile, lateral_factor, wavenumber_range=wavenumber_range))


def folded_share_of_bands(sea_state, bands, lateral_factor: float) -> float:
    """Expected folded share of the surface a band stack's bands make together.

    ``bands``: each with ``tile``, ``k_low`` and ``k_high`` (``surface.bands.Band``). The
    summed surface's derivatives are the sums of the bands' (same lateral factor), and the
    bands draw independent amplitudes, so their covariances add: the share is that of the
    summed covariance (each band's from :func:`derivative_covariance`). Short bands fold
    little alone but add their slope variance to the long waves' stretching and
    squeezing; tested against the share measured on the bands' summed frames.
    """
    if lateral_factor == 0:
        return 0.0
    covariance = sum(
        derivative_covariance(sea_state, band.tile, lateral_factor, wavenumber_range=(band.k_low, band.k_high))
        for band in bands
    )
    return folded_share_from_covariance(covariance)


def folded_share_from_covariance(covariance: NDArray[np.float64]) -> float:
    """P(J < 0) for zero-mean Gaussian (∂Dx/∂x, ∂Dy/∂y, ∂Dx/∂y) of this 3×3 covariance,
    on a fixed sample (deterministic; standard error under 0.0013)."""
    values, vectors = np.linalg.eigh(np.asarray(covariance, dtype=np.float64))
    scale = vectors * np.sqrt(np.clip(values, 0.0, None))[None, :]
    sample = np.random.default_rng(20240601).standard_normal((_SAMPLES, 3)) @ scale.T
    dxx, dyy, dxy = sample[:, 0], sample[:, 1], sample[:, 2]
    jacobian = (1.0 + dxx) * (1.0 + dyy) - dxy * dxy
    return float(np.mean(jacobian < 0.0))


def lattice_moments(sea_state, tile, *, wavenumber_range: tuple[float, float] | None = None) -> tuple[float, float]:
    """(Σ Ψ Δk² in m², Σ |k|² Ψ Δk²) over the lattice's carried wave indices (a band's
    with ``wavenumber_range``): the variance and the mean-square slope the tile holds.

    Summed exactly over the long waves and integrated over the rest (see the module
    notes), so it costs the same at 16384² as at 256².
    """
    kx, ky, energy = _lattice_quadrature(sea_state, tile, wavenumber_range)
    return float(np.sum(energy)), float(np.sum(energy * (kx * kx + ky * ky)))


def lattice_variance(sea_state, tile) -> float:
    """Σ Ψ Δk² over the lattice's carried wavenumbers, in m²: the variance the tile holds."""
    return lattice_moments(sea_state, tile)[0]
