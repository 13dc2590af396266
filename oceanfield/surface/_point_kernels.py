"""Blocked sums of travelling sinusoids at one point: the probes' fast exact engine.

Knows nothing of sea states, presets or files: it works on the arrays of ``WaveModes``.

The same sums as ``_sums._sums`` (Re Σ c·e^{iφ}, φ = kx·x + ky·y − ω·t, and their
derivatives), taken a block of ``BLOCK`` modes at a time: each block's phases, then their
sines and cosines by `sincos_block` (range reduction by a four-part π/2 (Cody & Waite 1980) and the
minimax polynomials of fdlibm's ``__kernel_sin`` / ``__kernel_cos``, Sun Microsystems
1993, coefficients below; no library call, so the loop vectorises), then the block's
partial sums, in mode order. The blocks' partial sums are added in block order, so the result has the
same bits whether the blocks run on one thread (``blocked_sums``, inside a loop that is
parallel over points) or on all of them (``blocked_sums_parallel``, one point). Modes
that do not move sideways (bound waves) are summed apart (``still``): height, slopes and
rise rate only, the lateral sums they would add being exact zeros.

The sines and cosines agree with the C library's to ~2 ulp of 1 for |φ| < 2²⁷·π/2 (2e8 rad;
tested against numpy); beyond, the reduction loses ~|φ|·1e-16 rad, the size of φ's own
rounding.
"""

from __future__ import annotations

import math

import numba
import numpy as np

__all__ = ["BLOCK", "sincos_block", "blocked_sums", "blocked_sums_parallel"]

#: Modes a block: its phases, sines and cosines (3 × 32 kB) stay in the core's cache.
BLOCK = 4096
_FIELDS = 12
_TWO_OVER_PI = 6.36619772367581382433e-01
# π/2 in four parts, the first three with 26 significant bits (q·part exact for |q| < 2²⁷)
_PIO2_1 = 1.5707963109016418
_PIO2_2 = 1.5893254712295857e-08
_PIO2_3 = 6.123233932053594e-17
_PIO2_4 = 6.36831716351095e-25
# fdlibm k_sin.c / k_cos.c (Sun Microsystems 1993): |error| < 2^-58 on |r| ≤ π/4
_S1, _S2, _S3 = -1.66666666666666324348e-01, 8.33333333332248946124e-03, -1.98412698298579493134e-04
_S4, _S5, _S6 = 2.75573137070700676789e-06, -2.50507602534068634195e-08, 1.58969099521155010221e-10
_C1, _C2, _C3 = 4.16666666666666019037e-02, -1.38888888888741095749e-03, 2.48015872894767294178e-05
_C4, _C5, _C6 = -2.75573143513906633035e-07, 2.08757232129817482790e-09, -1.13596475577881948265e-11


@numba.njit(cache=True, fastmath=False)
def sincos_block(phase, c, s, n):  # pragma: no cover - compiled
    """cos and sin of phase[:n] into c[:n] and s[:n] (branch-free, vectorisable)."""
    for i in range(n):
        p = phase[i]
        q = math.floor(p * _TWO_OVER_PI + 0.5)
        r = (((p - q * _PIO2_1) - q * _PIO2_2) - q * _PIO2_3) - q * _PIO2_4
        z = r * r
        sr = r + r * z * (_S1 + z * (_S2 + z * (_S3 + z * (_S4 + z * (_S5 + z * _S6)))))
        cr = 1.0 - 0.5 * z + z * z * (_C1 + z * (_C2 + z * (_C3 + z * (_C4 + z * (_C5 + z * _C6)))))
        # p = quadrant·π/2 + r (mod 2π); the quadrant's swap and signs as products by 0 and
        # ±1 (exact, and no branches to mispredict on random phases)
        quadrant = q - 4.0 * math.floor(0.25 * q)  # 0, 1, 2, 3
        half = math.floor(0.5 * quadrant)  # 0, 0, 1, 1
        odd = quadrant - 2.0 * half  # 0, 1, 0, 1
        turn = math.floor(0.5 * quadrant + 0.5)  # 0, 1, 1, 2
        s[i] = (sr * (1.0 - odd) + cr * odd) * (1.0 - 2.0 * half)
        c[i] = (cr * (1.0 - odd) + sr * odd) * (1.0 - 2.0 * (turn - 2.0 * math.floor(0.5 * turn)))


@numba.njit(cache=True, fastmath=False)
def _block(kx, ky, omega, a, bx, by, start, stop, x, y, t, moving, rates, out):  # pragma: no cover - compiled
    """The sums of ``_sums._sums`` over modes [start, stop) into ``out``: ``moving`` False,
    height, its slopes and its rate only (bx, by are not read); ``rates`` False, the
    lateral sums and their slopes only (what the inversion reads; the rest 0)."""
    n = stop - start
    phase = np.empty(n)
    c = np.empty(n)
    s = np.empty(n)
    for i in range(n):
        j = start + i
        phase[i] = kx[j] * x + ky[j] * y - omega[j] * t
    sincos_block(phase, c, s, n)
    out[:] = 0.0
    if moving:
        _lateral(kx, ky, omega, bx, by, start, c, s, n, rates, out)
    if rates:
        _height(kx, ky, omega, a, start, c, s, n, out)


@numba.njit(cache=True, fastmath=False)
def _lateral(kx, ky, omega, bx, by, start, c, s, n, rates, out):  # pragma: no cover - compiled
    """The lateral sums of modes start … start + n − 1 (cosines c, sines s) into ``out``.
    (Reassociated so as to vectorise, the sums were 1.5× slower: the complex amplitudes
    deinterleave badly.)"""
    dx = dy = dxx = dxy = dyx = dyy = dxt = dyt = 0.0
    for i in range(n):
        j = start + i
        # Re(c·e^{iφ}), Im(c·e^{iφ}); ∂/∂x Re(c e^{iφ}) = −kx Im(c e^{iφ}), ∂/∂t = ω Im(c e^{iφ})
        xr = bx[j].real * c[i] - bx[j].imag * s[i]
        xi = bx[j].real * s[i] + bx[j].imag * c[i]
        yr = by[j].real * c[i] - by[j].imag * s[i]
        yi = by[j].real * s[i] + by[j].imag * c[i]
        dx += xr
        dy += yr
        dxx -= kx[j] * xi
        dxy -= ky[j] * xi
        dyx -= kx[j] * yi
        dyy -= ky[j] * yi
        dxt += omega[j] * xi
        dyt += omega[j] * yi
    out[0], out[1], out[3], out[4], out[5], out[6] = dx, dy, dxx, dxy, dyx, dyy
    if rates:
        out[9], out[10] = dxt, dyt


@numba.njit(cache=True, fastmath=False)
def _height(kx, ky, omega, a, start, c, s, n, out):  # pragma: no cover - compiled
    """The height sums (h, ∂h/∂x, ∂h/∂y, ∂h/∂t) of modes start … start + n − 1 into ``out``."""
    h = hx = hy = ht = 0.0
    for i in range(n):
        j = start + i
        ar = a[j].real * c[i] - a[j].imag * s[i]
        ai = a[j].real * s[i] + a[j].imag * c[i]
        h += ar
        hx -= kx[j] * ai
        hy -= ky[j] * ai
        ht += omega[j] * ai
    out[2], out[7], out[8], out[11] = h, hx, hy, ht


@numba.njit(cache=True, fastmath=False)
def _run_block(b, moving_blocks, kx, ky, omega, a, bx, by, skx, sky, somega, sa, x, y, t, rates,  # pragma: no cover
               partial):
    """Block b of the moving modes (b < moving_blocks), else of the still ones."""
    if b < moving_blocks:
        start = b * BLOCK
        _block(kx, ky, omega, a, bx, by, start, min(start + BLOCK, kx.shape[0]), x, y, t, True, rates, partial[b])
    else:
        start = (b - moving_blocks) * BLOCK
        _block(skx, sky, somega, sa, sa, sa, start, min(start + BLOCK, skx.shape[0]), x, y, t, False, True,
               partial[b])


@numba.njit(cache=True, fastmath=False)
def _total(partial):  # pragma: no cover - compiled
    total = np.zeros(_FIELDS)
    for b in range(partial.shape[0]):  # block order: the same bits on any thread count
        for f in range(_FIELDS):
            total[f] += partial[b, f]
    return (total[0], total[1], total[2], total[3], total[4], total[5],
            total[6], total[7], total[8], total[9], total[10], total[11])


@numba.njit(cache=True, fastmath=False)
def _blocks(kx, skx, rates):  # pragma: no cover - compiled
    moving = (kx.shape[0] + BLOCK - 1) // BLOCK
    still = (skx.shape[0] + BLOCK - 1) // BLOCK if rates else 0
    return moving, moving + still


@numba.njit(cache=True, fastmath=False)
def blocked_sums(kx, ky, omega, a, bx, by, skx, sky, somega, sa, x, y, t, rates):  # pragma: no cover - compiled
    """``_sums._sums`` over the moving modes (kx … by) and, with ``rates``, the still ones
    (skx … sa: no lateral part) too; one thread. Without ``rates``: the lateral sums and
    their slopes over the moving modes only (what the inversion reads), the rest 0."""
    moving, count = _blocks(kx, skx, rates)
    partial = np.zeros((count, _FIELDS))
    for b in range(count):
        _run_block(b, moving, kx, ky, omega, a, bx, by, skx, sky, somega, sa, x, y, t, rates, partial)
    return _total(partial)


@numba.njit(parallel=True, cache=True, fastmath=False)
def blocked_sums_parallel(kx, ky, omega, a, bx, by, skx, sky, somega, sa, x, y, t, rates):  # pragma: no cover
    """`blocked_sums` with its blocks spread over the threads: the same bits."""
    moving, count = _blocks(kx, skx, rates)
    partial = np.zeros((count, _FIELDS))
    for b in numba.prange(count):
        _run_block(b, moving, kx, ky, omega, a, bx, by, skx, sky, somega, sa, x, y, t, rates, partial)
    return _total(partial)
