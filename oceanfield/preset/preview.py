"""One picture of a preset to look at before rendering: ``oceanfield preview``.

Knows nothing of render jobs or map files.

Four panels: the surface of one frame shaded from its normals under a sky and a sun; the
height map; the frequency spectrum S(ω) of each component and the total, with the band the
tile carries marked; and the directional distribution of the energy.
"""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np
from numpy.typing import NDArray

__all__ = ["shade", "write_preview"]

# Shading colours (linear RGB, demo look, not measured): deep water, sky, sun.
_WATER = np.array([0.02, 0.08, 0.12])
_SKY = np.array([0.55, 0.68, 0.80])
_FOAM = np.array([0.90, 0.92, 0.93])
_SUN_DIRECTION = np.array([0.0, 0.94, 0.34])  # low sun ahead of the viewer: glitter path
_VIEW_DIRECTION = np.array([0.0, -0.87, 0.50])  # a camera 30° above the horizon looking toward +y
_WATER_REFLECTANCE = 0.02  # Fresnel reflectance of water at normal incidence, (n−1)²/(n+1)², n = 1.33


def shade(normal: NDArray[np.float32], foam: NDArray[np.float32] | None = None) -> NDArray[np.float64]:
    """An RGB picture (0…1) of a surface from its unit normals: sky reflection, sun, foam.

    Schlick's approximation of the Fresnel reflectance (Schlick 1994, "An inexpensive BRDF
    model for physically-based rendering") mixes the water colour with the sky; a narrow
    Phong lobe adds the sun's glitter. Good enough to judge the look of a sea, not a render.
    """
    n = np.asarray(normal, dtype=np.float64)
    view = _VIEW_DIRECTION / np.linalg.norm(_VIEW_DIRECTION)
    sun = _SUN_DIRECTION / np.linalg.norm(_SUN_DIRECTION)
    cos_view = np.clip(n @ view, 0.0, 1.0)
    fresnel = _WATER_REFLECTANCE + (1.0 - _WATER_REFLECTANCE) * (1.0 - cos_view) ** 5
    reflected = 2.0 * (n @ view)[..., None] * n - view
    glitter = np.clip(reflected @ sun, 0.0, 1.0) ** 200
    colour = (1.0 - fresnel)[..., None] * _WATER + fresnel[..., None] * _SKY + glitter[..., None]
    if foam is not None:
        f = np.clip(np.asarray(foam, dtype=np.float64), 0.0, 1.0)[..., None]
        colour = (1.0 - f) * colour + f * _FOAM
    # display encoding: a plain 1/2.2 gamma
    return np.clip(colour, 0.0, 1.0) ** (1.0 / 2.2)


def write_preview(preset, *, frame: int | None = None, out: str | Path | None = None) -> Path:
    """Write the preview PNG of a resolved preset and return its path.

    ``frame`` defaults to the preset's first frame; ``out`` to
    ``renders/<preset>_preview.png``.
    """
    import matplotlib
    import matplotlib.ticker

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt

    from ..io.atomic import atomic_output
    from .schema import to_sea_state
    from ..surface.synth import Ocean

    frame = preset.time.first_frame if frame is None else frame
    if isinstance(frame, bool) or not isinstance(frame, int):
        raise ValueError(f"--frame: {frame!r} is not allowed; allowed: an integer frame number")
    path = Path(out) if out is not None else Path("renders") / f"{preset.name or 'preset'}_preview.png"
    if path.suffix.lower() != ".png":
        raise ValueError(f"--out: {str(path)!r} is not allowed; allowed: a file name ending in .png")
    if out is None:  # the default folder is ours to make, as render makes its own
        path.parent.mkdir(parents=True, exist_ok=True)
    if not path.parent.is_dir():
        raise ValueError(f"--out: folder {str(path.parent)!r} does not exist; allowed: a PNG path in an existing folder")

    sea = to_sea_state(preset)
    ocean = Ocean.from_preset(preset, velocity=False)
    t = preset.time.frame_time(frame)
    fields = ocean.frame(t)
    stats = sea.statistics()
    size = preset.tile.size_m
    extent = (0.0, size, 0.0, size)

    figure = plt.figure(figsize=(13, 10), dpi=100)
    figure.suptitle(
        f"{preset.name}: {preset.description}\nframe {frame} (t = {t:.2f} s), Hs {stats.hs:.2f} m, "
        f"Tp {stats.tp:.2f} s, peak wavelength {stats.peak_wavelength:.1f} m, tile {size:g} m at "
        f"{preset.tile.resolution}²",
        fontsize=10,
    )
    shaded_axes = figure.add_subplot(2, 2, 1)
    shaded_axes.imshow(shade(fields.normal, fields.foam), origin="lower", extent=extent, interpolation="bilinear")
    shaded_axes.set_title("shaded from the normals (camera 30° up, looking toward +y)", fontsize=10)
    shaded_axes.set_xlabel("x (m)")
    shaded_axes.set_ylabel("y (m)")

    height_axes = figure.add_subplot(2, 2, 2)
    limit = float(np.max(np.abs(fields.height))) or 1.0
    image = height_axes.imshow(fields.height, origin="lower", extent=extent, cmap="RdBu_r", vmin=-limit, vmax=limit)
    figure.colorbar(image, ax=height_axes, label="height (m)")
    height_axes.set_title("height")
    height_axes.set_xlabel("x (m)")

    spectrum_axes = figure.add_subplot(2, 2, 3)
    peaks = [c.peak_frequency for c in sea.components]
    omega = np.geomspace(min(peaks) * 0.3, max(peaks) * 8.0, 600)
    for index, settings in enumerate(preset.sea.components):
        spectrum_axes.plot(omega, sea.component_spectrum(index, omega), lw=1.2, label=settings.label or settings.spectrum)
    if len(sea.components) > 1:
        spectrum_axes.plot(omega, sea.frequency_spectrum(omega), "k", lw=1.8, label="total")
    low, high = float(sea.angular_frequency(ocean.tile.dk)), float(sea.angular_frequency(ocean.tile.nyquist))
    spectrum_axes.axvspan(low, high, color="0.9", zorder=0, label="band the tile carries")
    spectrum_axes.set_xscale("log")
    spectrum_axes.xaxis.set_minor_formatter(matplotlib.ticker.NullFormatter())
    spectrum_axes.set_yscale("log")
    top = float(sea.frequency_spectrum(omega).max())
    spectrum_axes.set_ylim(top * 1e-5, top * 3.0)
    spectrum_axes.set_xlim(omega[0], omega[-1])
    spectrum_axes.set_xlabel("angular frequency ω (rad/s)")
    spectrum_axes.set_ylabel("S(ω) (m²·s/rad)")
    spectrum_axes.set_title("frequency spectrum")
    spectrum_axes.legend(fontsize=8)

    polar_axes = figure.add_subplot(2, 2, 4, projection="polar")
    theta = np.linspace(-math.pi, math.pi, 721)
    weights = np.zeros_like(theta)
    grid = np.geomspace(min(peaks) * 0.3, max(peaks) * 8.0, 300)
    for component in sea.components:
        index = sea.components.index(component)
        density = sea.component_spectrum(index, grid)
        spread = component.directional_density(theta[:, None], grid[None, :], sea.gravity)
        weights += np.trapezoid(spread * density[None, :], grid, axis=1)
    polar_axes.plot(theta, weights / stats.m0)
    polar_axes.fill(theta, weights / stats.m0, alpha=0.3)
    polar_axes.set_title("direction of travel (energy per radian, share of total)", fontsize=9)

    figure.tight_layout()
    with atomic_output(path) as temporary:
        figure.savefig(temporary, format="png")
    plt.close(figure)
    return path
