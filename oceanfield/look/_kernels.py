"""The look's numba kernels: a ray marched against the repeated surface pyramid, and the
shading of what it meets; with plain-numpy references of their parts.

Knows nothing of presets, tiles' physics or files: arrays in, pixels out.

Why shaped so. One pass over the pixels, rows spread over the threads (``prange``); each
pixel is independent, so the picture's bits do not depend on the thread count. A ray is
marched from the camera against the sum of every band's heights, each band sampled at
the pyramid level that matches the pixel's footprint there (trilinear, periodic): above
the slab [lowest, highest] of those levels it jumps to the slab along the tangent of its
(convex) height above the curved sea, a step that cannot pass the surface; inside it
steps half a texel and, once under the surface, bisects. So near the camera it steps
finely, and toward the horizon the levels coarsen, the slab thins and the steps lengthen:
about a hundred height samples a ray. The shading samples the slope moments once.

The Earth. The mean sea is a sphere of radius R seen from near its surface: a ray at
distance t with horizontal part t·|d_h| is at height z + t²|d_h|²/(2R) above it (the
parabola of the sphere; its horizon dip differs from arccos(R/(R+h)) by less than 1e-6
of it below 1 km). ``inv_radius`` 0 gives a flat sea.
"""

from __future__ import annotations

import math

import numpy as np
from numba import njit, prange

__all__ = ["render_kernel", "sky_radiance_kernel", "trace_ray", "shade_point", "surface_reference", "shade_reference"]

_SQRT3 = math.sqrt(3.0)
_MAX_STEPS = 2000
_BISECTIONS = 20
_MIN_GRAZING = 1e-3  # footprints stretch as 1/sin(grazing) up to this


@njit(cache=True, nogil=True)
def _perez(cos_theta, gamma, table, row):
    a, b, c, d, e = table[row, 0], table[row, 1], table[row, 2], table[row, 3], table[row, 4]
    cg = math.cos(gamma)
    return table[row, 5] * (1.0 + a * math.exp(b / cos_theta)) * (1.0 + c * math.exp(d * gamma) + e * cg * cg)


@njit(cache=True, nogil=True)
def _sky(dx, dy, dz, table, sun, out):
    """Preetham sky radiance (linear sRGB) along a unit direction into ``out`` (3,)."""
    cos_theta = max(dz, 1e-3)
    cg = dx * sun[0] + dy * sun[1] + dz * sun[2]
    gamma = math.acos(min(1.0, max(-1.0, cg)))
    big_y = _perez(cos_theta, gamma, table, 0)
    x = _perez(cos_theta, gamma, table, 1)
    y = _perez(cos_theta, gamma, table, 2)
    cx = x / y * big_y
    cz = (1.0 - x - y) / y * big_y
    out[0] = 3.2406 * cx - 1.5372 * big_y - 0.4986 * cz
    out[1] = -0.9689 * cx + 1.8758 * big_y + 0.0415 * cz
    out[2] = 0.0557 * cx - 0.2040 * big_y + 1.0570 * cz


@njit(cache=True, nogil=True, parallel=True)
def sky_radiance_kernel(directions, table, sun):
    """Sky radiance along each of ``directions`` (M, 3): the kernel's sky, for its test."""
    out = np.empty((directions.shape[0], 3))
    for i in prange(directions.shape[0]):
        _sky(directions[i, 0], directions[i, 1], directions[i, 2], table, sun, out[i])
    return out


@njit(cache=True, nogil=True)
def _fresnel(cos_i, n):
    cos_i = min(1.0, max(0.0, cos_i))
    cos_t = math.sqrt(1.0 - (1.0 - cos_i * cos_i) / (n * n))
    rs = (cos_i - n * cos_t) / (cos_i + n * cos_t)
    rp = (n * cos_i - cos_t) / (n * cos_i + cos_t)
    return 0.5 * (rs * rs + rp * rp)


@njit(cache=True, nogil=True)
def _level(footprint, spacing0, levels):
    if footprint <= spacing0:
        return 0.0
    lam = math.log2(footprint / spacing0)
    top = levels - 1.0
    return lam if lam < top else top


@njit(cache=True, nogil=True)
def _texel(data, start, n, spacing0, spacing, x, y, channel):
    """Bilinear, periodic sample of one channel of one level (texel centres of a level
    built by 2 × 2 means sit half a base texel before (i + ½) of its spacing)."""
    u = (x + 0.5 * spacing0) / spacing - 0.5
    v = (y + 0.5 * spacing0) / spacing - 0.5
    u0 = math.floor(u)
    v0 = math.floor(v)
    fu = u - u0
    fv = v - v0
    i0 = int(u0 - math.floor(u0 / n) * n)
    j0 = int(v0 - math.floor(v0 / n) * n)
    i1 = i0 + 1 if i0 + 1 < n else 0
    j1 = j0 + 1 if j0 + 1 < n else 0
    a = data[start + j0 * n + i0, channel]
    b = data[start + j0 * n + i1, channel]
    c = data[start + j1 * n + i0, channel]
    d = data[start + j1 * n + i1, channel]
    return (1.0 - fv) * ((1.0 - fu) * a + fu * b) + fv * ((1.0 - fu) * c + fu * d)


@njit(cache=True, nogil=True)
def _band_value(data, offset, side, tile, b, lam, x, y, channel):
    """Trilinear sample of band ``b`` at fractional level ``lam``."""
    l0 = int(lam)
    f = lam - l0
    spacing0 = tile[b] / side[b, 0]
    value = _texel(data, offset[b, l0], side[b, l0], spacing0, tile[b] / side[b, l0], x, y, channel)
    if f > 0.0:
        upper = _texel(data, offset[b, l0 + 1], side[b, l0 + 1], spacing0, tile[b] / side[b, l0 + 1], x, y, channel)
        value += f * (upper - value)
    return value


@njit(cache=True, nogil=True)
def _footprint(t, pixel_angle, slope_rel):
    grazing = max(-slope_rel, _MIN_GRAZING)
    return t * pixel_angle / math.sqrt(grazing)


@njit(cache=True, nogil=True)
def _surface(data, offset, side, tile, levels, low, high, footprint, x, y, with_height):
    """(height, lowest, highest, step spacing) of the summed bands at this footprint; the
    step spacing is the texel of the band with the widest height range there (the band
    that decides where a ray meets the sea; a band of millimetre ripples does not)."""
    height = 0.0
    lowest = 0.0
    highest = 0.0
    finest = 1e300
    widest = -1.0
    for b in range(tile.shape[0]):
        lam = _level(footprint, tile[b] / side[b, 0], levels[b])
        l0 = int(lam)
        l1 = l0 + 1 if lam > l0 else l0
        band_low = min(low[b, l0], low[b, l1])
        band_high = max(high[b, l0], high[b, l1])
        lowest += band_low
        highest += band_high
        if band_high - band_low > widest:
            widest = band_high - band_low
            finest = tile[b] / side[b, l0]
        if with_height:
            height += _band_value(data, offset, side, tile, b, lam, x, y, 0)
    return height, lowest, highest, finest


@njit(cache=True, nogil=True)
def trace_ray(data, offset, side, tile, levels, low, high, origin, d, pixel_angle, inv_radius):
    """Distance along the unit ray ``d`` from ``origin`` to the sea, or −1 when it misses."""
    dh2 = d[0] * d[0] + d[1] * d[1]
    dh = math.sqrt(dh2)
    t = 0.0
    z = origin[2]
    h, lowest, highest, spacing = _surface(data, offset, side, tile, levels, low, high, 0.0, origin[0], origin[1], True)
    if z - h <= 0.0:
        return 0.0
    t_prev = 0.0
    for _ in range(_MAX_STEPS):
        z = origin[2] + t * d[2] + 0.5 * inv_radius * t * t * dh2
        slope = d[2] + inv_radius * t * dh2
        footprint = _footprint(t, pixel_angle, slope)
        x = origin[0] + t * d[0]
        y = origin[1] + t * d[1]
        h, lowest, highest, spacing = _surface(data, offset, side, tile, levels, low, high, footprint, x, y, False)
        if z > highest:
            if slope >= 0.0:
                return -1.0
            t_prev = t
            t += max((z - highest) / (-slope), 0.5 * spacing / max(dh, -slope))
            continue
        h, lowest, highest, spacing = _surface(data, offset, side, tile, levels, low, high, footprint, x, y, True)
        if z - h <= 0.0:
            a, b = t_prev, t
            for _ in range(_BISECTIONS):
                m = 0.5 * (a + b)
                zm = origin[2] + m * d[2] + 0.5 * inv_radius * m * m * dh2
                fm = _footprint(m, pixel_angle, d[2] + inv_radius * m * dh2)
                hm, _l, _h, _s = _surface(data, offset, side, tile, levels, low, high, fm,
                                          origin[0] + m * d[0], origin[1] + m * d[1], True)
                if zm - hm > 0.0:
                    a = m
                else:
                    b = m
            return 0.5 * (a + b)
        t_prev = t
        t += 0.5 * spacing / max(dh, abs(slope))
    return t


@njit(cache=True, nogil=True)
def _moments(data, offset, side, tile, levels, footprint, x, y, out):
    """Summed bands' mean slopes, slope covariance (xx, yy, xy) and foam into ``out`` (6,)."""
    for i in range(6):
        out[i] = 0.0
    clear = 1.0
    for b in range(tile.shape[0]):
        lam = _level(footprint, tile[b] / side[b, 0], levels[b])
        sx = _band_value(data, offset, side, tile, b, lam, x, y, 1)
        sy = _band_value(data, offset, side, tile, b, lam, x, y, 2)
        out[0] += sx
        out[1] += sy
        out[2] += max(_band_value(data, offset, side, tile, b, lam, x, y, 3) - sx * sx, 0.0)
        out[3] += max(_band_value(data, offset, side, tile, b, lam, x, y, 4) - sy * sy, 0.0)
        out[4] += _band_value(data, offset, side, tile, b, lam, x, y, 5) - sx * sy
        clear *= 1.0 - min(1.0, max(0.0, _band_value(data, offset, side, tile, b, lam, x, y, 6)))
    out[5] = 1.0 - clear


@njit(cache=True, nogil=True)
def shade_point(mean_x, mean_y, vxx, vyy, vxy, foam, v, light, table, sun_irradiance, body, foam_radiance, n, out):
    """Radiance leaving the sea toward the camera (``v``: unit, toward the camera) from a
    patch of mean slopes (mean_x, mean_y) and slope covariance (vxx, vyy, vxy), into
    ``out`` (3,): sky reflection + sun glitter + water body, mixed with foam.

    Sky reflection: Fresnel-weighted sky in the mirror direction, averaged over the slope
    distribution by its five sigma points (the unscented transform: Julier & Uhlmann 1997,
    "A new extension of the Kalman filter to nonlinear systems"; centre weight 1/3, ±√3
    along each Cholesky column with 1/6), each weighed by its projected area toward the
    camera, v·n, and facets facing away left out (the distribution of visible normals:
    Heitz 2014, "Understanding the masking-shadowing function in microfacet-based BRDFs",
    JCGT 3(2)); without it a crest's far side, seen grazing, mirrors the bright horizon. Glitter: the sun's reflection from Gaussian
    facets, L = E_sun R(v·h) p(s_h) / (4 v_z cos⁴β) (Cox & Munk 1954, eq. 14's radiance
    form; s_h the slope whose normal is the half vector h, β its tilt). Water body:
    ``body`` times (1 − R̄)/(1 − R(0)). Foam: ``foam_radiance`` over the foam's share.
    """
    l11 = math.sqrt(max(vxx, 1e-12))
    l21 = vxy / l11
    l22 = math.sqrt(max(vyy - l21 * l21, 1e-12))
    sky = np.empty(3)
    r0 = 0.0
    r1 = 0.0
    r2 = 0.0
    weight_sum_f = 0.0
    weight_sum = 0.0
    for k in range(5):
        if k == 0:
            sx, sy, w = mean_x, mean_y, 1.0 / 3.0
        else:
            sign = 1.0 if k % 2 == 1 else -1.0
            if k <= 2:
                sx, sy = mean_x + sign * _SQRT3 * l11, mean_y + sign * _SQRT3 * l21
            else:
                sx, sy = mean_x, mean_y + sign * _SQRT3 * l22
            w = 1.0 / 6.0
        norm = math.sqrt(sx * sx + sy * sy + 1.0)
        nx, ny, nz = -sx / norm, -sy / norm, 1.0 / norm
        c = v[0] * nx + v[1] * ny + v[2] * nz
        if k == 0 and c <= 0.0:  # the patch faces away (a crest's silhouette): its mean, grazing
            c, w = 1e-4, 1e-12
        elif c <= 0.0:  # facets facing away are hidden
            continue
        else:
            w *= c  # seen facets weigh by their projected area
        rx, ry, rz = 2.0 * c * nx - v[0], 2.0 * c * ny - v[1], 2.0 * c * nz - v[2]
        if rz < 1e-3:  # mirrored below the horizon: it sees the horizon's sky (no second bounce)
            rz = 1e-3
            scale = 1.0 / math.sqrt(rx * rx + ry * ry + rz * rz)
            rx, ry, rz = rx * scale, ry * scale, rz * scale
        f = _fresnel(c, n)
        _sky(rx, ry, rz, table, light, sky)
        r0 += w * f * sky[0]
        r1 += w * f * sky[1]
        r2 += w * f * sky[2]
        weight_sum_f += w * f
        weight_sum += w
    r0 /= weight_sum
    r1 /= weight_sum
    r2 /= weight_sum
    weight_sum_f /= weight_sum
    # the sun's glitter
    hx, hy, hz = v[0] + light[0], v[1] + light[1], v[2] + light[2]
    hn = math.sqrt(hx * hx + hy * hy + hz * hz)
    glitter = 0.0
    if hz > 0.0 and hn > 0.0:
        hx, hy, hz = hx / hn, hy / hn, hz / hn
        dx = -hx / hz - mean_x
        dy = -hy / hz - mean_y
        det = vxx * vyy - vxy * vxy
        if det > 0.0:
            q = (vyy * dx * dx - 2.0 * vxy * dx * dy + vxx * dy * dy) / det
            density = math.exp(-0.5 * q) / (2.0 * math.pi * math.sqrt(det))
            cos_vh = v[0] * hx + v[1] * hy + v[2] * hz
            glitter = _fresnel(cos_vh, n) * density / (4.0 * max(v[2], 1e-2) * hz ** 4)
    f0 = _fresnel(1.0, n)
    body_share = (1.0 - weight_sum_f) / (1.0 - f0)
    keep = 1.0 - foam
    out[0] = keep * (r0 + glitter * sun_irradiance[0] + body_share * body[0]) + foam * foam_radiance[0]
    out[1] = keep * (r1 + glitter * sun_irradiance[1] + body_share * body[1]) + foam * foam_radiance[1]
    out[2] = keep * (r2 + glitter * sun_irradiance[2] + body_share * body[2]) + foam * foam_radiance[2]


@njit(cache=True, nogil=True, parallel=True)
def render_kernel(data, offset, side, tile, levels, low, high, origin, forward, right, up, tan_x, tan_y,
                  width, height, inv_radius, table, light, sun_radiance, cos_sun, sun_irradiance, body,
                  foam_radiance, unresolved, extra_variance, n, extinction, image, distance):
    """Every pixel of the picture: linear radiance into ``image`` (H, W, 3), the distance
    to the sea into ``distance`` (H, W; −1 where the ray sees the sky).

    The air between the camera and the sea: Koschmieder's law (Koschmieder 1924),
    L = L_sea e^{−σt} + L_horizon (1 − e^{−σt}) per channel, the air light being the sky at
    the horizon in the ray's azimuth; ``extinction`` σ (3,) in 1/m, zeros for clear air.
    """
    pixel_angle = 2.0 * tan_x / width
    for row in prange(height):
        d = np.empty(3)
        v = np.empty(3)
        moments = np.empty(6)
        out = np.empty(3)
        ny = (1.0 - 2.0 * (row + 0.5) / height) * tan_y
        for col in range(width):
            nx = (2.0 * (col + 0.5) / width - 1.0) * tan_x
            for i in range(3):
                d[i] = forward[i] + nx * right[i] + ny * up[i]
            norm = math.sqrt(d[0] * d[0] + d[1] * d[1] + d[2] * d[2])
            for i in range(3):
                d[i] /= norm
            t = trace_ray(data, offset, side, tile, levels, low, high, origin, d, pixel_angle, inv_radius)
            distance[row, col] = t
            if t < 0.0:
                _sky(d[0], d[1], d[2], table, light, out)
                if d[0] * light[0] + d[1] * light[1] + d[2] * light[2] >= cos_sun:
                    for i in range(3):
                        out[i] += sun_radiance[i]
            else:
                dh2 = d[0] * d[0] + d[1] * d[1]
                slope = d[2] + inv_radius * t * dh2
                footprint = _footprint(t, pixel_angle, slope)
                _moments(data, offset, side, tile, levels, footprint, origin[0] + t * d[0], origin[1] + t * d[1],
                         moments)
                # the sea at distance curves away: turn the view into the local vertical's frame
                tilt = inv_radius * t * math.sqrt(dh2)
                for i in range(3):
                    v[i] = -d[i]
                if tilt > 0.0:
                    hx, hy = d[0] / math.sqrt(dh2), d[1] / math.sqrt(dh2)
                    along = -(v[0] * hx + v[1] * hy)
                    vz = v[2]
                    c, s = math.cos(tilt), math.sin(tilt)
                    new_along = c * along + s * vz
                    v[2] = -s * along + c * vz
                    v[0] = -new_along * hx
                    v[1] = -new_along * hy
                shade_point(moments[0], moments[1], moments[2] + unresolved[0] + extra_variance,
                            moments[3] + unresolved[1] + extra_variance, moments[4] + unresolved[2],
                            moments[5], v, light, table, sun_irradiance, body, foam_radiance, n, out)
                if extinction[0] > 0.0 or extinction[1] > 0.0 or extinction[2] > 0.0:
                    scale = 1.0 / math.sqrt(dh2 + 1e-6)
                    _sky(d[0] * scale, d[1] * scale, 1e-3, table, light, v)  # v: reused for the air light
                    for i in range(3):
                        kept = math.exp(-extinction[i] * t)
                        out[i] = out[i] * kept + v[i] * (1.0 - kept)
            for i in range(3):
                image[row, col, i] = out[i]


# -- plain-numpy references (tests hold the kernels to them) -------------------------------


def _level_reference(footprint, spacing0, levels):
    lam = np.log2(np.maximum(np.asarray(footprint, dtype=np.float64), 1e-300) / spacing0)
    return np.clip(lam, 0.0, levels - 1.0)


def surface_reference(pyramid, footprint, x, y):
    """(height, mean slope x, mean slope y, var xx, var yy, cov xy, foam) of the summed
    bands at points (x, y) seen with ``footprint`` metres: numpy, level by level."""
    from .pyramid import bilinear_periodic

    x, y, footprint = np.broadcast_arrays(*(np.asarray(a, dtype=np.float64) for a in (x, y, footprint)))
    out = np.zeros(x.shape + (7,))
    clear = np.ones(x.shape)
    for b in range(pyramid.tile.shape[0]):
        spacing0 = pyramid.tile[b] / pyramid.side[b, 0]
        lam = _level_reference(footprint, spacing0, pyramid.levels[b])
        values = np.zeros(x.shape + (7,))
        for level in range(int(pyramid.levels[b])):
            weight = np.clip(1.0 - np.abs(lam - level), 0.0, 1.0)
            if not np.any(weight > 0):
                continue
            n = int(pyramid.side[b, level])
            start = int(pyramid.offset[b, level])
            texels = pyramid.data[start:start + n * n].astype(np.float64).reshape(n, n, 7)
            spacing = pyramid.tile[b] / n
            u = (x + 0.5 * spacing0) / spacing - 0.5
            v = (y + 0.5 * spacing0) / spacing - 0.5
            values += weight[..., None] * bilinear_periodic(texels, u, v)
        sx, sy = values[..., 1], values[..., 2]
        out[..., 0] += values[..., 0]
        out[..., 1] += sx
        out[..., 2] += sy
        out[..., 3] += np.maximum(values[..., 3] - sx * sx, 0.0)
        out[..., 4] += np.maximum(values[..., 4] - sy * sy, 0.0)
        out[..., 5] += values[..., 5] - sx * sy
        clear *= 1.0 - np.clip(values[..., 6], 0.0, 1.0)
    out[..., 6] = 1.0 - clear
    return out


def shade_reference(mean, covariance, foam, v, sky, sun_irradiance, body, foam_radiance, n):
    """numpy twin of :func:`shade_point` for arrays of points: ``mean`` (…, 2) slopes,
    ``covariance`` (…, 3) as (xx, yy, xy), ``foam`` (…), ``v`` (…, 3) toward the camera,
    ``sky`` a :class:`~oceanfield.look.sky.Sky`."""
    from .optics import fresnel_unpolarised

    mean = np.asarray(mean, dtype=np.float64)
    vxx, vyy, vxy = np.moveaxis(np.asarray(covariance, dtype=np.float64), -1, 0)
    v = np.asarray(v, dtype=np.float64)
    light = sky.sun_direction
    l11 = np.sqrt(np.maximum(vxx, 1e-12))
    l21 = vxy / l11
    l22 = np.sqrt(np.maximum(vyy - l21 * l21, 1e-12))
    zero = np.zeros_like(l11)
    offsets = [(zero, zero, 1 / 3), (_SQRT3 * l11, _SQRT3 * l21, 1 / 6), (-_SQRT3 * l11, -_SQRT3 * l21, 1 / 6),
               (zero, _SQRT3 * l22, 1 / 6), (zero, -_SQRT3 * l22, 1 / 6)]
    reflected = np.zeros(v.shape)
    weighted_fresnel = np.zeros(v.shape[:-1])
    weights = np.zeros(v.shape[:-1])
    for index, (ox, oy, w) in enumerate(offsets):
        normal = np.stack([-(mean[..., 0] + ox), -(mean[..., 1] + oy), np.ones_like(ox)], axis=-1)
        normal /= np.linalg.norm(normal, axis=-1, keepdims=True)
        c = np.sum(v * normal, axis=-1)
        if index == 0:
            w = np.where(c > 0.0, w * c, 1e-12)
            c = np.where(c > 0.0, c, 1e-4)
        else:
            w = np.where(c > 0.0, w * c, 0.0)
            c = np.maximum(c, 1e-4)
        r = 2.0 * c[..., None] * normal - v
        low = r[..., 2] < 1e-3
        r[..., 2] = np.where(low, 1e-3, r[..., 2])
        r = np.where(low[..., None], r / np.linalg.norm(r, axis=-1, keepdims=True), r)
        f = fresnel_unpolarised(c, n=n)
        reflected += w[..., None] * f[..., None] * sky.radiance(r)
        weighted_fresnel += w * f
        weights += w
    reflected /= weights[..., None]
    weighted_fresnel /= weights
    half = v + light
    half /= np.linalg.norm(half, axis=-1, keepdims=True)
    d = np.stack([-half[..., 0] / half[..., 2] - mean[..., 0], -half[..., 1] / half[..., 2] - mean[..., 1]], axis=-1)
    det = vxx * vyy - vxy * vxy
    q = (vyy * d[..., 0] ** 2 - 2 * vxy * d[..., 0] * d[..., 1] + vxx * d[..., 1] ** 2) / det
    density = np.exp(-0.5 * q) / (2 * np.pi * np.sqrt(det))
    cos_vh = np.sum(v * half, axis=-1)
    glitter = fresnel_unpolarised(cos_vh, n=n) * density / (4.0 * np.maximum(v[..., 2], 1e-2) * half[..., 2] ** 4)
    body_share = (1.0 - weighted_fresnel) / (1.0 - fresnel_unpolarised(1.0, n=n))
    sea = reflected + glitter[..., None] * sun_irradiance + body_share[..., None] * body
    f = np.asarray(foam, dtype=np.float64)[..., None]
    return (1.0 - f) * sea + f * foam_radiance
