"""Frequency spectra S(ω) of wind seas and swell, in m²·s/rad over angular frequency ω.

Knows nothing of lattices, tiles or files.

Every spectrum is vectorised over ``omega`` (rad/s), pure, and 0 at ω ≤ 0. Convert to
Hz with S(f) = 2π·S(ω = 2πf).

References
----------
Pierson, W. J. & Moskowitz, L. (1964). A proposed spectral form for fully developed wind
seas based on the similarity theory of S. A. Kitaigorodskii. *JGR* 69(24), 5181–5190.
Hasselmann, K. et al. (1973). Measurements of wind-wave growth and swell decay during the
Joint North Sea Wave Project (JONSWAP). *Dtsch. Hydrogr. Z.* Suppl. A8(12).
Bouws, E., Günther, H., Rosenthal, W. & Vincent, C. L. (1985). Similarity of the wind
wave spectrum in finite depth water. *JGR* 90(C1), 975–986.
Kitaigorodskii, S. A., Krasitskii, V. P. & Zaslavskii, M. M. (1975). On Phillips' theory of
equilibrium range in the spectra of wind-generated gravity waves. *JPO* 5, 410–420.
Phillips, O. M. (1958). The equilibrium range in the spectrum of wind-generated waves.
*J. Fluid Mech.* 4, 426–434.
Tessendorf, J. (2001). Simulating Ocean Water. SIGGRAPH course notes (Phillips form).
Stewart, R. H. (2008). *Introduction to Physical Oceanography*, eqs 16.28–16.38.
"""

from __future__ import annotations

from typing import Callable

import numpy as np
from numpy.typing import ArrayLike, NDArray

from .constants import GRAVITY, WIND_RATIO_19_5_TO_10
from .dispersion import check_depth, wavenumber

__all__ = [
    "PHILLIPS_ALPHA",
    "PM_BETA",
    "JONSWAP_GAMMA",
    "SPECTRA",
    "pierson_moskowitz",
    "pierson_moskowitz_peak_frequency",
    "jonswap",
    "jonswap_fetch_alpha",
    "jonswap_fetch_peak_frequency",
    "tma",
    "depth_factor_kitaigorodskii",
    "depth_factor_from_wavenumber",
    "phillips",
    "phillips_peak_frequency",
    "phillips_wavenumber",
]

#: Phillips' equilibrium-range constant α (Pierson & Moskowitz 1964: 8.1e-3).
PHILLIPS_ALPHA: float = 8.1e-3
#: Pierson–Moskowitz β in exp[−β(ω0/ω)⁴], ω0 = g/U19.5 (Pierson & Moskowitz 1964).
PM_BETA: float = 0.74
#: JONSWAP mean peak enhancement γ (Hasselmann et al. 1973).
JONSWAP_GAMMA: float = 3.3
#: JONSWAP peak widths σa (ω ≤ ωp) and σb (ω > ωp) (Hasselmann et al. 1973).
JONSWAP_SIGMA_A: float = 0.07
JONSWAP_SIGMA_B: float = 0.09


def _positive(omega: ArrayLike) -> tuple[NDArray[np.float64], NDArray[np.bool_], NDArray[np.float64]]:
    """Return (ω as float array, mask ω > 0, ω with non-positive entries replaced by 1)."""
    omega = np.asarray(omega, dtype=np.float64)
    mask = omega > 0
    return omega, mask, np.where(mask, omega, 1.0)


def pierson_moskowitz(
    omega: ArrayLike,
    *,
    peak_frequency: float,
    alpha: float = PHILLIPS_ALPHA,
    gravity: float = GRAVITY,
) -> NDArray[np.float64]:
    """Pierson–Moskowitz spectrum of a fully developed sea (Pierson & Moskowitz, 1964).

    S(ω) = α g² ω⁻⁵ exp[−(5/4)(ωp/ω)⁴]

    Parameters
    ----------
    omega : array_like
        Angular frequency in rad/s.
    peak_frequency : float
        Peak angular frequency ωp in rad/s (see :func:`pierson_moskowitz_peak_frequency`).
    alpha : float
        Phillips constant (dimensionless).
    gravity : float
        Gravitational acceleration in m/s².

    Returns
    -------
    ndarray
        S(ω) in m²·s/rad.

    References
    ----------
    Pierson & Moskowitz (1964), eq. 6; written with the peak as in Stewart (2008), eq. 16.28.
    """
    omega, mask, w = _positive(omega)
    with np.errstate(over="ignore", under="ignore", invalid="ignore"):
        shape = np.exp(-1.25 * (peak_frequency / w) ** 4)
        # below ~ωp/5 the exponential is exactly 0 while ω⁻⁵ may overflow: 0, not inf·0
        value = np.where(shape > 0, alpha * gravity**2 * w**-5.0 * shape, 0.0)
    return np.where(mask, value, 0.0)


def pierson_moskowitz_peak_frequency(
    wind_speed: float, *, height: float = 10.0, gravity: float = GRAVITY
) -> float:
    """Peak angular frequency in rad/s of a Pierson–Moskowitz sea for a given wind speed.

    ωp = (4β/5)^¼ · g / U19.5 = 0.8772 g/U19.5 (Pierson & Moskowitz 1964, with the peak
    found by differentiating their eq. 6). A wind speed at 10 m is converted with
    U19.5 = 1.026 U10 (Stewart 2008, §16.5).

    Parameters
    ----------
    wind_speed : float
        Wind speed in m/s at ``height``.
    height : {10.0, 19.5}
        Anemometer height of ``wind_speed`` in metres.
    """
    if height == 10.0:
        wind_19_5 = WIND_RATIO_19_5_TO_10 * wind_speed
    elif height == 19.5:
        wind_19_5 = wind_speed
    else:
        raise ValueError(f"height: {height!r} is not allowed; allowed: 10.0 or 19.5 metres")
    return (4.0 * PM_BETA / 5.0) ** 0.25 * gravity / wind_19_5


def jonswap(
    omega: ArrayLike,
    *,
    peak_frequency: float,
    alpha: float = PHILLIPS_ALPHA,
    gamma: float = JONSWAP_GAMMA,
    sigma_a: float = JONSWAP_SIGMA_A,
    sigma_b: float = JONSWAP_SIGMA_B,
    gravity: float = GRAVITY,
) -> NDArray[np.float64]:
    """JONSWAP spectrum of a fetch-limited wind sea (Hasselmann et al., 1973).

    S(ω) = α g² ω⁻⁵ exp[−(5/4)(ωp/ω)⁴] · γ^r,  r = exp[−(ω − ωp)² / (2σ²ωp²)],
    σ = σa for ω ≤ ωp, σb above. γ = 1 gives Pierson–Moskowitz.

    Parameters
    ----------
    omega : array_like
        Angular frequency in rad/s.
    peak_frequency : float
        Peak angular frequency ωp in rad/s.
    alpha : float
        Phillips constant (dimensionless).
    gamma : float
        Peak enhancement factor γ (dimensionless, ≥ 1).
    sigma_a, sigma_b : float
        Peak widths below and above the peak (dimensionless).
    gravity : float
        Gravitational acceleration in m/s².

    Returns
    -------
    ndarray
        S(ω) in m²·s/rad.

    References
    ----------
    Hasselmann et al. (1973), eq. 2.8; Stewart (2008), eq. 16.36.
    """
    omega, mask, w = _positive(omega)
    sigma = np.where(w <= peak_frequency, sigma_a, sigma_b)
    r = np.exp(-((w - peak_frequency) ** 2) / (2.0 * sigma**2 * peak_frequency**2))
    base = pierson_moskowitz(w, peak_frequency=peak_frequency, alpha=alpha, gravity=gravity)
    return np.where(mask, base * gamma**r, 0.0)


def jonswap_fetch_alpha(wind_speed: float, fetch: float, *, gravity: float = GRAVITY) -> float:
    """Phillips constant of a fetch-limited sea: α = 0.076 (U10² / (F g))^0.22.

    Hasselmann et al. (1973), as written by Stewart (2008), eq. 16.37. ``wind_speed`` in m/s
    at 10 m, ``fetch`` in metres.
    """
    return 0.076 * (wind_speed**2 / (fetch * gravity)) ** 0.22


def jonswap_fetch_peak_frequency(wind_speed: float, fetch: float, *, gravity: float = GRAVITY) -> float:
    """Peak angular frequency in rad/s of a fetch-limited sea: ωp = 22 (g² / (U10 F))^⅓.

    Hasselmann et al. (1973), as written by Stewart (2008), eq. 16.38. ``wind_speed`` in m/s
    at 10 m, ``fetch`` in metres.
    """
    return 22.0 * (gravity**2 / (wind_speed * fetch)) ** (1.0 / 3.0)


def depth_factor_from_wavenumber(k: ArrayLike, depth: float) -> NDArray[np.float64]:
    """Kitaigorodskii depth factor written with the wavenumber k (rad/m) of each frequency.

    φ = tanh²(kh) / [1 + 2kh / sinh(2kh)]; 1 in deep water, (ω√(h/g))²/2 in the shallow
    limit (Kitaigorodskii et al. 1975; exact form as used by Bouws et al. 1985).
    """
    depth = check_depth(depth)
    k = np.asarray(k, dtype=np.float64)
    if np.isinf(depth):
        return np.ones_like(k)
    kh = k * depth
    two_kh = 2.0 * kh
    with np.errstate(over="ignore", invalid="ignore", divide="ignore"):
        ratio = np.where(two_kh > 700.0, 0.0, two_kh / np.sinh(np.where(two_kh > 0, two_kh, 1.0)))
    ratio = np.where(two_kh > 0, ratio, 1.0)
    return np.tanh(kh) ** 2 / (1.0 + ratio)


def depth_factor_kitaigorodskii(
    omega: ArrayLike, depth: float, *, gravity: float = GRAVITY
) -> NDArray[np.float64]:
    """Kitaigorodskii depth factor φ(ω, h) of the TMA spectrum (Kitaigorodskii et al. 1975).

    φ = tanh²(kh) / [1 + 2kh / sinh(2kh)] with k the gravity-wave wavenumber of ω at
    depth h (metres). Dimensionless, in (0, 1].

    References
    ----------
    Kitaigorodskii et al. (1975); Bouws et al. (1985), eq. 4.
    """
    k = wavenumber(omega, depth, gravity=gravity)
    return depth_factor_from_wavenumber(k, depth)


def tma(
    omega: ArrayLike,
    *,
    peak_frequency: float,
    depth: float,
    alpha: float = PHILLIPS_ALPHA,
    gamma: float = JONSWAP_GAMMA,
    sigma_a: float = JONSWAP_SIGMA_A,
    sigma_b: float = JONSWAP_SIGMA_B,
    gravity: float = GRAVITY,
) -> NDArray[np.float64]:
    """TMA spectrum of a wind sea in finite depth (Bouws et al., 1985).

    S_TMA(ω) = S_JONSWAP(ω) · φ(ω, h), with φ the Kitaigorodskii depth factor.
    ``depth`` in metres; other parameters as :func:`jonswap`. Returns m²·s/rad.

    References
    ----------
    Bouws et al. (1985), eqs 3–4.
    """
    base = jonswap(
        omega,
        peak_frequency=peak_frequency,
        alpha=alpha,
        gamma=gamma,
        sigma_a=sigma_a,
        sigma_b=sigma_b,
        gravity=gravity,
    )
    return base * depth_factor_kitaigorodskii(omega, depth, gravity=gravity)


def phillips(
    omega: ArrayLike,
    *,
    wind_speed: float,
    alpha: float = PHILLIPS_ALPHA,
    cutoff_length: float = 0.0,
    gravity: float = GRAVITY,
) -> NDArray[np.float64]:
    """Phillips spectrum in the form Tessendorf (2001) uses, as a frequency spectrum.

    In wavenumber space the omnidirectional spectrum is F(k) = (α/2) k⁻³ exp[−1/(kL)²]
    exp[−k²l²] with L = U²/g (Phillips 1958 saturation range with Tessendorf's long-wave
    factor and small-wave cut-off l). With deep-water dispersion k = ω²/g this is

    S(ω) = α g² ω⁻⁵ exp[−(g / (U ω))⁴] exp[−(ω² l / g)²].

    Spread with D = cos²θ/π it reproduces Tessendorf's P_h(k) = A exp(−1/(kL)²)/k⁴
    |k̂·ŵ|² exp(−k²l²) with A = α/(2π) per unit kx·ky (see :func:`phillips_wavenumber`).

    Parameters
    ----------
    omega : array_like
        Angular frequency in rad/s.
    wind_speed : float
        Wind speed U in m/s.
    alpha : float
        Phillips constant (dimensionless).
    cutoff_length : float
        Small-wave cut-off length l in metres (0 = none).
    gravity : float
        Gravitational acceleration in m/s².

    References
    ----------
    Phillips (1958); Tessendorf (2001), eqs 40–42 (numbering varies between editions).
    """
    omega, mask, w = _positive(omega)
    with np.errstate(over="ignore", under="ignore", invalid="ignore", divide="ignore"):
        long_wave = np.exp(-((gravity / (wind_speed * w)) ** 4))
        small_wave = np.exp(-((w**2 * cutoff_length / gravity) ** 2))
        # where the long-wave factor is exactly 0, ω⁻⁵ may overflow: 0, not inf·0
        value = np.where(long_wave > 0, alpha * gravity**2 * w**-5.0 * long_wave * small_wave, 0.0)
    return np.where(mask, value, 0.0)


def phillips_peak_frequency(wind_speed: float, *, gravity: float = GRAVITY) -> float:
    """Peak angular frequency in rad/s of :func:`phillips`: ωp = (4/5)^¼ g/U (derived)."""
    return 0.8**0.25 * gravity / wind_speed


def phillips_wavenumber(
    kx: ArrayLike,
    ky: ArrayLike,
    *,
    amplitude: float,
    wind_speed: float,
    wind_direction: float = 0.0,
    cutoff_length: float = 0.0,
    gravity: float = GRAVITY,
) -> NDArray[np.float64]:
    """Tessendorf's (2001) Phillips wavenumber spectrum P_h(k), for checks.

    P_h(k) = A exp(−1/(kL)²) / k⁴ · |k̂·ŵ|² · exp(−k²l²), L = U²/g, P_h(0) = 0.
    ``kx, ky`` in rad/m, ``wind_direction`` in radians counter-clockwise from +x.
    """
    kx = np.asarray(kx, dtype=np.float64)
    ky = np.asarray(ky, dtype=np.float64)
    k = np.hypot(kx, ky)
    mask = k > 0
    kk = np.where(mask, k, 1.0)
    length = wind_speed**2 / gravity
    alignment = (kx * np.cos(wind_direction) + ky * np.sin(wind_direction)) / kk
    with np.errstate(over="ignore", under="ignore"):
        value = (
            amplitude
            * np.exp(-1.0 / (kk * length) ** 2)
            / kk**4
            * alignment**2
            * np.exp(-(kk**2) * cutoff_length**2)
        )
    return np.where(mask, value, 0.0)


#: The frequency-spectrum models by preset name.
SPECTRA: dict[str, Callable[..., NDArray[np.float64]]] = {
    "jonswap": jonswap,
    "pierson_moskowitz": pierson_moskowitz,
    "tma": tma,
    "phillips": phillips,
}
