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
loop over them runs in parallel. Each sum is one pass over the modes: by default (the
``BLOCKED`` engine, ``_point_kernels``) a block of modes at a time with a vectorised sine
and cosine, the still modes summed apart, 3–4× faster than the ``EXACT`` engine (one
C-library sine and cosine a mode, `_sums`: the reference, within ~1e-10 of each field's
σ); ``SAMPLED`` reads the frame's sampled grids. `surface_point_reference` is the sums by
numpy.
"""

from __future__ import annotations

import math

import numba
import numpy as np
from numpy.typing import NDArray

from ._point_kernels import blocked_sums

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


@numba.njit(cache=True, fastmath=False)
def _weights(u, width, beta, out):  # pragma: no cover - compiled
    """The first of the ``width`` fine-grid cells around grid coordinate u, and their
    "exponential of semicircle" weights φ((u − m)/(width/2)) in ``out``."""
    first = math.ceil(u - 0.5 * width)
    for a in range(width):
        z = (u - (first + a)) / (0.5 * width)
        out[a] = math.exp(beta * (math.sqrt(max(0.0, 1.0 - z * z)) - 1.0))
    return first


@numba.njit(cache=True, fastmath=False)
def _sampled(grids, offsets, sizes, counts, dks, width, beta, x, y, lateral_only):  # pragma: no cover
    """The tuple of ``_sums`` from the frame's sampled grids (``_nufft.sample_grids``):
    per lattice group the packed pairs (Dx, Dy), (∂Dx/∂x, ∂Dx/∂y), (∂Dy/∂x, ∂Dy/∂y),
    (h, ∂h/∂x), (∂h/∂y, ∂h/∂t), (∂Dx/∂t, ∂Dy/∂t), or the two height pairs alone for a
    group that does not move sideways; ``lateral_only``: the first three pairs only."""
    wx = np.empty(width)
    wy = np.empty(width)
    columns = np.empty(width, dtype=np.int64)
    rows = np.empty(width, dtype=np.int64)
    acc = np.zeros(6, dtype=np.complex128)
    two_pi = 2.0 * math.pi
    for g in range(sizes.shape[0]):
        count = counts[g]
        if lateral_only and count < 6:
            continue
        size = sizes[g]
        ux = (dks[g] * x) % two_pi * (size / two_pi)
        uy = (dks[g] * y) % two_pi * (size / two_pi)
        fx = _weights(ux, width, beta, wx)
        fy = _weights(uy, width, beta, wy)
        for a in range(width):
            columns[a] = (fx + a) % size
            rows[a] = ((fy + a) % size) * size
        fields = 3 if lateral_only else count
        for f in range(fields):
            base = offsets[g] + f * size * size
            total = 0.0 + 0.0j
            for a in range(width):
                row = base + rows[a]
                partial = 0.0 + 0.0j
                for b in range(width):
                    partial += wx[b] * grids[row + columns[b]]
                total += wy[a] * partial
            slot = f if count == 6 else f + 3  # a height-only group holds pairs 3 and 4
            acc[slot] += total
    # (Dx, Dy, h, ∂Dx/∂x, ∂Dx/∂y, ∂Dy/∂x, ∂Dy/∂y, ∂h/∂x, ∂h/∂y, ∂Dx/∂t, ∂Dy/∂t, ∂h/∂t)
    return (acc[0].real, acc[0].imag, acc[3].real, acc[1].real, acc[1].imag, acc[2].real, acc[2].imag,
            acc[3].imag, acc[4].real, acc[5].real, acc[5].imag, acc[4].imag)


@numba.njit(parallel=True, cache=True, fastmath=False)
def scatter_kernel(pick, kx, ky, omega, a, bx, by, rotations, dk, moving, correction, fine):  # pragma: no cover
    """Step 1 of ``_nufft.sample_grids`` for the modes ``pick`` of one lattice (spacing dk):
    each field's amplitude rotated to t, c = amplitude·e^{−iωt} (``rotations``), and its derivatives
    (∂/∂x → i kx, ∂/∂t → −iω), packed in pairs A + iB onto the fine grid, (c_A + i c_B)/2
    at +k and (c̄_A + i c̄_B)/2 at −k (Re(c e^{ik·x}) = (c e^{ik·x} + c.c.)/2), times the
    kernel's deconvolution factors ``correction[|n|]`` along both axes. ``moving``: the six
    pairs of ``_sampled``; otherwise the two height pairs alone. One thread a pair (each
    writes its own plane, modes in order): the same bits on any thread count."""
    size = fine.shape[1]
    for f in numba.prange(fine.shape[0]):
        for j in pick:
            nx = int(round(kx[j] / dk))
            ny = int(round(ky[j] / dk))
            rotation = rotations[j]
            ikx, iky, iw = 1j * kx[j], 1j * ky[j], -1j * omega[j]
            h = a[j] * rotation
            x = bx[j] * rotation
            y = by[j] * rotation
            pair = f if moving else f + 3  # (Dx, Dy), (Dx_x, Dx_y), (Dy_x, Dy_y), (h, h_x), (h_y, h_t), (Dx_t, Dy_t)
            if pair == 0:
                p, q = x, y
            elif pair == 1:
                p, q = ikx * x, iky * x
            elif pair == 2:
                p, q = ikx * y, iky * y
            elif pair == 3:
                p, q = h, ikx * h
            elif pair == 4:
                p, q = iky * h, iw * h
            else:
                p, q = iw * x, iw * y
            c = 0.5 * correction[abs(nx)] * correction[abs(ny)]
            fine[f, ny % size, nx % size] += c * (p + 1j * q)
            fine[f, (-ny) % size, (-nx) % size] += c * (p.conjugate() + 1j * q.conjugate())


#: Engines of `surface_point_kernel`: the sums per mode by the C library's sine and cosine
#: (the reference), the frame's sampled grids, and the blocked sums (_point_kernels).
EXACT, SAMPLED, BLOCKED = 0, 1, 2


@numba.njit(cache=True, fastmath=False)
def _evaluate(engine, kx, ky, omega, a, bx, by, skx, sky, somega, sa, grids, offsets, sizes, counts, dks,
              width, beta, x, y, t, rates):  # pragma: no cover - compiled
    """The sums at (x, y, t) over the modes kx … by and, for the blocked engines with
    ``rates``, the still modes skx … sa; or from the frame's sampled grids."""
    if engine == SAMPLED:
        return _sampled(grids, offsets, sizes, counts, dks, width, beta, x, y, not rates)
    if engine == BLOCKED:
        return blocked_sums(kx, ky, omega, a, bx, by, skx, sky, somega, sa, x, y, t, rates)
    return _sums(kx, ky, omega, a, bx, by, x, y, t, rates)


@numba.njit(parallel=True, cache=True, fastmath=False)
def surface_point_kernel(kx, ky, omega, a, bx, by, lkx, lky, lomega, la, lbx, lby,  # pragma: no cover
                         x, y, t, invert, tolerance, max_iterations, out,
                         engine, grids, offsets, sizes, counts, dks, width, beta, skx, sky, somega, sa):
    """Every point (x[m], y[m], t[m]) into out[m] (`OUTPUT_COLUMNS`), the points in
    parallel: kx … by every mode, lkx … lby those that move sideways, skx … sa the others
    (the blocked engines' final sums: moving + still instead of every)."""
    for m in numba.prange(x.shape[0]):
        _point(m, kx, ky, omega, a, bx, by, lkx, lky, lomega, la, lbx, lby, x, y, t, invert, tolerance,
               max_iterations, out, engine, grids, offsets, sizes, counts, dks, width, beta, skx, sky, somega, sa)


@numba.njit(cache=True, fastmath=False)
def _point(m, kx, ky, omega, a, bx, by, lkx, lky, lomega, la, lbx, lby,  # pragma: no cover - compiled
           x, y, t, invert, tolerance, max_iterations, out,
           engine, grids, offsets, sizes, counts, dks, width, beta, skx, sky, somega, sa):
    """Point m: the inversion (if asked), then every sum at its rest position."""
    sampler = (skx, sky, somega, sa, grids, offsets, sizes, counts, dks, width, beta)
    X = x[m]
    Y = y[m]
    T = t[m]
    x0 = X
    y0 = Y
    iterations = 0
    residual = 0.0
    if invert:
        v = _evaluate(engine, lkx, lky, lomega, la, lbx, lby, *sampler, x0, y0, T, False)
        # first guess: one fixed-point step from the target itself
        x0 = X - v[0]
        y0 = Y - v[1]
        v = _evaluate(engine, lkx, lky, lomega, la, lbx, lby, *sampler, x0, y0, T, False)
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
                    w = _evaluate(engine, lkx, lky, lomega, la, lbx, lby, *sampler, nx0, ny0, T, False)
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
                v = _evaluate(engine, lkx, lky, lomega, la, lbx, lby, *sampler, x0, y0, T, False)
                fx = x0 + v[0] - X
                fy = y0 + v[1] - Y
                residual = math.sqrt(fx * fx + fy * fy)
    if engine == BLOCKED:
        v = _evaluate(engine, lkx, lky, lomega, la, lbx, lby, *sampler, x0, y0, T, True)
    else:
        v = _evaluate(engine, kx, ky, omega, a, bx, by, *sampler, x0, y0, T, True)
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
