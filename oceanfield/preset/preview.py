"""Pictures of a preset to look at before rendering: ``oceanfield preview``.

Knows nothing of render jobs or map files.

One picture of one frame, six panels: a top view of the surface shaded from its normals
(of a window four mean wavelengths wide, so that a large tile still reads as waves, not
as noise); the height map; the foam map; the frequency spectrum of each component and the
total against period (s) with wavelength (m) above, the band the tile carries marked; the
directional distribution of the energy; and the sea's figures. Lengths are written in the
unit that suits the sea (mm, cm or m). ``preview --frames A-B`` writes the top view as a
flipbook instead, a GIF or an MP4 through imageio, to judge the look in motion.

Image orientation (as in the maps): row 0 of a map is y = 0. The pictures here are drawn
with y up (``origin="lower"``), as a plan of the tile seen from above with x to the right.
"""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np
from numpy.typing import NDArray

__all__ = ["shade", "shade_top", "length_text", "preview_figure", "write_preview", "write_flipbook", "video_options",
           "save_flipbook"]

# Shading colours (linear RGB, demo look, not measured): deep water, sky, sun.
_WATER = np.array([0.02, 0.08, 0.12])
_SKY = np.array([0.55, 0.68, 0.80])
_FOAM = np.array([0.90, 0.92, 0.93])
_SUN_DIRECTION = np.array([0.0, 0.94, 0.34])  # low sun ahead of the viewer: glitter path
_VIEW_DIRECTION = np.array([0.0, -0.87, 0.50])  # a camera 30° above the horizon looking toward +y
_PREVIEW_COMPOSITE_TEXELS = 768  # the composite of a banded preset, summed on this grid
_WATER_REFLECTANCE = 0.02  # Fresnel reflectance of water at normal incidence, (n−1)²/(n+1)², n = 1.33
_SUN_ELEVATION_DEG = 25.0  # the top view's low sun (demo look): slopes facing it light up
#: The top view shows at most this many mean wavelengths (of the mean period Tm02) across:
#: the waves that set the look of the surface, the short wind sea over a long swell too.
_WINDOW_WAVELENGTHS = 4.0
_CONTRAST_PERCENTILES = (1.0, 99.0)  # the top view's shading stretched between these
_FLIPBOOK_MIN_PIXELS = 384  # a flipbook's frames are enlarged (whole texels) to at least this
_VIDEO_SUFFIXES = (".gif", ".mp4")


def shade(normal: NDArray[np.float32], foam: NDArray[np.float32] | None = None) -> NDArray[np.float64]:
    """An RGB picture (0…1) of a surface from its unit normals: sky reflection, sun, foam.

    Schlick's approximation of the Fresnel reflectance (Schlick 1994, "An inexpensive BRDF
    model for physically-based rendering") mixes the water colour with the sky; a narrow
    Phong lobe adds the sun's glitter. Seen by a camera 30° above the horizon looking
    toward +y. Good enough to judge the look of a sea, not a render.
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


def shade_top(
    normal: NDArray[np.float32],
    foam: NDArray[np.float32] | None = None,
    *,
    sun_azimuth: float = 0.0,
    stretch: tuple[float, float] | None = None,
) -> NDArray[np.float64]:
    """A top view (0…1 RGB) of a surface lit by a low sun: relief shading, foam in white.

    Lambert's cosine n·s with the sun ``_SUN_ELEVATION_DEG`` above the horizon at
    ``sun_azimuth`` (radians, counter-clockwise from +x), stretched between ``stretch``
    (low, high) of n·s, by default its 1st and 99th percentiles, so the waves read
    whatever their steepness; coloured from deep water to sky.
    """
    n = np.asarray(normal, dtype=np.float64)
    elevation = math.radians(_SUN_ELEVATION_DEG)
    sun = np.array([math.cos(elevation) * math.cos(sun_azimuth), math.cos(elevation) * math.sin(sun_azimuth),
                    math.sin(elevation)])
    light = n @ sun
    low, high = stretch if stretch is not None else np.percentile(light, _CONTRAST_PERCENTILES)
    level = np.clip((light - low) / max(high - low, 1e-12), 0.0, 1.0)[..., None]
    colour = (1.0 - level) * _WATER + level * _SKY
    if foam is not None:
        f = np.clip(np.asarray(foam, dtype=np.float64), 0.0, 1.0)[..., None]
        colour = (1.0 - f) * colour + f * _FOAM
    return np.clip(colour, 0.0, 1.0) ** (1.0 / 2.2)


def length_text(metres: float, *, digits: int = 3) -> str:
    """A length in the unit that suits it: ``"12 mm"``, ``"3.4 cm"``, ``"2.17 m"``, ``"1.2 km"``."""
    size = abs(metres)
    if size >= 10_000.0:
        value, unit = metres / 1000.0, "km"
    elif size >= 1.0 or size == 0.0:
        value, unit = metres, "m"
    elif size >= 0.01:
        value, unit = metres * 100.0, "cm"
    else:
        value, unit = metres * 1000.0, "mm"
    shown = f"{value:.0f}" if abs(value) >= 10**digits else f"{value:.{digits}g}"
    return f"{shown} {unit}"


def _unit_for(metres: float) -> tuple[str, float]:
    """(unit, factor from metres) of the unit `length_text` would pick for ``metres``."""
    unit = length_text(metres).split()[-1]
    return unit, {"km": 1e-3, "m": 1.0, "cm": 100.0, "mm": 1000.0}[unit]


def _window(preset, sea) -> tuple[int, float]:
    """(texels, metres) across the top view: the tile, or a few mean wavelengths of it."""
    size, n = preset.tile.size_m, preset.tile.resolution
    mean_wavelength = 2.0 * math.pi / float(sea.wavenumber(2.0 * math.pi / sea.statistics().tm02))
    texels = n
    if size > _WINDOW_WAVELENGTHS * mean_wavelength:
        texels = max(16, int(round(_WINDOW_WAVELENGTHS * mean_wavelength / size * n)))
    return texels, texels * size / n


def _out_path(preset, out: str | Path | None, suffixes: tuple[str, ...], default_suffix: str) -> Path:
    path = Path(out) if out is not None else Path("renders") / f"{preset.name or 'preset'}_preview{default_suffix}"
    if path.suffix.lower() not in suffixes:
        allowed = " or ".join(suffixes)
        raise ValueError(f"--out: {str(path)!r} is not allowed; allowed: a file name ending in {allowed}")
    from ..io.atomic import prepare_option_output

    return prepare_option_output("--out", path)  # its folder made if missing, as the other commands do


def _checked_frame(frame) -> int:
    if isinstance(frame, bool) or not isinstance(frame, int):
        raise ValueError(f"--frame: {frame!r} is not allowed; allowed: an integer frame number")
    return frame


def write_preview(preset, *, frame: int | None = None, out: str | Path | None = None) -> Path:
    """Write the preview PNG of a resolved preset and return its path.

    ``frame`` defaults to the preset's first frame; ``out`` to
    ``renders/<preset>_preview.png`` (the folder is made when it is the default).
    """
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt

    from ..io.atomic import atomic_output

    frame = _checked_frame(preset.time.first_frame if frame is None else frame)
    path = _out_path(preset, out, (".png",), ".png")
    figure = preview_figure(preset, frame=frame)
    with atomic_output(path) as temporary:
        figure.savefig(temporary, format="png")
    plt.close(figure)
    return path


def preview_figure(preset, *, frame: int | None = None):
    """The preview picture as a matplotlib Figure (for `write_preview` and for tests)."""
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt

    from .schema import to_sea_state
    from ..surface.synth import Ocean

    frame = _checked_frame(preset.time.first_frame if frame is None else frame)
    sea = to_sea_state(preset)
    t = preset.time.frame_time(frame)
    stats = sea.statistics()
    if preset.bands.active:
        # The bands summed over the declared reach, where repetition would show.
        from .banding import band_stack

        stack = band_stack(preset, foam_memory=0.0)
        size = preset.bands.reach_m or preset.bands.composite_extent_m or stack.bands[0].tile.size
        fields = stack.composite(t, extent=size, resolution=_PREVIEW_COMPOSITE_TEXELS)
        carried = (stack.bands[0].tile.dk, max(min(b.k_high, b.tile.nyquist) for b in stack.bands),
                   "periods the bands carry")
        what = f"{len(stack.bands)} bands summed over {length_text(size)} at {_PREVIEW_COMPOSITE_TEXELS}²"
        texels, across = _PREVIEW_COMPOSITE_TEXELS, size
        part = f"the bands summed over {length_text(size)}"
    else:
        ocean = Ocean.from_preset(preset, velocity=False)
        fields = ocean.frame(t)
        size = preset.tile.size_m
        carried = (ocean.tile.dk, ocean.tile.nyquist, "periods the tile carries")
        what = f"tile {length_text(size)} at {preset.tile.resolution}²"
        texels, across = _window(preset, sea)
        part = "the whole tile" if texels == preset.tile.resolution else f"a {length_text(across)} corner of the tile"
    unit, factor = _unit_for(size)
    extent = (0.0, size * factor, 0.0, size * factor)

    columns = 4 if preset.vessels else 3  # a fourth column for the wake (preset.vessels)
    figure = plt.figure(figsize=(16 + 5 * (columns - 3), 10), dpi=100)
    figure.suptitle(
        f"{preset.name}: {preset.description}\nframe {frame} (t = {t:.2f} s), Hs {length_text(stats.hs)}, "
        f"Tp {stats.tp:.3g} s, peak wavelength {length_text(stats.peak_wavelength)}, {what}",
        fontsize=10,
    )

    top_axes = figure.add_subplot(2, columns, 1)
    picture = shade_top(fields.normal[:texels, :texels], fields.foam[:texels, :texels],
                        sun_azimuth=stats.mean_direction + math.pi)
    top_axes.imshow(picture, origin="lower", extent=(0.0, across * factor, 0.0, across * factor),
                    interpolation="bilinear")
    top_axes.set_title(f"top view, low sun facing the waves: {part}", fontsize=9)
    top_axes.set_xlabel(f"x ({unit})")
    top_axes.set_ylabel(f"y ({unit})")

    height_axes = figure.add_subplot(2, columns, 2)
    limit = float(np.max(np.abs(fields.height))) or 1.0
    h_unit, h_factor = _unit_for(limit)
    image = height_axes.imshow(fields.height * h_factor, origin="lower", extent=extent, cmap="RdBu_r",
                               vmin=-limit * h_factor, vmax=limit * h_factor)
    figure.colorbar(image, ax=height_axes, label=f"height ({h_unit})")
    height_axes.set_title("height, top view", fontsize=10)
    height_axes.set_xlabel(f"x ({unit})")

    foam_axes = figure.add_subplot(2, columns, 3)
    image = foam_axes.imshow(fields.foam, origin="lower", extent=extent, cmap="Greys_r", vmin=0.0, vmax=1.0)
    figure.colorbar(image, ax=foam_axes, label="foam (0–1)")
    covered = float(np.mean(fields.foam > 0.5))
    foam_axes.set_title(f"foam, top view:\n{covered:.1%} of the surface above 0.5", fontsize=10)
    foam_axes.set_xlabel(f"x ({unit})")

    _spectrum_panel(figure.add_subplot(2, columns, columns + 1), preset, sea, carried)
    _direction_panel(figure.add_subplot(2, columns, columns + 2, projection="polar"), sea, stats)
    _figures_panel(figure.add_subplot(2, columns, columns + 3), preset, stats)
    if preset.vessels:
        _wake_panels(figure, figure.add_subplot(2, columns, 4), figure.add_subplot(2, columns, 2 * columns),
                     preset, t, None if preset.bands.active else fields)

    figure.tight_layout()
    return figure


def _wake_panels(figure, height_axes, foam_axes, preset, t: float, sea_fields) -> None:
    """The wake region: the sea's height (the tile repeated, nearest texel) plus the wake's,
    and the wake alone with its foam outlined, each with the courses drawn and the vessels
    where they are at t."""
    from .vessels import preset_wake

    wake = preset_wake(preset)
    fields = wake.frame(t)
    region = wake.region
    n = region.resolution
    height = fields.height.astype(np.float64)
    what = "wake"
    if sea_fields is not None:  # the tiled sea under it, at the region's texels
        height = height + sea_height_over_region(sea_fields.height, preset.tile.size_m, origin_x=region.origin_x,
                                                 origin_y=region.origin_y, spacing=region.spacing, count=n)
        what = "sea + wake"
    unit, factor = _unit_for(region.size)
    extent = tuple(v * factor for v in (region.origin_x, region.origin_x + region.size,
                                        region.origin_y, region.origin_y + region.size))
    limit = float(np.max(np.abs(height))) or 1.0
    h_unit, h_factor = _unit_for(limit)
    image = height_axes.imshow(height * h_factor, origin="lower", extent=extent, cmap="RdBu_r",
                               vmin=-limit * h_factor, vmax=limit * h_factor)
    figure.colorbar(image, ax=height_axes, label=f"height ({h_unit})")
    height_axes.set_title(f"{what} height\nover the wake region", fontsize=10)
    # the near field peaks at the hulls: scale to the wake's body (99.5th percentile) so the
    # Kelvin pattern behind them reads
    alone = float(np.percentile(np.abs(fields.height), 99.5)) or float(np.max(np.abs(fields.height))) or 1.0
    w_unit, w_factor = _unit_for(alone)
    image = foam_axes.imshow(fields.height * w_factor, origin="lower", extent=extent, cmap="RdBu_r",
                             vmin=-alone * w_factor, vmax=alone * w_factor)
    figure.colorbar(image, ax=foam_axes, label=f"wake height ({w_unit})")
    if float(fields.foam.max()) > 0.25:
        foam_axes.contour(fields.foam, levels=[0.25], extent=extent, colors="0.3", linewidths=0.6)
    foam_axes.set_title("the wake alone, foam (grey outline),\ncourses and vessels", fontsize=10)
    for axes in (height_axes, foam_axes):
        for vessel, (hull, course) in zip(preset.vessels, wake.vessels):
            axes.plot(course.x * factor, course.y * factor, lw=0.8, color="gold")
            x, y = course.position(np.array([t]))
            axes.plot(x * factor, y * factor, "o", ms=4, color="orange")
            axes.annotate(vessel.name, (float(x[0]) * factor, float(y[0]) * factor), fontsize=7, color="orange",
                          xytext=(4, 4), textcoords="offset points")
        axes.set_xlim(extent[0], extent[1])
        axes.set_ylim(extent[2], extent[3])
        axes.set_xlabel(f"x ({unit})")
        axes.set_ylabel(f"y ({unit})")


def sea_height_over_region(height: NDArray, tile_size: float, *, origin_x: float, origin_y: float,
                           spacing: float, count: int) -> NDArray[np.float64]:
    """The tile's height (rows along y) repeated over a ``count``² region of ``spacing`` m
    texels from (``origin_x``, ``origin_y``): the waves shorter than two region texels are
    removed first (a box cut at the region's Nyquist wavenumber π/spacing), so a region
    coarser than the tile shows the tile's longer waves instead of aliases of its short ones;
    each region texel then takes the nearest tile texel."""
    texels = height.shape[0]
    k = 2.0 * np.pi * np.fft.fftfreq(texels, d=tile_size / texels)
    keep = np.abs(k) < np.pi / spacing
    smooth = np.fft.ifft2(np.fft.fft2(height) * (keep[:, None] & keep[None, :])).real
    cells = np.arange(count) * spacing
    ix = np.rint((origin_x + cells) / (tile_size / texels)).astype(np.int64) % texels
    iy = np.rint((origin_y + cells) / (tile_size / texels)).astype(np.int64) % texels
    return smooth[iy[:, None], ix[None, :]]


def _spectrum_panel(axes, preset, sea, carried) -> None:
    """S(ω) of each component and the total, against period, with wavelength above;
    ``carried`` = (lowest k, highest k, label) of the waves the tile or bands carry."""
    peaks = [c.peak_frequency for c in sea.components]
    omega = np.geomspace(min(peaks) * 0.3, max(peaks) * 8.0, 600)
    period = 2.0 * math.pi / omega
    for index, settings in enumerate(preset.sea.components):
        axes.plot(period, sea.component_spectrum(index, omega), lw=1.2, label=settings.label or settings.spectrum)
    if len(sea.components) > 1:
        axes.plot(period, sea.frequency_spectrum(omega), "k", lw=1.8, label="total")
    longest = 2.0 * math.pi / float(sea.angular_frequency(carried[0]))
    shortest = 2.0 * math.pi / float(sea.angular_frequency(carried[1]))
    axes.axvspan(shortest, longest, color="0.9", zorder=0, label=carried[2])
    axes.set_xscale("log")
    axes.set_yscale("log")
    top = float(sea.frequency_spectrum(omega).max())
    axes.set_ylim(top * 1e-5, top * 3.0)
    axes.set_xlim(period[-1], period[0])
    _round_ticks(axes.xaxis, period[-1], period[0])
    axes.set_xlabel("period (s)")
    axes.set_ylabel("S(ω) (m²·s/rad)")
    axes.set_title("frequency spectrum", fontsize=10)
    axes.legend(fontsize=8)

    def wavelength(t):
        t = np.maximum(np.asarray(t, dtype=float), 1e-9)
        return 2.0 * math.pi / np.maximum(sea.wavenumber(2.0 * math.pi / t), 1e-300)

    def period_of(length):
        length = np.maximum(np.asarray(length, dtype=float), 1e-9)
        return 2.0 * math.pi / np.maximum(sea.angular_frequency(2.0 * math.pi / length), 1e-300)

    above = axes.secondary_xaxis("top", functions=(wavelength, period_of))
    unit, factor = _unit_for(float(wavelength(period[len(period) // 2])))
    low, high = float(wavelength(period[-1])), float(wavelength(period[0]))
    _round_ticks(above.xaxis, low, high, scale=factor)
    above.set_xlabel(f"wavelength ({unit})", fontsize=9)


def _round_ticks(axis, low: float, high: float, *, scale: float = 1.0) -> None:
    """Ticks at round values (1, 2, 5 × 10ⁿ) on a log axis, labelled plainly, in ``scale`` units."""
    import matplotlib.ticker

    values = [m * 10.0**e for e in range(-6, 7) for m in (1, 2, 5) if low <= m * 10.0**e <= high]
    if len(values) > 9:
        values = [v for v in values if f"{v:.0e}"[0] in "15"]
    axis.set_major_locator(matplotlib.ticker.FixedLocator(values))
    axis.set_minor_locator(matplotlib.ticker.NullLocator())
    axis.set_major_formatter(matplotlib.ticker.FuncFormatter(lambda v, _: f"{v * scale:g}"))


def _direction_panel(axes, sea, stats) -> None:
    theta = np.linspace(-math.pi, math.pi, 721)
    weights = np.zeros_like(theta)
    peaks = [c.peak_frequency for c in sea.components]
    grid = np.geomspace(min(peaks) * 0.3, max(peaks) * 8.0, 300)
    for index, component in enumerate(sea.components):
        density = sea.component_spectrum(index, grid)
        spread = component.directional_density(theta[:, None], grid[None, :], sea.gravity)
        weights += np.trapezoid(spread * density[None, :], grid, axis=1)
    axes.plot(theta, weights / stats.m0)
    axes.fill(theta, weights / stats.m0, alpha=0.3)
    axes.set_title("direction of travel (towards; degrees counter-clockwise from +x)", fontsize=9)


def _figures_panel(axes, preset, stats) -> None:
    size, n = preset.tile.size_m, preset.tile.resolution
    rows = [
        ("significant wave height Hs", length_text(stats.hs)),
        ("peak period Tp", f"{stats.tp:.3g} s"),
        ("mean period Tm02", f"{stats.tm02:.3g} s"),
        ("peak wavelength", length_text(stats.peak_wavelength)),
        ("travelling towards", f"{math.degrees(stats.mean_direction) % 360:.0f}°"),
        ("Beaufort (equivalent)", f"{stats.beaufort}"),
        ("tile", f"{length_text(size)} at {n}² ({length_text(size / n)} texels)"),
        ("peak wavelengths across", f"{size / stats.peak_wavelength:.2g}"),
        ("image rows", "row 0 is y = 0 (at the bottom)"),
    ]
    if preset.bands.active:  # the tile section stands for nothing here: say what the bands are
        from .banding import preset_bands

        bands = preset_bands(preset)
        shortest = 2.0 * math.pi / max(min(b.k_high, b.tile.nyquist) for b in bands)
        rows[6:8] = [
            ("bands", f"{len(bands)}: {length_text(bands[0].tile.size)} at {bands[0].tile.resolution}² "
                      f"down to {length_text(bands[-1].tile.size)}"),
            ("waves carried", f"{length_text(bands[0].tile.size)} to {length_text(shortest)}"),
        ]
    axes.axis("off")
    text = "\n".join(f"{name:<28}{value}" for name, value in rows)
    axes.text(0.0, 1.0, text, family="monospace", fontsize=9, va="top", ha="left", transform=axes.transAxes)
    axes.set_title("the sea in figures", fontsize=10)


def write_flipbook(preset, frames, *, out: str | Path | None = None) -> Path:
    """Write the top view of ``frames`` as an animated GIF or MP4 (by ``out``'s suffix).

    Each picture is `shade_top` of the same window as the preview's top view, with one
    contrast stretch for the whole clip (from its first, middle and last frames, so
    brightness does not flicker), enlarged by a
    whole number of pixels per texel to at least ``_FLIPBOOK_MIN_PIXELS``, played at the
    preset's frame rate (a GIF stores delays in hundredths of a second: 24 fps plays at
    25). MP4 needs the ``video`` extra (imageio-ffmpeg). Written atomically.
    """
    from ..surface.synth import Ocean

    frames = [_checked_frame(f) for f in frames]
    if not frames:
        raise ValueError("--frames: no frames to preview; allowed: a range A-B")
    path = _out_path(preset, out, _VIDEO_SUFFIXES, ".gif")
    options = video_options(path, preset.time.fps)

    if preset.bands.active:
        # The bands summed over the reach (exact sums, a few hundred texels a side).
        from .banding import band_stack

        stack = band_stack(preset, foam_memory=0.0)
        stats = stack.sea_state.statistics()
        texels = _FLIPBOOK_MIN_PIXELS
        reach = preset.bands.reach_m or preset.bands.composite_extent_m or stack.bands[0].tile.size

        def lit(frame: int):
            fields = stack.composite(preset.time.frame_time(frame), extent=reach, resolution=texels)
            return fields.normal, fields.foam
    else:
        ocean = Ocean.from_preset(preset, velocity=False)
        stats = ocean.sea_state.statistics()
        texels, _ = _window(preset, ocean.sea_state)
        buffer = ocean.new_buffer()

        def lit(frame: int):
            fields = ocean.frame(preset.time.frame_time(frame), buffer=buffer)
            return fields.normal[:texels, :texels], fields.foam[:texels, :texels]

    sun = stats.mean_direction + math.pi
    elevation = math.radians(_SUN_ELEVATION_DEG)
    sun_vector = np.array([math.cos(elevation) * math.cos(sun), math.cos(elevation) * math.sin(sun),
                           math.sin(elevation)])

    # One stretch for the clip, from its first, middle and last frames: no flicker, and no
    # need to hold every frame's normals.
    samples = sorted({frames[0], frames[len(frames) // 2], frames[-1]})
    light = np.concatenate([(lit(f)[0].astype(np.float64) @ sun_vector).ravel() for f in samples])
    stretch = tuple(np.percentile(light, _CONTRAST_PERCENTILES))
    enlarge = max(1, math.ceil(_FLIPBOOK_MIN_PIXELS / texels))
    enlarge += (texels * enlarge) % 2  # even sides: H.264's 4:2:0 colour needs them
    pictures = []
    for frame in frames:
        normal, foam = lit(frame)
        picture = shade_top(normal, foam, sun_azimuth=sun, stretch=stretch)[::-1]  # y up, as in the preview
        picture = np.round(picture * 255.0).astype(np.uint8)
        pictures.append(np.repeat(np.repeat(picture, enlarge, axis=0), enlarge, axis=1))
    return save_flipbook(path, pictures, options)


def video_options(path: Path, fps: float) -> dict:
    """imageio's options for a flipbook at ``path`` (by its suffix, .gif or .mp4) played at
    ``fps``; MP4 without the video extra is a ValueError naming --out and the extra."""
    if path.suffix.lower() == ".mp4":
        try:
            import imageio_ffmpeg  # noqa: F401
        except ImportError:
            raise ValueError(
                f"--out: {str(path)!r}: writing MP4 needs the video extra (pip install 'oceanfield[video]'); "
                f"a .gif needs nothing more"
            ) from None
        return dict(fps=fps, codec="libx264", macro_block_size=1)
    return dict(duration=1000.0 / fps, loop=0)


def save_flipbook(path: Path, pictures: list, options: dict) -> Path:
    """Write 8-bit RGB ``pictures`` (same shapes) as one animated file, atomically."""
    import imageio.v3 as iio

    from ..io.atomic import atomic_output

    with atomic_output(path) as temporary:
        iio.imwrite(temporary, np.stack(pictures), extension=path.suffix.lower(), **options)
    return path
