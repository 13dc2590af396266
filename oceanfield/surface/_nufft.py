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
  each axis is 1D transforms. Along x a type-2 NUFFT of every coefficient row
  (``finufft.nufft1d2``, all rows in one call); along y every lattice's rows together as
  one type-1 NUFFT per grid column (``nufft1d1``), so the lattices share one fine grid.
  Where the grid steps a whole fraction 1/P of a lattice's period (band 0 of a stack on
  a composite of its reach) that lattice is a zero-padded FFT of length P instead: exact.
- :func:`crop_lattice` — the centred block of a lattice below a wave index, so the
  transforms skip the waves a caller has masked out.

Precision. finufft's ``eps`` bounds the error relative to the ℓ² norm of the output
(Barnett et al. 2019, §4); :data:`DEFAULT_EPS` is chosen so that a sea's composite map
differs from its exact sums by under 1e-6 of the field's standard deviation (measured:
see DEVELOPERS.md, "surface.bands"). Determinism: type-2 transforms interpolate each
output point on its own (no sum across threads), and every call here runs each
transform on ``threads`` threads (default 1), so results are the same bits run to run;
tests check the bits across thread counts.

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

import math

import numpy as np
from numpy.typing import ArrayLike, NDArray

__all__ = ["DEFAULT_EPS", "lattice_at_points", "lattice_on_grid", "lattices_on_grid", "crop_lattice"]

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
    every one with the same leading axes. The sum is separable, and each axis is done the
    cheapest exact-enough way:

    - along x, each lattice on its own: where the grid steps a whole fraction of the
      lattice's period (dk·spacing = 2π/P, P ≥ N an integer, as band 0 of a laid-out stack
      on a composite of its reach), a zero-padded inverse FFT of length P, exact;
      otherwise a 1D type-2 NUFFT of every coefficient row (``finufft.nufft1d2``);
    - along y, the commensurate lattices each by their FFT again, and every other
      lattice's rows together as one 1D type-1 NUFFT per grid column (``nufft1d1``: the
      rows' ky are scattered points, the grid's y a regular output), so the bands share
      one fine grid and its FFT.

    Returns the complex sum, shape (..., count, count).
    """
    import finufft

    steps = np.arange(count, dtype=np.float64)
    options = {"nthreads": int(threads), "upsampfac": _UPSAMPLING}
    total = None
    lead = None
    scattered_phases, scattered_rows = [], []
    for coefficients, dk in lattices:
        c = np.asarray(coefficients, dtype=np.complex128)
        lead, (ny, nx) = c.shape[:-2], c.shape[-2:]
        c = c.reshape((-1, ny, nx))
        period = _whole_period(dk, spacing, max(ny, nx), count)
        if period:
            rows = _fft_axis(c, dk, origin[0], period, count, fft_workers)  # (B, ny, count)
            grid = _fft_axis(rows.transpose(0, 2, 1), dk, origin[1], period, count, fft_workers)
            grid = grid.transpose(0, 2, 1)  # (B, count_y, count_x)
            total = grid if total is None else total + grid
            continue
        px = _folded(dk * (origin[0] + steps * spacing))
        rows = finufft.nufft1d2(px, np.ascontiguousarray(c.reshape((-1, nx))), eps=eps, isign=1, modeord=1,
                                **options).reshape((c.shape[0], ny, count))
        n_y = np.fft.fftfreq(ny, 1.0 / ny)
        scattered_phases.append(n_y * dk * spacing)
        scattered_rows.append(rows * np.exp(1j * n_y * dk * origin[1])[None, :, None])
    if scattered_rows:
        # Σ_n r_n e^{i p_n i}, i = 0…count−1, as finufft's centred modes m = i − ⌊count/2⌋.
        phases = np.concatenate(scattered_phases)
        rows = np.concatenate(scattered_rows, axis=1)
        rows *= np.exp(1j * phases * (count // 2))[None, :, None]
        strengths = np.ascontiguousarray(rows.transpose(0, 2, 1)).reshape((-1, phases.size))  # (B·count_x, n)
        columns = finufft.nufft1d1(_folded(phases), strengths, count, eps=eps, isign=1, modeord=0, **options)
        grid = columns.reshape((rows.shape[0], count, count)).transpose(0, 2, 1)
        total = grid if total is None else total + grid
    if total is None:
        raise ValueError("lattices: empty; allowed: at least one (coefficients, dk)")
    return np.ascontiguousarray(total).reshape(lead + (count, count))


def _whole_period(dk: float, spacing: float, n: int, count: int) -> int:
    """P where the grid steps exactly 1/P of the lattice's period (dk·spacing·P = 2π) and
    P ≥ n, not far above the sizes (so its FFT is cheap); 0 otherwise."""
    ratio = 2.0 * math.pi / (dk * spacing)
    period = round(ratio)
    if period < n or period > 4 * (n + count) or abs(ratio - period) > 1e-9 * ratio:
        return 0
    return int(period)


def _fft_axis(c: NDArray[np.complex128], dk: float, start: float, period: int, count: int,
              workers: int | None) -> NDArray[np.complex128]:
    """Σ_n c[..., n] e^{i n dk (start + j·spacing)}, j < count, along the last axis, where
    dk·spacing = 2π/period: the coefficients times e^{i n dk start}, placed at n mod period,
    and an unnormalised inverse FFT of that length (the grid wraps every period points)."""
    import scipy.fft

    n = c.shape[-1]
    index = np.fft.fftfreq(n, 1.0 / n).astype(np.int64)
    padded = np.zeros(c.shape[:-1] + (period,), dtype=np.complex128)
    padded[..., index % period] = c * np.exp(1j * index * dk * start)
    out = scipy.fft.ifft(padded, axis=-1, norm="forward", workers=workers, overwrite_x=True)
    if count > period:
        return np.take(out, np.arange(count) % period, axis=-1)
    return out[..., :count]


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
