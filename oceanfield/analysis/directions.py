"""Directions of travel: the mean direction and spread of energy (Kuik et al. 1988).

`directional_moments` of energy at directions, and the analyzer's reduction of the
frequency–wavenumber spectrum to the mean direction, spread and polar histogram, with the
notes where the clip is too short to tell which way waves run. Knows nothing of files or
of synthesis.

References
----------
Kuik, A. J., van Vledder, G. Ph. & Holthuijsen, L. H. (1988). A method for the routine
analysis of pitch-and-roll buoy wave data. J. Phys. Oceanogr. 18, 1020–1034 (mean
direction, directional spread σ = √(2(1 − r))).
"""

from __future__ import annotations

import math

import numpy as np
from numpy.typing import ArrayLike, NDArray

from .timing import MOVING_FLOOR, DispersionFit

__all__ = ["directional_moments"]

#: Directions in the polar histogram of the report.
_DIRECTION_BINS = 36


def directional_moments(directions: ArrayLike, energy: ArrayLike) -> tuple[float, float]:
    """Mean direction and directional spread of energy at directions (radians).

    a1 + i b1 = Σ E e^{iθ} / Σ E; mean direction atan2(b1, a1), spread
    σ = √(2(1 − √(a1² + b1²))) (Kuik et al. 1988).
    """
    theta = np.asarray(directions, dtype=np.float64)
    e = np.asarray(energy, dtype=np.float64)
    total = float(e.sum())
    if not total > 0:
        return math.nan, math.nan
    a1 = float(np.sum(e * np.cos(theta))) / total
    b1 = float(np.sum(e * np.sin(theta))) / total
    resultant = min(math.hypot(a1, b1), 1.0)
    return math.atan2(b1, a1), math.sqrt(2.0 * (1.0 - resultant))



def _direction_edges() -> NDArray[np.float64]:
    """Edges of the direction bins of the polar histogram, radians."""
    return np.linspace(-math.pi, math.pi, _DIRECTION_BINS + 1)


def _directions(
    cube: dict[str, NDArray], fit: DispersionFit, kept_index: int, still: bool, duration: str
) -> tuple[float, float, NDArray[np.float64], list[str]]:
    """Mean direction of travel, spread, energy per direction bin, and notes.

    Only annuli below the first aliased one count (above it waves can appear in the
    wrong half of the spectrum), and only those whose frequency is resolved: a wave
    within 3 bins of ω = 0 leaks into the opposite half through the window and would
    read as running both ways.
    """
    notes: list[str] = []
    aliased = np.flatnonzero(fit.aliased)
    cut = int(aliased.min()) - 1 if aliased.size else kept_index
    annulus = cube["point_annulus"]
    total = cube["forward"] + cube["backward"]
    below_cut = (annulus >= 1) & (annulus <= cut)
    keep = below_cut & fit.resolved[np.minimum(annulus, fit.resolved.size - 1)]
    all_energy = float(np.sum(total[below_cut]))
    kept_energy = float(np.sum(total[keep]))
    if not still and not kept_energy > MOVING_FLOOR * all_energy:
        keep = below_cut
        notes.append(
            f"the waves are too slow for a {duration} sequence to tell which way they run: the directional "
            f"spread reads wider than it is"
        )
    elif not still and kept_energy < 0.5 * all_energy:
        notes.append(
            f"most of the energy is in waves too slow for a {duration} sequence to tell which way they run; "
            f"the direction comes from the {kept_energy / all_energy:.0%} that are resolved"
        )
    theta = np.concatenate([cube["theta"][keep], cube["theta"][keep] + math.pi])
    energy = np.concatenate([cube["forward"][keep], cube["backward"][keep]])
    if still:  # round-off has no direction
        energy = np.zeros_like(energy)
    mean, spread = directional_moments(theta, energy)
    histogram = np.histogram(np.angle(np.exp(1j * theta)), bins=_direction_edges(), weights=energy)[0]
    return mean, spread, histogram, notes
