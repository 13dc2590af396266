"""What a clip can support: which measured figures its length or its tile leave unreliable.

Knows nothing of synthesis: it judges a `oceanfield.analysis.results.SequenceAnalysis`.

A clip of duration D resolves frequencies in steps of Δω = 2π/D. A period T sits at
D/T frequency bins; with fewer than three the periodogram's peak is set by the clip's
length rather than by the sea (a 4.17 s clip reports "Tp 4.17 s" for a 6 s sea). So a
period longer than a third of the clip is unreliable, and so is every figure built on such
a peak: the mean periods, which miss the energy below the first bins, and the significant
steepness 2πHs/(gTp²). The three-bin rule is the one the timing fit already uses
(`oceanfield.analysis.timing`): common practice, no published source.

The direction of travel needs waves whose frequency the clip resolves: a wave within three
bins of ω = 0 cannot say which way it runs, so a mean direction resting on less than half
of the energy is unreliable too.

The wavenumber peak does not depend on the clip's length but on the tile's: a peak in
the first annuli (wavelength over two thirds of the tile) may be the tile's longest wave
rather than the sea's.

`assess` lists each unreliable figure with its reason under the key the JSON report uses,
gives the steepness from the wavenumber peak as the figure to trust instead, and says how
long a clip would resolve the peak: three periods of the best estimate of Tp that does not
depend on the clip (the wavenumber peak's, else the target's).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from .results import SequenceAnalysis
from ..physics.constants import GRAVITY
from ..physics.dispersion import wavenumber

__all__ = ["MIN_CYCLES", "Reliability", "assess", "band_scales"]

#: Cycles of a period the clip must hold for the period to be measured (three frequency
#: bins; common practice, as the timing fit's own rule).
MIN_CYCLES = 3.0
#: A wavenumber peak within this many lattice steps of the origin may be the tile's
#: longest wave rather than the sea's (common practice).
_MIN_PEAK_ANNULI = 1.5
#: Share of the energy the direction must rest on (common practice: most of it).
_MIN_DIRECTION_SHARE = 0.5


@dataclass(frozen=True)
class Reliability:
    """Which figures a clip cannot support, and what would.

    Attributes
    ----------
    unreliable : dict of str to str
        Figure (its JSON key, e.g. ``"tp_s"``) → why it cannot be trusted.
    steepness_from_wavenumber : float
        2πHs/(gTp²) with Tp from the wavenumber peak (nan when that peak is unknown).
    needed_duration : float
        Seconds of clip that would resolve the peak period (nan when none is known).
    needed_frames : int or None
        The same in frames at the clip's rate; None when unknown.
    duration : float
        The clip's own length, seconds.
    """

    unreliable: dict[str, str] = field(default_factory=dict)
    steepness_from_wavenumber: float = math.nan
    needed_duration: float = math.nan
    needed_frames: int | None = None
    duration: float = math.nan

    @property
    def too_short(self) -> bool:
        """Whether a longer clip would resolve what this one cannot."""
        return self.needed_frames is not None and self.needed_duration > self.duration

    def need_text(self, fps: float) -> str:
        """"a clip of at least 17.6 s (424 frames at 24 fps)", or "" when none is needed."""
        if not self.too_short:
            return ""
        return f"a clip of at least {self.needed_duration:.3g} s ({self.needed_frames} frames at {fps:g} fps)"

    def to_dict(self, fps: float) -> dict[str, Any]:
        """JSON-ready: the unreliable figures with reasons, the figure to trust, the clip needed."""
        number = self.steepness_from_wavenumber
        return {
            "unreliable": dict(self.unreliable),
            "significant_steepness_from_wavenumber": number if math.isfinite(number) else None,
            "clip_needed_s": self.needed_duration if self.too_short else None,
            "clip_needed_frames": self.needed_frames if self.too_short else None,
            "clip_s": self.duration,
            "fps": fps,
        }


def assess(result: SequenceAnalysis, *, target_tp: float | None = None) -> Reliability:
    """Judge which of ``result``'s figures its clip and tile can support.

    Parameters
    ----------
    result : SequenceAnalysis
        A finished measurement.
    target_tp : float, optional
        Peak period of the sea the clip should show, s (default: the result's target's).
    """
    duration = result.frames / result.fps
    limit = duration / MIN_CYCLES
    fit = result.dispersion
    gravity = fit.gravity if math.isfinite(fit.gravity) else GRAVITY
    unreliable: dict[str, str] = {}
    clip = f"{duration:.3g} s clip"

    peak_unresolved = math.isfinite(result.tp) and result.tp > limit
    if peak_unresolved:
        unreliable["tp_s"] = (
            f"Tp {result.tp:.3g} s is longer than a third of the {clip}: fewer than {MIN_CYCLES:.0f} cycles, "
            f"so the clip's length sets it, not the sea"
        )
    for key, value, name in (("tm01_s", result.tm01, "Tm01"), ("tm02_s", result.tm02, "Tm02")):
        if not math.isfinite(value):
            continue
        if value > limit:
            unreliable[key] = f"{name} {value:.3g} s is longer than a third of the {clip}"
        elif peak_unresolved:
            unreliable[key] = f"{name} misses the energy of the unresolved peak"

    # Direction: only waves whose frequency the clip resolves say which way they run.
    resolved = np.asarray(fit.resolved, dtype=bool)
    energy = np.asarray(result.wavenumber_spectrum[: max(resolved.size - 1, 0)], dtype=float)
    total = float(energy.sum())
    if total > 0 and math.isfinite(result.mean_direction):
        share = float(energy[resolved[1 : energy.size + 1]].sum()) / total
        if share < _MIN_DIRECTION_SHARE:
            shown = f"the {share:.0%}" if share >= 0.01 else "under 1 %"
            why = f"from {shown} of the energy in waves short enough for the {clip} to time"
            unreliable["towards_deg"] = f"the direction of travel comes {why}"
            unreliable["directional_spread_deg"] = f"the directional spread comes {why}"

    tp_k = result.tp_from_wavenumber
    steepness_k = math.nan
    if math.isfinite(tp_k) and tp_k > 0:
        steepness_k = 2.0 * math.pi * result.hs / (gravity * tp_k * tp_k)
        k_peak = float(wavenumber(2.0 * math.pi / tp_k, fit.depth, gravity=gravity))
        if k_peak < _MIN_PEAK_ANNULI * result.wavenumber_resolution:
            unreliable["tp_from_wavenumber_s"] = (
                f"the wavenumber peak ({2.0 * math.pi / k_peak:.3g} m) is among the tile's longest waves "
                f"({result.size:.3g} m tile): the sea's peak may be longer than the tile holds"
            )
            steepness_k = math.nan
    if peak_unresolved and math.isfinite(result.significant_steepness):
        instead = f"; {steepness_k:.3g} from the wavenumber peak" if math.isfinite(steepness_k) else ""
        unreliable["significant_steepness"] = (
            f"significant steepness {result.significant_steepness:.3g} rests on the unresolved Tp{instead}"
        )

    reference = tp_k if "tp_from_wavenumber_s" not in unreliable else math.nan
    if not math.isfinite(reference):
        reference = target_tp if target_tp is not None else (result.target_tp or math.nan)
    if not math.isfinite(reference) and peak_unresolved:
        reference = result.tp  # at least this long: the clip cannot say more
    needed = MIN_CYCLES * reference if math.isfinite(reference) else math.nan
    frames = math.ceil(needed * result.fps - 1e-9) if math.isfinite(needed) else None
    return Reliability(unreliable, steepness_k, needed, frames, duration)


def band_scales(omega_low: float, omega_high: float, k_low: float, k_high: float) -> tuple[float, float, float, float]:
    """A band's wavelengths (longest, shortest; m) and periods (longest, shortest; s)."""
    return 2.0 * math.pi / k_low, 2.0 * math.pi / k_high, 2.0 * math.pi / omega_low, 2.0 * math.pi / omega_high

