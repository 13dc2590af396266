"""The composite: a band stack's waves summed onto one map of any size and resolution.

Knows nothing of presets or files; it takes a ``bands.BandStack`` (duck-typed: its
``oceans``, ``_workers`` and ``_composite_threshold``) and returns ``Fields``.

Each band's waves lie on its own tile's lattice, which the composite's grid does not
share, so no band's FFT frame can be reused: the composite evaluates every band's
spectra at the grid's points. Only the waves the grid can hold are summed (|kx|, |ky|
below its Nyquist π/spacing; shorter ones are left out, not aliased). Every field is
real (its spectrum Hermitian), so two ride in one complex sum, a + ib, as the
synthesiser packs its transforms: four complex sums give height, both lateral
displacements, both slopes and the three displacement derivatives.

Two evaluations of the same sums:

- by default, non-uniform FFTs (``_nufft.lattices_on_grid``: an exact zero-padded FFT for
  a band whose period the grid divides, as band 0 on a composite of its reach, finufft
  type 2 / type 1 for the others), to under 1e-6 of each field's standard deviation;
- ``exact``: :func:`fourier_sum`, Bluestein's chirp z-transform along each axis (Rabiner,
  Schafer & Rader 1969), exact to rounding: the reference the tests hold the first to.

Either way the result depends on t and the grid alone, the same bits on any worker and
any thread count (finufft runs on one thread; the FFTs' threads split independent 1D
transforms).

References
----------
Rabiner, L. R., Schafer, R. W. & Rader, C. M. (1969). The chirp z-transform algorithm.
*IEEE Trans. Audio Electroacoust.* 17(2), 86–92.
"""

from __future__ import annotations

import math

import numpy as np
from numpy.typing import NDArray

from .fields import Fields

__all__ = ["fourier_sum", "composite_sums", "composite_fields"]

_NAMES = ("h", "dx", "dy", "sx", "sy", "dxx", "dyy", "dxy")


def _chirp_z(x: NDArray[np.complex128], count: int, theta: float, phi: float, axis: int,
             workers: int | None) -> NDArray[np.complex128]:
    """X_j = Σ_m x_m e^{i(φ + jθ)m}, j < count, along ``axis``: Bluestein's chirp z-transform.

    mj = (m² + j² − (j − m)²)/2 turns the sum into a convolution with the chirp e^{−iθn²/2},
    done with FFTs of a fast length ≥ N + count − 1 (scipy.fft, on ``workers`` threads).
    """
    import scipy.fft

    x = np.moveaxis(x, axis, -1)
    n = x.shape[-1]
    index = np.arange(max(n, count), dtype=np.float64)
    chirp = np.exp(0.5j * theta * index**2)
    length = scipy.fft.next_fast_len(n + count - 1)
    kernel = np.zeros(length, dtype=np.complex128)
    kernel[:count] = np.conj(chirp[:count])
    kernel[length - n + 1:] = np.conj(chirp[1:n][::-1])
    weighted = x * (np.exp(1j * phi * index[:n]) * chirp[:n])
    spectrum = scipy.fft.fft(weighted, length, axis=-1, workers=workers)
    spectrum *= scipy.fft.fft(kernel)
    out = scipy.fft.ifft(spectrum, axis=-1, workers=workers, overwrite_x=True)[..., :count] * chirp[:count]
    return np.moveaxis(out, -1, axis)


def fourier_sum(
    coefficients: NDArray[np.complexfloating], dk: float, spacing: float, count: int,
    origin: tuple[float, float] = (0.0, 0.0), *, workers: int | None = None,
) -> NDArray[np.complex128]:
    """Σ c(k) e^{ik·x} exactly on a regular grid of ``count``² points, by the chirp z-transform.

    ``coefficients`` is an (..., N, N) array in FFT layout (index n ↦ k = n·dk, rows ky,
    columns kx; leading axes are separate sums); the grid is x = origin_x + j·spacing,
    y = origin_y + i·spacing. Unlike an inverse FFT the grid need not match the lattice:
    any spacing, any extent. Returns (..., count, count).
    """
    c = np.fft.fftshift(np.asarray(coefficients, dtype=np.complex128), axes=(-2, -1))
    n = c.shape[-1]
    half = n // 2
    j = np.arange(count)

    def along(array: NDArray[np.complex128], start: float, axis: int) -> NDArray[np.complex128]:
        # Σ_m c_m e^{i(m − N/2)dk(x0 + jΔ)}: the z-transform over m = 0…N−1, then the
        # centring phase e^{−i(N/2)dk x_j}.
        out = _chirp_z(array, count, dk * spacing, dk * start, axis, workers)
        phase = np.exp(-1j * half * dk * (start + j * spacing))
        shape = [1] * out.ndim
        shape[axis] = count
        return out * phase.reshape(shape)

    return along(along(c, origin[0], -1), origin[1], -2)


class _BandLattice:
    """What a band's composite sums need on a grid of one Nyquist, made once and reused
    every frame: the block of wave indices that holds every wave the grid keeps (cropped
    with ``crop``: ``_nufft.crop_lattice``), its h0(k), h0(−k), ω and the packed fields'
    factors there, and where the bound waves' indices land in it."""

    def __init__(self, ocean, nyquist: float, crop: bool) -> None:
        from ._nufft import crop_lattice

        tile = ocean.tile
        n = tile.resolution
        ky, kx = np.broadcast_arrays(*tile.wavenumbers())
        keep = (np.abs(kx) < nyquist) & (np.abs(ky) < nyquist)
        h0 = ocean.amplitudes.astype(np.complex128)
        mirror = np.roll(h0[::-1, ::-1], 1, axis=(0, 1))  # h0(−k)
        held = keep & ((h0 != 0) | (mirror != 0))
        bound = None if ocean.bound is None else ocean.bound.wave_indices()
        index = np.fft.fftfreq(n, 1.0 / n).astype(np.int64)
        used = [index[held.any(axis=1)], index[held.any(axis=0)]]
        if bound is not None:
            b_y, b_x = (np.asarray(v).ravel().astype(np.int64) for v in bound)
            rows_kept, columns_kept = np.abs(b_y) * tile.dk < nyquist, np.abs(b_x) * tile.dk < nyquist
            if rows_kept.any() and columns_kept.any():
                used += [b_y[rows_kept], b_x[columns_kept]]
        used = np.concatenate(used)
        self.empty = used.size == 0
        if self.empty:
            return
        half = int(max(used.max() + 1, -used.min())) if crop else n // 2
        size = min(2 * half, n)
        self.dk = tile.dk
        self.bound_slots = None
        if bound is not None:
            # which of the bound spectrum's rows and columns the grid keeps, and where they land
            self.bound_slots = (np.ix_(rows_kept, columns_kept),
                                np.ix_(b_y[rows_kept] % size, b_x[columns_kept] % size))
        kx, ky, keep, h0, mirror, omega = (crop_lattice(a, half) for a in (kx, ky, keep, h0, mirror,
                                                                           ocean.frequencies))
        self.kx, self.ky = kx, ky
        self.h0, self.mirror = np.where(keep, h0, 0.0), np.where(keep, np.conj(mirror), 0.0)
        self.omega = np.ascontiguousarray(omega, dtype=np.float64)
        k = np.hypot(kx, ky)
        inverse_k = np.divide(1.0, k, out=np.zeros_like(k), where=k > 0)
        lam = ocean.lateral_factor
        factors = {
            "h": 1.0,
            "dx": 1j * lam * kx * inverse_k,
            "dy": 1j * lam * ky * inverse_k,
            "sx": 1j * kx,
            "sy": 1j * ky,
            "dxx": -lam * kx * kx * inverse_k,
            "dyy": -lam * ky * ky * inverse_k,
            "dxy": -lam * kx * ky * inverse_k,
        }
        self.factors = np.stack([factors[a] + 1j * factors[b] for a, b in zip(_NAMES[0::2], _NAMES[1::2])])

    def packed(self, ocean, t: float) -> NDArray[np.complex128]:
        """The four packed spectra (h + i·Dx, Dy + i·∂h/∂x, ∂h/∂y + i·∂Dx/∂x,
        ∂Dy/∂y + i·∂Dx/∂y) at time t on the block, FFT layout."""
        from ._kernels import block_spectra_kernel

        packed = np.empty(self.factors.shape, dtype=np.complex128)
        block_spectra_kernel(self.h0, self.mirror, self.omega, self.factors, float(t), packed)  # ĥ(k, t)·factors
        if self.bound_slots is not None:  # second-order bound waves: height and slopes, no lateral part
            small, _ = ocean.bound_spectrum(t)
            kept, slots = self.bound_slots
            lattice = np.zeros(packed.shape[1:], dtype=np.complex128)
            lattice[slots] = small[kept]
            packed[0] += lattice
            packed[1] += 1j * (1j * self.kx) * lattice
            packed[2] += 1j * self.ky * lattice
        return packed


def composite_sums(stack, t: float, *, spacing: float, resolution: int, origin: tuple[float, float] = (0.0, 0.0),
                   exact: bool = False) -> NDArray[np.complex128]:
    """The composite's four packed complex sums (h + i·Dx, Dy + i·∂h/∂x, ∂h/∂y + i·∂Dx/∂x,
    ∂Dy/∂y + i·∂Dx/∂y) at time t on the grid, float64, (4, resolution, resolution)."""
    from ._nufft import lattices_on_grid

    nyquist = math.pi / spacing
    cache = stack.__dict__.setdefault("_composite_lattices", {})
    lattices = []
    for index, ocean in enumerate(stack.oceans):
        key = (index, nyquist, exact)
        if key not in cache:
            cache[key] = _BandLattice(ocean, nyquist, crop=not exact)
        band = cache[key]
        if not band.empty:
            lattices.append((band.packed(ocean, t), band.dk))
    if not lattices:
        return np.zeros((4, resolution, resolution), dtype=np.complex128)
    if exact:  # the chirp z-transforms, band by band, every band on all cores
        return sum(fourier_sum(packed, dk, spacing, resolution, origin, workers=stack._workers)
                   for packed, dk in lattices)
    return lattices_on_grid(lattices, spacing, resolution, origin, fft_workers=stack._workers)


def composite_fields(stack, t: float, *, extent: float, resolution: int, origin: tuple[float, float] = (0.0, 0.0),
                     exact: bool = False) -> Fields:
    """``BandStack.composite``: the bands summed at time ``t`` on a ``resolution``² grid
    ``extent`` metres wide from ``origin`` (see the module notes and the method)."""
    from . import _kernels
    from .synth import _fields_from_packed

    if isinstance(resolution, bool) or not isinstance(resolution, (int, np.integer)) or resolution < 2:
        raise ValueError(f"resolution: {resolution!r} is not allowed; allowed: an integer >= 2")
    if isinstance(extent, bool) or not isinstance(extent, (int, float)) or not math.isfinite(extent) or extent <= 0:
        raise ValueError(f"extent: {extent!r} is not allowed; allowed: a finite length > 0 metres")
    resolution = int(resolution)
    spacing = extent / resolution
    sums = composite_sums(stack, t, spacing=spacing, resolution=resolution, origin=origin, exact=exact)
    buffer = np.ascontiguousarray(sums, dtype=np.complex64)
    # the synthesiser's own surface kernel: Jacobian, the displaced surface's normal, foam
    _kernels.surface_kernel(buffer, stack._composite_threshold(math.pi / spacing), stack.oceans[0].foam_ramp)
    return _fields_from_packed(float(t), buffer, None)
