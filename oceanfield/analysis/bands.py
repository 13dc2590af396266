"""Band comparison: a measured spectrum's energy in half-octave bands against a target sea.

`band_comparison` sums the measured variance in half-octave bands around the target's
peak and judges each against the target's own (`BandVerdict`), with a tolerance from the
band's sampling error; the target's omnidirectional wavenumber spectrum E(k) for reports.
Knows nothing of files or of synthesis: the target is any sea state.

References
----------
Harris, F. J. (1978). On the use of windows for harmonic analysis with the discrete
Fourier transform. Proc. IEEE 66(1), 51–83 (Hann equivalent noise bandwidth 1.5 bins).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike, NDArray

__all__ = ["BandVerdict", "band_comparison"]

#: Half-octave band centres around the target's peak, in ωp, from 0.5 to 4.
_BAND_EXPONENTS = (-2, -1, 0, 1, 2, 3, 4)
#: A band is within expectation within ±25 % or three standard errors of its sampling
#: error if larger (see `band_comparison`): seven bands are judged at once and a band's
#: energy is skewed like a χ² of few degrees of freedom, so two would flag a correct sea
#: too often (common practice).
_BAND_TOLERANCE = 0.25
_BAND_ERRORS = 3.0
#: Bands holding less than this share of the target's variance on both sides are negligible.
_NEGLIGIBLE_BAND = 1e-3
#: Hann equivalent noise bandwidth in bins (Harris 1978, Table 1): neighbouring bins of a
#: windowed transform share information, which widens the sampling error by about this
#: factor per windowed dimension in variance.
_HANN_ENBW = 1.5
#: Lattice steps from k = 0 that a windowed spectrum cannot separate from the mean.
_WINDOWED_MIN_INDEX = 2.5


@dataclass(frozen=True)
class BandVerdict:
    """Energy in one frequency band, measured against a target spectrum.

    The band is [omega_low, omega_high) rad/s, measured as the wavenumbers the target's
    dispersion maps it to, [k_low, k_high) rad/m, so that the comparison is one of
    spectral shape alone, independent of the timing (checked separately).
    """

    centre: float  # band centre in units of the target's ωp
    omega_low: float
    omega_high: float
    k_low: float
    k_high: float
    measured: float  # m²
    target: float  # m²
    ratio: float  # measured / target (inf when the target holds nothing)
    tolerance: float  # relative: ok within 1 ± tolerance
    verdict: str  # ok | too much | too little | negligible | not resolved
    partial: bool  # the band reaches beyond the wavenumbers the frames resolve


def _target_omnidirectional(target, k: NDArray[np.float64]) -> NDArray[np.float64]:
    """A target sea's omnidirectional wavenumber spectrum E(k) = S(ω(k))·dω/dk in m³/rad
    (so that ∫E dk = m0); 0 at k = 0."""
    kk = np.where(k > 0, k, 1.0)
    density = target.frequency_spectrum(target.angular_frequency(kk)) * target.group_velocity(kk)
    return np.where(k > 0, density, 0.0)


def _target_isotropic_power(target, k: NDArray[np.float64], dk: float) -> NDArray[np.float64]:
    """Variance a target sea puts on lattice points at |k| (m²), spread evenly over
    direction: E(k)·Δk²/(2πk)."""
    kk = np.where(k > 0, k, 1.0)
    return np.where(k > 0, _target_omnidirectional(target, k) * dk * dk / (2.0 * math.pi * kk), 0.0)


def band_comparison(
    power: ArrayLike,
    wavenumber: ArrayLike,
    weight: ArrayLike,
    dk: float,
    target,
    *,
    k_max: float | None = None,
    windowed: bool = False,
) -> tuple[BandVerdict, ...]:
    """Energy per half-octave band around the target's peak, measured against the target.

    Parameters
    ----------
    power : array_like
        Measured variance on each lattice point, m² (any shape; flattened).
    wavenumber : array_like
        |k| of each point, rad/m.
    weight : array_like
        How many lattice points each stands for (2 for a point of a half-plane whose
        mirror −k is left out, 1 otherwise).
    dk : float
        Lattice spacing 2π/L, rad/m.
    target : SeaState
        The sea it should be.
    k_max : float, optional
        Largest |k| compared, rad/m: the radius of the full annuli, π n / L (the corners
        of the lattice beyond it hold only part of each annulus, and a synthesiser may
        leave them empty). Default: every point.
    windowed : bool
        Whether the measurement was windowed (widens the sampling error by the Hann
        equivalent noise bandwidth, 1.5 bins per dimension, and leaves out |k| below
        2.5 Δk, which the window mixes with the mean).

    Returns
    -------
    tuple of BandVerdict
        Bands centred at 0.5, 0.71, 1, 1.41, 2, 2.83 and 4 ωp, each half an octave wide.

    Notes
    -----
    The target on each lattice point is the omnidirectional target spread evenly over
    direction (E(k)Δk²/2πk), summed over the same points as the measurement, so the
    tile's radial sampling is the same on both sides, whatever the sea's direction.

    A random sea's band energy varies from one realisation to the next. On a lattice each
    wave pair (k, −k) carries two independent complex Gaussian amplitudes, so its power P
    (averaged over time) is a sum of two exponential variables of mean P̄/2: Var P = P̄²/2
    and E P² = 3P̄²/2. The band sum B = Σ wP therefore has Var B = Σ w²P̄²/2 ≈ Σ w²P²/3,
    estimated from the measured powers, so that a sea concentrated in few directions (few
    lattice points) gets the wider tolerance it needs; a windowed measurement shares
    information between neighbouring bins and widens it by the Hann equivalent noise
    bandwidth (1.5 bins per dimension, Harris 1978). A band is "ok" within
    ±max(25 %, 3 standard errors); time averaging of a sea whose amplitudes evolve only
    narrows the true error, so the tolerance errs on the side of "ok".
    """
    p, k, w = (
        np.ravel(a)
        for a in np.broadcast_arrays(*(np.asarray(v, dtype=np.float64) for v in (power, wavenumber, weight)))
    )
    if k_max is None:
        k_max = float(k.max())
    # A window spreads each wavenumber over ±2 lattice steps (the Hann main lobe): the
    # first two annuli of a windowed measurement hold the mean's and the longest waves'
    # leakage, not their own energy.
    k_min = _WINDOWED_MIN_INDEX * dk if windowed else 0.0
    compared = (k <= k_max * (1.0 + 1e-12)) & (k >= k_min)
    p, k, w = p[compared], k[compared], w[compared]
    expected = _target_isotropic_power(target, k, dk)
    total_target = target.moment(0)
    peak = target.peak_frequency()
    verdicts = []
    for exponent in _BAND_EXPONENTS:
        centre = 2.0 ** (exponent / 2.0)
        w_low, w_high = peak * centre * 2.0 ** -0.25, peak * centre * 2.0 ** 0.25
        k_low, k_high = (float(v) for v in target.wavenumber(np.array([w_low, w_high])))
        inside = (k >= k_low) & (k < k_high)
        measured = float(np.sum(w[inside] * p[inside]))
        expect = float(np.sum(w[inside] * expected[inside]))
        if not inside.any() or k_low > k_max:
            verdicts.append(BandVerdict(centre, w_low, w_high, k_low, k_high, measured, expect,
                                        math.nan, math.nan, "not resolved", True))
            continue
        # Sampling error from the measured powers (see Notes): Var ≈ Σ w²P²/3.
        spread = math.sqrt(float(np.sum((w[inside] * p[inside]) ** 2)) / 3.0)
        if windowed:
            spread *= _HANN_ENBW  # variance × ENBW² over two windowed dimensions
        relative_error = spread / measured if measured > 0 else math.inf
        tolerance = max(_BAND_TOLERANCE, _BAND_ERRORS * relative_error)
        ratio = measured / expect if expect > 0 else (math.inf if measured > 0 else math.nan)
        if expect < _NEGLIGIBLE_BAND * total_target and measured < _NEGLIGIBLE_BAND * total_target:
            verdict = "negligible"
        elif ratio > 1.0 + tolerance:
            verdict = "too much"
        elif ratio < 1.0 - min(tolerance, 0.9):
            verdict = "too little"
        else:
            verdict = "ok"
        partial = k_high > k_max or k_low < max(dk, k_min)
        verdicts.append(BandVerdict(centre, w_low, w_high, k_low, k_high, measured, expect,
                                    ratio, tolerance, verdict, partial))
    return tuple(verdicts)
