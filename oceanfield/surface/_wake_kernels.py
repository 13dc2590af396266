"""The wake's fast path: numba kernels for its spectra, its point sums and its foam trail.

Knows nothing of presets or files: it works on arrays of lattice wavenumbers and of the
path pieces a frame looks back over. Each kernel has a plain-numpy reference the tests
hold it against.

Why they are shaped this way:

* ``wake_spectra_kernel`` makes one pass over the half lattice (kx ≥ 0, the layout of a
  real inverse FFT), row by row in parallel. In each row it walks the path pieces from
  the newest to the oldest in a fixed order (so every wave sums its pieces in the same
  order whatever frames came before) and, for the waves of the row inside the piece's
  patch-spectrum ellipse (an interval of kx, solved from the quadratic, so waves outside
  cost nothing), adds the piece's closed-form time integral (see
  ``physics.wake.segment_response``). The position phase e^{−ik·x_b} and drift e^{ik·VΔ}
  are products of one-dimensional factors (e^{−ikx·x}·e^{−iky·y}) computed once per
  piece; the transcendentals a wave and piece need are e^{iωΔ}, which also carries the age
  rotation e^{iω(t − τb)} on to the next piece when that one adds to the wave too (all of
  an interval's e^{iωΔ} are computed first, in a loop without branches that LLVM
  vectorises: `_cis` is branch-free for that; 0.59 → 0.44 s CPU on the benchmark), and the
  patch's Gaussian (a recurrence along the interval). The kernel writes the spectra of the eight (eleven with velocity) real
  fields, ready for ``scipy.fft.irfft2``.
* ``wake_point_kernel`` sums the half-lattice spectrum at scattered points (probes).
* ``foam_trail_kernel`` paints capsules along the path pieces of the foam look-back into
  the region's texels, visiting only each capsule's bounding box, and keeps the maximum
  (order-independent, so deterministic in parallel).

Divisions are unchecked (``error_model="numpy"``): every divisor is bounded away from
zero, by the series threshold of (1 − e^{−z})/z or, for the normal, by its z component.
The four ratios of a piece and wave share one division where none needs its series.

Window: the look-back T weights a piece of age u by w(u) = (e^{−εu} − e^{−εT})/(1 − e^{−εT})
(continuous at u = T, so cutting the look-back starts no wave), which is a difference of
two exponentials: the kernel accumulates J± with damping ε and with none.
"""

from __future__ import annotations

import math
import os

os.environ.setdefault("OMP_WAIT_POLICY", "PASSIVE")  # as surface/_kernels.py: FFTs share the cores

import numba  # noqa: E402
import numpy as np  # noqa: E402
from numpy.typing import NDArray  # noqa: E402

__all__ = [
    "FIELD_COUNT",
    "VELOCITY_FIELD_COUNT",
    "wake_spectra_kernel",
    "wake_spectra_reference",
    "wake_point_kernel",
    "wake_point_reference",
    "foam_trail_kernel",
    "foam_trail_reference",
    "wake_surface_kernel",
    "wake_surface_reference",
    "cis_kernel",
]

#: Spectra written per frame: h, Dx, Dy, ∂h/∂x, ∂h/∂y, ∂Dx/∂x, ∂Dy/∂y, ∂Dx/∂y.
FIELD_COUNT = 8
#: With velocity: then ∂h/∂t, ∂Dx/∂t, ∂Dy/∂t.
VELOCITY_FIELD_COUNT = 11

_SERIES_BELOW = 1e-2  # |z| below which (1 − e^{−z})/z is its Taylor series (error < 1e-14)

# cos and sin on [−π/4, π/4]: the minimax polynomials of fdlibm's __kernel_sin / __kernel_cos
# (Sun Microsystems, 1993; freely distributable), with Cody & Waite's reduction by π/2.
_S1, _S2, _S3 = -1.66666666666666324348e-01, 8.33333333332248946124e-03, -1.98412698298579493134e-04
_S4, _S5, _S6 = 2.75573137070700676789e-06, -2.50507602534068634195e-08, 1.58969099521155010221e-10
_C1, _C2, _C3 = 4.16666666666666019037e-02, -1.38888888888741095749e-03, 2.48015872894767294178e-05
_C4, _C5, _C6 = -2.75573143513906633035e-07, 2.08757232129817482790e-09, -1.13596475577881948265e-11
_TWO_OVER_PI = 6.36619772367581382433e-01
_PIO2_1 = 1.57079632673412561417e+00    # the first 33 bits of π/2
_PIO2_1T = 6.07710050650619224932e-11   # π/2 − _PIO2_1


@numba.njit(inline="always", cache=True)
def _cis(x):  # pragma: no cover - compiled
    """e^{ix} = (cos x, sin x) as one complex, for |x| up to ~10⁶ rad.

    One reduction serves both. Measured no faster than math.cos and math.sin in the spectra
    kernel (0.66–0.69 s against 0.68 s CPU on the benchmark's frame), but it is pure
    arithmetic in a fixed order: the phases' bits do not depend on the C library of the
    machine that renders the frame. Error ≤ 1 ulp (tested against numpy up to 10⁵ rad).
    """
    n = math.floor(x * _TWO_OVER_PI + 0.5)
    r = (x - n * _PIO2_1) - n * _PIO2_1T
    z = r * r
    sr = r + (z * r) * (_S1 + z * (_S2 + z * (_S3 + z * (_S4 + z * (_S5 + z * _S6)))))
    hz = 0.5 * z
    w = 1.0 - hz
    cr = w + (((1.0 - w) - hz) + z * z * (_C1 + z * (_C2 + z * (_C3 + z * (_C4 + z * (_C5 + z * _C6))))))
    # the quadrant without branches (they mispredict: quadrants fall at random along a row):
    # q = 0 → (c, s), 1 → (−s, c), 2 → (−c, −s), 3 → (s, −c); selecting by ×0 and ×1 is exact
    q = int(n) & 3
    swap = float(q & 1)
    keep = 1.0 - swap
    sign_re = 1.0 - 2.0 * float(((q + 1) >> 1) & 1)
    sign_im = 1.0 - 2.0 * float((q >> 1) & 1)
    return complex(sign_re * (cr * keep + sr * swap), sign_im * (sr * keep + cr * swap))


@numba.njit(cache=True)
def cis_kernel(x, out):  # pragma: no cover - compiled
    """`_cis` over an array (for its test against numpy)."""
    for i in range(x.shape[0]):
        out[i] = _cis(x[i])


@numba.njit(inline="always", cache=True, error_model="numpy")
def _ratio(zr, zi, er, ei):  # pragma: no cover - compiled
    """(1 − e^{−z})/z for z = zr + i·zi, given e^{−z} = er + i·ei (its series near 0).

    Written in real arithmetic: one real division (1/z = conj(z)/|z|²) instead of a
    complex division with its scaling branches (the kernel's inner loop does four).
    """
    r2 = zr * zr + zi * zi
    if r2 < _SERIES_BELOW * _SERIES_BELOW:
        z = complex(zr, zi)
        return 1.0 - z * (0.5 - z * (1.0 / 6.0 - z * (1.0 / 24.0 - z / 120.0)))
    inv = 1.0 / r2
    nr = 1.0 - er
    ni = -ei
    return complex((nr * zr + ni * zi) * inv, (ni * zr - nr * zi) * inv)


@numba.njit(inline="always", cache=True, error_model="numpy")
def _ratio_undamped(y, er, ei):  # pragma: no cover - compiled
    """(1 − e^{−z})/z for z = −i·y, given e^{−z} = er + i·ei: i(1 − e^{−z})/y (series near 0)."""
    if abs(y) < _SERIES_BELOW:
        z = complex(0.0, -y)
        return 1.0 - z * (0.5 - z * (1.0 / 6.0 - z * (1.0 / 24.0 - z / 120.0)))
    inv = 1.0 / y
    return complex(ei * inv, (1.0 - er) * inv)


@numba.njit(parallel=True, cache=True, fastmath=False, nogil=True, error_model="numpy")
def wake_spectra_kernel(kx, ky, omega, gain, kcut2, age_end, duration, end_x, end_y,
                        vel_x, vel_y, patch_a, patch_b, patch_c, patch_amp, joined, floor_log,
                        damping, tail, lateral, out):  # pragma: no cover - compiled
    """Fill ``out`` (F, M, M//2+1) complex64 with the wake's field spectra; see module doc.

    ``gain`` = −κ/(ρ ω A) per wave (0 where not evaluated), ``tail`` = e^{−εT}; a piece
    adds nothing to a wave where its patch spectrum is below e^{−floor_log} of its peak.
    ``kx`` must be the lattice's non-negative wavenumbers 0, dk, 2dk, …; ``joined[j]``
    says that piece j ends where piece j − 1 began (so its age rotation carries over).
    """
    m = ky.shape[0]
    mh = kx.shape[0]
    pieces = age_end.shape[0]
    velocity = out.shape[0] > 8
    dk = kx[1] - kx[0]
    # one-dimensional factors per piece: e^{−ikx·x_b}, e^{−iky·y_b}, e^{ikx·vxΔ}, e^{iky·vyΔ}
    px = np.empty((pieces, mh), dtype=np.complex128)
    dxp = np.empty((pieces, mh), dtype=np.complex128)
    py = np.empty((pieces, m), dtype=np.complex128)
    dyp = np.empty((pieces, m), dtype=np.complex128)
    for j in range(pieces):
        for ix in range(mh):
            px[j, ix] = _cis(-kx[ix] * end_x[j])
            dxp[j, ix] = _cis(kx[ix] * vel_x[j] * duration[j])
        for iy in range(m):
            py[j, iy] = _cis(-ky[iy] * end_y[j])
            dyp[j, iy] = _cis(ky[iy] * vel_y[j] * duration[j])
    damp_end = np.empty(pieces)
    damp_step = np.empty(pieces)
    for j in range(pieces):
        damp_end[j] = math.exp(-damping * age_end[j])
        damp_step[j] = math.exp(-damping * duration[j])
    scale = 1.0 / (1.0 - tail)
    for iy in numba.prange(m):
        kyv = ky[iy]
        jp = np.zeros(mh, dtype=np.complex128)   # damped, e^{+iω(t−τ)}
        jm = np.zeros(mh, dtype=np.complex128)   # damped, e^{−iω(t−τ)}
        zp0 = np.zeros(mh, dtype=np.complex128)  # undamped
        zm0 = np.zeros(mh, dtype=np.complex128)
        rot = np.ones(mh, dtype=np.complex128)   # e^{iω(t − τb)} after the last piece added
        last = np.full(mh, -2, dtype=np.int64)   # that piece
        step_re = np.empty(mh)                    # e^{iωΔ} of the current piece
        step_im = np.empty(mh)
        # this row's live waves: |k|² ≤ kcut2
        room = kcut2 - kyv * kyv
        if room < 0.0:
            ix_live = -1
        else:
            ix_live = min(mh - 1, int(math.sqrt(room) / dk) + 1)
        for j in range(pieces):
            # the waves of this row inside piece j's floor ellipse: a kx² + (c ky) kx + b ky² ≤ L,
            # an interval of kx (widened by one wave and checked exactly below)
            pa = patch_a[j]
            pb = patch_b[j]
            pc = patch_c[j]
            lin = pc * kyv
            rest = pb * kyv * kyv - floor_log
            disc = lin * lin - 4.0 * pa * rest
            if disc < 0.0:
                continue
            root = math.sqrt(disc)
            ix1 = max(0, int(math.floor((-lin - root) / (2.0 * pa) / dk)) - 1)
            ix2 = min(ix_live, int(math.ceil((-lin + root) / (2.0 * pa) / dk)) + 1)
            dur = duration[j]
            carry = joined[j]
            # the patch's Gaussian along the interval by recurrence (two products a wave, no
            # exp): quad grows by pa(2kx·dk + dk²) + pc·ky·dk a step, that step by 2pa·dk²
            k1 = kx[ix1]
            gauss = math.exp(-(pa * k1 * k1 + pb * kyv * kyv + pc * k1 * kyv))
            ratio = math.exp(-(pa * (2.0 * k1 * dk + dk * dk) + pc * kyv * dk))
            growth = math.exp(-2.0 * pa * dk * dk)
            # e^{iωΔ} of the interval's waves first, in a loop without branches (vectorised)
            for ix in range(ix1, ix2 + 1):
                e = _cis(omega[iy, ix] * dur)
                step_re[ix] = e.real
                step_im[ix] = e.imag
            for ix in range(ix1, ix2 + 1):
                kxv = kx[ix]
                patch_shape = gauss
                gauss *= ratio
                ratio *= growth
                g = gain[iy, ix]
                if g == 0.0 or kxv * kxv + kyv * kyv > kcut2:
                    continue
                quad = pa * kxv * kxv + pb * kyv * kyv + pc * kxv * kyv
                if quad > floor_log:
                    continue
                w = omega[iy, ix]
                if carry and last[ix] == j - 1:
                    r = rot[ix]
                else:
                    r = _cis(w * age_end[j])
                patch = patch_amp[j] * patch_shape
                wd = w * dur
                c = complex(step_re[ix], step_im[ix])
                base = patch * dur * (px[j, ix] * py[j, iy])
                q = dxp[j, ix] * dyp[j, iy]  # e^{ik·VΔ}
                kv = (kxv * vel_x[j] + kyv * vel_y[j]) * dur
                qc = q * c
                qcc = q * c.conjugate()
                ed = damping * dur
                es = damp_step[j]
                # damped: z± = εΔ − i(k·V ± ω)Δ, e^{−z±} = e^{−εΔ} q e^{±iωΔ}
                yp = kv + wd
                ym = kv - wd
                if abs(yp) >= _SERIES_BELOW and abs(ym) >= _SERIES_BELOW:
                    # the four divisors share one division: 1/a = (b·c·d)/(a·b·c·d)
                    r2p = ed * ed + yp * yp
                    r2m = ed * ed + ym * ym
                    pm = r2p * r2m
                    yy = yp * ym
                    inv = 1.0 / (pm * yy)
                    inv_r2p = r2m * yy * inv
                    inv_r2m = r2p * yy * inv
                    inv_yp = pm * ym * inv
                    inv_ym = pm * yp * inv
                    nr = 1.0 - es * qc.real
                    ni = -es * qc.imag
                    ep = complex((nr * ed - ni * yp) * inv_r2p, (ni * ed + nr * yp) * inv_r2p)
                    nr = 1.0 - es * qcc.real
                    ni = -es * qcc.imag
                    em = complex((nr * ed - ni * ym) * inv_r2m, (ni * ed + nr * ym) * inv_r2m)
                    e0p = complex(qc.imag * inv_yp, (1.0 - qc.real) * inv_yp)
                    e0m = complex(qcc.imag * inv_ym, (1.0 - qcc.real) * inv_ym)
                else:
                    ep = _ratio(ed, -yp, es * qc.real, es * qc.imag)
                    em = _ratio(ed, -ym, es * qcc.real, es * qcc.imag)
                    e0p = _ratio_undamped(yp, qc.real, qc.imag)
                    e0m = _ratio_undamped(ym, qcc.real, qcc.imag)
                br = base * r
                brc = base * r.conjugate()
                de = damp_end[j]
                jp[ix] += (de * br) * ep
                jm[ix] += (de * brc) * em
                zp0[ix] += br * e0p
                zm0[ix] += brc * e0m
                rot[ix] = r * c
                last[ix] = j
        for ix in range(mh):
            kxv = kx[ix]
            k2 = kxv * kxv + kyv * kyv
            g = gain[iy, ix]
            if k2 > kcut2 or g == 0.0:
                for f in range(out.shape[0]):
                    out[f, iy, ix] = 0.0
                continue
            # windowed sine and cosine integrals
            sin_w = ((jp[ix] - jm[ix]) - tail * (zp0[ix] - zm0[ix])) * scale / 2j
            h = g * sin_w
            k = math.sqrt(k2)
            ux = kxv / k
            uy = kyv / k
            ih = 1j * h
            out[0, iy, ix] = h
            out[1, iy, ix] = lateral * ux * ih
            out[2, iy, ix] = lateral * uy * ih
            out[3, iy, ix] = kxv * ih
            out[4, iy, ix] = kyv * ih
            out[5, iy, ix] = -lateral * kxv * ux * h
            out[6, iy, ix] = -lateral * kyv * uy * h
            out[7, iy, ix] = -lateral * kxv * uy * h
            if velocity:
                cos_w = ((jp[ix] + jm[ix]) - tail * (zp0[ix] + zm0[ix])) * scale / 2.0
                sin_d = (jp[ix] - jm[ix]) * scale / 2j
                ht = g * (omega[iy, ix] * cos_w - damping * sin_d)
                out[8, iy, ix] = ht
                out[9, iy, ix] = lateral * ux * 1j * ht
                out[10, iy, ix] = lateral * uy * 1j * ht


def wake_spectra_reference(kx, ky, omega, gain, kcut2, age_end, duration, end_x, end_y,
                           vel_x, vel_y, patch_a, patch_b, patch_c, patch_amp, joined, floor_log,
                           damping, tail, lateral, fields):
    """The same spectra as `wake_spectra_kernel`, by numpy over the lattice, piece by piece."""
    from ..physics.wake import segment_response

    kxg, kyg = np.meshgrid(kx, ky)
    live = (kxg**2 + kyg**2 <= kcut2) & (gain != 0.0)
    jp = np.zeros(kxg.shape, complex)
    jm = np.zeros_like(jp)
    zp = np.zeros_like(jp)
    zm = np.zeros_like(jp)
    for j in range(len(age_end)):
        quad = patch_a[j] * kxg**2 + patch_b[j] * kyg**2 + patch_c[j] * kxg * kyg
        patch = np.where(quad > floor_log, 0.0, patch_amp[j] * np.exp(-quad))
        args = dict(age_end=age_end[j], duration=duration[j], end_x=end_x[j], end_y=end_y[j],
                    velocity_x=vel_x[j], velocity_y=vel_y[j])
        a, b = segment_response(kxg, kyg, omega, damping=damping, **args)
        c, d = segment_response(kxg, kyg, omega, damping=0.0, **args)
        jp += patch * a
        jm += patch * b
        zp += patch * c
        zm += patch * d
    scale = 1.0 / (1.0 - tail)
    h = np.where(live, gain * ((jp - jm) - tail * (zp - zm)) * scale / 2j, 0)
    with np.errstate(divide="ignore", invalid="ignore"):
        k = np.sqrt(kxg**2 + kyg**2)
        ux = np.where(k > 0, kxg / k, 0.0)
        uy = np.where(k > 0, kyg / k, 0.0)
    out = [h, lateral * ux * 1j * h, lateral * uy * 1j * h, kxg * 1j * h, kyg * 1j * h,
           -lateral * kxg * ux * h, -lateral * kyg * uy * h, -lateral * kxg * uy * h]
    if fields > 8:
        cos_w = ((jp + jm) - tail * (zp + zm)) * scale / 2.0
        sin_d = (jp - jm) * scale / 2j
        ht = np.where(live, gain * (omega * cos_w - damping * sin_d), 0)
        out += [ht, lateral * ux * 1j * ht, lateral * uy * 1j * ht]
    return np.stack(out).astype(np.complex64)


@numba.njit(parallel=True, cache=True, fastmath=False, nogil=True)
def wake_surface_kernel(planes, jac, normal, velocity):  # pragma: no cover - compiled
    """Jacobian and unit normal of the displaced surface (and the velocity's three planes
    gathered) on the region, the top-left n × n of the transformed ``planes``.

    ``planes`` holds h, Dx, Dy, ∂h/∂x, ∂h/∂y, ∂Dx/∂x, ∂Dy/∂y, ∂Dx/∂y (then ∂h/∂t, ∂Dx/∂t,
    ∂Dy/∂t); n ∝ ∂P/∂x × ∂P/∂y for P = (x + Dx, y + Dy, h), as the sea's surface kernel.
    """
    n = jac.shape[0]
    gather = velocity.shape[0] > 0
    for iy in numba.prange(n):
        for ix in range(n):
            sx = planes[3, iy, ix]
            sy = planes[4, iy, ix]
            jxx = 1.0 + planes[5, iy, ix]
            jyy = 1.0 + planes[6, iy, ix]
            jxy = planes[7, iy, ix]
            j = jxx * jyy - jxy * jxy
            nx = jxy * sy - sx * jyy
            ny = sx * jxy - jxx * sy
            norm = math.sqrt(nx * nx + ny * ny + j * j)
            jac[iy, ix] = j
            normal[iy, ix, 0] = nx / norm
            normal[iy, ix, 1] = ny / norm
            normal[iy, ix, 2] = j / norm
            if gather:
                velocity[iy, ix, 0] = planes[9, iy, ix]
                velocity[iy, ix, 1] = planes[10, iy, ix]
                velocity[iy, ix, 2] = planes[8, iy, ix]


def wake_surface_reference(planes, n):
    """The same Jacobian and normal by numpy: (jac, normal)."""
    h, dx, dy, sx, sy, dxx, dyy, dxy = (p[:n, :n].astype(np.float64) for p in planes[:8])
    jxx, jyy = 1.0 + dxx, 1.0 + dyy
    jac = jxx * jyy - dxy * dxy
    normal = np.stack([dxy * sy - sx * jyy, sx * dxy - jxx * sy, jac], axis=-1)
    return jac, normal / np.linalg.norm(normal, axis=-1, keepdims=True)


#: Columns of the point kernel's output.
POINT_COLUMNS = ("h", "dx", "dy", "h_x", "h_y", "dx_x", "dy_y", "dx_y", "h_t", "dx_t", "dy_t")


@numba.njit(parallel=True, cache=True, fastmath=False, nogil=True)
def wake_point_kernel(mkx, mky, weight, spec, x, y, out):  # pragma: no cover - compiled
    """Sum Σ w·Re(ĉ e^{ik·x}) of each of ``spec``'s rows (11 fields) at points (x, y)."""
    fields = spec.shape[0]
    for p in numba.prange(x.shape[0]):
        acc = np.zeros(fields)
        for j in range(mkx.shape[0]):
            e = _cis(mkx[j] * x[p] + mky[j] * y[p])
            c = e.real
            s = e.imag
            wj = weight[j]
            for f in range(fields):
                v = spec[f, j]
                acc[f] += wj * (v.real * c - v.imag * s)
        for f in range(fields):
            out[p, f] = acc[f]


def wake_point_reference(mkx, mky, weight, spec, x, y):
    """The same sums by numpy."""
    phase = np.exp(1j * (np.outer(x, mkx) + np.outer(y, mky)))
    return ((phase * weight) @ spec.T).real


@numba.njit(parallel=True, cache=True, fastmath=False, nogil=True)
def foam_trail_kernel(origin_x, origin_y, spacing, ax, ay, bx, by,
                      width_a, width_b, strength_a, strength_b, out):  # pragma: no cover - compiled
    """Paint each capsule (a→b, width and strength linear along it) into ``out`` (max)."""
    n = out.shape[0]
    pieces = ax.shape[0]
    # rows in parallel; each row visits only the capsules whose box it crosses
    for iy in numba.prange(n):
        yv = origin_y + iy * spacing
        for j in range(pieces):
            w = max(width_a[j], width_b[j])
            if yv < min(ay[j], by[j]) - w or yv > max(ay[j], by[j]) + w:
                continue
            x_lo = min(ax[j], bx[j]) - w
            x_hi = max(ax[j], bx[j]) + w
            i0 = max(0, int(math.floor((x_lo - origin_x) / spacing)))
            i1 = min(n - 1, int(math.ceil((x_hi - origin_x) / spacing)))
            dx = bx[j] - ax[j]
            dy = by[j] - ay[j]
            ll = dx * dx + dy * dy
            for ix in range(i0, i1 + 1):
                xv = origin_x + ix * spacing
                if ll > 0.0:
                    s = ((xv - ax[j]) * dx + (yv - ay[j]) * dy) / ll
                    s = min(max(s, 0.0), 1.0)
                else:
                    s = 0.0
                ex = xv - (ax[j] + s * dx)
                ey = yv - (ay[j] + s * dy)
                width = width_a[j] + s * (width_b[j] - width_a[j])
                r2 = (ex * ex + ey * ey) / (width * width)
                if r2 >= 1.0:
                    continue
                strength = strength_a[j] + s * (strength_b[j] - strength_a[j])
                value = strength * (1.0 - r2) * (1.0 - r2)
                if value > out[iy, ix]:
                    out[iy, ix] = value


def foam_trail_reference(origin_x, origin_y, spacing, ax, ay, bx, by,
                         width_a, width_b, strength_a, strength_b, out):
    """The same painting by numpy, capsule by capsule over the whole region."""
    n = out.shape[0]
    xs = origin_x + np.arange(n) * spacing
    X, Y = np.meshgrid(xs, origin_y + np.arange(n) * spacing)
    for j in range(len(ax)):
        dx, dy = bx[j] - ax[j], by[j] - ay[j]
        ll = dx * dx + dy * dy
        s = np.clip(((X - ax[j]) * dx + (Y - ay[j]) * dy) / ll, 0, 1) if ll > 0 else np.zeros_like(X)
        ex, ey = X - (ax[j] + s * dx), Y - (ay[j] + s * dy)
        width = width_a[j] + s * (width_b[j] - width_a[j])
        r2 = (ex**2 + ey**2) / width**2
        strength = strength_a[j] + s * (strength_b[j] - strength_a[j])
        value = np.where(r2 < 1, strength * (1 - r2) ** 2, 0).astype(out.dtype)
        np.maximum(out, value, out=out)
    return out
