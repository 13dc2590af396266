"""Exact sums of travelling sinusoids at scattered points: the probes' numba kernel.

Knows nothing of sea states, presets or files: it works on the arrays of ``WaveModes``.

`surface_point_kernel` evaluates, for each (x, y, t) it is given, the height, the lateral
displacement, their first derivatives in x and y, and their time derivatives, as the
sums Re Σ c·e^{iφ} with φ = kx·x + ky·y − ω·t. With ``invert`` it first finds the rest
position x0 whose displaced position x0 + D(x0) lands on (x, y): Newton's method on
F(x0) = x0 + D(x0) − X (the 2×2 Jacobian of the lateral map comes with the sum), each
step halved until the residual |F| falls, and relaxed fixed-point steps x0 ← x0 − μ·F
where Newton cannot make progress (at a fold, where the lateral map turns back): they walk
over the fold, with μ doubling on each such step in a row (|F| is small near a fold), to
a layer of the surface that lands on the target. Where the surface folds, several layers
land on one point; the inversion returns one of them, and its residual says whether it
got there. The inversion needs only the lateral displacement and its derivatives, so it
sums only the modes that move sideways (``lkx`` …: the others, bound waves, add exact
zeros there; with them a probe on a sea with bound waves summed ~150 times the modes at
each of its steps); the final evaluation sums them all. Points are independent, so the
loop over them runs in parallel; each sum is one pass over the modes with one sine and
cosine each. `surface_point_reference` is the same by numpy.
"""

from __future__ import annotations

import math

import numba
import numpy as np
from numpy.typing import NDArray

__all__ = ["OUTPUT_COLUMNS", "surface_point_kernel", "surface_point_reference"]

#: Columns of the kernel's output, in order.
OUTPUT_COLUMNS = (
    "rest_x", "rest_y", "residual", "iterations",
    "dx", "dy", "h",
    "dx_x", "dx_y", "dy_x", "dy_y", "h_x", "h_y",
    "dx_t", "dy_t", "h_t",
)

_SINGULAR = 1e-3  # |det| of the lateral map's Jacobian below which Newton is not tried
_HALVINGS = 8
_UNFOLDED = 0.25  # det of the lateral map above which Newton is tried again after a fold
_RELAXATION = 0.25  # first μ of the relaxed fixed-point step (converges where |∇D| < 2/μ − 1 = 7)
_MAX_RELAXATION = 16.0  # μ doubles on each relaxed step in a row, up to this


@numba.njit(cache=True, fastmath=False)
def _sums(kx, ky, omega, a, bx, by, x, y, t, rates):  # pragma: no cover - compiled
    """(Dx, Dy, h, ∂Dx/∂x, ∂Dx/∂y, ∂Dy/∂x, ∂Dy/∂y, ∂h/∂x, ∂h/∂y, ∂Dx/∂t, ∂Dy/∂t, ∂h/∂t)."""
    dx = dy = h = 0.0
    dxx = dxy = dyx = dyy = hx = hy = 0.0
    dxt = dyt = ht = 0.0
    for j in range(kx.shape[0]):
        phase = kx[j] * x + ky[j] * y - omega[j] * t
        c = math.cos(phase)
        s = math.sin(phase)
        # Re(c·e^{iφ}) and Im(c·e^{iφ}) for each field's amplitude
        ar = a[j].real * c - a[j].imag * s
        ai = a[j].real * s + a[j].imag * c
        xr = bx[j].real * c - bx[j].imag * s
        xi = bx[j].real * s + bx[j].imag * c
        yr = by[j].real * c - by[j].imag * s
        yi = by[j].real * s + by[j].imag * c
        h += ar
        dx += xr
        dy += yr
        # ∂/∂x Re(c e^{iφ}) = Re(i kx c e^{iφ}) = −kx Im(c e^{iφ})
        hx -= kx[j] * ai
        hy -= ky[j] * ai
        dxx -= kx[j] * xi
        dxy -= ky[j] * xi
        dyx -= kx[j] * yi
        dyy -= ky[j] * yi
        if rates:
            # ∂/∂t Re(c e^{iφ}) = Re(−iω c e^{iφ}) = ω Im(c e^{iφ})
            ht += omega[j] * ai
            dxt += omega[j] * xi
            dyt += omega[j] * yi
    return dx, dy, h, dxx, dxy, dyx, dyy, hx, hy, dxt, dyt, ht


@numba.njit(parallel=True, cache=True, fastmath=False)
def surface_point_kernel(kx, ky, omega, a, bx, by, lkx, lky, lomega, la, lbx, lby,  # pragma: no cover
                         x, y, t, invert, tolerance, max_iterations, out):
    for m in numba.prange(x.shape[0]):
        X = x[m]
        Y = y[m]
        T = t[m]
        x0 = X
        y0 = Y
        iterations = 0
        residual = 0.0
        if invert:
            v = _sums(lkx, lky, lomega, la, lbx, lby, x0, y0, T, False)
            # first guess: one fixed-point step from the target itself
            x0 = X - v[0]
            y0 = Y - v[1]
            v = _sums(lkx, lky, lomega, la, lbx, lby, x0, y0, T, False)
            fx = x0 + v[0] - X
            fy = y0 + v[1] - Y
            residual = math.sqrt(fx * fx + fy * fy)
            folded = False
            stuck = 0.0
            folds = 0
            relax = _RELAXATION
            while residual > tolerance and iterations < max_iterations:
                iterations += 1
                if folded and folds < 2 and residual < 0.5 * stuck:
                    folded = False  # past the fold: free Newton again (twice at most, no cycling)
                m11 = 1.0 + v[3]
                m12 = v[4]
                m21 = v[5]
                m22 = 1.0 + v[6]
                det = m11 * m22 - m12 * m21
                accepted = False
                # After a fold, Newton only where the lateral map clearly does not fold
                # (else it falls back into the fold's middle layer).
                if det > (_UNFOLDED if folded else _SINGULAR) or (not folded and det < -_SINGULAR):
                    sx = -(m22 * fx - m12 * fy) / det
                    sy = -(-m21 * fx + m11 * fy) / det
                    step = 1.0
                    for _ in range(_HALVINGS):
                        nx0 = x0 + step * sx
                        ny0 = y0 + step * sy
                        w = _sums(lkx, lky, lomega, la, lbx, lby, nx0, ny0, T, False)
                        gx = nx0 + w[0] - X
                        gy = ny0 + w[1] - Y
                        r = math.sqrt(gx * gx + gy * gy)
                        if r < residual:
                            x0, y0, v, fx, fy, residual = nx0, ny0, w, gx, gy, r
                            accepted = True
                            relax = _RELAXATION
                            break
                        step *= 0.5
                if not accepted:
                    if not folded:
                        stuck = residual
                        folds += 1
                    folded = True
                    # Stuck at a fold (Newton cannot lower the residual): walk on with the
                    # relaxed fixed-point step x0 ← x0 − μ·F, which passes over the fold to
                    # a layer of the surface that lands on the target, then Newton again.
                    x0 = x0 - relax * fx
                    y0 = y0 - relax * fy
                    relax = min(2.0 * relax, _MAX_RELAXATION)  # near a fold |F| is small: lengthen the stride
                    v = _sums(lkx, lky, lomega, la, lbx, lby, x0, y0, T, False)
                    fx = x0 + v[0] - X
                    fy = y0 + v[1] - Y
                    residual = math.sqrt(fx * fx + fy * fy)
        v = _sums(kx, ky, omega, a, bx, by, x0, y0, T, True)
        out[m, 0] = x0
        out[m, 1] = y0
        out[m, 2] = residual
        out[m, 3] = iterations
        for i in range(12):
            out[m, 4 + i] = v[i]


def surface_point_reference(kx: NDArray, ky: NDArray, omega: NDArray, a: NDArray, bx: NDArray, by: NDArray,
                            x: NDArray, y: NDArray, t: NDArray) -> NDArray[np.float64]:
    """The kernel's columns from ``dx`` on, at rest positions (x, y), by numpy (no inversion)."""
    phase = np.exp(1j * (np.multiply.outer(x, kx) + np.multiply.outer(y, ky) - np.multiply.outer(t, omega)))
    columns = []
    for amplitude in (bx, by, a):
        columns.append((phase * amplitude).real.sum(axis=-1))
    for amplitude in (bx, by, a):
        for k in (kx, ky):
            columns.append((1j * k * amplitude * phase).real.sum(axis=-1))
    for amplitude in (bx, by, a):
        columns.append((-1j * omega * amplitude * phase).real.sum(axis=-1))
    return np.stack(columns, axis=-1)
