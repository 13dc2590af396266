"""Measuring a ship wake in a height map: its half-angle, transverse wavelength and cusp crests.

Knows nothing of synthesis: a height array, its texel spacing and origin, and where the
body is and which way it heads, in; angles and lengths out.

The map is resampled (cubic) into the body's frame: ξ metres behind the body along its
track, ζ metres to its left. Then

* the transverse wavelength is the peak of the spectrum of η(ξ, 0) along the track over
  the chosen stretch behind the body (Hann window, zero-padded, the peak refined by a
  parabola through the three highest bins);
* the envelope is the local r.m.s. of η over a box of about one transverse wavelength;
  in each cross-section ξ the cusp sits at the outermost maximum of the envelope on either
  side (the outermost local maximum above half the section's largest). The cusp line's
  angle is the slope of the straight line ζ_c(ξ) = ξ·tan α + C fitted through them: near
  the cusp the waves follow an Airy function (Lamb 1932, §256; Wehausen & Laitone 1960;
  from memory), so the amplitude's maximum lags a little inside the wedge's edge; the offset C
  takes that lag (it grows only as ξ^{1/3} and, over the stretches measured here, is
  dominated by the hull's own size); the wedge's edge, the outermost ζ where the envelope
  is still a given fraction of the section's largest, is fitted the same way (the measure
  for finite depth, where the widest waves are long and weak and make no sharp ridge);
* the crests at the cusp: the direction of the strongest wave in a window centred on the
  cusp line (2-D spectrum peak), as the angle between its crests and the track.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike, NDArray

__all__ = ["WakeMeasurement", "measure_wake", "track_wavelength"]


@dataclass(frozen=True)
class WakeMeasurement:
    """What `measure_wake` found (angles in radians, lengths in metres)."""

    half_angle: float
    edge_angle: float
    transverse_wavelength: float
    cusp_crest_angle: float
    cusp_distance: NDArray[np.float64]    # ξ of the cross-sections used
    cusp_offset: NDArray[np.float64]      # ζ of the cusp at each (mean of both sides)


def _body_frame(height, spacing, origin, body, heading, behind, half_width):
    from scipy import ndimage

    xi = np.arange(0.0, behind + 0.5 * spacing, spacing)
    zeta = np.arange(-half_width, half_width + 0.5 * spacing, spacing)
    c, s = math.cos(heading), math.sin(heading)
    Z, X = np.meshgrid(zeta, xi, indexing="xy")
    px = body[0] - X * c - Z * s
    py = body[1] - X * s + Z * c
    cols = (px - origin[0]) / spacing
    rows = (py - origin[1]) / spacing
    sampled = ndimage.map_coordinates(np.asarray(height, dtype=np.float64), [rows, cols], order=3,
                                      mode="constant", cval=np.nan)
    return xi, zeta, sampled


def track_wavelength(profile: ArrayLike, spacing: float) -> float:
    """Dominant wavelength in metres of a 1-D profile sampled every ``spacing`` metres.

    Hann-windowed, zero-padded to 64 times its length, the spectral peak refined by a
    parabola through the three highest bins (in log power).
    """
    p = np.asarray(profile, dtype=np.float64)
    p = p - p.mean()
    n = p.size
    pad = 64 * n
    power = np.abs(np.fft.rfft(p * np.hanning(n), pad)) ** 2
    power[0] = 0.0
    i = int(np.argmax(power))
    if 0 < i < power.size - 1:
        a, b, c = np.log(power[i - 1: i + 2] + 1e-300)
        shift = 0.5 * (a - c) / (a - 2 * b + c)
    else:
        shift = 0.0
    return pad * spacing / (i + shift)


def measure_wake(height: ArrayLike, spacing: float, origin: tuple[float, float], body: tuple[float, float],
                 heading: float, *, start: float, stop: float, half_width: float | None = None,
                 edge_fraction: float = 0.3) -> WakeMeasurement:
    """Half-angle, transverse wavelength and cusp crest angle of the wake behind ``body``.

    Parameters
    ----------
    height : array_like, shape (N, N)
        Height map, rows = y, columns = x; texel (iy, ix) at origin + (ix, iy)·spacing.
    spacing : float
        Texel spacing in metres.
    origin : (float, float)
        Position of texel (0, 0), metres.
    body : (float, float)
        The body's position, metres.
    heading : float
        Its direction of travel, radians counter-clockwise from +x.
    start, stop : float
        The stretch behind the body to measure over, metres (0 < start < stop).
    half_width : float, optional
        Half-width of the cross-sections, metres (default: stop·0.6).
    edge_fraction : float
        The wedge's edge in a cross-section is the outermost ζ where the envelope is at
        least this fraction of the section's largest (0 < fraction < 1).

    Returns
    -------
    WakeMeasurement
        ``half_angle``: the angle of the cusp ridge (the envelope's outermost maximum);
        ``edge_angle``: the angle of the edge (both fitted as straight lines over ξ);
        ``half_angle`` and ``cusp_crest_angle`` are NaN where no ridge shows (supercritical
        depth: no cusps).
    """
    if not 0 < edge_fraction < 1:
        raise ValueError(f"edge_fraction: {edge_fraction!r} is not allowed; allowed: 0 < fraction < 1")
    if not (0 < start < stop):
        raise ValueError(f"start, stop: ({start!r}, {stop!r}) is not allowed; allowed: 0 < start < stop metres")
    if not (math.isfinite(spacing) and spacing > 0):
        raise ValueError(f"spacing: {spacing!r} is not allowed; allowed: a finite number of metres > 0")
    from scipy import ndimage

    width = 0.6 * stop if half_width is None else float(half_width)
    xi, zeta, eta = _body_frame(height, spacing, origin, body, heading, stop, width)
    centre = int(np.argmin(np.abs(zeta)))
    stretch = (xi >= start) & (xi <= stop)
    along = eta[stretch, centre]
    if np.isnan(along).any():
        raise ValueError("start, stop: the stretch behind the body leaves the map")
    wavelength = track_wavelength(along, spacing)

    # the envelope's box: about a transverse wavelength (within 3 texels … a tenth of the stretch)
    box = int(round(min(max(wavelength, 3 * spacing), 0.1 * stop) / spacing)) | 1
    filled = np.nan_to_num(eta)
    envelope = np.sqrt(np.maximum(ndimage.uniform_filter(filled**2, size=box, mode="constant"), 0.0))
    ridge_at, ridge, edge_at, edge = [], [], [], []
    for i in np.flatnonzero(stretch):
        peaks, edges = [], []
        for side in (zeta > 0, zeta < 0):
            z = np.abs(zeta[side])
            e = envelope[i, side]
            order = np.argsort(z)
            z, e = z[order], e[order]
            if not e.max() > 0:
                break
            edges.append(z[np.flatnonzero(e >= edge_fraction * e.max())[-1]])
            peak = np.flatnonzero((e[1:-1] > e[:-2]) & (e[1:-1] >= e[2:]) & (e[1:-1] > 0.5 * e.max())) + 1
            if peak.size:
                j = peak[-1]
                a, b, c = e[j - 1], e[j], e[j + 1]
                shift = 0.5 * (a - c) / (a - 2 * b + c) if (a - 2 * b + c) != 0 else 0.0
                peaks.append(z[j] + shift * spacing)
        if len(edges) == 2:
            edge_at.append(xi[i])
            edge.append(0.5 * (edges[0] + edges[1]))
        if len(peaks) == 2:
            ridge_at.append(xi[i])
            ridge.append(0.5 * (peaks[0] + peaks[1]))
    if len(edge_at) < 4:
        raise ValueError("the map shows no wake behind the body over the stretch asked for")
    edge_angle = math.atan(float(np.polyfit(edge_at, edge, 1)[0]))
    d, o = np.array(ridge_at), np.array(ridge)
    slope = float(np.polyfit(d, o, 1)[0]) if d.size >= 4 else math.nan
    half_angle = math.atan(slope)

    # crests at the cusp: the strongest wave in a window on the cusp line, mid-stretch
    mid = 0.5 * (start + stop)
    crest = (_cusp_crest_angle(filled, xi, zeta, mid, mid * slope, 3.0 * wavelength, spacing)
             if math.isfinite(slope) else math.nan)
    return WakeMeasurement(half_angle=half_angle, edge_angle=edge_angle, transverse_wavelength=wavelength, cusp_crest_angle=crest,
                           cusp_distance=d, cusp_offset=o)


def _cusp_crest_angle(eta, xi, zeta, at_xi, at_zeta, size, spacing):
    """Angle between the crests and the track of the strongest wave around (at_xi, ±at_zeta)."""
    half = int(round(0.5 * size / spacing))
    angles = []
    for sign in (1.0, -1.0):
        i = int(np.argmin(np.abs(xi - at_xi)))
        j = int(np.argmin(np.abs(zeta - sign * at_zeta)))
        win = eta[max(i - half, 0): i + half + 1, max(j - half, 0): j + half + 1]
        win = (win - win.mean()) * np.outer(np.hanning(win.shape[0]), np.hanning(win.shape[1]))
        pad = 8 * max(win.shape)
        power = np.abs(np.fft.fft2(win, (pad, pad))) ** 2
        iy, ix = np.unravel_index(int(np.argmax(power)), power.shape)
        kxi = np.fft.fftfreq(pad)[iy]
        kzeta = np.fft.fftfreq(pad)[ix]
        # wavevector angle to the track; crests are normal to it
        wave = math.atan2(abs(kzeta), abs(kxi))
        angles.append(0.5 * math.pi - wave)
    return float(np.mean(angles))
