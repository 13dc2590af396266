"""What a preset's sea looks like in numbers: the report behind ``oceanfield stats``.

Knows nothing of rendering or files.

Per component and in total: significant wave height, peak and mean periods, peak
wavelength and phase speed, significant steepness, the equivalent Beaufort force; then
what the tile captures (the share of the sea's variance the lattice carries) and how much
of the surface folds.
"""

from __future__ import annotations

import math
from typing import Any

import numpy as np

__all__ = ["sea_report", "format_sea_report", "fold_fraction", "fold_warning"]

_FOLD_SAMPLES = 4  # frames spread over a peak period, averaged for the folded fraction
#: Folded share above which a preset draws a warning (common practice: beyond about a tenth
#: the surface reads as torn rather than as sharp crests).
MAX_FOLDED_SHARE = 0.10


def fold_fraction(ocean, *, times: list[float] | None = None) -> float:
    """Share of the surface whose Jacobian is negative (folded), averaged over ``times``.

    By default a few frames spread over one peak period of the sea.
    """
    if times is None:
        period = ocean.sea_state.statistics().tp
        times = [period * i / _FOLD_SAMPLES for i in range(_FOLD_SAMPLES)]
    buffer = ocean.new_buffer()
    folded = [float(np.mean(ocean.frame(t, buffer=buffer).jacobian < 0.0)) for t in times]
    return float(np.mean(folded))


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
        },
        "folded_surface_share": fold_fraction(ocean),
        "lateral_factor": preset.surface.lateral_factor,
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
        f"folding: {report['folded_surface_share'] * 100:.2f} % of the surface at lateral factor "
        f"{report['lateral_factor']:g}"
    )
    return "\n".join(lines)
