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
Elfouhaily, T., Chapron, B., Katsaros, K. & Vandemark, D. (1997). A unified directional
spectrum for long and short wind-driven waves. *JGR* 102(C7), 15781–15796.
Donelan, M. A., Dobson, F. W., Smith, S. D. & Anderson, R. J. (1993). On the dependence of
sea surface roughness on wave development. *JPO* 23, 2143–2149 (roughness length).
"""

from __future__ import annotations

import math
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
    "ELFOUHAILY_DEVELOPED_INVERSE_WAVE_AGE",
    "ELFOUHAILY_MINIMUM_PHASE_SPEED",
    "ELFOUHAILY_MINIMUM_WAVENUMBER",
    "elfouhaily",
    "elfouhaily_inverse_wave_age",
    "elfouhaily_peak_wavenumber",
    "elfouhaily_friction_velocity",
    "elfouhaily_phase_speed",
    "elfouhaily_alpha_p",
    "elfouhaily_alpha_m",
    "elfouhaily_gamma",
    "elfouhaily_sigma",
    "elfouhaily_long_wave_curvature",
    "elfouhaily_short_wave_curvature",
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


# -- the unified long- and short-wave spectrum (Elfouhaily et al. 1997) --------------------
# Equation numbers below are those the paper's users cite (from memory): the spectrum and
# long-wave curvature §3 (eqs 30–37), the short-wave curvature §4 (eqs 40–44), the
# spreading §5 (eqs 49, 57; see spreading.py).

#: Inverse wave age U10/c_p of a fully developed sea in the unified spectrum (Elfouhaily
#: et al. 1997, §3: Ωc = 0.84 at infinite fetch).
ELFOUHAILY_DEVELOPED_INVERSE_WAVE_AGE: float = 0.84
#: Phase speed at the gravity–capillary minimum, c_m = 0.23 m/s (Elfouhaily et al. 1997, §4).
ELFOUHAILY_MINIMUM_PHASE_SPEED: float = 0.23
#: Wavenumber of the phase-speed minimum, k_m = 370 rad/m (Elfouhaily et al. 1997, §4).
ELFOUHAILY_MINIMUM_WAVENUMBER: float = 370.0
#: Dimensionless fetch scale X0 = 2.2e4 of the Ωc fetch law (Elfouhaily et al. 1997, eq. 37).
_ELFOUHAILY_FETCH_SCALE: float = 2.2e4
#: von Kármán constant (common practice: 0.40).
VON_KARMAN: float = 0.40
#: Charnock-type roughness z0 = 3.7e-5 (U10²/g)(U10/c_p)^0.9 (Donelan et al. 1993, as
#: used by Elfouhaily et al. 1997, eq. 66; from memory).
_ROUGHNESS_COEFFICIENT: float = 3.7e-5
_ROUGHNESS_EXPONENT: float = 0.9
_WIND_HEIGHT: float = 10.0  # m, the anemometer height of U10


def elfouhaily_inverse_wave_age(wind_speed: float, fetch: float | None = None, *, gravity: float = GRAVITY) -> float:
    """Inverse wave age Ωc = U10/c_p of a wind sea (Elfouhaily et al., 1997).

    Ωc = 0.84 tanh[(X/X0)^0.4]^−0.75 with X = g·x/U10² and X0 = 2.2e4; ``fetch`` x in
    metres, ``None`` for a fully developed sea (Ωc = 0.84). ``wind_speed`` in m/s at 10 m.

    References
    ----------
    Elfouhaily et al. (1997), eq. 37.
    """
    if fetch is None:
        return ELFOUHAILY_DEVELOPED_INVERSE_WAVE_AGE
    x = gravity * fetch / wind_speed**2
    return ELFOUHAILY_DEVELOPED_INVERSE_WAVE_AGE * math.tanh((x / _ELFOUHAILY_FETCH_SCALE) ** 0.4) ** -0.75


def elfouhaily_peak_wavenumber(wind_speed: float, inverse_wave_age: float, *, gravity: float = GRAVITY) -> float:
    """Peak wavenumber kp = k0·Ωc² in rad/m, k0 = g/U10² (Elfouhaily et al., 1997, §3).

    Deep-water gravity waves at the peak: c_p = √(g/kp) = U10/Ωc.
    """
    return gravity / wind_speed**2 * inverse_wave_age**2


def elfouhaily_friction_velocity(wind_speed: float, inverse_wave_age: float, *, gravity: float = GRAVITY) -> float:
    """Friction velocity u* in m/s from U10 through a wave-age-dependent roughness.

    u* = κ U10 / ln(10 m / z0), z0 = 3.7e-5 (U10²/g) Ωc^0.9 (a neutral logarithmic wind
    profile with the roughness of Donelan et al. 1993). This is the drag law the unified
    spectrum's paper uses itself (from memory); other implementations use a fixed drag
    coefficient instead, which gives u* within a few per cent at 5–15 m/s.

    References
    ----------
    Elfouhaily et al. (1997), eq. 66 (from memory); Donelan et al. (1993).
    """
    z0 = _ROUGHNESS_COEFFICIENT * wind_speed**2 / gravity * inverse_wave_age**_ROUGHNESS_EXPONENT
    return VON_KARMAN * wind_speed / math.log(_WIND_HEIGHT / z0)


def elfouhaily_phase_speed(
    k: ArrayLike, *, gravity: float = GRAVITY, minimum_wavenumber: float = ELFOUHAILY_MINIMUM_WAVENUMBER
) -> NDArray[np.float64]:
    """Deep-water gravity–capillary phase speed c = √((g/k)(1 + (k/k_m)²)) in m/s.

    ``k`` in rad/m (> 0). The form the unified spectrum is written with (Elfouhaily et al.
    1997, §2), equal to the dispersion relation with surface tension T/ρ = g/k_m².
    """
    k = np.asarray(k, dtype=np.float64)
    return np.sqrt(gravity / k * (1.0 + (k / minimum_wavenumber) ** 2))


def elfouhaily_alpha_p(inverse_wave_age: float) -> float:
    """Generalised Phillips–Kitaigorodskii equilibrium parameter α_p = 6e-3 Ωc^0.55.

    References
    ----------
    Elfouhaily et al. (1997), eq. 34.
    """
    return 6.0e-3 * inverse_wave_age**0.55


def elfouhaily_alpha_m(friction_velocity: float, *, minimum_phase_speed: float = ELFOUHAILY_MINIMUM_PHASE_SPEED) -> float:
    """Short-wave equilibrium parameter α_m from u*/c_m.

    α_m = 0.01 [1 + ln(u*/c_m)] for u* ≤ c_m, 0.01 [1 + 3 ln(u*/c_m)] above.
    ``friction_velocity`` in m/s. It sets the level of the curvature's high-k plateau.

    References
    ----------
    Elfouhaily et al. (1997), eq. 44.
    """
    ratio = friction_velocity / minimum_phase_speed
    return 0.01 * (1.0 + (1.0 if ratio <= 1.0 else 3.0) * math.log(ratio))


def elfouhaily_gamma(inverse_wave_age: float) -> float:
    """Peak enhancement γ: 1.7 for 0.84 ≤ Ωc < 1, 1.7 + 6 log10 Ωc for 1 ≤ Ωc < 5.

    References
    ----------
    Elfouhaily et al. (1997), eq. 3.
    """
    return 1.7 if inverse_wave_age < 1.0 else 1.7 + 6.0 * math.log10(inverse_wave_age)


def elfouhaily_sigma(inverse_wave_age: float) -> float:
    """Peak width σ = 0.08 (1 + 4 Ωc⁻³) (Elfouhaily et al., 1997, eq. 3)."""
    return 0.08 * (1.0 + 4.0 * inverse_wave_age**-3)


def elfouhaily_long_wave_curvature(
    k: ArrayLike, *, wind_speed: float, inverse_wave_age: float, gravity: float = GRAVITY
) -> NDArray[np.float64]:
    """Long-wave curvature spectrum B_l(k) = ½ α_p (c_p/c) F_p (Elfouhaily et al., 1997).

    F_p = L_PM · J_p · exp[−(Ωc/√10)(√(k/kp) − 1)], L_PM = exp[−(5/4)(kp/k)²],
    J_p = γ^Γ, Γ = exp[−(√(k/kp) − 1)² / (2σ²)]. ``k`` in rad/m; dimensionless; 0 at k ≤ 0.

    References
    ----------
    Elfouhaily et al. (1997), eqs 31–34 (and eq. 3 for γ, σ).
    """
    k = np.asarray(k, dtype=np.float64)
    mask = k > 0
    kk = np.where(mask, k, 1.0)
    kp = elfouhaily_peak_wavenumber(wind_speed, inverse_wave_age, gravity=gravity)
    root = np.sqrt(kk / kp)
    with np.errstate(under="ignore", over="ignore"):
        l_pm = np.exp(-1.25 * (kp / kk) ** 2)
        big_gamma = np.exp(-((root - 1.0) ** 2) / (2.0 * elfouhaily_sigma(inverse_wave_age) ** 2))
        j_p = elfouhaily_gamma(inverse_wave_age) ** big_gamma
        f_p = l_pm * j_p * np.exp(-inverse_wave_age / math.sqrt(10.0) * (root - 1.0))
    c_p = elfouhaily_phase_speed(kp, gravity=gravity)
    c = elfouhaily_phase_speed(kk, gravity=gravity)
    return np.where(mask, 0.5 * elfouhaily_alpha_p(inverse_wave_age) * c_p / c * f_p, 0.0)


def elfouhaily_short_wave_curvature(
    k: ArrayLike, *, wind_speed: float, inverse_wave_age: float, gravity: float = GRAVITY
) -> NDArray[np.float64]:
    """Short-wave curvature spectrum B_h(k) = ½ α_m (c_m/c) F_m (Elfouhaily et al., 1997).

    F_m = L_PM · exp[−¼(k/k_m − 1)²]. ``k`` in rad/m; dimensionless; 0 at k ≤ 0.

    The factor L_PM = exp[−(5/4)(kp/k)²] is our choice where implementations differ:
    without it B_h·k⁻³ grows like k^−2.5 towards k = 0 and the variance diverges, so the
    spectrum has no finite Hs; with it the long-wave variance is unchanged to 1e-3.

    References
    ----------
    Elfouhaily et al. (1997), eqs 40–44.
    """
    k = np.asarray(k, dtype=np.float64)
    mask = k > 0
    kk = np.where(mask, k, 1.0)
    kp = elfouhaily_peak_wavenumber(wind_speed, inverse_wave_age, gravity=gravity)
    friction = elfouhaily_friction_velocity(wind_speed, inverse_wave_age, gravity=gravity)
    with np.errstate(under="ignore", over="ignore"):
        l_pm = np.exp(-1.25 * (kp / kk) ** 2)
        f_m = l_pm * np.exp(-0.25 * (kk / ELFOUHAILY_MINIMUM_WAVENUMBER - 1.0) ** 2)
    c = elfouhaily_phase_speed(kk, gravity=gravity)
    return np.where(mask, 0.5 * elfouhaily_alpha_m(friction) * ELFOUHAILY_MINIMUM_PHASE_SPEED / c * f_m, 0.0)


def elfouhaily(
    k: ArrayLike, *, wind_speed: float, inverse_wave_age: float = ELFOUHAILY_DEVELOPED_INVERSE_WAVE_AGE,
    gravity: float = GRAVITY,
) -> NDArray[np.float64]:
    """Unified omnidirectional wavenumber spectrum (Elfouhaily, Chapron, Katsaros & Vandemark, 1997).

    S(k) = k⁻³ [B_l(k) + B_h(k)], in m³/rad (m² per rad/m), so that ∫S dk = m0 and
    ∫k²S dk is the mean-square slope. Unlike the other models of this module it is a
    *wavenumber* spectrum: convert with S(ω) = S(k)/c_g.

    Parameters
    ----------
    k : array_like
        Wavenumber in rad/m.
    wind_speed : float
        U10 in m/s.
    inverse_wave_age : float
        Ωc = U10/c_p (0.84 fully developed; see :func:`elfouhaily_inverse_wave_age`).
    gravity : float
        m/s².

    References
    ----------
    Elfouhaily et al. (1997), eq. 30 (with eqs 31–44).
    """
    k = np.asarray(k, dtype=np.float64)
    mask = k > 0
    kk = np.where(mask, k, 1.0)
    common = dict(wind_speed=wind_speed, inverse_wave_age=inverse_wave_age, gravity=gravity)
    curvature = elfouhaily_long_wave_curvature(kk, **common) + elfouhaily_short_wave_curvature(kk, **common)
    return np.where(mask, curvature / kk**3, 0.0)


#: The spectrum models by preset name: frequency spectra S(ω), except ``elfouhaily``, a
#: wavenumber spectrum S(k) (see :func:`elfouhaily`).
SPECTRA: dict[str, Callable[..., NDArray[np.float64]]] = {
    "jonswap": jonswap,
    "pierson_moskowitz": pierson_moskowitz,
    "tma": tma,
    "phillips": phillips,
    "elfouhaily": elfouhaily,
}
