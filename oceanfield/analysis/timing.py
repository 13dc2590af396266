"""Wave timing: the dispersion relation a height sequence obeys, against the one declared.

Knows nothing of files, frames or synthesis: it fits numbers it is given.

A sea whose waves move at the right speed for their size obeys ω² = g·k·tanh(kh). A
render made at the wrong scale, or played back at the wrong rate, obeys the same law with
another gravity g_eff: at fixed g, ω ∝ k^½ in deep water, so a surface moving like one
s times its declared size has g_eff = g/s, and playing it at √(g/g_eff) times its speed
puts it right (Froude scaling: time ∝ √length).

The method
----------
The analyzer (`oceanfield.analysis.measure`) reduces the sequence's frequency–wavenumber spectrum,
Hann-windowed in time, to the power of each |k| annulus at each positive frequency of
travel. :func:`measure_dispersion` takes it from there:

- per annulus, the frequency is the power-weighted mean over the peak bin ± 2 bins (the
  Hann window's main lobe, Harris 1978), which recovers a pure tone's frequency to a small
  fraction of a bin;
- an annulus enters the fit when it is energetic (at least 0.1 % of the strongest
  annulus's peak energy, and more than round-off), holds one wave (half of its energy or
  more around the peak, and at least twice what a flat spectrum puts there), is resolved
  by the sequence's length (peak at 3 bins or more) and is not aliased (declared and
  measured frequency below 0.8 × Nyquist with the peak's window inside the spectrum, and
  no fall of the measured frequency with k by more than two bins, which marks folding
  at Nyquist);
- :func:`fit_dispersion` fits ω = √g_eff · √(k tanh kh) by weighted least squares
  (weights: the annuli's peak energies), so the residuals are in frequency, where the
  measurement error lies; its standard error counts the weighted points by Kish's
  effective number (Σw)²/Σw²;
- the timing is right when g_eff/g is within ±5 % (`TIMING_TOLERANCE`) or two standard
  errors, whichever is wider; with four annuli or more, fits over the lower and upper
  halves show a trend with k, the mark of a wrong depth.

:func:`timing_notes` says in words what limited the measurement.

References
----------
Harris, F. J. (1978). On the use of windows for harmonic analysis with the discrete
Fourier transform. Proc. IEEE 66(1), 51–83 (Hann window: main lobe ±2 bins).
Froude scaling: model time ∝ √(model length) for gravity waves (Hughes, S. A. (1993),
Physical Models and Laboratory Techniques in Coastal Engineering, World Scientific; the
chapter on similitude, from memory).
Kish, L. (1965). Survey Sampling. Wiley (effective number of weighted observations;
from memory).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np
from numpy.typing import ArrayLike, NDArray

from ..physics.constants import GRAVITY
from ..physics.dispersion import angular_frequency, check_depth

__all__ = [
    "MOVING_FLOOR",
    "TIMING_TOLERANCE",
    "DispersionFit",
    "fit_dispersion",
    "measure_dispersion",
    "timing_notes",
]

#: Half-width in frequency bins of the centroid around a spectral peak: the main lobe of
#: the Hann window spans ±2 bins (Harris 1978), so ±2 holds all but its sidelobes.
_PEAK_HALF_WIDTH = 2
#: Annuli whose peak energy is at least this share of the strongest's count as energetic
#: (the fit weights them by energy, so the weakest barely count; the floor keeps out
#: numerical noise)...
_ENERGETIC_FRACTION = 1e-3
#: ...and hold a wave when at least this share of their energy lies within the peak's
#: ±2 bins: a wave of one |k| has one |ω|, a static pattern or noise has none (common
#: practice threshold).
_CONCENTRATION = 0.5
#: Annuli holding less than this share of the sequence's variance are ignored: float32
#: round-off of a still surface, not waves (the analyzer uses the same floor to tell a
#: still sequence from a moving one).
MOVING_FLOOR = 1e-6
#: Frequencies above this share of Nyquist (fps·π) count as aliased: near Nyquist a peak's
#: window is cut off and above it the frequency folds (common practice margin).
_ALIAS_MARGIN = 0.8
#: Timing counts as right when g_eff/g is within ±5 % (±2.5 % in wave speed), below the
#: speed changes a viewer notices in a wave's period (common practice), or within two
#: standard errors of the fit when those are wider.
TIMING_TOLERANCE = 0.05


@dataclass(frozen=True)
class DispersionFit:
    """The dispersion relation a sequence obeys, against the one declared.

    Attributes
    ----------
    g_ratio : float
        g_eff/g from the fit of ω² = g_eff·k·tanh(kh) (nan when not measurable).
    g_ratio_error : float
        Its standard error from the fit's residuals.
    scale_factor : float
        g/g_eff: the surface moves like one this many times its declared size.
    playback_speed : float
        √(g/g_eff): the playback speed that makes the motion right for the declared size
        (Froude scaling, time ∝ √length); below 1 means slow down.
    depth : float
        Depth used in the fit, metres (inf = deep).
    gravity : float
        Declared gravity, m/s².
    status : str
        ``ok``, ``too fast``, ``too slow`` or ``not measurable``.
    bins_used, bins_energetic, bins_aliased, bins_too_slow : int
        |k| annuli in the fit; holding at least 0.1 % of the strongest annulus's energy,
        half of it at one frequency; energetic but excluded because their declared or
        measured frequency is near or above Nyquist; energetic but too slow for the
        sequence's length to resolve.
    aliased_energy_fraction : float
        Share of the energetic annuli's energy in aliased ones.
    k_low, k_high : float
        Wavenumber range of the fit, rad/m.
    g_ratio_low, g_ratio_high : float
        g_eff/g over the lower and upper halves of that range (a trend means the declared
        depth is wrong: shallow water slows the long waves).
    wavenumbers, frequencies, energies : ndarray
        Per annulus: energy-weighted |k| (rad/m), measured peak frequency (rad/s, nan
        where unresolved) and the energy around the peak (m²).
    used, aliased, resolved : ndarray of bool
        Which annuli entered the fit; which were left out as aliased; whose peak lies at
        least 3 frequency bins from zero (there the window keeps waves running towards
        +k̂ apart from those running towards −k̂).
    """

    g_ratio: float
    g_ratio_error: float
    scale_factor: float
    playback_speed: float
    depth: float
    gravity: float
    status: str
    bins_used: int
    bins_energetic: int
    bins_aliased: int
    bins_too_slow: int
    aliased_energy_fraction: float
    k_low: float
    k_high: float
    g_ratio_low: float
    g_ratio_high: float
    wavenumbers: NDArray[np.float64] = field(repr=False)
    frequencies: NDArray[np.float64] = field(repr=False)
    energies: NDArray[np.float64] = field(repr=False)
    used: NDArray[np.bool_] = field(repr=False)
    aliased: NDArray[np.bool_] = field(repr=False)
    resolved: NDArray[np.bool_] = field(repr=False)


def fit_dispersion(
    wavenumbers: ArrayLike,
    frequencies: ArrayLike,
    weights: ArrayLike,
    *,
    depth: float = np.inf,
) -> tuple[float, float]:
    """Weighted least-squares g_eff of ω² = g_eff·k·tanh(kh), with its standard error.

    Fitted as ω = a·s with s = √(k tanh kh) and a = √g_eff, so that the residuals are in
    frequency, where the measurement error lies (a fraction of a frequency bin, the same
    at every k). Returns (g_eff in m/s², its standard error); nan without points, and an error of nan
    with one.
    """
    k = np.asarray(wavenumbers, dtype=np.float64)
    omega = np.asarray(frequencies, dtype=np.float64)
    w = np.asarray(weights, dtype=np.float64)
    if k.size < 1 or not np.sum(w) > 0:
        return math.nan, math.nan
    s = np.sqrt(k * (np.tanh(k * depth) if np.isfinite(depth) else 1.0))
    a = float(np.sum(w * omega * s) / np.sum(w * s * s))
    residual = omega - a * s
    effective = float(np.sum(w) ** 2 / np.sum(w**2))  # Kish's effective number of points
    if effective > 1.0:
        variance = float(np.sum(w * residual**2) / np.sum(w)) * effective / (effective - 1.0)
        error_a = math.sqrt(variance * np.sum(w**2 * s * s)) / float(np.sum(w * s * s))
    else:
        error_a = math.nan
    return a * a, 2.0 * a * error_a


def measure_dispersion(
    annulus_power: ArrayLike,
    wavenumbers: ArrayLike,
    omega: ArrayLike,
    *,
    nyquist: float,
    depth: float = np.inf,
    gravity: float = GRAVITY,
    variance: float | None = None,
) -> DispersionFit:
    """The dispersion relation obeyed, from the power of each |k| annulus over frequency.

    Parameters
    ----------
    annulus_power : array_like, shape (B, M)
        Power of annulus b (|k| ≈ b Δk; b = 0 is the mean and is skipped) at the positive
        frequencies ``omega``, m².
    wavenumbers : array_like, shape (B,)
        Energy-weighted |k| of each annulus, rad/m.
    omega : array_like, shape (M,)
        ω_m = m Δω, m = 1 … M, rad/s, below ``nyquist``.
    nyquist : float
        fps·π, rad/s.
    depth : float
        Depth for the fitted and the declared relation, metres (inf = deep).
    gravity : float
        Declared gravity, m/s².
    variance : float, optional
        The sequence's variance, m²: annuli with less than 1e-6 of it are round-off.

    Notes
    -----
    For each annulus the peak bin is found and the frequency taken as the power-weighted
    mean over the peak ± 2 bins (the Hann main lobe), which recovers a pure tone's
    frequency to a small fraction of a bin. An annulus enters the fit when it holds at
    least 0.1 % of the strongest annulus's energy around its peak, with at least half of
    its own energy there (one |k|, one |ω|; and at least twice the share the ±2 bins
    would hold of a flat spectrum, for short sequences), its peak lies at bin ≥ 3 (slower waves
    are not resolved by the sequence's length), and both its declared and its measured
    frequency are below 0.8·Nyquist; since ω(k) rises with k, a measured frequency that
    falls with k means folding, and that annulus and all beyond it are excluded too.
    """
    depth = check_depth(depth)
    power = np.asarray(annulus_power, dtype=np.float64)
    k = np.asarray(wavenumbers, dtype=np.float64)
    omega = np.asarray(omega, dtype=np.float64)
    n_bins, n_freq = power.shape
    d_omega = float(omega[0]) if omega.size else math.nan
    measured = np.full(n_bins, np.nan)
    energy = np.zeros(n_bins)
    low_ok = np.zeros(n_bins, dtype=bool)
    concentrated = np.zeros(n_bins, dtype=bool)
    high_ok = np.zeros(n_bins, dtype=bool)
    for b in range(1, n_bins):
        row = power[b]
        if not np.any(row > 0):
            continue
        p = int(np.argmax(row))
        lo, hi = max(p - _PEAK_HALF_WIDTH, 0), min(p + _PEAK_HALF_WIDTH, n_freq - 1)
        window = row[lo:hi + 1]
        energy[b] = float(window.sum())
        flat_share = (hi - lo + 1) / n_freq  # what the window holds of a featureless row
        concentrated[b] = energy[b] >= max(_CONCENTRATION, 2.0 * flat_share) * float(row.sum())
        measured[b] = float(np.sum(window * omega[lo:hi + 1]) / energy[b])
        low_ok[b] = p - _PEAK_HALF_WIDTH >= 0  # peak at bin m = p + 1 ≥ 3
        high_ok[b] = p + _PEAK_HALF_WIDTH <= n_freq - 1
    declared = angular_frequency(np.maximum(k, 0.0), depth, gravity=gravity)
    floor = MOVING_FLOOR * variance if variance is not None else 0.0
    energetic = concentrated & (energy >= _ENERGETIC_FRACTION * energy.max()) & (energy > floor)
    energetic[0] = False
    limit = _ALIAS_MARGIN * nyquist
    aliased = energetic & ((declared > limit) | ~(measured <= limit) | ~high_ok)
    # Folding: the measured ω must rise with k; where it falls by more than two bins past
    # an energetic annulus, it has folded at Nyquist from there on.
    previous = -math.inf
    folded = False
    for b in np.flatnonzero(energetic):
        if folded or aliased[b]:
            folded = folded or (measured[b] > limit)
            aliased[b] = aliased[b] or folded
            continue
        if measured[b] < previous - 2.0 * d_omega:
            folded = True
            aliased[b] = True
            continue
        previous = max(previous, measured[b])
    too_slow = energetic & ~aliased & ~low_ok
    used = energetic & ~aliased & low_ok
    total_energetic = float(energy[energetic].sum())
    aliased_fraction = float(energy[aliased].sum()) / total_energetic if total_energetic > 0 else 0.0

    g_eff, g_error = fit_dispersion(k[used], measured[used], energy[used], depth=depth)
    g_low = g_high = math.nan
    if used.sum() >= 4:
        indices = np.flatnonzero(used)
        half = indices.size // 2
        for part, name in ((indices[:half], "low"), (indices[half:], "high")):
            value, _ = fit_dispersion(k[part], measured[part], energy[part], depth=depth)
            if name == "low":
                g_low = value / gravity
            else:
                g_high = value / gravity
    ratio = g_eff / gravity
    error = g_error / gravity
    if not math.isfinite(ratio) or ratio <= 0:
        status = "not measurable"
        ratio = error = math.nan
    elif abs(ratio - 1.0) <= max(TIMING_TOLERANCE, 2.0 * error if math.isfinite(error) else 0.0):
        status = "ok"
    else:
        status = "too fast" if ratio > 1.0 else "too slow"
    ks = k[used]
    return DispersionFit(
        g_ratio=ratio,
        g_ratio_error=error,
        scale_factor=1.0 / ratio if ratio > 0 else math.nan,
        playback_speed=math.sqrt(1.0 / ratio) if ratio > 0 else math.nan,
        depth=depth,
        gravity=gravity,
        status=status,
        bins_used=int(used.sum()),
        bins_energetic=int(energetic.sum()),
        bins_aliased=int(aliased.sum()),
        bins_too_slow=int(too_slow.sum()),
        aliased_energy_fraction=aliased_fraction,
        k_low=float(ks.min()) if ks.size else math.nan,
        k_high=float(ks.max()) if ks.size else math.nan,
        g_ratio_low=g_low,
        g_ratio_high=g_high,
        wavenumbers=k,
        frequencies=measured,
        energies=energy,
        used=used,
        aliased=aliased,
        resolved=low_ok,
    )


def timing_notes(fit: DispersionFit, peak: float, nyquist: float, fps: float, frames: int) -> list[str]:
    """What limited the timing measurement: aliasing, a short sequence.

    Parameters
    ----------
    fit : DispersionFit
        The measured dispersion (from :func:`measure_dispersion`).
    peak : float
        Peak frequency of the sequence's time series, rad/s (nan when still).
    nyquist : float
        fps·π, rad/s.
    fps : float
        Frames per second.
    frames : int
        Frames in the sequence.

    Returns
    -------
    list of str
        One sentence per limit met, without a final full stop; empty when nothing
        limited the measurement.
    """
    notes = []
    if fit.bins_aliased and fit.bins_aliased >= max(1, fit.bins_energetic // 2):
        notes.append(
            f"{fit.bins_aliased} of {fit.bins_energetic} energetic wavenumber bins "
            f"({fit.aliased_energy_fraction:.0%} of their energy) are aliased: their frequency is near or "
            f"above Nyquist ({nyquist:.3g} rad/s at {fps:g} fps) and folds; the timing rests on the rest. "
            f"A higher frame rate would use them"
        )
    elif fit.bins_aliased:
        notes.append(
            f"{fit.bins_aliased} energetic wavenumber bins above {fit.k_high:.3g} rad/m are left out of the "
            f"timing fit: their frequency is near or above Nyquist ({nyquist:.3g} rad/s)"
        )
    if peak > _ALIAS_MARGIN * nyquist:
        notes.append(
            f"the time series peaks at {peak:.3g} rad/s, near Nyquist ({nyquist:.3g} rad/s at {fps:g} fps): "
            f"Tp may be aliased"
        )
    if fit.bins_too_slow:
        notes.append(
            f"{fit.bins_too_slow} energetic wavenumber bins are too slow for a {frames / fps:.3g} s sequence "
            f"to resolve (under 3 frequency bins); a longer sequence would use them"
        )
    return notes
