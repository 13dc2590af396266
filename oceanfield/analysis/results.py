"""The figures measured on a height sequence: `SequenceAnalysis` and its JSON form.

What `oceanfield.analysis.measure` hands back — Hs, periods, directions, the dispersion fit,
the band verdicts and the spectra behind them — as one frozen record; `whole_degrees` for
reports. Knows nothing of files, of synthesis or of how the figures were measured.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Any

import numpy as np
from numpy.typing import NDArray

from .bands import BandVerdict
from .timing import DispersionFit

__all__ = ["SequenceAnalysis", "whole_degrees"]


def whole_degrees(angle: float | None) -> float | None:
    """An angle in radians as whole degrees in [0, 360), or None where it is not a number."""
    if angle is None or not math.isfinite(angle):
        return None
    return float(round(math.degrees(angle)) % 360)



@dataclass(frozen=True)
class SequenceAnalysis:
    """Everything measured on a height sequence (SI units; angles in radians, the mean
    direction in (−π, π] counter-clockwise from +x, the direction waves travel towards;
    `to_dict` gives it in degrees from 0 to 360)."""

    frames: int
    resolution: int
    size: float
    fps: float
    periodic: bool
    seam_ratio: float
    m0: float
    hs: float
    tp: float
    tp_from_wavenumber: float
    tm01: float
    tm02: float
    mean_direction: float
    directional_spread: float
    significant_steepness: float
    folded_fraction: float | None
    dispersion: DispersionFit
    bands: tuple[BandVerdict, ...] | None
    nyquist_frequency: float
    frequency_resolution: float
    wavenumber_resolution: float
    analysed_wavenumber: float
    # spectra, for reports
    wavenumbers: NDArray[np.float64] = field(repr=False)
    wavenumber_spectrum: NDArray[np.float64] = field(repr=False)
    frequencies: NDArray[np.float64] = field(repr=False)
    frequency_spectrum: NDArray[np.float64] = field(repr=False)
    annulus_power: NDArray[np.float64] = field(repr=False)
    direction_bins: NDArray[np.float64] = field(repr=False)
    direction_energy: NDArray[np.float64] = field(repr=False)
    target_spectrum: NDArray[np.float64] | None = field(default=None, repr=False)
    target_hs: float | None = None
    target_tp: float | None = None
    notes: tuple[str, ...] = ()

    def to_dict(self) -> dict[str, Any]:
        """Every figure as plain JSON-ready values; angles in degrees (keys say so)."""
        fit = self.dispersion
        data: dict[str, Any] = {
            "frames": self.frames,
            "resolution": self.resolution,
            "size_m": self.size,
            "fps": self.fps,
            "duration_s": self.frames / self.fps,
            "periodic": self.periodic,
            "seam_ratio": self.seam_ratio,
            "m0_m2": self.m0,
            "hs_m": self.hs,
            "tp_s": self.tp,
            "tp_from_wavenumber_s": self.tp_from_wavenumber,
            "tm01_s": self.tm01,
            "tm02_s": self.tm02,
            "towards_deg": math.degrees(self.mean_direction) % 360.0,
            "directional_spread_deg": math.degrees(self.directional_spread),
            "significant_steepness": self.significant_steepness,
            "folded_fraction": self.folded_fraction,
            "nyquist_frequency_radps": self.nyquist_frequency,
            "frequency_resolution_radps": self.frequency_resolution,
            "wavenumber_resolution_radpm": self.wavenumber_resolution,
            "analysed_wavenumber_radpm": self.analysed_wavenumber,
            "dispersion": {
                "g_eff_over_g": fit.g_ratio,
                "g_eff_over_g_error": fit.g_ratio_error,
                "scale_factor": fit.scale_factor,
                "playback_speed": fit.playback_speed,
                "status": fit.status,
                "depth_m": fit.depth,
                "gravity_mps2": fit.gravity,
                "bins_used": fit.bins_used,
                "bins_energetic": fit.bins_energetic,
                "bins_aliased": fit.bins_aliased,
                "bins_too_slow": fit.bins_too_slow,
                "aliased_energy_fraction": fit.aliased_energy_fraction,
                "k_low_radpm": fit.k_low,
                "k_high_radpm": fit.k_high,
                "g_eff_over_g_low_half": fit.g_ratio_low,
                "g_eff_over_g_high_half": fit.g_ratio_high,
            },
            "target_hs_m": self.target_hs,
            "target_tp_s": self.target_tp,
            "bands": None if self.bands is None else [
                {
                    "centre_over_peak": band.centre,
                    "omega_low_radps": band.omega_low,
                    "omega_high_radps": band.omega_high,
                    "k_low_radpm": band.k_low,
                    "k_high_radpm": band.k_high,
                    "measured_m2": band.measured,
                    "target_m2": band.target,
                    "ratio": band.ratio,
                    "tolerance": band.tolerance,
                    "verdict": band.verdict,
                    "partial": band.partial,
                }
                for band in self.bands
            ],
            "wavenumber_spectrum": {
                "k_radpm": self.wavenumbers.tolist(),
                "density_m3": self.wavenumber_spectrum.tolist(),
            },
            "frequency_spectrum": {
                "omega_radps": self.frequencies.tolist(),
                "density_m2s": self.frequency_spectrum.tolist(),
            },
            "notes": list(self.notes),
        }
        return _json_ready(data)


def _json_ready(value: Any) -> Any:
    """NaN and infinities become None (JSON has neither); numpy scalars become Python."""
    if isinstance(value, dict):
        return {key: _json_ready(item) for key, item in value.items()}
    if isinstance(value, (list, tuple)):
        return [_json_ready(item) for item in value]
    if isinstance(value, (np.floating, float)):
        number = float(value)
        return number if math.isfinite(number) else None
    if isinstance(value, np.integer):
        return int(value)
    if isinstance(value, np.bool_):
        return bool(value)
    return value
