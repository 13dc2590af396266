"""The fast path: two numba kernels per frame, each with a plain-numpy reference.

Knows nothing of sea states, presets or files: it works on packed arrays.

Why they are shaped this way (see the performance model in DEVELOPERS.md):

* ω depends on |k| alone, so ``rotation_kernel`` evaluates e^{−iωt} once per distinct
  q = nx² + ny² that carries energy (a sum of two squares: about a twentieth as many
  sines and cosines as texels at N = 1024); ``slots[q]`` indexes that compact table, and
  ``slot_index`` lays those slots out per wave index in the order the spectra are written.
* ``spectra_kernel`` makes one pass over half the lattice, row by row. For each wave index k it reads
  h0(k), h0(−k) (the mirrored index: no second amplitude array is stored) and the
  rotation of its q, and writes the spectra of eight real fields packed two to a complex
  array (A + iB, both Hermitian) at k and, by conjugate symmetry, at −k. Four in-place
  complex inverse FFTs then give all eight fields.
* ``surface_kernel`` makes one pass over the transformed arrays, reads the eight fields of
  a texel, and writes the Jacobian, the displaced surface's unit normal and the foam back
  into the slots of the five it no longer needs. A frame therefore owns exactly four
  complex64 arrays (32 bytes a texel) and nothing else.

Packed layout after the inverse FFTs (real part, imaginary part):

=====  ==================  =====================
slot   after transform     after surface_kernel
=====  ==================  =====================
0      h, Dx               h, Dx
1      Dy, ∂h/∂x           Dy, normal x
2      ∂h/∂y, ∂Dx/∂x       Jacobian, normal y
3      ∂Dy/∂y, ∂Dx/∂y      foam, normal z
=====  ==================  =====================

The normal's three components sit in the imaginary parts of slots 1–3, one array apart,
so they form a (N, N, 3) view without a copy.

Kernels are compiled on first use and cached on disk (``cache=True``), never at import.
They release the GIL (``nogil``): a band stack (``bands``) runs several bands' kernels at
once, one thread each.
"""

from __future__ import annotations

import math
import os

# Between a frame's kernels the FFT runs on its own threads. OpenMP's default lets numba's
# idle threads spin after each parallel region, taking the cores the FFT needs: the frame
# took 29.6 ms at 1024² with spinning threads and 24.7 ms with sleeping ones (oceanfield.bench,
# 2 cores). Set before numba loads its OpenMP layer; a value the user set is kept.
os.environ.setdefault("OMP_WAIT_POLICY", "PASSIVE")

import numba  # noqa: E402  (after the OpenMP setting above)
import numpy as np  # noqa: E402
from numpy.typing import NDArray

__all__ = [
    "rotation_kernel",
    "spectra_kernel",
    "slot_index",
    "surface_kernel",
    "velocity_kernel",
    "jacobian_spectra_kernel",
    "lingering_foam_kernel",
    "block_spectra_kernel",
    "block_spectra_reference",
    "spectra_reference",
    "surface_reference",
]


@numba.njit(inline="always", cache=True)
def _mirror(i, n):  # pragma: no cover - compiled
    """The FFT-layout index of −i: 0 stays 0, i becomes n − i."""
    return n - i if i > 0 else 0


@numba.njit(inline="always", cache=True)
def _evolved(a, b, e):  # pragma: no cover - compiled
    """(re, im) of ĥ = a e^{−iωt} + conj(b) e^{+iωt} with a = h0(k), b = h0(−k), e = e^{−iωt}."""
    c = e.real
    s = -e.imag
    return (a.real * c + a.imag * s + b.real * c + b.imag * s,
            a.imag * c - a.real * s - b.imag * c + b.real * s)


@numba.njit(parallel=True, cache=True, fastmath=False, nogil=True)
def rotation_kernel(omega_table, t, out):  # pragma: no cover - compiled
    # e^{-iωt} once per distinct |k|² (ω depends on |k| alone): far fewer sines and cosines
    # than texels, computed with the phase in float64.
    for q in numba.prange(omega_table.shape[0]):
        phase = omega_table[q] * t
        out[q] = complex(math.cos(phase), -math.sin(phase))


@numba.njit(parallel=True, cache=True, fastmath=False, nogil=True)
def spectra_kernel(h0, index, rotation, dk, lateral, out):  # pragma: no cover - compiled
    n = h0.shape[0]
    half = n // 2
    # Each iteration handles a row of wave indices k and the mirrored row of -k: every
    # field's spectrum is Hermitian, so the values at -k are the conjugates of those at k,
    # and h0(k), h0(-k) and the rotation are read once for both. ĥ is computed for the
    # row first, then each plane is written on its own: the four planes lie a power of two
    # apart, and writing all eight rows at once made them evict each other from the cache
    # (twice the time at N = 2048).
    for row in numba.prange(half + 1):
        iy = np.int64(row)
        my = _mirror(iy, n)
        ny = iy if iy < half else iy - n
        ky = dk * ny
        ix_end = half + 1 if (iy == 0 or iy == half) else n
        hr_row = np.empty(ix_end)
        hi_row = np.empty(ix_end)
        ux_row = np.empty(ix_end)
        uy_row = np.empty(ix_end)
        kx_row = np.empty(ix_end)
        for ix in range(ix_end):
            mx = _mirror(ix, n)
            nx = ix if ix < half else ix - n
            slot = index[row, ix]  # read in row order: slots[q] was a cache miss per wave at N = 2048
            kx = dk * nx
            kx_row[ix] = kx
            if slot < 0:
                hr_row[ix] = 0.0
                hi_row[ix] = 0.0
                ux_row[ix] = 0.0
                uy_row[ix] = 0.0
                continue
            k = math.sqrt(kx * kx + ky * ky)
            a = h0[iy, ix]
            b = h0[my, mx]
            hr_row[ix], hi_row[ix] = _evolved(a, b, rotation[slot])
            ux_row[ix] = kx / k
            uy_row[ix] = ky / k
        # Packed A + iB at k is (Ar - Bi) + i(Ai + Br); at -k, conj(A) + i conj(B) is
        # (Ar + Bi) + i(Br - Ai). i·q·ĥ = (-q·hi) + i(q·hr).
        # plane 0: h + i Dx
        for ix in range(ix_end):
            mx = _mirror(ix, n)
            hr, hi, ux = hr_row[ix], hi_row[ix], ux_row[ix]
            dxr = -lateral * ux * hi
            dxi = lateral * ux * hr
            out[0, iy, ix] = complex(hr - dxi, hi + dxr)
            out[0, my, mx] = complex(hr + dxi, dxr - hi)
        # plane 1: Dy + i sx
        for ix in range(ix_end):
            mx = _mirror(ix, n)
            hr, hi, uy, kx = hr_row[ix], hi_row[ix], uy_row[ix], kx_row[ix]
            dyr = -lateral * uy * hi
            dyi = lateral * uy * hr
            sxr = -kx * hi
            sxi = kx * hr
            out[1, iy, ix] = complex(dyr - sxi, dyi + sxr)
            out[1, my, mx] = complex(dyr + sxi, sxr - dyi)
        # plane 2: sy + i Dxx
        for ix in range(ix_end):
            mx = _mirror(ix, n)
            hr, hi, ux, kx = hr_row[ix], hi_row[ix], ux_row[ix], kx_row[ix]
            syr = -ky * hi
            syi = ky * hr
            fxx = -lateral * kx * ux
            out[2, iy, ix] = complex(syr - fxx * hi, syi + fxx * hr)
            out[2, my, mx] = complex(syr + fxx * hi, fxx * hr - syi)
        # plane 3: Dyy + i Dxy
        for ix in range(ix_end):
            mx = _mirror(ix, n)
            hr, hi, ux, uy, kx = hr_row[ix], hi_row[ix], ux_row[ix], uy_row[ix], kx_row[ix]
            fyy = -lateral * ky * uy
            fxy = -lateral * kx * uy
            out[3, iy, ix] = complex(fyy * hr - fxy * hi, fyy * hi + fxy * hr)
            out[3, my, mx] = complex(fyy * hr + fxy * hi, fxy * hr - fyy * hi)


@numba.njit(parallel=True, cache=True, fastmath=False, nogil=True)
def surface_kernel(fields, fold_threshold, foam_ramp):  # pragma: no cover - compiled
    n = fields.shape[1]
    # Row by row: compute into small row buffers, then write each plane's row on its own
    # (the planes lie a power of two apart; see spectra_kernel).
    for iy in numba.prange(n):
        nx_row = np.empty(n, dtype=np.float32)
        ny_row = np.empty(n, dtype=np.float32)
        nz_row = np.empty(n, dtype=np.float32)
        jac_row = np.empty(n, dtype=np.float32)
        foam_row = np.empty(n, dtype=np.float32)
        for ix in range(n):
            v1 = fields[1, iy, ix]
            v2 = fields[2, iy, ix]
            v3 = fields[3, iy, ix]
            sx = v1.imag
            sy = v2.real
            jxx = 1.0 + v2.imag
            jyy = 1.0 + v3.real
            jxy = v3.imag
            jac = jxx * jyy - jxy * jxy
            # (∂P/∂x) × (∂P/∂y) for P = (x + Dx, y + Dy, h)
            nx = jxy * sy - sx * jyy
            ny = sx * jxy - jxx * sy
            nz = jac
            norm = math.sqrt(nx * nx + ny * ny + nz * nz)
            if norm > 0.0:
                nx /= norm
                ny /= norm
                nz /= norm
            else:
                nz = 1.0
            foam = (fold_threshold - jac) / foam_ramp
            foam = min(max(foam, 0.0), 1.0)
            nx_row[ix] = nx
            ny_row[ix] = ny
            nz_row[ix] = nz
            jac_row[ix] = jac
            foam_row[ix] = foam
        for ix in range(n):
            fields[1, iy, ix] = complex(fields[1, iy, ix].real, nx_row[ix])
        for ix in range(n):
            fields[2, iy, ix] = complex(jac_row[ix], ny_row[ix])
        for ix in range(n):
            fields[3, iy, ix] = complex(foam_row[ix], nz_row[ix])


@numba.njit(parallel=True, cache=True, fastmath=False, nogil=True)
def velocity_kernel(h0, slots, omega_table, rotation, dk, lateral, out):  # pragma: no cover - compiled
    n = h0.shape[0]
    half = n // 2
    q_max = slots.shape[0] - 1
    for row in numba.prange(n):
        iy = np.int64(row)
        ny = iy if iy < half else iy - n
        my = _mirror(iy, n)
        ky = dk * ny
        for column in range(n):
            ix = np.int64(column)
            nx = ix if ix < half else ix - n
            mx = _mirror(ix, n)
            q = nx * nx + ny * ny
            if q > q_max or q == 0:
                out[0, iy, ix] = 0.0
                out[1, iy, ix] = 0.0
                continue
            kx = dk * nx
            k = math.sqrt(kx * kx + ky * ky)
            a = h0[iy, ix]
            b = h0[my, mx]
            slot = slots[q]
            w = omega_table[slot]
            c = rotation[slot].real
            s = -rotation[slot].imag
            # ∂ĥ/∂t = -iω h0 e^{-iωt} + iω conj(h0(-k)) e^{+iωt}
            er = a.real * c + a.imag * s
            ei = a.imag * c - a.real * s
            fr = b.real * c + b.imag * s
            fi = b.real * s - b.imag * c
            vr = w * (ei - fi)
            vi = w * (fr - er)
            ux = kx / k
            uy = ky / k
            vxr = -lateral * ux * vi
            vxi = lateral * ux * vr
            vyr = -lateral * uy * vi
            vyi = lateral * uy * vr
            out[0, iy, ix] = complex(vxr - vyi, vxi + vyr)
            out[1, iy, ix] = complex(vr, vi)


@numba.njit(parallel=True, cache=True, fastmath=False, nogil=True)
def jacobian_spectra_kernel(h0, slots, rotation, dk, lateral, out):  # pragma: no cover - compiled
    # The three lateral-displacement derivatives alone, packed as (∂Dx/∂x + i ∂Dy/∂y,
    # ∂Dx/∂y): what lingering foam needs from a past instant, in two transforms.
    n = h0.shape[0]
    half = n // 2
    q_max = slots.shape[0] - 1
    for row in numba.prange(n):
        iy = np.int64(row)
        my = _mirror(iy, n)
        ny = iy if iy < half else iy - n
        ky = dk * ny
        for column in range(n):
            ix = np.int64(column)
            mx = _mirror(ix, n)
            nx = ix if ix < half else ix - n
            q = nx * nx + ny * ny
            if q > q_max or q == 0:
                out[0, iy, ix] = 0.0
                out[1, iy, ix] = 0.0
                continue
            kx = dk * nx
            k = math.sqrt(kx * kx + ky * ky)
            a = h0[iy, ix]
            b = h0[my, mx]
            hr, hi = _evolved(a, b, rotation[slots[q]])
            fxx = -lateral * kx * kx / k
            fyy = -lateral * ky * ky / k
            fxy = -lateral * kx * ky / k
            out[0, iy, ix] = complex(fxx * hr - fyy * hi, fxx * hi + fyy * hr)
            out[1, iy, ix] = complex(fxy * hr, fxy * hi)


@numba.njit(parallel=True, cache=True, fastmath=False, nogil=True)
def lingering_foam_kernel(derivatives, fields, fold_threshold, foam_ramp, weight):  # pragma: no cover
    # foam = max(foam, weight · fold(J_past)) in place of the frame's foam (plane 3, real).
    n = fields.shape[1]
    for iy in numba.prange(n):
        for ix in range(n):
            d0 = derivatives[0, iy, ix]
            jxy = derivatives[1, iy, ix].real
            jac = (1.0 + d0.real) * (1.0 + d0.imag) - jxy * jxy
            past = (fold_threshold - jac) / foam_ramp
            past = weight * min(max(past, 0.0), 1.0)
            v = fields[3, iy, ix]
            if past > v.real:
                fields[3, iy, ix] = complex(past, v.imag)


# -- plain numpy references (tests hold the kernels against these) ----------------------


@numba.njit(parallel=True, cache=True, fastmath=False, nogil=True)
def block_spectra_kernel(h0, mirror, omega, factors, t, out):  # pragma: no cover - compiled
    # The composite's packed spectra on a block of the lattice (surface.composite): one
    # pass, ĥ = h0 e^{−iωt} + mirror e^{+iωt} (mirror = conj h0(−k)) times each packed
    # pair's factor, instead of numpy's seven passes over the block.
    for i in numba.prange(h0.shape[0]):
        for j in range(h0.shape[1]):
            phase = omega[i, j] * t
            rotation = complex(math.cos(phase), -math.sin(phase))
            spectrum = h0[i, j] * rotation + mirror[i, j] * rotation.conjugate()
            for f in range(factors.shape[0]):
                out[f, i, j] = factors[f, i, j] * spectrum


def block_spectra_reference(h0: NDArray, mirror: NDArray, omega: NDArray, factors: NDArray, t: float) -> NDArray:
    """:func:`block_spectra_kernel` by numpy, returning a new array."""
    rotation = np.exp(-1j * omega * t)
    return factors * (h0 * rotation + mirror * np.conj(rotation))


def _lattice(n: int, dk: float) -> tuple[NDArray, NDArray, NDArray]:
    idx = np.fft.fftfreq(n, d=1.0 / n)
    ky = (idx * dk)[:, None]
    kx = (idx * dk)[None, :]
    return kx, ky, np.hypot(kx, ky)


def slot_index(slots: NDArray[np.int32], n: int) -> NDArray[np.int32]:
    """The rotation slot of every wave index of the half lattice ``spectra_kernel`` walks
    (rows 0 … N/2 of the FFT layout, all columns): ``slots[q]`` for q = nx² + ny², and −1
    where q = 0 or q lies beyond the table (no energy). Read row by row, it replaces a
    gather from the q-indexed table per wave (a cache miss each at N = 2048: the kernel
    took 33 ms with the gather and 27 ms with this, 2 shared cores)."""
    half = n // 2
    columns = np.arange(n, dtype=np.int64)
    nx = np.where(columns < half, columns, columns - n)
    index = np.empty((half + 1, n), dtype=np.int32)
    for start in range(0, half + 1, 16):  # blocks of rows keep the temporaries small
        rows = np.arange(start, min(start + 16, half + 1), dtype=np.int64)
        ny = np.where(rows < half, rows, rows - n)
        q = ny[:, None] * ny[:, None] + nx[None, :] * nx[None, :]
        inside = (q > 0) & (q < slots.shape[0])
        index[start:start + rows.size] = np.where(inside, slots[np.where(inside, q, 0)], -1)
    return index


def spectra_reference(h0: NDArray, omega: NDArray, t: float, dk: float, lateral: float) -> NDArray:
    """The eight field spectra at time t, packed as in :func:`spectra_kernel`, by numpy."""
    n = h0.shape[0]
    kx, ky, k = _lattice(n, dk)
    mirrored = np.roll(h0[::-1, ::-1], 1, axis=(0, 1))
    rotation = np.exp(-1j * omega * t)
    hk = h0 * rotation + np.conj(mirrored) * np.conj(rotation)
    with np.errstate(divide="ignore", invalid="ignore"):
        ux = np.where(k > 0, kx / k, 0.0)
        uy = np.where(k > 0, ky / k, 0.0)
    spectra = [
        hk,
        1j * lateral * ux * hk,
        1j * lateral * uy * hk,
        1j * kx * hk,
        1j * ky * hk,
        -lateral * kx * ux * hk,
        -lateral * ky * uy * hk,
        -lateral * kx * uy * hk,
    ]
    return np.stack([spectra[2 * i] + 1j * spectra[2 * i + 1] for i in range(4)])


def surface_reference(fields: NDArray, fold_threshold: float, foam_ramp: float) -> NDArray:
    """:func:`surface_kernel` by numpy, returning a new array."""
    out = fields.copy()
    sx, sy = fields[1].imag, fields[2].real
    jxx, jyy, jxy = 1.0 + fields[2].imag, 1.0 + fields[3].real, fields[3].imag
    jac = jxx * jyy - jxy**2
    normal = np.stack([jxy * sy - sx * jyy, sx * jxy - jxx * sy, jac])
    normal = normal / np.linalg.norm(normal, axis=0)
    foam = np.clip((fold_threshold - jac) / foam_ramp, 0.0, 1.0)
    out[1] = fields[1].real + 1j * normal[0]
    out[2] = jac + 1j * normal[1]
    out[3] = foam + 1j * normal[2]
    return out
