"""Second-order bound waves: interaction kernels and the statistics they predict.

Knows nothing of lattices, tiles or files: it works on wave vectors and variances.

A linear sea η₁ = Σ aᵢ cos ψᵢ carries, at second order, waves bound to every pair of its
components (Longuet-Higgins 1963; Sharma & Dean 1981):

    η₂ = Σᵢ Σⱼ aᵢ aⱼ [B⁺ᵢⱼ cos(ψᵢ + ψⱼ) + B⁻ᵢⱼ cos(ψᵢ − ψⱼ)]

(ordered pairs, i = j included). The sum terms sharpen crests and flatten troughs; the
difference terms lower the water under groups in finite depth (set-down). Bound waves
travel at the speed of their parents: their frequency is ωᵢ ± ωⱼ, not the free ω(|kᵢ ± kⱼ|).

The kernels here are the Eulerian ones (the height at a fixed point). A surface whose
points also move sideways (lateral displacement) already holds part of them; the surface
room subtracts that part (see ``surface.bound``).

References
----------
Longuet-Higgins, M. S. (1963). The effect of non-linearities on statistical distributions
in the theory of sea waves. J. Fluid Mech. 17, 459–480.
Sharma, J. N. & Dean, R. G. (1981). Second-order directional seas and associated wave
forces. Soc. Pet. Eng. J. 21, 129–140.
Forristall, G. Z. (2000). Wave crest distributions: observations and second-order theory.
J. Phys. Oceanogr. 30, 1931–1943 (eqs 4–7: the kernels in the form used here; from memory,
checked against the limits below).
Tayfun, M. A. (1980). Narrow-band nonlinear sea waves. J. Geophys. Res. 85(C3), 1548–1552.
Longuet-Higgins, M. S. & Stewart, R. W. (1964). Radiation stresses in water waves. Deep-Sea
Res. 11, 529–562 (the mean set-down −a²k / (2 sinh 2kh) of a wave train).

Limits the kernels are tested against (derived here from the formula above, and each a
published result): one wave in deep water, B⁺ = k/2 (Stokes 1847); one wave in depth h,
B⁺ = k cosh kh (2 + cosh 2kh) / (4 sinh³ kh) (Stokes second order, e.g. Dean & Dalrymple
1991, eq. 11.9 of the 2nd-order profile); two collinear deep-water waves,
B⁺ = (k₁ + k₂)/4 and B⁻ = −|k₁ − k₂|/4 (Longuet-Higgins 1963); the diagonal
B⁻ᵢᵢ = −k/(2 sinh 2kh) (Longuet-Higgins & Stewart 1964).
"""

from __future__ import annotations

import math
from dataclasses import asdict, dataclass

import numpy as np
from numpy.typing import ArrayLike, NDArray

from .constants import GRAVITY

__all__ = [
    "bound_wave_kernels",
    "bound_wave_kernel_matrix",
    "SecondOrderStatistics",
    "second_order_statistics",
    "tayfun_crest_trough_ratio",
    "tayfun_top_tenth_crest",
]

#: Exceedance level of the highest tenth in Rayleigh units: P(ξ > ξ₁₀) = 1/10.
_TOP_TENTH = math.sqrt(2.0 * math.log(10.0))


def _k_tanh(k: NDArray[np.float64], depth: float) -> NDArray[np.float64]:
    """k tanh(kh), with the deep-water limit k and 0 at k = 0."""
    if math.isinf(depth):
        return k
    return k * np.tanh(k * depth)


def bound_wave_kernels(
    k1x: ArrayLike,
    k1y: ArrayLike,
    k2x: ArrayLike,
    k2y: ArrayLike,
    *,
    depth: float = math.inf,
    gravity: float = GRAVITY,
) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
    """Second-order sum and difference kernels B⁺, B⁻ in 1/m (Sharma & Dean, 1981).

    With Rᵢ = kᵢ tanh kᵢh (ωᵢ²/g for gravity waves):

        B± = ¼ [D± / √(R₁R₂) − (k₁·k₂ ∓ R₁R₂)/√(R₁R₂) + R₁ + R₂]

        D± = [(√R₁ ± √R₂)(√R₁(k₂² − R₂²) ± √R₂(k₁² − R₁²))
              + 2(√R₁ ± √R₂)²(k₁·k₂ ∓ R₁R₂)] / [(√R₁ ± √R₂)² − k± tanh k±h]

    with k± = |k₁ ± k₂|. On the diagonal (k₁ = k₂) the difference kernel is the mean
    set-down −k/(2 sinh 2kh), 0 in deep water (D⁻ = 0 there by convention).

    Parameters
    ----------
    k1x, k1y, k2x, k2y : array_like
        Wave vectors of the two parents in rad/m (broadcast together); none may be zero.
    depth : float
        Water depth in metres (``inf`` for deep water).
    gravity : float
        Acceleration of gravity in m/s². The kernels do not depend on it (R = ω²/g); it is
        accepted so callers can pass their sea's constants alike.

    Returns
    -------
    (B⁺, B⁻) : tuple of ndarray
        Kernels in 1/m: the bound height is aᵢaⱼB± for parents of amplitudes aᵢ, aⱼ.

    References
    ----------
    Sharma & Dean (1981); Forristall (2000) eqs 4–7 (from memory; the limits in the module
    docstring are tested).
    """
    del gravity  # R = k tanh kh = ω²/g: g cancels
    k1x, k1y, k2x, k2y = (np.asarray(v, dtype=np.float64) for v in (k1x, k1y, k2x, k2y))
    k1, r1, s1, a1 = _wave_terms(k1x, k1y, depth)
    k2, r2, s2, a2 = _wave_terms(k2x, k2y, depth)
    core_plus, core_minus = _symmetric_cores(k1x, k1y, k2x, k2y, k1, r1, s1, a1, k2, r2, s2, a2, depth)
    return 0.25 * (core_plus + r1 + r2), 0.25 * (core_minus + r1 + r2)


def bound_wave_kernel_matrix(kx: ArrayLike, ky: ArrayLike, *, depth: float = math.inf,
                             ) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
    """B⁺ and B⁻ in 1/m for every ordered pair (i, j) of the waves (kx, ky), as (P, P) arrays.

    The same numbers, to the bit, as ``bound_wave_kernels(kx[:, None], ky[:, None],
    kx[None, :], ky[None, :])``, at about half the cost: every term of the formula but
    the final R₁ + R₂ is symmetric in the pair, also in floating point (its sums and
    products commute exactly, and the difference terms change sign twice), so it is
    evaluated for i ≤ j only and mirrored.
    """
    kx = np.ravel(np.asarray(kx, dtype=np.float64))
    ky = np.ravel(np.asarray(ky, dtype=np.float64))
    p = kx.size
    k, r, s, a = _wave_terms(kx, ky, depth)
    kernels = (np.empty((p, p)), np.empty((p, p)))
    # Rows of the upper triangle a block at a time: the formula's dozen temporaries stay
    # small (at once, for 1024 waves, they took ~90 MB, more than a 1024² frame).
    rows = max(1, _PAIR_BLOCK // max(p, 1))
    for start in range(0, p, rows):
        i, j = _upper_rows(p, start, min(start + rows, p))
        cores = _symmetric_cores(kx[i], ky[i], kx[j], ky[j], k[i], r[i], s[i], a[i], k[j], r[j], s[j], a[j], depth)
        for full, core in zip(kernels, cores):
            full[i, j] = core
            full[j, i] = core
    for full in kernels:  # ¼(core + R₁ + R₂) in the broadcast formula's order, in place
        full += r[:, None]
        full += r[None, :]
        full *= 0.25
    return kernels


#: Pairs of the P × P matrix whose upper part ``bound_wave_kernel_matrix`` evaluates at once.
_PAIR_BLOCK = 1 << 15


def _upper_rows(p: int, start: int, stop: int) -> tuple[NDArray[np.int64], NDArray[np.int64]]:
    """(i, j) of the pairs i ≤ j of rows start … stop − 1 of a P × P triangle, row by row."""
    rows = np.arange(start, stop)
    counts = p - rows
    i = np.repeat(rows, counts)
    j = np.arange(i.size) - np.repeat(np.cumsum(counts) - counts, counts) + i
    return i, j


def _wave_terms(kx: NDArray[np.float64], ky: NDArray[np.float64], depth: float):
    """k, R = k tanh kh, √R and k² − R² of each wave."""
    k = np.hypot(kx, ky)
    r = _k_tanh(k, depth)
    return k, r, np.sqrt(r), k**2 - r**2


def _symmetric_cores(k1x, k1y, k2x, k2y, k1, r1, s1, a1, k2, r2, s2, a2, depth: float):
    """D±/√(R₁R₂) − (k₁·k₂ ∓ R₁R₂)/√(R₁R₂): the kernels less ¼ and R₁ + R₂ (broadcast)."""
    s12 = s1 * s2
    dot = k1x * k2x + k1y * k2y
    k_sum = np.hypot(k1x + k2x, k1y + k2y)
    k_diff = np.hypot(k1x - k2x, k1y - k2y)
    with np.errstate(divide="ignore", invalid="ignore"):
        d_plus = ((s1 + s2) * (s1 * a2 + s2 * a1)
                  + 2.0 * (s1 + s2) ** 2 * (dot - r1 * r2)) / ((s1 + s2) ** 2 - _k_tanh(k_sum, depth))
        d_minus = ((s1 - s2) * (s1 * a2 - s2 * a1)
                   + 2.0 * (s1 - s2) ** 2 * (dot + r1 * r2)) / ((s1 - s2) ** 2 - _k_tanh(k_diff, depth))
    # k₁ = k₂: the difference wave has no wavenumber and no frequency (0/0); the mean level
    # of a wave train is the set-down (Longuet-Higgins & Stewart 1964), which D⁻ = 0 gives.
    d_minus = np.where(k_diff > 1e-12 * np.maximum(k1, k2), d_minus, 0.0)
    # Two opposed waves of one length in deep water: the sum wave has k⁺ = 0 and D⁺ its limit.
    d_plus = np.where(np.isfinite(d_plus), d_plus, 0.0)
    return d_plus / s12 - (dot - r1 * r2) / s12, d_minus / s12 - (dot + r1 * r2) / s12


def tayfun_crest_trough_ratio(steepness: ArrayLike) -> NDArray[np.float64]:
    """Mean crest height over mean trough depth of a narrow-band second-order sea (Tayfun, 1980).

    With η = a cos φ + ½ k a² cos 2φ and a Rayleigh amplitude (E a = √(π/2) σ, E a² = 2σ²),
    crests are E a + ½k E a² and troughs E a − ½k E a²:
    ratio = (√(π/2) + μ)/(√(π/2) − μ) with the steepness μ = kσ (= skewness / 3).
    """
    mu = np.asarray(steepness, dtype=np.float64)
    root = math.sqrt(math.pi / 2.0)
    return (root + mu) / (root - mu)


def tayfun_top_tenth_crest(steepness: ArrayLike) -> NDArray[np.float64]:
    """Mean of the highest tenth of crests, in units of σ, of a narrow-band second-order sea.

    Crest c = ξ + ½ μ ξ² for a Rayleigh ξ = a/σ (Tayfun, 1980): the highest tenth of the
    crests are the highest tenth of the ξ, whose mean is ξ₁₀ + √(2π) e^{ξ₁₀²/2} Q(ξ₁₀) and
    whose mean square is ξ₁₀² + 2, with ξ₁₀ = √(2 ln 10). At μ = 0 this is 2.5455, half of
    H1/10 = 5.091 σ (Longuet-Higgins 1952).
    """
    from scipy.special import erfc

    mu = np.asarray(steepness, dtype=np.float64)
    x0 = _TOP_TENTH
    tail = 0.5 * erfc(x0 / math.sqrt(2.0))
    mean = x0 + math.sqrt(2.0 * math.pi) * math.exp(0.5 * x0 * x0) * tail
    mean_square = x0 * x0 + 2.0
    return mean + 0.5 * mu * mean_square


@dataclass(frozen=True)
class SecondOrderStatistics:
    """What second-order theory predicts for the height of a sea (heights in metres).

    ``skewness`` λ₃ = E(η − η̄)³/σ³; ``steepness`` μ = λ₃/3 (Tayfun's kσ);
    ``crest_trough_ratio`` and ``top_tenth_crest`` (in units of σ) from Tayfun (1980)
    with that steepness; ``mean_level`` the mean water level in metres (0 in deep water,
    the set-down in finite depth); ``std`` σ of the linear sea in metres.
    """

    skewness: float
    steepness: float
    crest_trough_ratio: float
    top_tenth_crest: float
    mean_level: float
    std: float

    def to_dict(self) -> dict[str, float]:
        return asdict(self)


def second_order_statistics(
    kx: ArrayLike,
    ky: ArrayLike,
    variance: ArrayLike,
    *,
    depth: float = math.inf,
    gravity: float = GRAVITY,
    block: int = 512,
    kernels: tuple[NDArray[np.float64], NDArray[np.float64]] | None = None,
) -> SecondOrderStatistics:
    """Skewness, crest ratio and mean level a set of wave components predicts at second order.

    For independent random phases, E[η₁²η₂] = ½ Σᵢ≠ⱼ aᵢ²aⱼ²(B⁺ᵢⱼ + B⁻ᵢⱼ), so with the
    variance vᵢ = E aᵢ²/2 of each component (Longuet-Higgins 1963; Srokosz & Longuet-Higgins
    1986, J. Fluid Mech. 164, 487–497, for the broad-band form, from memory):

        λ₃ = (6/σ³) Σᵢ Σⱼ vᵢ vⱼ (B⁺ᵢⱼ + B⁻ᵢⱼ),   η̄ = 2 Σᵢ vᵢ B⁻ᵢᵢ.

    The diagonal i = j is exact (in deep water) for components whose amplitudes are
    Rayleigh-distributed, as on a synthesis lattice (E a⁴ = 2 (E a²)²): one such component
    alone gives 3kσ.

    In one direction of deep water B⁺ + B⁻ = ½ min(kᵢ, kⱼ), which gives the broad-band
    λ₃ = (3/σ³) ∬ S S min(k₁, k₂) and, for a narrow band, λ₃ = 3kσ.

    Parameters
    ----------
    kx, ky : array_like
        Wave vectors of the components in rad/m (1-D, none zero).
    variance : array_like
        Variance of each component in m² (its amplitude is √(2v)).
    depth, gravity : float
        Water depth in metres (``inf``: deep) and gravity in m/s².
    block : int
        Rows of the pair matrix evaluated at once (memory only).
    kernels : (B⁺, B⁻) of shape (P, P), optional
        The pair kernels of these components if the caller has them already.
    """
    kx = np.ravel(np.asarray(kx, dtype=np.float64))
    ky = np.ravel(np.asarray(ky, dtype=np.float64))
    v = np.ravel(np.asarray(variance, dtype=np.float64))
    m0 = float(v.sum())
    if m0 <= 0.0:
        return SecondOrderStatistics(0.0, 0.0, 1.0, float(tayfun_top_tenth_crest(0.0)), 0.0, 0.0)
    if kernels is not None:
        third = float(v @ (kernels[0] + kernels[1]) @ v)
    else:
        third = 0.0
        for start in range(0, kx.size, block):
            rows = slice(start, start + block)
            b_plus, b_minus = bound_wave_kernels(
                kx[rows, None], ky[rows, None], kx[None, :], ky[None, :], depth=depth, gravity=gravity
            )
            third += float(v[rows] @ (b_plus + b_minus) @ v)
    if kernels is None:
        _, diagonal = bound_wave_kernels(kx, ky, kx, ky, depth=depth, gravity=gravity)
    else:
        diagonal = np.diagonal(kernels[1])
    sigma = math.sqrt(m0)
    skewness = 6.0 * third / sigma**3
    steepness = skewness / 3.0
    return SecondOrderStatistics(
        skewness=skewness,
        steepness=steepness,
        crest_trough_ratio=float(tayfun_crest_trough_ratio(steepness)),
        top_tenth_crest=float(tayfun_top_tenth_crest(steepness)),
        mean_level=float(2.0 * np.sum(v * diagonal)),
        std=sigma,
    )
