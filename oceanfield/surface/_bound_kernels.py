"""The fast path of the second-order bound waves: two numba kernels, each with a numpy reference.

Knows nothing of sea states, presets or files: it works on arrays of parents and spectra.

* ``bound_spectrum_kernel`` visits each unordered pair of parent waves once and adds its
  sum wave (at kᵢ + kⱼ) and its difference wave (at kᵢ − kⱼ) to a small spectrum Z laid
  out like an FFT of side M. The pair coefficients are precomputed, so a pair costs two
  complex multiply-adds; the parents are few (the energetic waves only), so the pairs fit
  in the cache, and each pair's two coefficients are read once, side by side, from the
  packed upper triangle (``BoundWaves.pair_kernel``: 1.95 → 1.44 ms a frame for 1024
  parents on one thread, against two (P, P) matrices read by rows). The height's spectrum is then ½(Z(K) + conj Z(−K)).
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
def bound_spectrum_kernel(h0, slot, rotation, pny, pnx, kernel, mean, out):  # pragma: no cover
    _pair_sum(h0, slot, rotation, rotation.real * 0.0, False, pny, pnx, kernel, mean, out)


@numba.njit(cache=True, fastmath=False, nogil=True)
def bound_rate_kernel(h0, slot, rotation, omega, pny, pnx, kernel, out):  # pragma: no cover
    # ∂ĥ₂/∂t: each pair's term times −i(ωᵢ ± ωⱼ) (its bound frequency); the mean has none.
    _pair_sum(h0, slot, rotation, omega, True, pny, pnx, kernel, 0.0, out)


@numba.njit(parallel=True, cache=True, fastmath=False, nogil=True)
def _pair_sum(h0, slot, rotation, omega, rate, pny, pnx, kernel, mean, out):  # pragma: no cover
    m = out.shape[0]
    n = h0.shape[0]
    p = pny.shape[0]
    # Aᵢ(t) = 2 h0(kᵢ) e^{−iωᵢt}: the parent's complex amplitude (η₁ = Re Σ A e^{ik·x})
    a = np.empty(p, dtype=np.complex128)
    for i in range(p):
        a[i] = 2.0 * complex(h0[pny[i] % n, pnx[i] % n]) * rotation[slot[i]]
    # Z is held centred and flat (entry (c + ny)·m + c + nx for wave index (ny, nx),
    # |n| < m/2), so a pair's sum and difference waves sit at the first parent's entry
    # plus and minus the second's offset; the layout turns to FFT order once at the end.
    # The rows i are dealt to a fixed number of groups (i mod _GROUPS), each summing into
    # its own Z, added in group order: the threads share the work but the sums, and so
    # the frames, are the same bits whatever the number of threads.
    c = m // 2
    offset = np.empty(p, dtype=np.int64)
    for j in range(p):
        offset[j] = pny[j] * m + pnx[j]
    z = np.zeros((_GROUPS, m * m), dtype=np.complex128)
    for g in numba.prange(_GROUPS):
        zg = z[g]
        for i in range(g, p, _GROUPS):
            ai = a[i]
            wi = omega[slot[i]]
            row = 2 * (i * p - i * (i - 1) // 2)  # (L⁺ᵢᵢ, L⁻ᵢᵢ) in the packed triangle
            # diagonal: the harmonic at 2kᵢ and the mean (difference) term
            harmonic = c * m + c + 2 * offset[i]
            if rate:
                zg[harmonic] += -2j * wi * kernel[row] * ai * ai
            else:
                zg[harmonic] += kernel[row] * ai * ai
                zg[c * m + c] += kernel[row + 1] * (ai.real * ai.real + ai.imag * ai.imag)
            centre = c * m + c + offset[i]
            for j in range(i + 1, p):
                aj = a[j]
                q = row + 2 * (j - i)
                ws = 2.0 * kernel[q]
                wd = 2.0 * kernel[q + 1]
                if rate:
                    wj = omega[slot[j]]
                    ws = ws * -1j * (wi + wj)
                    wd = wd * -1j * (wi - wj)
                zg[centre + offset[j]] += ws * ai * aj
                zg[centre - offset[j]] += wd * ai * np.conj(aj)
    for g in range(1, _GROUPS):
        for q in range(m * m):
            z[0, q] += z[g, q]
    # η̂₂(K) = ½ (Z(K) + conj Z(−K)): the spectrum of Re Z, Hermitian, in FFT layout
    for iy in range(m):
        ny = iy if iy < c else iy - m
        for ix in range(m):
            nx = ix if ix < c else ix - m
            if ny == -c or nx == -c:
                out[iy, ix] = 0.0
                continue
            out[iy, ix] = 0.5 * (z[0, (c + ny) * m + c + nx] + np.conj(z[0, (c - ny) * m + c - nx]))
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
