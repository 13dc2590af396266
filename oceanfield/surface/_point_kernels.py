"""Blocked sums of travelling sinusoids at one point: the probes' exact engine.

Knows nothing of sea states, presets or files: it works on the arrays of ``WaveModes``.

The same sums as ``_sums._sums`` (Re Σ c·e^{iφ}, φ = kx·x + ky·y − ω·t, and their
derivatives), taken a block of ``BLOCK`` modes at a time: each block's phases, then their
sines and cosines by `sincos_block` (Cody & Waite's (1980) range reduction by π/2 in four
parts, then the polynomials of fdlibm's ``__kernel_sin`` / ``__kernel_cos``, Sun
Microsystems 1993; no library call, so the loop vectorises: ~2 ns a mode against ~20 ns
for the C library's sin and cos), then the block's partial sums, in mode order, added in
block order: one order, the same bits every run and on any thread count (the loop over
points is the parallel one). Modes that do not move sideways (bound waves) are summed
apart (``still``): height, slopes and rise rate only, the lateral sums they would add
being exact zeros; and the inversion's sums skip the height.

The sines and cosines agree with the C library's to ~2 ulp of 1 for |φ| < 2²⁷·π/2 (2e8 rad;
tested against numpy); beyond, the reduction loses ~|φ|·1e-16 rad, the size of φ's own
rounding.

Measured and not adopted: spreading one point's blocks over the threads (fixed blocks, the
same bits) made one probe on the busy shared 2-core machine 2× slower on 2 threads than on
one (OpenMP's waiting threads spin between the inversion's ~10 short parallel regions;
even with them passive, no faster than one thread); reassociating the partial sums so that
they vectorise, 1.5× slower (the complex amplitudes deinterleave badly).
"""

from __future__ import annotations

import math

import numba
import numpy as np

__all__ = ["BLOCK", "sincos_block", "blocked_sums"]

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
def _block(kx, ky, omega, a, bx, by, start, stop, x, y, t, moving, rates, phase, c, s, out):  # pragma: no cover
    """The sums of ``_sums._sums`` over modes [start, stop) into ``out`` (phase, c, s: room
    for a block): ``moving`` False, height, its slopes and its rate only (bx, by are not
    read); ``rates`` False, the lateral sums and their slopes only (what the inversion
    reads; the rest 0)."""
    n = stop - start
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
    """The lateral sums of modes start … start + n − 1 (cosines c, sines s) into ``out``."""
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
def blocked_sums(kx, ky, omega, a, bx, by, skx, sky, somega, sa, x, y, t, rates):  # pragma: no cover - compiled
    """The 12 sums of ``_sums._sums`` at (x, y, t) over the moving modes (kx … by) and, with
    ``rates``, the still ones (skx … sa: no lateral part) too. Without ``rates``: the
    lateral sums and their slopes over the moving modes only (what the inversion reads),
    the rest 0."""
    total = np.zeros(_FIELDS)
    partial = np.empty(_FIELDS)
    phase, c, s = np.empty(BLOCK), np.empty(BLOCK), np.empty(BLOCK)
    still = skx.shape[0] if rates else 0
    for start in range(0, kx.shape[0], BLOCK):
        _block(kx, ky, omega, a, bx, by, start, min(start + BLOCK, kx.shape[0]), x, y, t, True, rates, phase, c, s,
               partial)
        total += partial
    for start in range(0, still, BLOCK):
        _block(skx, sky, somega, sa, sa, sa, start, min(start + BLOCK, still), x, y, t, False, True, phase, c, s, partial)
        total += partial
    return (total[0], total[1], total[2], total[3], total[4], total[5],
            total[6], total[7], total[8], total[9], total[10], total[11])
