"""What a preset's sea looks like in numbers: the report behind ``oceanfield stats``.

Knows nothing of rendering or files.

Per component and in total: significant wave height, peak and mean periods, peak
wavelength and phase speed, significant steepness, the equivalent Beaufort force; then
what the tile captures (the share of the sea's variance the lattice carries), the Hs the
tile realises for the preset's seed beside the one asked for, how much of the surface folds,
and the whitecap share the wind calls for beside the foam the tile shows.
"""

from __future__ import annotations

import math
from typing import Any

import numpy as np

__all__ = ["sea_report", "format_sea_report", "fold_fraction", "surface_shares", "fold_warning"]

_FOLD_SAMPLES = 4  # frames spread over a peak period, averaged for the folded fraction
#: Folded share above which a preset draws a warning (common practice: beyond about a tenth
#: the surface reads as torn rather than as sharp crests).
MAX_FOLDED_SHARE = 0.10


def surface_shares(ocean, *, times: list[float] | None = None) -> tuple[float, float]:
    """(folded share, foam share): the share of the surface whose Jacobian is negative and
    the share whose foam is above ½, each averaged over ``times``.

    By default a few frames spread over one peak period of the sea.
    """
    if times is None:
        period = ocean.sea_state.statistics().tp
        times = [period * i / _FOLD_SAMPLES for i in range(_FOLD_SAMPLES)]
    buffer = ocean.new_buffer()
    folded, foamy = [], []
    for t in times:
        fields = ocean.frame(t, buffer=buffer)
        folded.append(float(np.mean(fields.jacobian < 0.0)))
        foamy.append(float(np.mean(fields.foam > 0.5)))
    return float(np.mean(folded)), float(np.mean(foamy))


def fold_fraction(ocean, *, times: list[float] | None = None) -> float:
    """Share of the surface whose Jacobian is negative (folded), averaged over ``times``."""
    return surface_shares(ocean, times=times)[0]


def fold_warning(preset, ocean=None) -> str | None:
    """A warning when the lateral factor folds more than 10 % of the surface, else None."""
    if preset.surface.lateral_factor == 0:
        return None
    if ocean is None:
        from ..surface.synth import Ocean

        ocean = Ocean.from_preset(preset, velocity=False, foam_memory=0.0)
    share = fold_fraction(ocean)
    if share <= MAX_FOLDED_SHARE:
        return None
    return (
        f"surface.lateral_factor: {preset.surface.lateral_factor:g} folds {share * 100:.0f} % of the surface "
        f"over itself (more than {MAX_FOLDED_SHARE * 100:.0f} %); crests will look torn: lower it"
    )


def _row(stats) -> dict[str, Any]:
    return {
        "hs_m": stats.hs,
        "tp_s": stats.tp,
        "tm01_s": stats.tm01,
        "tm02_s": stats.tm02,
        "peak_wavelength_m": stats.peak_wavelength,
        "peak_phase_speed_mps": stats.peak_phase_speed,
        "peak_group_speed_mps": stats.peak_group_speed,
        "towards_deg": round(math.degrees(stats.mean_direction), 6) % 360.0,
        "directional_spread_deg": math.degrees(stats.directional_spread),
        "significant_steepness": stats.significant_steepness,
        "beaufort": stats.beaufort,
    }


def sea_report(preset) -> dict[str, Any]:
    """Every figure of ``oceanfield stats`` for a resolved preset, as a JSON-ready dict."""
    from .schema import to_sea_state
    from ..surface.synth import Ocean

    sea = to_sea_state(preset)
    total = sea.statistics()
    components = []
    for settings, stats in zip(preset.sea.components, sea.component_statistics()):
        components.append({"label": settings.label, "spectrum": settings.spectrum, **_row(stats)})
    ocean = Ocean.from_preset(preset, velocity=False, foam_memory=0.0)
    tile = ocean.tile
    folded, foamy = surface_shares(ocean)
    threshold = ocean.fold_threshold
    return {
        "preset": preset.name,
        "description": preset.description,
        "depth_m": None if math.isinf(sea.depth) else sea.depth,
        "components": components,
        "total": _row(total),
        "tile": {
            "size_m": tile.size,
            "resolution": tile.resolution,
            "texel_m": tile.spacing,
            "shortest_wavelength_m": 2.0 * math.pi / tile.nyquist,
            "tile_over_peak_wavelength": tile.size / total.peak_wavelength,
            # the lattice's Σ Ψ Δk² over the sea's m0: what the tile and resolution capture
            "captured_variance_share": ocean.lattice_variance / total.m0,
            "unresolved_short_wave_share": sea.band_variance(tile.nyquist, math.inf) / total.m0,
            # the Hs this tile holds for the preset's seed, 4√(Σ 2|h0|²), beside total.hs_m
            "realised_hs_m": ocean.realised_hs,
            "wave_heights": ocean.wave_heights,
            "seed": preset.seed,
        },
        "folded_surface_share": folded,
        "lateral_factor": preset.surface.lateral_factor,
        # the whitecap share the wind calls for (Monahan & O'Muircheartaigh 1980), None when
        # the preset sets its own fold threshold; the foam share measured on the same frames
        "whitecap_coverage": ocean.whitecap_coverage,
        "foam_surface_share": foamy,
        "fold_threshold": threshold if math.isfinite(threshold) else None,
    }


def format_sea_report(report: dict[str, Any]) -> str:
    """The report as aligned text for a terminal."""
    lines = [f"{report['preset']}: {report['description']}"]
    depth = report["depth_m"]
    lines.append(f"depth: {'deep' if depth is None else f'{depth:g} m'}")
    header = f"{'':<22} {'Hs m':>7} {'Tp s':>6} {'Tm02 s':>7} {'λp m':>8} {'cp m/s':>7} {'steep':>6} {'towards':>8} {'spread':>7} {'Bft':>4}"
    lines.append(header)
    rows = [(c["label"] or c["spectrum"], c) for c in report["components"]]
    if len(rows) > 1:
        rows.append(("total", report["total"]))
    for label, row in rows:
        lines.append(
            f"{label[:22]:<22} {row['hs_m']:>7.2f} {row['tp_s']:>6.2f} {row['tm02_s']:>7.2f} "
            f"{row['peak_wavelength_m']:>8.1f} {row['peak_phase_speed_mps']:>7.2f} "
            f"{row['significant_steepness']:>6.3f} {round(row['towards_deg']) % 360:>7d}° "
            f"{row['directional_spread_deg']:>6.0f}° {row['beaufort']:>4d}"
        )
    tile = report["tile"]
    lines.append(
        f"tile: {tile['size_m']:g} m at {tile['resolution']}² ({tile['texel_m'] * 100:.1f} cm texels, "
        f"{tile['tile_over_peak_wavelength']:.1f} peak wavelengths across)"
    )
    lines.append(
        f"captured: {tile['captured_variance_share'] * 100:.1f} % of the sea's variance "
        f"({tile['unresolved_short_wave_share'] * 100:.1f} % is in waves shorter than "
        f"{tile['shortest_wavelength_m']:.2f} m, below the tile's resolution)"
    )
    lines.append(
        f"height: Hs {report['total']['hs_m']:.2f} m asked, {tile['realised_hs_m']:.2f} m in this tile "
        f"(seed {tile['seed']}, wave heights {tile['wave_heights'].replace('_', ' ')})"
    )
    lines.append(
        f"folding: {report['folded_surface_share'] * 100:.2f} % of the surface at lateral factor "
        f"{report['lateral_factor']:g}"
    )
    lines.append(_foam_line(report))
    return "\n".join(lines)


def _foam_line(report: dict[str, Any]) -> str:
    threshold = report["fold_threshold"]
    shown = f"foam above 0.5 on {report['foam_surface_share'] * 100:.2f} % of the surface"
    if report["whitecap_coverage"] is None:
        return f"foam: {shown} (fold threshold {threshold:g} set by the preset)"
    if threshold is None:
        return "foam: none (no wind-driven component, or no lateral displacement, to make whitecaps)"
    return (
        f"foam: {shown}; the wind calls for whitecaps on {report['whitecap_coverage'] * 100:.2f} % "
        f"(Monahan & O'Muircheartaigh 1980; fold threshold {threshold:.3f})"
    )
