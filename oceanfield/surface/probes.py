"""Probes: the displaced surface above any horizontal point, by exact Fourier sums.

Knows nothing of presets or files: `WaveModes` (from ``Ocean.modes()``) and points in,
arrays out, in internal axes and SI units.

A probe at horizontal position (X, Y) reports the surface point that *lands* there after
lateral displacement: the rest position x0 with x0 + D(x0, t) = X, found by Newton's
method with relaxed fixed-point steps over folds (see ``_sums``), and its residual
|x0 + D(x0) − X|.
At x0 the sums give, exactly and without interpolation, the height, the full
displacement, the slopes and the lateral map's derivatives (hence the displaced
surface's normal, from the same cross product as the normal map), and the velocity of
the surface point (the time derivative at fixed x0, what the velocity map holds). The
rise rate is the time derivative of the water level at the fixed position (X, Y):
∂η/∂t = v_z − ∇η · (v_x, v_y), with ∇η the slope of the displaced surface.

The sums repeat with the tile, so any position is valid; at a texel's displaced position
they reproduce the maps (tested to half-float precision).
"""

from __future__ import annotations

import weakref
from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike, NDArray

from .modes import WaveModes

__all__ = ["SurfacePoints", "surface_at", "DEFAULT_MAX_ITERATIONS", "SAMPLED_MEMORY_LIMIT"]

DEFAULT_MAX_ITERATIONS = 200
_METHODS = ("auto", "exact", "sampled")
#: What the exact kernel is given for its unused sampler arguments.
_NO_SAMPLER = (np.zeros(1, dtype=np.complex128), np.zeros(1, dtype=np.int64), np.zeros(1, dtype=np.int64),
               np.zeros(1, dtype=np.int64), np.zeros(1), 1, 1.0)
#: Exact mode-steps (one mode at one point and inversion step; about 5 steps a point) that
#: cost as much as one fine-grid texel of a frame's sampled grids (its share of the scatter
#: and the FFTs): measured on open_ocean_horizon, 2.5 M modes, two shared cores (2026),
#: about 3.5 ns a mode-step with the blocked sums (14 ns with a C-library sine and cosine a
#: mode) and 20 ns a texel; sampled pays beyond about 10 probes a frame.
_SAMPLED_TEXEL_COST = 5.0
_STEPS_PER_POINT = 5
#: The most memory "auto" lets a frame's sampled grids take (complex128 texels); beyond it
#: the exact sums run instead (open_ocean_horizon's take ~350 MB).
SAMPLED_MEMORY_LIMIT = 2**30
_BYTES_PER_TEXEL = 16


@dataclass(frozen=True, eq=False)
class SurfacePoints:
    """The displaced surface at a set of points and times (internal axes, SI units).

    Every array has the broadcast shape S of the points and times asked for, with a last
    axis of 3 for vectors (x, y, z).

    Attributes
    ----------
    rest : NDArray, shape S + (2,)
        Rest position x0 of the surface point, in metres (not wrapped onto the tile).
    residual : NDArray, shape S
        |x0 + D(x0) − X| in metres: how far the displaced point lands from the position
        asked for (0 when not inverted).
    iterations : NDArray, shape S
        Newton or fixed-point steps taken.
    position : NDArray, shape S + (3,)
        The surface point's position x0 + D(x0), with the height as z.
    displacement : NDArray, shape S + (3,)
        (Dx, Dy, h) at x0 in metres: what the displacement map holds at a texel.
    normal : NDArray, shape S + (3,)
        Unit normal of the displaced surface, z up.
    velocity : NDArray, shape S + (3,)
        Velocity of the surface point in m/s (the time derivative at fixed x0).
    rise_rate : NDArray, shape S
        ∂η/∂t of the water level at the fixed horizontal position, in m/s.
    jacobian : NDArray, shape S
        Determinant of the lateral map's Jacobian (negative where the surface folds).
    """

    rest: NDArray[np.float64]
    residual: NDArray[np.float64]
    iterations: NDArray[np.int64]
    position: NDArray[np.float64]
    displacement: NDArray[np.float64]
    normal: NDArray[np.float64]
    velocity: NDArray[np.float64]
    rise_rate: NDArray[np.float64]
    jacobian: NDArray[np.float64]


def surface_at(
    modes: WaveModes,
    x: ArrayLike,
    y: ArrayLike,
    t: ArrayLike,
    *,
    invert: bool = True,
    tolerance: float = 1e-7,
    max_iterations: int = DEFAULT_MAX_ITERATIONS,
    method: str = "auto",
) -> SurfacePoints:
    """The displaced surface above (x, y) at time t, by exact sums over ``modes``.

    Parameters
    ----------
    modes : WaveModes
        The sinusoids of the sea (``Ocean.modes()``, or a subset of it).
    x, y : array_like
        Horizontal position in metres, internal axes (x along image columns, y along rows);
        broadcast with ``t``. Any value: the sea repeats with the tile.
    t : array_like
        Time in seconds.
    invert : bool
        True: report the surface point whose *displaced* position lands on (x, y).
        False: report the surface point whose rest position is (x, y) (a texel of the
        maps, or a point carried by the water).
    tolerance : float
        Residual in metres at which the inversion stops (> 0).
    max_iterations : int
        Most inversion steps per point.
    method : {"auto", "exact", "sampled"}
        "exact": one pass over the modes per point and step. "sampled": for modes on
        lattices (``WaveModes.lattice``; a tile's or a band stack's), each frame's fields
        are made once on an oversampled grid per lattice (the first half of a type-2
        non-uniform FFT, ``_nufft.sample_grids``) and every step reads the grid around its
        point, to under 1e-6 of each field's standard deviation. "auto": sampled where it
        is the cheaper (many points a frame on many modes) and its grids fit in
        ``SAMPLED_MEMORY_LIMIT`` bytes, exact otherwise.

    Returns
    -------
    SurfacePoints
    """
    from . import _sums

    if method not in _METHODS:
        raise ValueError(f"method: {method!r} is not allowed; allowed: {', '.join(map(repr, _METHODS))}")
    if not isinstance(modes, WaveModes):
        raise ValueError(f"modes: {type(modes).__name__} is not allowed; allowed: WaveModes (Ocean.modes())")
    if not (np.isfinite(tolerance) and tolerance > 0):
        raise ValueError(f"tolerance: {tolerance!r} is not allowed; allowed: a finite number of metres > 0")
    xs, ys, ts = np.broadcast_arrays(*(np.asarray(v, dtype=np.float64) for v in (x, y, t)))
    shape = xs.shape
    if not (np.all(np.isfinite(xs)) and np.all(np.isfinite(ys)) and np.all(np.isfinite(ts))):
        raise ValueError("x, y, t: not all finite; allowed: finite positions in metres and times in seconds")
    points = tuple(np.array(v.ravel(), dtype=np.float64) for v in (xs, ys, ts))  # own copies, not broadcast views
    if method == "auto":
        method = "sampled" if _sampling_pays(modes, points[2]) else "exact"
    if method == "sampled" and not np.all(np.isfinite(modes.lattice)):
        raise ValueError("method: 'sampled' is not allowed for modes on no lattice; allowed: 'exact' or 'auto'")
    out = _point_columns(modes, points, (bool(invert), float(tolerance), int(max_iterations)), method)
    col = {name: out[:, i].reshape(shape) for i, name in enumerate(_sums.OUTPUT_COLUMNS)}
    rest = np.stack([col["rest_x"], col["rest_y"]], axis=-1)
    displacement = np.stack([col["dx"], col["dy"], col["h"]], axis=-1)
    jxx, jxy, jyx, jyy = 1.0 + col["dx_x"], col["dx_y"], col["dy_x"], 1.0 + col["dy_y"]
    sx, sy = col["h_x"], col["h_y"]
    # n ∝ ∂P/∂x × ∂P/∂y with P = (x + Dx, y + Dy, h), as the normal map (surface_kernel)
    normal = np.stack([jyx * sy - sx * jyy, sx * jxy - jxx * sy, jxx * jyy - jxy * jyx], axis=-1)
    normal /= np.linalg.norm(normal, axis=-1, keepdims=True)
    velocity = np.stack([col["dx_t"], col["dy_t"], col["h_t"]], axis=-1)
    # Slope of the displaced surface, ∇η = J^{-T} ∇h, so ∂η/∂t|X = v_z − ∇η · v_lateral.
    jac = jxx * jyy - jxy * jyx
    with np.errstate(divide="ignore", invalid="ignore"):
        eta_x = (jyy * sx - jyx * sy) / jac
        eta_y = (-jxy * sx + jxx * sy) / jac
    rise = velocity[..., 2] - eta_x * velocity[..., 0] - eta_y * velocity[..., 1]
    position = displacement + np.concatenate([rest, np.zeros(shape + (1,))], axis=-1)
    return SurfacePoints(
        rest=rest,
        residual=col["residual"],
        iterations=col["iterations"].astype(np.int64),
        position=position,
        displacement=displacement,
        normal=normal,
        velocity=velocity,
        rise_rate=rise,
        jacobian=jac,
    )


def _point_columns(modes: WaveModes, points: tuple[NDArray[np.float64], ...], options: tuple,
                   method: str) -> NDArray[np.float64]:
    """The kernel's `_sums.OUTPUT_COLUMNS` at the points (x, y, t): "exact" by the blocked
    sums (``_point_kernels``), "sampled" from each frame's grids, "reference" by the C
    library's sine and cosine per mode (the exact path before the blocked sums; tests and
    the benchmark compare against it)."""
    import numba

    from . import _nufft, _sums

    out = np.empty((points[0].size, len(_sums.OUTPUT_COLUMNS)), dtype=np.float64)
    every, lateral, still = _split(modes)
    if method == "reference":
        _sums.surface_point_kernel(*every, *lateral, *points, *options, out, _sums.EXACT, *_NO_SAMPLER, *still)
    elif method == "exact":
        _sums.surface_point_kernel(*every, *lateral, *points, *options, out, _sums.BLOCKED, *_NO_SAMPLER, *still)
    else:
        for t in np.unique(points[2]):  # one frame's sampled grids at a time
            at = np.flatnonzero(points[2] == t)
            part = np.empty((at.size, out.shape[1]))
            sampler = _nufft.sample_grids(modes, float(t), fft_workers=numba.get_num_threads())
            _sums.surface_point_kernel(*every, *lateral, *(np.ascontiguousarray(p[at]) for p in points),
                                       *options, part, _sums.SAMPLED, *sampler, _nufft.SAMPLE_WIDTH,
                                       _nufft.SAMPLE_BETA, *still)
            out[at] = part
    return out


#: Each mode set's modes that move sideways and the others (``_split``), kept while the
#: set lives: a probe a frame on open_ocean_horizon spent 20–45 ms a call making them.
_SPLITS: "weakref.WeakKeyDictionary[WaveModes, tuple]" = weakref.WeakKeyDictionary()


def _split(modes: WaveModes) -> tuple[tuple[NDArray, ...], tuple[NDArray, ...], tuple[NDArray, ...]]:
    """(every mode's arrays kx … lateral_y, those of the modes that move sideways, kx … height
    of the others), in the modes' order (the inversion's sums are the same, bit for bit)."""
    if modes not in _SPLITS:
        every = (modes.kx, modes.ky, modes.omega, modes.height, modes.lateral_x, modes.lateral_y)
        sideways = (modes.lateral_x != 0) | (modes.lateral_y != 0)
        lateral = every if sideways.all() else tuple(np.ascontiguousarray(v[sideways]) for v in every)
        _SPLITS[modes] = (every, lateral, tuple(np.ascontiguousarray(v[~sideways]) for v in every[:4]))
    return _SPLITS[modes]


def _sampling_pays(modes: WaveModes, times: NDArray[np.float64]) -> bool:
    """Whether the sampled sums cost less than the exact ones (the measured ratio above)."""
    if len(modes) == 0 or not np.all(np.isfinite(modes.lattice)):
        return False
    exact = times.size * len(modes) * _STEPS_PER_POINT / np.unique(times).size
    texels = _sampled_texels(modes)
    return exact > _SAMPLED_TEXEL_COST * texels and texels * _BYTES_PER_TEXEL <= SAMPLED_MEMORY_LIMIT


#: Texels of each mode set's sampled grids, kept while the set lives (a shot asks again
#: for every chunk; the grouping costs a few passes over the modes).
_TEXELS: "weakref.WeakKeyDictionary[WaveModes, int]" = weakref.WeakKeyDictionary()


def _sampled_texels(modes: WaveModes) -> int:
    from ._nufft import sample_groups

    if modes not in _TEXELS:
        _TEXELS[modes] = sum(pairs * size * size for *_, size, pairs in sample_groups(modes))
    return _TEXELS[modes]
