"""The foam threshold that gives a tile the whitecap coverage its wind calls for.

Knows nothing of presets or files.

Foam grows where the surface's Jacobian J = (1 + ∂Dx/∂x)(1 + ∂Dy/∂y) − (∂Dx/∂y)² falls
below a threshold (Tessendorf 2001), rising from 0 to 1 over ``foam_ramp``: foam is above
½ where J < threshold − ramp/2. For a linear sea the three derivatives are jointly
Gaussian, with a covariance that is a sum over the lattice's waves (their realised,
time-averaged variances 2|h0|²); J's distribution follows exactly from it. The threshold
is the quantile of that distribution at the wanted share, plus half the ramp. It depends
only on the amplitudes (seed, tile, sea), never on a frame, so every frame of a render
shares it, and it adapts to the resolution: a 256² preview and a 2048² final of one sea
foam over the same share of their surface although the finer one folds more often.

A lattice split into bands adds each band's :func:`jacobian_covariance` before asking
for the threshold (the derivatives of the sum are the sums of the derivatives).

References
----------
Tessendorf, J. (2001). Simulating Ocean Water. SIGGRAPH course notes (the Jacobian).
Monahan, E. C. & O'Muircheartaigh, I. G. (1980). J. Phys. Oceanogr. 10, 2097–2105 (the
coverage aimed at, see :mod:`oceanfield.physics.whitecaps`).
"""

from __future__ import annotations

import math

import numpy as np
from numpy.typing import NDArray

from ..physics._brent import bracketed_root

__all__ = ["jacobian_covariance", "summed_jacobian_covariance", "covariance_of", "foam_share_of_bands",
           "jacobian_share_below", "fold_threshold_for_coverage"]

_BLOCK_ROWS = 128
#: Standard-normal grid over ±8 σ in steps of 0.05 σ for the two diagonal derivatives:
#: the trapezoid rule on it integrates the Gaussian weight to 1e-12, and the share below a
#: threshold to better than 1 % of itself for shares from 1e-4 up (tested against sampling).
_GRID = np.linspace(-8.0, 8.0, 321)


def jacobian_covariance(h0: NDArray[np.complexfloating], dk: float, lateral: float) -> NDArray[np.float64]:
    """Covariance (3×3) of (∂Dx/∂x, ∂Dy/∂y, ∂Dx/∂y) over the tile and time, from h0.

    ``h0`` is in FFT layout, ``dk`` the lattice spacing in rad/m, ``lateral`` the lateral
    factor λ. With ∂Dx/∂x = −λ Σ (kx²/k) ĥ e^{ik·x} (and likewise), each wave contributes
    λ² (kx²/k, ky²/k, kx·ky/k)⊗(…) times its time-averaged variance 2|h0|².
    """
    n = h0.shape[0]
    index = np.fft.fftfreq(n, d=1.0 / n)
    cov = np.zeros((3, 3))
    for start in range(0, n, _BLOCK_ROWS):
        rows = slice(start, min(start + _BLOCK_ROWS, n))
        ky = index[rows][:, None] * dk
        kx = index[None, :] * dk
        k = np.hypot(kx, ky)
        inverse = np.divide(1.0, k, out=np.zeros_like(k), where=k > 0)
        power = 2.0 * np.abs(h0[rows].astype(np.complex128)) ** 2
        terms = (kx * kx * inverse, ky * ky * inverse, kx * ky * inverse)
        for i in range(3):
            for j in range(i, 3):
                cov[i, j] += float(np.sum(power * terms[i] * terms[j]))
    cov = cov + np.triu(cov, 1).T
    return lateral * lateral * cov


def _conditional_model(cov: NDArray[np.float64]):
    """(1 + a)(1 + b), the conditional mean and standard deviation of c, and the weights
    on a grid of (a, b), for jointly Gaussian (a, b, c) with covariance ``cov``."""
    ab = cov[:2, :2]
    values, vectors = np.linalg.eigh(ab)
    root = vectors * np.sqrt(np.maximum(values, 0.0))
    z1, z2 = np.meshgrid(_GRID, _GRID, indexing="ij")
    a = root[0, 0] * z1 + root[0, 1] * z2
    b = root[1, 0] * z1 + root[1, 1] * z2
    weight = np.exp(-0.5 * (z1 * z1 + z2 * z2))
    weight /= weight.sum()
    beta = cov[2, :2] @ np.linalg.pinv(ab)
    mean = beta[0] * a + beta[1] * b
    spread = math.sqrt(max(cov[2, 2] - float(beta @ cov[:2, 2]), 0.0))
    return (1.0 + a) * (1.0 + b), mean, max(spread, 1e-12), weight


def summed_jacobian_covariance(oceans) -> NDArray[np.float64]:
    """The covariance of the summed surface of several tiles (a band stack's bands): their
    derivatives add and their amplitudes are independent, so their covariances add. Each
    Ocean's own (``jacobian_covariance``, kept when its foam threshold was solved) is used
    when it has one, else computed from its amplitudes."""
    return sum(covariance_of(ocean) for ocean in oceans)


def covariance_of(ocean) -> NDArray[np.float64]:
    """An Ocean's Jacobian covariance: the one kept when its foam threshold was solved, else
    computed from its amplitudes (``jacobian_covariance``)."""
    if ocean.jacobian_covariance is not None:
        return ocean.jacobian_covariance
    return jacobian_covariance(ocean.amplitudes, ocean.tile.dk, ocean.lateral_factor)


def foam_share_of_bands(oceans) -> float:
    """Share of the surface where the largest of several bands' foam maps exceeds ½ (how
    a band stack's foam is combined): each band's share from its own Jacobian and fold
    threshold (none where the threshold is −inf), and, the bands being independent,
    1 − Π (1 − shareᵦ)."""
    clear = 1.0
    for ocean in oceans:
        if math.isfinite(ocean.fold_threshold):
            cov = covariance_of(ocean)
            if np.any(np.diag(cov) > 0.0):
                clear *= 1.0 - jacobian_share_below(cov, ocean.fold_threshold - 0.5 * ocean.foam_ramp)
    return 1.0 - clear


def jacobian_share_below(cov: NDArray[np.float64], threshold: float, *, _model=None) -> float:
    """P(J < threshold) for J = (1 + a)(1 + b) − c² with (a, b, c) ~ N(0, cov).

    Given (a, b), J < t ⇔ c² > (1 + a)(1 + b) − t =: u, and c is Gaussian with a known
    conditional mean μ and deviation σ: P = 1 for u ≤ 0, else Φ((−√u − μ)/σ) +
    Φ((μ − √u)/σ). The outer integral over (a, b) is a trapezoid rule on ±8 σ.
    """
    from scipy.special import ndtr  # here: scipy.special loads with the FFTs a frame needs anyway

    product, mean, spread, weight = _model if _model is not None else _conditional_model(cov)
    u = product - threshold
    root = np.sqrt(np.maximum(u, 0.0))
    tail = ndtr((-root - mean) / spread) + ndtr((mean - root) / spread)
    return float(np.sum(weight * np.where(u <= 0.0, 1.0, np.minimum(tail, 1.0))))


def fold_threshold_for_coverage(cov: NDArray[np.float64], share: float, foam_ramp: float) -> float:
    """The fold threshold at which foam exceeds ½ on ``share`` of the surface.

    −inf (no foam) when the share is 0 or the surface does not move sideways (cov = 0).
    """
    if not share > 0.0 or not np.any(np.diag(cov) > 0.0):
        return -math.inf
    share = min(share, 1.0 - 1e-9)
    model = _conditional_model(cov)
    scale = math.sqrt(float(np.trace(cov))) + 1.0
    low, high = 1.0 - 100.0 * scale * scale, 1.0 + 100.0 * scale * scale
    quantile = bracketed_root(
        lambda t: jacobian_share_below(cov, t, _model=model) - share, low, high, xtol=1e-9, rtol=1e-12
    )
    return float(quantile) + 0.5 * foam_ramp
