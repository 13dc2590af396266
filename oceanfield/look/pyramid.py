"""The sea surface as the renderer samples it: each band's displaced surface resampled
onto a regular grid, then a box-filtered pyramid of its height, slopes, slope moments and
foam.

Knows nothing of presets, cameras or files: arrays of one frame's fields in, arrays out.

Why a pyramid. A pixel far from the camera covers many texels; sampling the finest
texels there aliases (the sea shimmers). Each level halves the resolution by 2 × 2 box
means, so the level whose texel matches a pixel's footprint holds the footprint's mean
height and mean slope. The slopes averaged away are kept as their second moments
(E[sx²], E[sy²], E[sx sy]): at any level, E[s sᵀ] − E[s] E[s]ᵀ is the variance of the
slopes inside the texel, which the shading adds to the sun's glitter as roughness
(the idea of Bruneton, Neyret & Holzschuch 2010, "Real-time realistic ocean lighting
using seamless transitions from geometry to BRDF", Computer Graphics Forum 29(2)).

Lateral displacement. The fields give height, normal and foam at rest positions x₀,
displaced to x₀ + D(x₀). The pyramid's grid is over displaced positions X: the rest
point of each is found by the fixed-point iteration x₀ ← X − D(x₀) (bilinear, periodic),
so crests are sharpened as in the maps. Where the surface folds the iteration settles on
one of the sheets.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from numpy.typing import NDArray

__all__ = ["CHANNELS", "SurfacePyramid", "build_pyramid", "resample_displaced", "bilinear_periodic"]

#: The channels of every pyramid texel, in order.
CHANNELS = ("height", "slope_x", "slope_y", "slope_xx", "slope_yy", "slope_xy", "foam")
_RESAMPLE_STEPS = 10  # fixed-point steps x₀ ← X − D(x₀); each shrinks the error by |∂D/∂x| (0.4 for a steep wave: 1e-4 after 10)
_MIN_NORMAL_Z = 0.1  # slopes of (nearly) vertical or folded normals are capped at 10


@dataclass(frozen=True, eq=False)
class SurfacePyramid:
    """Every band's pyramid packed for the renderer's kernel.

    Attributes
    ----------
    data : NDArray[np.float32], shape (texels, 7)
        Every level of every band, rows in C order, ``CHANNELS`` along the last axis.
    offset : NDArray[np.int64], shape (bands, levels)
        First row of each level in ``data`` (levels a band lacks repeat its last).
    side : NDArray[np.int64], shape (bands, levels)
        Texels per side of each level.
    levels : NDArray[np.int64], shape (bands,)
        Number of levels of each band (finest N … 1).
    tile : NDArray[np.float64], shape (bands,)
        Side of each band's tile in metres.
    low, high : NDArray[np.float64], shape (bands, levels)
        The lowest and highest height of each level, metres.
    resolved_variance : NDArray[np.float64], shape (2, 2)
        Covariance of the slopes the finest levels hold (all bands).
    """

    data: NDArray[np.float32]
    offset: NDArray[np.int64]
    side: NDArray[np.int64]
    levels: NDArray[np.int64]
    tile: NDArray[np.float64]
    low: NDArray[np.float64]
    high: NDArray[np.float64]
    resolved_variance: NDArray[np.float64]


def bilinear_periodic(field: NDArray, u: NDArray[np.float64], v: NDArray[np.float64]) -> NDArray[np.float64]:
    """``field[iy, ix]`` interpolated at fractional texel coordinates (u along columns,
    v along rows), wrapping around both edges."""
    n_rows, n_cols = field.shape[:2]
    u0 = np.floor(u)
    v0 = np.floor(v)
    fu = (u - u0)
    fv = (v - v0)
    i0 = u0.astype(np.int64) % n_cols
    j0 = v0.astype(np.int64) % n_rows
    i1 = (i0 + 1) % n_cols
    j1 = (j0 + 1) % n_rows
    if field.ndim == 3:
        fu, fv = fu[..., None], fv[..., None]
    return ((1 - fv) * ((1 - fu) * field[j0, i0] + fu * field[j0, i1])
            + fv * ((1 - fu) * field[j1, i0] + fu * field[j1, i1]))


def resample_displaced(fields, tile_size: float) -> NDArray[np.float64]:
    """(N, N, 7) channels of the displaced surface on the regular grid X = (ix, iy)·L/N.

    The rest point of each grid point by ``_RESAMPLE_STEPS`` fixed-point steps
    x₀ ← X − D(x₀); height, normal and foam there. Slopes −n_x/n_z, −n_y/n_z with n_z
    at least ``_MIN_NORMAL_Z``.
    """
    n = fields.height.shape[0]
    spacing = tile_size / n
    grid = np.arange(n, dtype=np.float64)
    gu, gv = np.meshgrid(grid, grid)
    shift = np.stack([fields.displacement_x, fields.displacement_y], axis=-1).astype(np.float64) / spacing
    u, v = gu.copy(), gv.copy()
    for _ in range(_RESAMPLE_STEPS):
        d = bilinear_periodic(shift, u, v)
        u, v = gu - d[..., 0], gv - d[..., 1]
    normal = bilinear_periodic(fields.normal.astype(np.float64), u, v)
    nz = np.maximum(normal[..., 2], _MIN_NORMAL_Z)
    sx, sy = -normal[..., 0] / nz, -normal[..., 1] / nz
    out = np.empty((n, n, len(CHANNELS)))
    out[..., 0] = bilinear_periodic(fields.height, u, v)
    out[..., 1], out[..., 2] = sx, sy
    out[..., 3], out[..., 4], out[..., 5] = sx * sx, sy * sy, sx * sy
    out[..., 6] = np.clip(bilinear_periodic(fields.foam, u, v), 0.0, 1.0)
    return out


def _pyramid_levels(base: NDArray[np.float64]) -> list[NDArray[np.float64]]:
    """``base`` and its 2 × 2 box means down to one texel (sides halve; an odd side keeps
    its last row and column out of the mean)."""
    levels = [base]
    while levels[-1].shape[0] > 1:
        a = levels[-1]
        m = a.shape[0] // 2 * 2
        a = a[:m, :m]
        levels.append(0.25 * (a[0::2, 0::2] + a[1::2, 0::2] + a[0::2, 1::2] + a[1::2, 1::2]))
    return levels


def build_pyramid(bands) -> SurfacePyramid:
    """The packed pyramid of ``bands``: a sequence of (Fields, tile side in metres)."""
    per_band = []
    for fields, size in bands:
        per_band.append(_pyramid_levels(resample_displaced(fields, size)))
    count = max(len(levels) for levels in per_band)
    offset = np.zeros((len(per_band), count), dtype=np.int64)
    side = np.zeros((len(per_band), count), dtype=np.int64)
    low = np.zeros((len(per_band), count))
    high = np.zeros((len(per_band), count))
    chunks, row = [], 0
    resolved = np.zeros((2, 2))
    for b, levels in enumerate(per_band):
        base = levels[0]
        sx, sy = base[..., 1], base[..., 2]
        resolved += np.cov(np.stack([sx.ravel(), sy.ravel()]), bias=True)
        for index in range(count):
            level = levels[min(index, len(levels) - 1)]
            if index < len(levels):
                chunks.append(level.reshape(-1, len(CHANNELS)).astype(np.float32))
                offset[b, index] = row
                row += level.shape[0] * level.shape[1]
            else:
                offset[b, index] = offset[b, index - 1]
            side[b, index] = level.shape[0]
            low[b, index] = float(level[..., 0].min())
            high[b, index] = float(level[..., 0].max())
    levels_per_band = np.array([len(levels) for levels in per_band], dtype=np.int64)
    tile = np.array([size for _fields, size in bands], dtype=np.float64)
    return SurfacePyramid(np.ascontiguousarray(np.concatenate(chunks)), offset, side, levels_per_band, tile,
                          low, high, resolved)
