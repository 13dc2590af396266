"""The shape of a sea's heights: skewness, crests against troughs, mean level.

Knows nothing of synthesis: it works on arrays of heights and lateral displacements.

A surface whose points move sideways (x₀ → x₀ + D(x₀)) must be seen where its points
are: :func:`resample_displaced` finds, for every texel x of a regular grid, the rest
position x₀ with x₀ + D(x₀) = x (fixed-point iteration on the periodic tile) and returns
the height there — the Eulerian surface a wave gauge or a camera sees. :func:`height_shape`
measures it: mean level, skewness, and the crest heights and trough depths of the
zero-crossing waves along one axis (the waves' direction of travel).

References
----------
Tayfun, M. A. (1980). Narrow-band nonlinear sea waves. J. Geophys. Res. 85(C3), 1548–1552
(crests of second-order seas against troughs). Longuet-Higgins, M. S. (1963), J. Fluid
Mech. 17, 459–480 (skewness of second-order seas).
"""

from __future__ import annotations

import math
from dataclasses import asdict, dataclass

import numpy as np
from numpy.typing import ArrayLike, NDArray

__all__ = ["resample_displaced", "HeightShape", "height_shape", "combine_shapes"]


def resample_displaced(
    height: ArrayLike,
    displacement_x: ArrayLike,
    displacement_y: ArrayLike,
    spacing: float,
    *,
    iterations: int = 40,
    tolerance: float = 1e-4,
) -> tuple[NDArray[np.float64], float]:
    """Heights of a laterally displaced periodic surface at the regular grid's texels.

    Texel (iy, ix) of the inputs is the rest position x₀ = (ix, iy)·spacing; the surface
    point there sits at x₀ + (Dx, Dy) and height h. For each texel x of the same grid this
    solves x₀ + D(x₀) = x by the iteration x₀ ← x − D(x₀) (cubic periodic interpolation),
    which converges wherever the surface does not fold, and returns h(x₀).

    Parameters
    ----------
    height, displacement_x, displacement_y : array_like, shape (N, N)
        Metres, indexed [iy, ix] (x along columns).
    spacing : float
        Texel spacing in metres.
    iterations, tolerance : int, float
        Most iterations, and the largest change (in texels) that counts as converged.

    Returns
    -------
    (heights, unconverged) : ndarray (N, N), float
        The Eulerian heights and the share of texels still moving by more than
        ``tolerance`` texels at the end (where the surface folds there is no single answer).
    """
    from scipy import ndimage

    h = np.asarray(height, dtype=np.float64)
    if h.ndim != 2 or h.shape[0] != h.shape[1]:
        raise ValueError(f"height: shape {h.shape} is not allowed; allowed: a square (N, N) array")
    dx = np.asarray(displacement_x, dtype=np.float64) / spacing
    dy = np.asarray(displacement_y, dtype=np.float64) / spacing
    if dx.shape != h.shape or dy.shape != h.shape:
        raise ValueError(f"displacement: shapes {dx.shape}, {dy.shape} are not allowed; allowed: {h.shape}")
    spline = {name: ndimage.spline_filter(a, order=3, mode="grid-wrap") for name, a in (("h", h), ("x", dx), ("y", dy))}

    def sample(name: str, y: NDArray, x: NDArray) -> NDArray:
        return ndimage.map_coordinates(spline[name], (y, x), order=3, mode="grid-wrap", prefilter=False)

    n = h.shape[0]
    gy, gx = np.meshgrid(np.arange(n, dtype=np.float64), np.arange(n, dtype=np.float64), indexing="ij")
    y0, x0 = gy.copy(), gx.copy()
    moving = np.ones(h.shape, dtype=bool)
    for _ in range(iterations):
        ny = gy - sample("y", y0, x0)
        nx = gx - sample("x", y0, x0)
        change = np.hypot(ny - y0, nx - x0)
        moving = change > tolerance
        y0, x0 = ny, nx
        if not moving.any():
            break
    return sample("h", y0, x0), float(np.mean(moving))


@dataclass(frozen=True)
class HeightShape:
    """Height statistics of one surface (metres unless stated).

    ``mean`` the mean level; ``std`` σ; ``skewness`` E(η − η̄)³/σ³; ``mean_crest`` and
    ``mean_trough`` the mean crest height and trough depth of the zero-crossing waves
    (measured from the mean level); ``crest_trough_ratio`` their ratio;
    ``top_tenth_crest`` the mean of the highest tenth of the crests in units of σ;
    ``waves`` how many waves were counted.
    """

    mean: float
    std: float
    skewness: float
    mean_crest: float
    mean_trough: float
    crest_trough_ratio: float
    top_tenth_crest: float
    waves: int

    def to_dict(self) -> dict[str, float]:
        return asdict(self)


def _crests_and_troughs(eta: NDArray[np.float64]) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
    """Crest heights and trough depths of the zero-crossing waves of each periodic row."""
    positive = eta > 0.0
    up = positive & ~np.roll(positive, 1, axis=1)
    rows = np.flatnonzero(up.any(axis=1))
    if rows.size == 0:
        return np.zeros(0), np.zeros(0)
    start = np.argmax(up[rows], axis=1)
    n = eta.shape[1]
    cols = (start[:, None] + np.arange(n)[None, :]) % n
    rolled = eta[rows[:, None], cols]  # each row now begins at an up-crossing
    flat = rolled.ravel()
    sign = flat > 0.0
    change = np.ones(flat.size, dtype=bool)
    change[1:] = sign[1:] != sign[:-1]
    change[:: n] = True  # each row starts a new segment
    starts = np.flatnonzero(change)
    highs = np.maximum.reduceat(flat, starts)
    lows = np.minimum.reduceat(flat, starts)
    is_crest = sign[starts]
    return highs[is_crest], -lows[~is_crest]


def height_shape(eta: ArrayLike, *, axis: int = 1) -> HeightShape:
    """Mean level, skewness and crest/trough statistics of a periodic surface.

    Waves are counted by mean-level zero crossings along ``axis`` (1: along x, the rows;
    0: along y), each row taken as periodic: a crest is the highest point between an
    up-crossing and the next down-crossing, a trough the lowest between a down-crossing and
    the next up-crossing.
    """
    eta = np.asarray(eta, dtype=np.float64)
    if eta.ndim != 2:
        raise ValueError(f"eta: shape {eta.shape} is not allowed; allowed: a 2-D array")
    if axis not in (0, 1):
        raise ValueError(f"axis: {axis!r} is not allowed; allowed: 0 or 1")
    mean = float(eta.mean())
    centred = eta - mean
    std = float(centred.std())
    skewness = float(np.mean(centred**3) / std**3) if std > 0 else 0.0
    crests, troughs = _crests_and_troughs(centred if axis == 1 else centred.T)
    if crests.size == 0:
        return HeightShape(mean, std, skewness, 0.0, 0.0, math.nan, math.nan, 0)
    top = np.sort(crests)[::-1][: max(1, crests.size // 10)]
    return HeightShape(
        mean=mean,
        std=std,
        skewness=skewness,
        mean_crest=float(crests.mean()),
        mean_trough=float(troughs.mean()),
        crest_trough_ratio=float(crests.mean() / troughs.mean()),
        top_tenth_crest=float(top.mean() / std) if std > 0 else math.nan,
        waves=int(crests.size),
    )


def combine_shapes(shapes: list[HeightShape]) -> dict[str, tuple[float, float]]:
    """Mean and its standard error over independent surfaces (frames far apart in time),
    per statistic, plus the mean level in units of σ (``mean_over_std``)."""
    out: dict[str, tuple[float, float]] = {}
    if not shapes:
        return out
    rows = [s.to_dict() | {"mean_over_std": s.mean / s.std if s.std > 0 else 0.0} for s in shapes]
    for key in rows[0]:
        values = np.array([row[key] for row in rows], dtype=np.float64)
        error = float(values.std(ddof=1) / math.sqrt(values.size)) if values.size > 1 else math.nan
        out[key] = (float(values.mean()), error)
    return out
