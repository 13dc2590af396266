"""Directional distributions D(θ; ω) of wave energy, each integrating to 1 over (−π, π].

Knows nothing of lattices, tiles or files.

θ is measured from the mean direction (radians, any range: it is wrapped); ``ratio`` is
ω/ωp (dimensionless). Every function is vectorised, pure and normalised exactly.

References
----------
Longuet-Higgins, M. S., Cartwright, D. E. & Smith, N. D. (1963). Observations of the
directional spectrum of sea waves using the motions of a floating buoy. *Ocean Wave
Spectra*, Prentice-Hall, 111–136.
Mitsuyasu, H. et al. (1975). Observations of the directional spectrum of ocean waves
using a cloverleaf buoy. *JPO* 5, 750–760.
Hasselmann, D. E., Dunckel, M. & Ewing, J. A. (1980). Directional wave spectra observed
during JONSWAP 1973. *JPO* 10, 1264–1280.
Donelan, M. A., Hamilton, J. & Hui, W. H. (1985). Directional spectra of wind-generated
waves. *Phil. Trans. R. Soc. A* 315, 509–562.
Banner, M. L. (1990). Equilibrium spectra of wind waves. *JPO* 20, 966–984.
Elfouhaily, T., Chapron, B., Katsaros, K. & Vandemark, D. (1997). A unified directional
spectrum for long and short wind-driven waves. *JGR* 102(C7), 15781–15796.
Kuik, A. J., van Vledder, G. Ph. & Holthuijsen, L. H. (1988). A method for the routine
analysis of pitch-and-roll buoy wave data. *JPO* 18, 1020–1034.
"""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike, NDArray

__all__ = [
    "SPREADING",
    "DEFAULT_INVERSE_WAVE_AGE",
    "wrap_angle",
    "cos2s",
    "cos2s_normalisation",
    "cos2s_exponent",
    "directional_spread",
    "cos2s_forward_fraction",
    "cos_squared",
    "mitsuyasu_exponent",
    "mitsuyasu_peak_exponent",
    "hasselmann_exponent",
    "donelan_banner",
    "donelan_banner_beta",
    "elfouhaily_delta",
    "elfouhaily_spreading",
    "spreading",
]

#: U10/c_p of a fully developed sea, c_p = 1.17 U10 (Pierson & Moskowitz 1964 via
#: Stewart 2008, §16.5): the wave age assumed when a component gives no wind speed.
DEFAULT_INVERSE_WAVE_AGE: float = 1.0 / 1.17


def wrap_angle(theta: ArrayLike) -> NDArray[np.float64]:
    """Wrap angles in radians into (−π, π]."""
    theta = np.asarray(theta, dtype=np.float64)
    wrapped = np.mod(theta + np.pi, 2.0 * np.pi) - np.pi
    return np.where(wrapped == -np.pi, np.pi, wrapped)


def cos2s_normalisation(s: ArrayLike) -> NDArray[np.float64]:
    """G(s) = Γ(s+1) / (2√π Γ(s+½)), so G·cos^{2s}(θ/2) integrates to 1 on (−π, π].

    Longuet-Higgins et al. (1963); computed with log-gamma so it holds for s up to 1e6.
    """
    from scipy.special import gammaln  # here: `oceanfield stats` and the like need no scipy.special

    s = np.asarray(s, dtype=np.float64)
    return np.exp(gammaln(s + 1.0) - gammaln(s + 0.5)) / (2.0 * np.sqrt(np.pi))


def cos2s(theta: ArrayLike, s: ArrayLike) -> NDArray[np.float64]:
    """cos-2s directional distribution (Longuet-Higgins et al., 1963).

    D(θ) = G(s) cos^{2s}(θ/2), with θ from the mean direction in radians and the
    exponent s > 0 (scalar or array broadcastable with θ). Returns D in 1/rad.
    """
    half = 0.5 * wrap_angle(theta)
    s = np.asarray(s, dtype=np.float64)
    with np.errstate(under="ignore"):
        return cos2s_normalisation(s) * np.cos(half) ** (2.0 * s)


def cos2s_exponent(spread: ArrayLike) -> NDArray[np.float64]:
    """Exponent s of a cos-2s distribution with directional spread σθ (radians).

    s = 2/σθ² − 1, from R1 = s/(s+1) and σθ = √(2(1 − R1)) (Kuik et al. 1988, eq. 33
    for the circular spread; R1 of cos-2s from Longuet-Higgins et al. 1963). Valid for
    σθ < √2 rad (81°).
    """
    spread = np.asarray(spread, dtype=np.float64)
    return 2.0 / spread**2 - 1.0


def directional_spread(s: ArrayLike) -> NDArray[np.float64]:
    """Directional spread σθ in radians of a cos-2s distribution: √(2/(s+1)) (Kuik et al. 1988)."""
    s = np.asarray(s, dtype=np.float64)
    return np.sqrt(2.0 / (s + 1.0))


def cos2s_forward_fraction(s: ArrayLike) -> NDArray[np.float64]:
    """Share of a cos-2s distribution's energy within ±90° of its mean direction.

    ∫_{−π/2}^{π/2} G cos^{2s}(θ/2) dθ = I_{1/2}(½, s + ½), the regularised incomplete
    beta function (derived: t = sin²(θ/2) turns the integral into a beta integral).

    Evaluated once per distinct exponent (the same values, to the bit): on a wavenumber
    lattice s depends on |k| alone, which repeats up to eight times, and the incomplete
    beta function costs more than the rest of a directional spectrum together.
    """
    from scipy.special import betainc

    s = np.asarray(s, dtype=np.float64)
    distinct, inverse = np.unique(s, return_inverse=True)
    return betainc(0.5, distinct + 0.5, 0.5)[inverse].reshape(s.shape)


def cos_squared(theta: ArrayLike) -> NDArray[np.float64]:
    """D(θ) = cos²θ / π: the |k̂·ŵ|² factor of Tessendorf's (2001) Phillips spectrum, normalised.

    Symmetric: as much energy runs against the mean direction as with it, unless the
    opposing half is suppressed.
    """
    theta = np.asarray(theta, dtype=np.float64)
    return np.cos(theta) ** 2 / np.pi


def mitsuyasu_peak_exponent(inverse_wave_age: float) -> float:
    """s_max = 11.5 (U10/c_p)^−2.5 (Mitsuyasu et al. 1975, eq. 25; from memory)."""
    return 11.5 * inverse_wave_age**-2.5


def mitsuyasu_exponent(ratio: ArrayLike, inverse_wave_age: float = DEFAULT_INVERSE_WAVE_AGE) -> NDArray[np.float64]:
    """cos-2s exponent s(ω/ωp) of Mitsuyasu et al. (1975).

    s = s_max (ω/ωp)⁵ for ω ≤ ωp and s_max (ω/ωp)^−2.5 above, with
    s_max = 11.5 (U10/c_p)^−2.5.

    Parameters
    ----------
    ratio : array_like
        ω/ωp (dimensionless, > 0).
    inverse_wave_age : float
        U10/c_p, wind speed at 10 m over the phase speed at the peak.
    """
    ratio = np.asarray(ratio, dtype=np.float64)
    s_max = mitsuyasu_peak_exponent(inverse_wave_age)
    return np.where(ratio <= 1.0, s_max * ratio**5, s_max * ratio**-2.5)


def hasselmann_exponent(ratio: ArrayLike, inverse_wave_age: float = DEFAULT_INVERSE_WAVE_AGE) -> NDArray[np.float64]:
    """cos-2s exponent s(ω/ωp) of Hasselmann et al. (1980).

    s = 6.97 (ω/ωp)^4.06 for ω < ωp; s = 9.77 (ω/ωp)^μ above, with
    μ = −2.33 − 1.45 (U10/c_p − 1.17).
    """
    ratio = np.asarray(ratio, dtype=np.float64)
    mu = -2.33 - 1.45 * (inverse_wave_age - 1.17)
    return np.where(ratio < 1.0, 6.97 * ratio**4.06, 9.77 * ratio**mu)


def donelan_banner_beta(ratio: ArrayLike) -> NDArray[np.float64]:
    """Width β(ω/ωp) of the sech² distribution in 1/rad.

    β = 2.61 (ω/ωp)^1.3 for 0.56 < ω/ωp < 0.95 and 2.28 (ω/ωp)^−1.3 for 0.95 ≤ ω/ωp < 1.6
    (Donelan, Hamilton & Hui 1985, eq. 8.9); above 1.6, β = 10^{−0.4 + 0.8393
    exp[−0.567 ln((ω/ωp)²)]} (Banner 1990, eq. 8). Below 0.56, outside every published
    range, β is held at its value at 0.56 (1.226), which keeps it continuous (common
    practice: the long waves carry little energy).
    """
    ratio = np.asarray(ratio, dtype=np.float64)
    held = np.maximum(ratio, 0.56)
    banner_exponent = -0.4 + 0.8393 * np.exp(-0.567 * np.log(np.maximum(ratio, 1.6) ** 2))
    return np.where(
        held < 0.95,
        2.61 * held**1.3,
        np.where(held < 1.6, 2.28 * held**-1.3, 10.0**banner_exponent),
    )


def donelan_banner(theta: ArrayLike, ratio: ArrayLike) -> NDArray[np.float64]:
    """sech² directional distribution (Donelan, Hamilton & Hui 1985; Banner 1990 above 1.6 ωp).

    D(θ) = β / (2 tanh(βπ)) · sech²(βθ): the published (β/2) sech²(βθ) with the constant
    chosen so that it integrates to exactly 1 on (−π, π] (derived; the published constant
    integrates to tanh(βπ), 0.9952 at ω = 2ωp).
    """
    theta = wrap_angle(theta)
    beta = donelan_banner_beta(ratio)
    return beta / (2.0 * np.tanh(beta * np.pi)) / np.cosh(beta * theta) ** 2


def elfouhaily_delta(
    c_over_cp: ArrayLike, friction_over_cm: float, cm_over_c: ArrayLike
) -> NDArray[np.float64]:
    """Upwind–crosswind ratio Δ(k) of the unified spectrum's spreading (Elfouhaily et al., 1997).

    Δ = tanh[a0 + a_p (c/c_p)^2.5 + a_m (c_m/c)^2.5], a0 = ln 2 / 4, a_p = 4,
    a_m = 0.13 u*/c_m. Arguments are the dimensionless ratios of phase speeds c (of each
    wavenumber), c_p (at the peak), c_m (at the gravity–capillary minimum) and u*/c_m.

    References
    ----------
    Elfouhaily et al. (1997), eq. 57 (from memory).
    """
    c_over_cp = np.asarray(c_over_cp, dtype=np.float64)
    cm_over_c = np.asarray(cm_over_c, dtype=np.float64)
    a0 = np.log(2.0) / 4.0
    a_m = 0.13 * friction_over_cm
    return np.tanh(a0 + 4.0 * c_over_cp**2.5 + a_m * cm_over_c**2.5)


def elfouhaily_spreading(theta: ArrayLike, delta: ArrayLike) -> NDArray[np.float64]:
    """Spreading of the unified spectrum, Φ = (1/2π)[1 + Δ cos 2θ] (Elfouhaily et al., 1997).

    Centrosymmetric: as much energy runs against the mean direction as with it (use
    ``suppress_opposing`` for waves that all run one way). Integrates to 1 for any
    |Δ| ≤ 1. ``theta`` in radians from the mean; returns 1/rad.

    References
    ----------
    Elfouhaily et al. (1997), eq. 49 (from memory).
    """
    theta = np.asarray(theta, dtype=np.float64)
    return (1.0 + np.asarray(delta, dtype=np.float64) * np.cos(2.0 * theta)) / (2.0 * np.pi)


def _forward_fraction_sech2(beta: NDArray[np.float64]) -> NDArray[np.float64]:
    return np.tanh(beta * np.pi / 2.0) / np.tanh(beta * np.pi)


#: Spreading models by preset name.
SPREADING: dict[str, str] = {
    "cos2s": "cos-2s with a fixed exponent from the directional spread (Longuet-Higgins et al. 1963)",
    "cos2": "cos²θ/π, the Phillips-spectrum factor |k̂·ŵ|² (Tessendorf 2001)",
    "mitsuyasu": "cos-2s with s(ω/ωp) from Mitsuyasu et al. (1975)",
    "hasselmann": "cos-2s with s(ω/ωp) from Hasselmann et al. (1980)",
    "donelan_banner": "sech² from Donelan et al. (1985), Banner (1990) above 1.6 ωp",
    "elfouhaily": "1 + Δ(k) cos 2θ of the unified spectrum (Elfouhaily et al. 1997); needs the wind",
}


def spreading(
    name: str,
    theta: ArrayLike,
    ratio: ArrayLike,
    *,
    s: float = 10.0,
    inverse_wave_age: float = DEFAULT_INVERSE_WAVE_AGE,
    suppress_opposing: bool = False,
    delta: ArrayLike | None = None,
) -> NDArray[np.float64]:
    """Evaluate the spreading model ``name`` at θ (radians from the mean) and ω/ωp.

    Parameters
    ----------
    name : str
        One of :data:`SPREADING`.
    theta : array_like
        Angle from the mean direction in radians.
    ratio : array_like
        ω/ωp, broadcastable with ``theta``.
    s : float
        Exponent of the fixed cos-2s model.
    inverse_wave_age : float
        U10/c_p for the frequency-dependent models.
    suppress_opposing : bool
        Drop the energy running more than 90° from the mean direction and rescale the
        rest so D still integrates to 1 (common practice for a wind sea).
    delta : array_like or None
        Δ(k) of the ``elfouhaily`` model (see :func:`elfouhaily_delta`), broadcastable.

    Returns
    -------
    ndarray
        D in 1/rad, broadcast shape of ``theta`` and ``ratio``.
    """
    if name not in SPREADING:
        raise ValueError(f"spreading: {name!r} is not a model; allowed: {', '.join(SPREADING)}")
    theta = wrap_angle(theta)
    ratio = np.asarray(ratio, dtype=np.float64)
    if name == "elfouhaily":
        if delta is None:
            raise ValueError("delta: None is not allowed for the elfouhaily spreading; allowed: Δ(k) in [-1, 1]")
        value = elfouhaily_spreading(theta, delta) + np.zeros_like(ratio)
        forward = np.asarray(0.5)
    elif name == "donelan_banner":
        beta = donelan_banner_beta(ratio)
        value = donelan_banner(theta, ratio)
        forward = _forward_fraction_sech2(beta)
    elif name == "cos2":
        value = np.broadcast_to(cos_squared(theta), np.broadcast_shapes(theta.shape, ratio.shape))
        forward = np.asarray(0.5)
    else:
        if name == "cos2s":
            exponent = np.full_like(ratio, s)
        elif name == "mitsuyasu":
            exponent = mitsuyasu_exponent(ratio, inverse_wave_age)
        else:
            exponent = hasselmann_exponent(ratio, inverse_wave_age)
        value = cos2s(theta, exponent)
        forward = cos2s_forward_fraction(exponent)
    if suppress_opposing:
        value = np.where(np.abs(theta) <= 0.5 * np.pi, value / forward, 0.0)
    return np.asarray(value, dtype=np.float64)

