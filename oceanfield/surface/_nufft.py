"""A regular lattice of waves summed at points off that lattice, by non-uniform FFTs.

Knows nothing of sea states, bands or files: coefficients on a lattice and points in,
sums out.

A band (or any periodic tile) holds its waves on a lattice k = (nx, ny)·dk, and a field of
it is the Fourier sum

    f(x, y) = Σ_{ny, nx} c[ny, nx] · exp(i dk (nx x + ny y)),

``c`` in FFT layout (index n ↦ wave index n for n < N/2, n − N for the rest; rows ky,
columns kx, as ``Tile.wavenumbers``). An inverse FFT evaluates it on the tile's own texel
grid only; anywhere else (another map's grid, a probe, a wake's region) it is a type-2
non-uniform FFT (uniform coefficients to non-uniform points; Dutt & Rokhlin 1993), which
`finufft` computes to a requested relative precision ``eps`` with the
"exponential of semicircle" kernel (Barnett, Magland & af Klinteberg 2019):

- :func:`lattice_at_points` — scattered points: one 2D type-2 transform
  (``finufft.nufft2d2``).
- :func:`lattice_on_grid` / :func:`lattices_on_grid` — a regular grid of any spacing and
  origin, one lattice or several summed (the bands of a stack): the sum is separable, so
  each axis is 1D transforms. Along y a type-2 NUFFT of every coefficient column
  (``finufft.nufft1d2``, all columns in one call); along x every lattice's columns
  together as one type-1 NUFFT per grid row (``nufft1d1``), so the lattices share one
  fine grid. Where the grid steps a whole fraction 1/P of a lattice's period (band 0 of a
  stack on a composite of its reach) that lattice is a zero-padded FFT of length P each
  way instead: exact.
- :func:`sample_grids` — the first half of a type-2 NUFFT (scatter, deconvolve, FFT) done
  once per frame for many points, whose second half (reading the fine grid around each
  point) runs inside the probes' Newton kernel (``_sums._sampled``).
- :func:`crop_lattice` — the centred block of a lattice below a wave index, so the
  transforms skip the waves a caller has masked out.

Precision. finufft's ``eps`` bounds the error relative to the ℓ² norm of the output
(Barnett et al. 2019, §4); :data:`DEFAULT_EPS` is chosen so that a sea's composite map
differs from its exact sums by under 1e-6 of the field's standard deviation (measured:
1.8e-8 to 3.7e-8 on open_ocean_horizon; see DEVELOPERS.md, "surface.bands").
Determinism: finufft's results change with its thread count (measured: 1 against 2
threads differ in the last bits), so every call here runs it on ``threads`` threads,
default 1, whatever the worker has; the plain FFTs (scipy.fft) split independent 1D
transforms over their threads, the same bits on any count. Tests check the bits.

The exact sums (``bands.fourier_sum`` on grids, ``_sums`` at points) stay the references
the tests compare against.

References
----------
Dutt, A. & Rokhlin, V. (1993). Fast Fourier transforms for nonequispaced data.
*SIAM J. Sci. Comput.* 14(6), 1368–1393.
Barnett, A. H., Magland, J. & af Klinteberg, L. (2019). A parallel nonuniform fast
Fourier transform library based on an "exponential of semicircle" kernel. *SIAM J. Sci.
Comput.* 41(5), C479–C504.
"""

from __future__ import annotations

import functools
import math

import numpy as np
from numpy.typing import ArrayLike, NDArray

__all__ = ["DEFAULT_EPS", "lattice_at_points", "lattice_on_grid", "lattices_on_grid", "crop_lattice",
           "sample_groups", "sample_grids"]

#: finufft's requested relative precision for map outputs: the composite then matches its
#: exact sums to under 1e-6 of each field's standard deviation (measured; DEVELOPERS.md).
DEFAULT_EPS = 1e-9
#: finufft's oversampling factor: 1.25 makes the fine grid's FFT (1.25 N)² instead of
#: (2 N)² for a slightly wider kernel; faster for the lattice sizes of bands (measured).
_UPSAMPLING = 1.25


def _options(threads: int, upsampling: float) -> dict:
    # modeord=1: coefficients in FFT layout (0 … N/2 − 1, −N/2 … −1), as the tiles keep them.
    return {"modeord": 1, "nthreads": int(threads), "upsampfac": float(upsampling)}


def _folded(values: NDArray[np.float64]) -> NDArray[np.float64]:
    """Phases reduced to [−π, π) (the transforms' period), float64."""
    return np.mod(values + math.pi, 2.0 * math.pi) - math.pi


def lattice_at_points(
    coefficients: ArrayLike, dk: float, x: ArrayLike, y: ArrayLike, *,
    eps: float = DEFAULT_EPS, threads: int = 1, upsampling: float = _UPSAMPLING,
) -> NDArray[np.complex128]:
    """Σ c[ny, nx] e^{i dk (nx x + ny y)} at scattered points (x, y), by a type-2 NUFFT.

    Parameters
    ----------
    coefficients : array_like, complex, shape (..., Ny, Nx)
        Lattice coefficients in FFT layout (rows ky, columns kx); leading axes are
        separate sums sharing the points.
    dk : float
        Lattice spacing in rad/m (2π / tile size).
    x, y : array_like, shape (M,)
        Points in metres (any value: the sum repeats every 2π/dk).
    eps : float
        finufft's requested relative precision (ℓ² over the points).
    threads : int
        Threads of the transform.
    upsampling : float
        finufft's oversampling factor (``upsampfac``).

    Returns
    -------
    NDArray[np.complex128], shape (..., M)

    Examples
    --------
    >>> c = np.zeros((4, 4), complex); c[0, 1] = 1.0      # one wave along +x
    >>> z = lattice_at_points(c, 2 * np.pi / 8.0, [2.0], [0.0])
    >>> bool(abs(z[0] - 1j) < 1e-8)                        # e^{i·(2π/8)·2} = i
    True
    """
    import finufft

    c = np.ascontiguousarray(coefficients, dtype=np.complex128)
    lead, (ny, nx) = c.shape[:-2], c.shape[-2:]
    px = _folded(dk * np.asarray(x, dtype=np.float64).ravel())
    py = _folded(dk * np.asarray(y, dtype=np.float64).ravel())
    if px.size == 0:
        return np.zeros(lead + (0,), dtype=np.complex128)
    # finufft's first mode index runs along its first point coordinate: rows (ky) ↔ y.
    stack = c.reshape((-1, ny, nx))
    out = finufft.nufft2d2(py, px, stack if stack.shape[0] > 1 else stack[0], eps=eps, isign=1,
                           **_options(threads, upsampling))
    return out.reshape(lead + (px.size,))


def lattice_on_grid(
    coefficients: ArrayLike, dk: float, spacing: float, count: int,
    origin: tuple[float, float] = (0.0, 0.0), *,
    eps: float = DEFAULT_EPS, threads: int = 1, fft_workers: int | None = None,
) -> NDArray[np.complex128]:
    """Σ c[ny, nx] e^{i dk (nx x + ny y)} on a ``count``² grid of any spacing and origin.

    The grid is x = origin_x + j·spacing, y = origin_y + i·spacing (i, j < count), as
    ``bands.fourier_sum`` (the exact reference). One lattice of :func:`lattices_on_grid`.

    Parameters
    ----------
    coefficients : array_like, complex, shape (..., Ny, Nx)
        Lattice coefficients in FFT layout; leading axes are separate sums.
    dk, spacing : float
        Lattice spacing in rad/m; grid spacing in metres.
    count : int
        Points per side of the grid.
    origin : (float, float)
        (x, y) of grid point (0, 0) in metres.
    eps, threads
        As :func:`lattice_at_points`.
    fft_workers : int or None
        Threads of the plain FFTs (scipy.fft; every 1D transform the same bits on any count).

    Returns
    -------
    NDArray[np.complex128], shape (..., count, count)
    """
    return lattices_on_grid([(coefficients, dk)], spacing, count, origin, eps=eps, threads=threads,
                            fft_workers=fft_workers)


def lattices_on_grid(
    lattices, spacing: float, count: int, origin: tuple[float, float] = (0.0, 0.0), *,
    eps: float = DEFAULT_EPS, threads: int = 1, fft_workers: int | None = None,
) -> NDArray[np.complex128]:
    """Σ over lattices of Σ c_b[ny, nx] e^{i dk_b (nx x + ny y)}, summed on one ``count``² grid.

    ``lattices`` is a sequence of (coefficients (..., Ny, Nx) in FFT layout, dk in rad/m),
    every one with the same leading axes. The sum is separable, and each lattice takes the
    cheapest way that keeps the promised precision:

    - where the grid steps a whole fraction of the lattice's period (dk·spacing = 2π/P,
      P ≥ N an integer: band 0 of a laid-out stack on a composite of its reach), a
      zero-padded inverse FFT of length P along x, then along y: exact;
    - every other lattice: a 1D type-2 NUFFT along y for each of its coefficient columns
      (``finufft.nufft1d2``), then all of them together along x as one 1D type-1 NUFFT per
      grid row (``nufft1d1``: the lattices' kx are scattered points, the grid's x a regular
      output), so they share one fine grid and its FFT.

    The two groups run at once (finufft and scipy.fft release Python's lock). Returns the
    complex sum, shape (..., count, count), possibly a strided view.
    """
    lead = None
    whole, scattered = [], []
    for coefficients, dk in lattices:
        c = np.asarray(coefficients, dtype=np.complex128)
        lead = c.shape[:-2]
        c = c.reshape((-1,) + c.shape[-2:])
        period = _whole_period(dk, spacing, max(c.shape[-2:]), count)
        (whole if period else scattered).append((c, dk, period))
    if lead is None:
        raise ValueError("lattices: empty; allowed: at least one (coefficients, dk)")

    def by_ffts():
        total = None
        for c, dk, period in whole:
            rows = _fft_axis(c, dk, origin[0], period, count, -1, fft_workers)  # (B, ny, count)
            grid = _fft_axis(rows, dk, origin[1], period, count, -2, fft_workers)  # (B, count, count)
            if total is None:
                total = grid  # a view of a private FFT output: summed into in place
            else:
                total += grid
        return total

    def by_nuffts():
        return _scattered_on_grid([(c, dk) for c, dk, _ in scattered], spacing, count, origin, eps, threads)

    if whole and scattered:
        from concurrent.futures import ThreadPoolExecutor

        with ThreadPoolExecutor(1) as pool:
            pending = pool.submit(by_nuffts)
            total = by_ffts()
            total += pending.result()
    else:
        total = by_ffts() if whole else by_nuffts()
    return total.reshape(lead + (count, count))


def _scattered_on_grid(lattices, spacing: float, count: int, origin: tuple[float, float], eps: float,
                       threads: int) -> NDArray[np.complex128]:
    """The NUFFT part of :func:`lattices_on_grid`: (B, count, count), rows y, columns x."""
    import finufft

    steps = np.arange(count, dtype=np.float64)
    options = {"nthreads": int(threads), "upsampfac": _UPSAMPLING}
    phases, parts = [], []
    for c, dk in lattices:
        batch, ny, nx = c.shape
        # along y for every coefficient column: (B, nx, count_y)
        columns = np.ascontiguousarray(c.transpose(0, 2, 1)).reshape((-1, ny))
        along_y = finufft.nufft1d2(_folded(dk * (origin[1] + steps * spacing)), columns, eps=eps, isign=1,
                                   modeord=1, **options)
        n_x = np.fft.fftfreq(nx, 1.0 / nx)
        phases.append(n_x * dk * spacing)
        parts.append(along_y.reshape((batch, nx, count)) * np.exp(1j * n_x * dk * origin[0])[None, :, None])
    # Σ_n r_n e^{i p_n j}, j = 0…count−1, as finufft's centred modes m = j − ⌊count/2⌋
    phase = np.concatenate(phases)
    rows = np.concatenate(parts, axis=1)  # (B, n, count_y)
    rows *= np.exp(1j * phase * (count // 2))[None, :, None]
    strengths = np.ascontiguousarray(rows.transpose(0, 2, 1)).reshape((-1, phase.size))  # (B·count_y, n)
    grid = finufft.nufft1d1(_folded(phase), strengths, count, eps=eps, isign=1, modeord=0, **options)
    return grid.reshape((rows.shape[0], count, count))


def _whole_period(dk: float, spacing: float, n: int, count: int) -> int:
    """P where the grid steps exactly 1/P of the lattice's period (dk·spacing·P = 2π) and
    P ≥ n, not far above the sizes (so its FFT is cheap); 0 otherwise."""
    ratio = 2.0 * math.pi / (dk * spacing)
    period = round(ratio)
    if period < n or period > 4 * (n + count) or abs(ratio - period) > 1e-9 * ratio:
        return 0
    return int(period)


def _fft_axis(c: NDArray[np.complex128], dk: float, start: float, period: int, count: int, axis: int,
              workers: int | None) -> NDArray[np.complex128]:
    """Σ_n c[n] e^{i n dk (start + j·spacing)}, j < count, along ``axis`` (−1 or −2), where
    dk·spacing = 2π/period: the coefficients times e^{i n dk start}, placed at n mod period,
    and an unnormalised inverse FFT of that length (the grid wraps every period points)."""
    import scipy.fft

    n = c.shape[axis]
    low = (n + 1) // 2  # wave indices 0 … low − 1, then −(n − low) … −1

    def along(piece: slice) -> tuple:
        return (Ellipsis, piece) if axis == -1 else (Ellipsis, piece, slice(None))

    shape = list(c.shape)
    shape[axis] = period
    padded = np.zeros(shape, dtype=np.complex128)
    if start == 0.0:
        padded[along(slice(0, low))] = c[along(slice(0, low))]
        padded[along(slice(period - (n - low), None))] = c[along(slice(low, None))]
    else:
        phase = np.exp(1j * np.fft.fftfreq(n, 1.0 / n) * dk * start)
        phase = phase if axis == -1 else phase[:, None]
        np.multiply(c[along(slice(0, low))], phase[along(slice(0, low))], out=padded[along(slice(0, low))])
        np.multiply(c[along(slice(low, None))], phase[along(slice(low, None))],
                    out=padded[along(slice(period - (n - low), None))])
    out = scipy.fft.ifft(padded, axis=axis, norm="forward", workers=workers, overwrite_x=True)
    if count > period:
        return np.take(out, np.arange(count) % period, axis=axis)
    return out[along(slice(0, count))]


def crop_lattice(coefficients: NDArray, half: int) -> NDArray:
    """The block of wave indices −half ≤ n < half on both axes, still in FFT layout.

    ``half`` at least N/2 returns the lattice as it is; the sums of the block equal the
    lattice's when every coefficient outside it is zero.
    """
    n_rows, n_cols = coefficients.shape[-2:]
    if 2 * half >= min(n_rows, n_cols):
        return coefficients
    keep = np.r_[0:half, -half:0]
    return coefficients[..., keep[:, None] % n_rows, keep[None, :] % n_cols]


# -- sampling many points from one frame's lattices ---------------------------------------
#
# A type-2 NUFFT is two steps: (1) the coefficients, divided by the kernel's Fourier
# transform, zero-padded onto a fine grid and inverse-FFT'd; (2) at each point, the fine
# grid's values within the kernel's support, weighted by the kernel. A probe's Newton
# steps ask for the same frame at new points again and again, so :func:`sample_grids` does
# step 1 once per frame and ``_sums`` does step 2 inside its kernel (``_sampled``).

#: Oversampling of the sampled grids, and the kernel width and shape for them: the
#: "exponential of semicircle" φ(z) = exp(β(√(1 − z²) − 1)), |z| ≤ 1, over ``SAMPLE_WIDTH``
#: fine-grid cells, β = 0.97·π·(1 − 1/(2σ))·width (Barnett, Magland & af Klinteberg 2019,
#: §3, the choice for low oversampling; from memory, so checked by measurement): on a
#: two-band sea with bound waves, probes summed this way differ from the exact sums by
#: 1.5e-8 of the field's standard deviation (width 12: 2.6e-8 at σ = 1.5; σ = 2 needs a
#: width of 8 for 1.9e-7, but its grids take 2.6 times the memory).
SAMPLE_OVERSAMPLING = 1.25
SAMPLE_WIDTH = 13
SAMPLE_BETA = 0.97 * math.pi * (1.0 - 0.5 / SAMPLE_OVERSAMPLING) * SAMPLE_WIDTH


@functools.lru_cache(maxsize=None)
def _quadrature() -> tuple[NDArray[np.float64], NDArray[np.float64]]:
    """Gauss–Legendre nodes on [−1, 1] and weights times φ there, for ψ̂."""
    z, weights = np.polynomial.legendre.leggauss(4 * SAMPLE_WIDTH + 40)
    return z, weights * np.exp(SAMPLE_BETA * (np.sqrt(1.0 - z * z) - 1.0))


def _kernel_transform(n: NDArray[np.float64], size: int) -> NDArray[np.float64]:
    """h/ψ̂(n): the deconvolution factor of wave index n on a fine grid of ``size`` cells,
    ψ(u) = φ(u/α), α = width·h/2, h = 2π/size; ψ̂ by Gauss–Legendre quadrature of the even φ."""
    z, weighted = _quadrature()
    h = 2.0 * math.pi / size
    alpha = 0.5 * SAMPLE_WIDTH * h
    transform = alpha * (np.cos(np.multiply.outer(n * alpha, z)) * weighted).sum(axis=-1)
    return h / transform


def sample_groups(modes) -> list[tuple[float, bool, NDArray[np.int64], int, int, int]]:
    """The groups of :func:`sample_grids`: (dk, moves sideways, mode indices, half block,
    fine grid size, packed pairs) each; their Σ pairs·size² is the grids' size."""
    import scipy.fft

    sideways = (modes.lateral_x != 0) | (modes.lateral_y != 0)
    groups = []
    for dk in np.unique(modes.lattice):
        on = modes.lattice == dk
        for moving in (True, False):
            pick = np.flatnonzero(on & (sideways == moving))
            if pick.size:
                half = int(round(max(np.abs(modes.kx[pick]).max(), np.abs(modes.ky[pick]).max()) / dk)) + 1
                size = scipy.fft.next_fast_len(math.ceil(SAMPLE_OVERSAMPLING * 2 * half))
                groups.append((float(dk), moving, pick, half, size, 6 if moving else 2))
    return groups


def sample_grids(modes, t: float, *, fft_workers: int | None = None):
    """Step 1 of the type-2 NUFFT for every lattice of one frame.

    ``modes`` (``WaveModes``, every one on a lattice: ``modes.lattice`` finite) fall into
    groups, per lattice spacing, of those that move sideways (six packed pairs of real
    fields: (Dx, Dy), their four x/y derivatives, (h, ∂h/∂x), (∂h/∂y, ∂h/∂t),
    (∂Dx/∂t, ∂Dy/∂t)) and those that do not (bound waves: the two height pairs). Each
    group's fields at time t go onto one fine grid, 1.25 times its lattice block, in one
    flat array. Returns (flat grids, offsets, sizes, pair counts, dks) for
    ``_sums._sampled``.
    """
    import scipy.fft

    from ._kernels import rotation_kernel
    from ._sums import scatter_kernel

    groups = sample_groups(modes)
    rotations = np.empty(len(modes), dtype=np.complex128)
    rotation_kernel(modes.omega, float(t), rotations)  # e^{−iωt} of every mode
    offsets = np.cumsum([0] + [pairs * size * size for *_, size, pairs in groups])
    flat = np.zeros(int(offsets[-1]), dtype=np.complex128)
    for (dk, moving, pick, half, size, pairs), offset in zip(groups, offsets):
        fine = flat[offset:offset + pairs * size * size].reshape((pairs, size, size))
        correction = _kernel_transform(np.arange(half + 1, dtype=np.float64), size)
        scatter_kernel(pick, modes.kx, modes.ky, modes.omega, modes.height, modes.lateral_x, modes.lateral_y,
                       rotations, dk, moving, correction, fine)
        transformed = scipy.fft.ifft2(fine, norm="forward", workers=fft_workers, overwrite_x=True)
        if not np.shares_memory(transformed, fine):
            fine[...] = transformed
    return (flat, offsets[:-1].astype(np.int64), np.array([g[4] for g in groups], dtype=np.int64),
            np.array([g[5] for g in groups], dtype=np.int64), np.array([g[0] for g in groups], dtype=np.float64))
