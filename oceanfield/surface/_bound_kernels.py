"""The fast path of the second-order bound waves: two numba kernels, each with a numpy reference.

Knows nothing of sea states, presets or files: it works on arrays of parents and spectra.

* ``bound_spectrum_kernel`` visits each unordered pair of parent waves once and adds its
  sum wave (at kᵢ + kⱼ) and its difference wave (at kᵢ − kⱼ) to a small spectrum Z laid
  out like an FFT of side M. The pair coefficients are precomputed, so a pair costs two
  complex multiply-adds; the parents are few (the energetic waves only), so the pairs fit
  in the cache. The height's spectrum is then ½(Z(K) + conj Z(−K)).
* ``bound_add_kernel`` adds that spectrum, and the spectra of its two slopes, into the
  packed spectra of a frame (``_kernels`` layout: plane 0 = h + i Dx, plane 1 = Dy + i ∂h/∂x,
  plane 2 = ∂h/∂y + i ∂Dx/∂x) before the frame's inverse transforms: the bound waves cost
  no transform of their own, and the normals see their slopes exactly.

Kernels are compiled on first use and cached on disk (``cache=True``), never at import.
"""

from __future__ import annotations

import numba
import numpy as np
from numpy.typing import NDArray

#: Groups the pair sum's rows are dealt to (threads share them; a fixed count keeps the
#: frames the same bits on any number of threads).
_GROUPS = 4

__all__ = [
    "bound_spectrum_kernel",
    "bound_rate_kernel",
    "bound_add_kernel",
    "bound_spectrum_reference",
    "bound_add_reference",
]


@numba.njit(cache=True, fastmath=False, nogil=True)
def bound_spectrum_kernel(h0, slot, rotation, pny, pnx, k_sum, k_diff, mean, out):  # pragma: no cover
    _pair_sum(h0, slot, rotation, rotation.real * 0.0, False, pny, pnx, k_sum, k_diff, mean, out)


@numba.njit(cache=True, fastmath=False, nogil=True)
def bound_rate_kernel(h0, slot, rotation, omega, pny, pnx, k_sum, k_diff, out):  # pragma: no cover
    # ∂ĥ₂/∂t: each pair's term times −i(ωᵢ ± ωⱼ) (its bound frequency); the mean has none.
    _pair_sum(h0, slot, rotation, omega, True, pny, pnx, k_sum, k_diff, 0.0, out)


@numba.njit(parallel=True, cache=True, fastmath=False, nogil=True)
def _pair_sum(h0, slot, rotation, omega, rate, pny, pnx, k_sum, k_diff, mean, out):  # pragma: no cover
    m = out.shape[0]
    n = h0.shape[0]
    p = pny.shape[0]
    # Aᵢ(t) = 2 h0(kᵢ) e^{−iωᵢt}: the parent's complex amplitude (η₁ = Re Σ A e^{ik·x})
    a = np.empty(p, dtype=np.complex128)
    for i in range(p):
        a[i] = 2.0 * complex(h0[pny[i] % n, pnx[i] % n]) * rotation[slot[i]]
    # Z is held centred (index c + n for wave index n, |n| < m/2) so the pair loop needs no
    # modulo; the layout turns to FFT order once at the end. The rows i are dealt to a
    # fixed number of groups (i mod _GROUPS), each summing into its own Z, added in group
    # order: the threads share the work but the sums, and so the frames, are the same bits
    # whatever the number of threads.
    c = m // 2
    z = np.zeros((_GROUPS, m, m), dtype=np.complex128)
    for g in numba.prange(_GROUPS):
        for i in range(g, p, _GROUPS):
            ai = a[i]
            yi = pny[i]
            xi = pnx[i]
            wi = omega[slot[i]]
            # diagonal: the harmonic at 2kᵢ and the mean (difference) term
            if rate:
                z[g, c + 2 * yi, c + 2 * xi] += -2j * wi * k_sum[i, i] * ai * ai
            else:
                z[g, c + 2 * yi, c + 2 * xi] += k_sum[i, i] * ai * ai
                z[g, c, c] += k_diff[i, i] * (ai.real * ai.real + ai.imag * ai.imag)
            sy = c + yi
            sx = c + xi
            for j in range(i + 1, p):
                aj = a[j]
                ws = 2.0 * k_sum[i, j]
                wd = 2.0 * k_diff[i, j]
                if rate:
                    wj = omega[slot[j]]
                    ws = ws * -1j * (wi + wj)
                    wd = wd * -1j * (wi - wj)
                z[g, sy + pny[j], sx + pnx[j]] += ws * ai * aj
                z[g, sy - pny[j], sx - pnx[j]] += wd * ai * np.conj(aj)
    for g in range(1, _GROUPS):
        for iy in range(m):
            for ix in range(m):
                z[0, iy, ix] += z[g, iy, ix]
    # η̂₂(K) = ½ (Z(K) + conj Z(−K)): the spectrum of Re Z, Hermitian, in FFT layout
    for iy in range(m):
        ny = iy if iy < c else iy - m
        for ix in range(m):
            nx = ix if ix < c else ix - m
            if ny == -c or nx == -c:
                out[iy, ix] = 0.0
                continue
            out[iy, ix] = 0.5 * (z[0, c + ny, c + nx] + np.conj(z[0, c - ny, c - nx]))
    out[0, 0] += mean


@numba.njit(cache=True, fastmath=False, nogil=True)
def bound_add_kernel(spectrum, dk, packed):  # pragma: no cover - compiled
    m = spectrum.shape[0]
    n = packed.shape[1]
    for iy in range(m):
        ny = iy if iy < m // 2 else iy - m
        ry = ny % n
        ky = dk * ny
        for ix in range(m):
            nx = ix if ix < m // 2 else ix - m
            e = spectrum[iy, ix]
            if e.real == 0.0 and e.imag == 0.0:
                continue
            rx = nx % n
            kx = dk * nx
            # plane 0 += ĥ₂; plane 1 += i·(i kx ĥ₂); plane 2 += i ky ĥ₂
            packed[0, ry, rx] += e
            packed[1, ry, rx] += -kx * e
            packed[2, ry, rx] += complex(-ky * e.imag, ky * e.real)


# -- plain numpy references (tests hold the kernels against these) ----------------------


def bound_spectrum_reference(
    h0: NDArray, slot: NDArray, rotation: NDArray, pny: NDArray, pnx: NDArray,
    k_sum: NDArray, k_diff: NDArray, mean: float, m: int, omega: NDArray | None = None,
) -> NDArray[np.complex128]:
    """:func:`bound_spectrum_kernel` by numpy over ordered pairs, returning the (m, m) spectrum;
    with ``omega`` (per slot), :func:`bound_rate_kernel` (its time derivative)."""
    n = h0.shape[0]
    a = 2.0 * h0[pny % n, pnx % n].astype(np.complex128) * rotation[slot]
    if omega is not None:
        w = omega[slot]
        k_sum = k_sum * -1j * (w[:, None] + w[None, :])
        k_diff = k_diff * -1j * (w[:, None] - w[None, :])
        mean = 0.0
    z = np.zeros((m, m), dtype=np.complex128)
    sy = (pny[:, None] + pny[None, :]) % m
    sx = (pnx[:, None] + pnx[None, :]) % m
    dy = (pny[:, None] - pny[None, :]) % m
    dx = (pnx[:, None] - pnx[None, :]) % m
    np.add.at(z, (sy, sx), k_sum * a[:, None] * a[None, :])
    np.add.at(z, (dy, dx), k_diff * a[:, None] * np.conj(a[None, :]))
    mirrored = np.roll(z[::-1, ::-1], 1, axis=(0, 1))
    out = 0.5 * (z + np.conj(mirrored))
    out[0, 0] += mean
    return out


def bound_add_reference(spectrum: NDArray, dk: float, packed: NDArray) -> NDArray:
    """:func:`bound_add_kernel` by numpy, returning a new array."""
    m = spectrum.shape[0]
    n = packed.shape[1]
    idx = np.fft.fftfreq(m, d=1.0 / m).astype(np.int64)
    big = np.zeros((n, n), dtype=np.complex128)
    big[np.ix_(idx % n, idx % n)] = spectrum
    nidx = np.fft.fftfreq(n, d=1.0 / n)
    kx = (nidx * dk)[None, :]
    ky = (nidx * dk)[:, None]
    out = packed.astype(np.complex128)
    out[0] += big
    out[1] += 1j * (1j * kx * big)
    out[2] += 1j * ky * big
    return out.astype(packed.dtype)
