"""Warnings about a valid preset: physically doubtful choices, one sentence each.

A preset that loads is valid; these are the choices that still deserve a second look (a
fetch past full development, a tile too small for its waves, variance the lattice cannot
hold, linear theory stretched by the depth, lossy data maps). The schema (``schema``)
decides what is an error; this module only advises. It knows nothing of rendering.
"""

from __future__ import annotations

import math
from dataclasses import replace

from ..physics.constants import SURFACE_TENSION
from ..physics.seastate import SeaState
from .settings import Preset, _component

__all__ = ["preset_warnings"]

DATA_MAPS = ("displacement", "height", "velocity")  # values, not pictures: keep them lossless

# Warning thresholds (all "common practice", none from a standard).
_MIN_TILE_PER_PEAK_WAVELENGTH = 2.0
_MAX_UNRESOLVED_VARIANCE = 0.05
_MAX_HEIGHT_TO_DEPTH = 0.4
_MAX_CAPILLARY_SPEED_ERROR = 0.05
_MIN_PEAK_VARIANCE_KEPT = 0.9
_MAX_LOOP_FREQUENCY_SHIFT = 0.05  # of a component's peak frequency
_LOOP_PEAK_PERIODS = 10.0  # a loop this many peak periods long shifts the peak by at most 1/20


def preset_warnings(preset: Preset, *, sea_state: SeaState | None = None) -> list[str]:
    """Physically doubtful choices in a valid preset, one sentence each (not errors).

    Checks that a fetch is not past full development, that the tile holds at least two
    peak wavelengths of every component, that the lattice resolves and holds at least
    95 % of the variance, that Hs/depth stays below 0.4 (beyond it linear theory is a
    stretch), that ripples the tile resolves are not ones surface tension would speed up
    by more than 5 % while it is off, that the small-wave cut-off spares the peak, that a
    loop is a whole number of frames and moves no component's peak frequency by more than
    5 %, and that data maps are not written lossy. All thresholds are common practice.
    A preset with vessels adds the wake's own notes (``Wake.notes``: hull and depth Froude
    numbers where linear theory fails, a course leaving the region, a short look-back).

    Parameters
    ----------
    preset : Preset
    sea_state : SeaState, optional
        ``preset.sea_state()``, if already built.
    """
    sea_state = preset.sea_state() if sea_state is None else sea_state
    sea, tile = preset.sea, preset.tile
    if preset.bands.active:
        # Band 0's tile and the shortest wave the bands carry stand for the tile.
        from .banding import preset_bands

        bands = preset_bands(preset, sea_state)
        size = bands[0].tile.size
        shortest_k = max(min(b.k_high, b.tile.nyquist) for b in bands)
        tile = replace(tile, size_m=size, resolution=max(2, round(shortest_k * size / math.pi)))
    warnings = []
    total_variance = sea_state.band_variance(0.0, math.inf)

    for item, component, stats in zip(sea.components, sea_state.components, sea_state.component_statistics()):
        if item.fetch_km is not None:
            developed = _component(sea, replace(item, fetch_km=None, peak_enhancement=None))
            if component == developed:
                warnings.append(
                    f"fetch_km {item.fetch_km:g} km is more than the wind of `{item.label}` needs: the sea is "
                    f"fully developed (Pierson–Moskowitz), so the fetch and peak_enhancement change nothing"
                )
        needed = _MIN_TILE_PER_PEAK_WAVELENGTH * stats.peak_wavelength
        if tile.size_m < needed:
            warnings.append(
                f"tile.size_m {tile.size_m:g} m is under twice the peak wavelength of `{item.label}` "
                f"({stats.peak_wavelength:.3g} m): its longest waves do not fit and the repeat shows; "
                f"use at least {needed:.3g} m"
            )
        kept = math.exp(-((2.0 * math.pi / stats.peak_wavelength * item.small_wave_cutoff_m) ** 2))
        if kept < _MIN_PEAK_VARIANCE_KEPT:
            warnings.append(
                f"small_wave_cutoff_m {item.small_wave_cutoff_m:g} m of `{item.label}` removes "
                f"{1 - kept:.0%} of the variance at its peak wavelength ({stats.peak_wavelength:.3g} m)"
            )

    nyquist = math.pi * tile.resolution / tile.size_m
    fundamental = 2.0 * math.pi / tile.size_m
    too_short = sea_state.band_variance(nyquist, math.inf) / total_variance
    too_long = sea_state.band_variance(0.0, fundamental) / total_variance
    if too_short > _MAX_UNRESOLVED_VARIANCE:
        warnings.append(
            f"{too_short:.0%} of the variance is in waves shorter than two texels "
            f"({2 * tile.size_m / tile.resolution:.3g} m), which the tile cannot show: raise "
            f"tile.resolution or set small_wave_cutoff_m"
        )
    if too_long > _MAX_UNRESOLVED_VARIANCE:
        warnings.append(
            f"{too_long:.0%} of the variance is in waves longer than the tile ({tile.size_m:g} m), "
            f"which it cannot hold: raise tile.size_m"
        )

    hs = sea_state.statistics().hs
    if math.isfinite(sea.depth_m) and hs / sea.depth_m > _MAX_HEIGHT_TO_DEPTH:
        warnings.append(
            f"significant height {hs:.3g} m is {hs / sea.depth_m:.2f} of the depth {sea.depth_m:g} m "
            f"(over {_MAX_HEIGHT_TO_DEPTH}): waves this high for the depth steepen and break, "
            f"and linear theory is a stretch"
        )

    if sea.surface_tension_npm == 0.0:
        # Deep water c² = g/k + Tk/ρ: capillarity adds the fraction Tk²/(ρg) to c², so it
        # changes the speed by more than 5 % once k > √(((1.05)² − 1) ρg/T).
        ratio = (1.0 + _MAX_CAPILLARY_SPEED_ERROR) ** 2 - 1.0
        k_capillary = math.sqrt(ratio * sea.density_kgpm3 * sea.gravity_mps2 / SURFACE_TENSION)
        if nyquist > k_capillary:
            warnings.append(
                f"the tile resolves waves down to {200 * tile.size_m / tile.resolution:.3g} cm, where "
                f"surface tension changes wave speed by more than 5 %; set sea.surface_tension_npm "
                f"(clean water: {SURFACE_TENSION:g})"
            )

    warnings.extend(_loop_warnings(preset, sea_state))
    if preset.vessels:
        from .vessels import wake_notes

        warnings.extend(wake_notes(preset))

    lossy = [name for name in preset.maps if name in DATA_MAPS]
    if preset.output.format == "exr" and preset.output.compression == "dwaa" and lossy:
        warnings.append(
            f"output.compression dwaa is lossy and would blur the values of {', '.join(lossy)}; "
            f"use zip or piz for data maps"
        )
    return warnings


def _loop_warnings(preset: Preset, sea_state: SeaState) -> list[str]:
    """A loop that is not a whole number of frames, or so short that rounding every
    frequency to a multiple of 2π/T moves a component's peak by more than 5 %.

    The rounding moves a frequency ω by at most half a step, π/T: relative to the peak,
    Tp/(2T), so a loop of 10 peak periods keeps the peak within 5 % (the waves then run
    within 5 % of their speed); a loop under two peak periods rounds the peak to 0.
    """
    time = preset.time
    period = time.loop_period_s
    if period is None:
        return []
    warnings = []
    frames = period * time.fps
    whole = max(1, round(frames))
    if abs(frames - whole) > 1e-6 * whole:
        warnings.append(
            f"time.loop_period_s {period:g} s is {frames:.6g} frames at {time.fps:g} fps: a frame sequence "
            f"repeats seamlessly only over a whole number of frames (e.g. {whole / time.fps:g} s, {whole} frames)"
        )
    step = 2.0 * math.pi / period
    for item, stats in zip(preset.sea.components, sea_state.component_statistics()):
        if not (math.isfinite(stats.tp) and stats.tp > 0.0):
            continue
        peak = 2.0 * math.pi / stats.tp
        rounded = round(peak / step) * step
        shift = abs(rounded - peak) / peak
        if shift <= _MAX_LOOP_FREQUENCY_SHIFT:
            continue
        needed = f"use a loop of at least {_LOOP_PEAK_PERIODS * stats.tp:.3g} s ({_LOOP_PEAK_PERIODS:g} peak periods)"
        if rounded == 0.0:
            warnings.append(
                f"time.loop_period_s {period:g} s is too short: the peak waves of `{item.label}` "
                f"({stats.tp:.3g} s period) are rounded to frequency 0 and stand still; {needed}"
            )
        else:
            warnings.append(
                f"time.loop_period_s {period:g} s rounds the peak period of `{item.label}` from {stats.tp:.3g} s "
                f"to {2.0 * math.pi / rounded:.3g} s: its waves run {shift:.0%} too "
                f"{'fast' if rounded > peak else 'slow'} for their length; {needed}"
            )
    return warnings
