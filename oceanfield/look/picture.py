"""The look: a preset's sea seen from a camera, lit by a clear sky and the sun, as a still
(PNG with a caption, and a linear EXR beside it) or a flipbook.

Knows nothing of render jobs or map files: a preset and a camera in, pictures out.

What a pixel holds. The ray from the camera meets the displaced sea (``_kernels``),
sampled from a pyramid of the frame's height and slopes at the pixel's footprint
(``pyramid``). The sea's radiance there is the sky mirrored with water's Fresnel
reflectance, the sun's glitter from the slopes, and the light from the water body,
under the foam's white; the sky above the horizon is the Preetham model with the sun's
disc (``sky``); the air between fades the sea toward the horizon's sky (Koschmieder's
law). The slopes the footprint averages away, and those shorter than the
finest texel (the Cox & Munk 1954 mean-square slope for the preset's wind, less what the
tile holds), widen the glitter as roughness: the glitter keeps its width at any distance.

The Earth is a sphere of radius 6371 km: the horizon dips arccos(R/(R + h)) below the
horizontal (0.10° at 10 m), and the sea at distance tilts away from the camera.

Exposure: a grey card of 18 % under the sea's downwelling light is 0.18 in the EXR
(scene-linear sRGB primaries), times 2^exposure. The PNG is that through a soft
highlight curve and the sRGB transfer function.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from pathlib import Path

import numpy as np
from numpy.typing import NDArray

from .camera import Camera
from .optics import EARTH_RADIUS, SUN_ANGULAR_RADIUS, WATER_REFRACTIVE_INDEX, cox_munk_slope_variance
from .pyramid import build_pyramid
from .sky import Sky

__all__ = ["DEEP_WATER_REFLECTANCE", "FOAM_ALBEDO", "LookImage", "Look", "render_pyramid", "grey_card", "tone_map",
           "unresolved_slopes", "extra_slope_variance"]

#: Remote-sensing reflectance of clear deep ocean water, sr⁻¹, for the sRGB channels (red,
#: green, blue): the water-leaving radiance over the downwelling irradiance. Typical of
#: open ocean (Mobley 1994, *Light and Water*, ch. 11, and ocean-colour climatologies near
#: 0.006 at 440 nm, 0.002 at 550 nm, under 0.0005 at 620 nm; from memory): a deep blue.
DEEP_WATER_REFLECTANCE = (0.0004, 0.0022, 0.0060)

#: Diffuse albedo of fresh foam (common practice: 0.5–0.8 for dense fresh whitecaps;
#: aged, patchy foam averages lower, Koepke 1984, Appl. Opt. 23, 1816: effective 0.22 of
#: the covered area, from memory).
FOAM_ALBEDO = 0.6

_HIGHLIGHT_WHITE = 8.0  # linear value the soft highlight curve maps to white (common practice)
_CAPTION_ROWS_PER_LINE = 16


@dataclass(frozen=True, eq=False)
class LookImage:
    """One frame of the look: linear radiance and where the sea is."""

    radiance: NDArray[np.float32]  # (rows, width, 3) linear sRGB, exposed (grey card 0.18)
    distance: NDArray[np.float32]  # (rows, width) metres to the sea along the ray; −1 on the sky
    frame: int
    time: float


def unresolved_slopes(sea_state, resolved: NDArray[np.float64]) -> tuple[NDArray[np.float64], float | None]:
    """The slope covariance (2, 2) the tile cannot hold: Cox & Munk's for the strongest
    wind of the sea's components, aligned with that component's direction (upwind along
    it), less ``resolved``, with negative eigenvalues set to 0; and that wind in m/s
    (None, and no unresolved slopes, for a sea no wind sized).

    Cox & Munk measured the wind at 12.5 m; the presets' wind is at 10 m, about 2 % lower in
    a neutral profile, within the fit's ±0.004 scatter: it is used as it is.
    """
    winds = [(c.wind_speed, c.direction) for c in sea_state.components if getattr(c, "wind_speed", None)]
    if not winds:
        return np.zeros((2, 2)), None
    speed, direction = max(winds)
    upwind, crosswind = cox_munk_slope_variance(speed)
    c, s = math.cos(direction), math.sin(direction)
    rotation = np.array([[c, -s], [s, c]])
    target = rotation @ np.diag([float(upwind), float(crosswind)]) @ rotation.T
    values, vectors = np.linalg.eigh(target - resolved)
    return (vectors * np.maximum(values, 0.0)) @ vectors.T, float(speed)


def grey_card(sky: Sky) -> float:
    """Luminance (kcd/m²) of a white diffuser under the sea's downwelling light, E_d/π."""
    return float(sky.downwelling_irradiance() @ np.array([0.2126, 0.7152, 0.0722])) / math.pi


def render_pyramid(pyramid, camera: Camera, sky: Sky, *, unresolved: NDArray[np.float64] | None = None,
                   earth_radius: float = EARTH_RADIUS, water_reflectance=DEEP_WATER_REFLECTANCE, haze: bool = True
                   ) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
    """(radiance (rows, width, 3) in kcd/m², distance (rows, width) in m, −1 on the sky) of a
    surface pyramid seen by ``camera`` under ``sky``; ``unresolved`` the (2, 2) slope
    covariance shorter than the finest texel (default none); ``haze`` the air's extinction
    and air light between the camera and the sea (`Sky.extinction`), off for clear air."""
    from ._kernels import render_kernel

    unresolved = np.zeros((2, 2)) if unresolved is None else np.asarray(unresolved, dtype=np.float64)
    forward, right, up = camera.basis()
    tan_x, tan_y = camera.tan_half
    downwelling = sky.downwelling_irradiance()
    image = np.empty((camera.rows, camera.width, 3))
    distance = np.empty((camera.rows, camera.width))
    inv_radius = 0.0 if math.isinf(earth_radius) else 1.0 / earth_radius
    render_kernel(pyramid.data, pyramid.offset, pyramid.side, pyramid.tile, pyramid.levels.astype(np.float64),
                  pyramid.low, pyramid.high, np.array([camera.x, camera.y, camera.height]), forward, right, up,
                  tan_x, tan_y, camera.width, camera.rows, inv_radius, sky.kernel_table(), sky.sun_direction,
                  sky.sun_radiance(), math.cos(SUN_ANGULAR_RADIUS), sky.sun_irradiance(),
                  np.asarray(water_reflectance, dtype=np.float64) * downwelling, FOAM_ALBEDO * downwelling / math.pi,
                  np.array([unresolved[0, 0], unresolved[1, 1], unresolved[0, 1]]), extra_slope_variance(camera),
                  WATER_REFRACTIVE_INDEX, sky.extinction() if haze else np.zeros(3), image, distance)
    return image, distance


def extra_slope_variance(camera: Camera) -> float:
    """The sun's disc and a pixel's own spread as a slope variance per axis (a facet
    tilted by δ turns the reflection by 2δ): a disc of radius a/2 in slope (a²/16) and a
    box of width α/2 (α²/48), α the pixel's angle."""
    pixel_angle = 2.0 * camera.tan_half[0] / camera.width
    return SUN_ANGULAR_RADIUS**2 / 16.0 + (pixel_angle / 2.0) ** 2 / 12.0


def tone_map(radiance: NDArray, *, white: float = _HIGHLIGHT_WHITE) -> NDArray[np.float64]:
    """Display values 0 … 1 of exposed linear radiance: x (1 + x / w²) / (1 + x) per channel
    (Reinhard et al. 2002, "Photographic tone reproduction for digital images", eq. 4),
    then the sRGB transfer function (IEC 61966-2-1)."""
    x = np.maximum(np.asarray(radiance, dtype=np.float64), 0.0)
    mapped = np.clip(x * (1.0 + x / (white * white)) / (1.0 + x), 0.0, 1.0)
    return np.where(mapped <= 0.0031308, 12.92 * mapped, 1.055 * mapped ** (1.0 / 2.4) - 0.055)


class Look:
    """A preset's sea, a camera and a sky, ready to render frames.

    Parameters
    ----------
    preset : Preset
        A resolved preset (``oceanfield.preset.load_preset``); banded presets render their
        band stack, every band sampled with its own tile.
    camera : Camera
    sky : Sky
    exposure : float
        Stops above the grey-card exposure.
    earth_radius : float
        Metres; ``math.inf`` for a flat sea (horizon at eye level).
    water_reflectance : (3,) floats
        The water body's remote-sensing reflectance, sr⁻¹ (`DEEP_WATER_REFLECTANCE`).
    haze : bool
        The air between the camera and the sea dims it toward the horizon's sky
        (Koschmieder's law with `Sky.extinction`); False for clear air.
    """

    def __init__(self, preset, camera: Camera, sky: Sky, *, exposure: float = 0.0,
                 earth_radius: float = EARTH_RADIUS, water_reflectance=DEEP_WATER_REFLECTANCE,
                 haze: bool = True) -> None:
        self.preset, self.camera, self.sky = preset, camera, sky
        self.haze = bool(haze)
        self.exposure = float(exposure)
        self.earth_radius = float(earth_radius)
        self.water_reflectance = np.asarray(water_reflectance, dtype=np.float64)
        if preset.bands.active:
            from ..preset.banding import band_stack

            self._stack = band_stack(preset, foam_memory=None)
            self._ocean = None
            self.sea_state = self._stack.sea_state
        else:
            from ..surface.synth import Ocean

            self._stack = None
            self._ocean = Ocean.from_preset(preset, velocity=False)
            self.sea_state = self._ocean.sea_state
        #: wall seconds spent, over every frame rendered: the frames' fields, their pyramids,
        #: the march and shading (for the benchmark)
        self.seconds = {"synthesis": 0.0, "pyramid": 0.0, "shading": 0.0}
        self.wind_speed: float | None = None

    def _fields(self, t: float) -> list:
        if self._stack is not None:
            return [(fields, band.tile.size) for fields, band in zip(self._stack.frames(t), self._stack.bands)]
        return [(self._ocean.frame(t), self._ocean.tile.size)]

    def render(self, frame: int | None = None) -> LookImage:
        """One frame (default: the preset's first) as a :class:`LookImage`."""
        import time

        frame = self.preset.time.first_frame if frame is None else int(frame)
        t = self.preset.time.frame_time(frame)
        started = time.perf_counter()
        fields = self._fields(t)
        built = time.perf_counter()
        pyramid = build_pyramid(fields)
        self.seconds["synthesis"] += built - started
        self.seconds["pyramid"] += time.perf_counter() - built
        started = time.perf_counter()
        unresolved, self.wind_speed = unresolved_slopes(self.sea_state, pyramid.resolved_variance)
        image, distance = render_pyramid(pyramid, self.camera, self.sky, unresolved=unresolved,
                                         earth_radius=self.earth_radius, water_reflectance=self.water_reflectance,
                                         haze=self.haze)
        scale = 2.0**self.exposure / grey_card(self.sky)
        self.seconds["shading"] += time.perf_counter() - started
        return LookImage((image * scale).astype(np.float32), distance.astype(np.float32), frame, t)

    def caption(self, image: LookImage) -> list[str]:
        """The picture's caption: camera, sun, Earth model and the sea, one line each."""
        from ..preset.preview import length_text

        camera, sky, stats = self.camera, self.sky, self.sea_state.statistics()
        wind = "no wind (glitter from the tile's slopes only)" if self.wind_speed is None else \
            f"wind {self.wind_speed:.1f} m/s (Cox & Munk slopes beyond the tile)"
        earth = "flat sea" if math.isinf(self.earth_radius) else f"Earth R {self.earth_radius / 1000:.0f} km"
        if not self.haze:
            earth += ", clear air"
        return [
            f"{self.preset.name}  frame {image.frame} (t {image.time:.2f} s)  Hs {length_text(stats.hs)}  "
            f"Tp {stats.tp:.3g} s  {wind}",
            f"camera {camera.height:g} m up, heading {math.degrees(camera.heading) % 360:.0f}°, pitch "
            f"{math.degrees(camera.pitch):+.1f}°, fov {math.degrees(camera.fov):.0f}°  sun elevation "
            f"{math.degrees(sky.sun_elevation):.1f}°, azimuth {math.degrees(sky.sun_azimuth) % 360:.0f}°, "
            f"turbidity {sky.turbidity:g}  {earth}  exposure {self.exposure:+g} EV",
        ]

    def picture(self, image: LookImage) -> NDArray[np.uint8]:
        """The 8-bit sRGB picture with its caption strip below (rows + caption, width, 3)."""
        pixels = np.round(tone_map(image.radiance) * 255.0).astype(np.uint8)
        return np.concatenate([pixels, caption_strip(self.caption(image), self.camera.width)], axis=0)


def caption_strip(lines: list[str], width: int) -> NDArray[np.uint8]:
    """``lines`` of text drawn white on black, ``width`` pixels wide (matplotlib, Agg)."""
    import matplotlib

    matplotlib.use("Agg")
    from matplotlib.figure import Figure
    from matplotlib.backends.backend_agg import FigureCanvasAgg

    dpi = 100.0
    rows = _CAPTION_ROWS_PER_LINE * len(lines) + 8
    figure = Figure(figsize=(width / dpi, rows / dpi), dpi=dpi, facecolor="black")
    canvas = FigureCanvasAgg(figure)
    size = max(3.0, min(8.0, width / 150.0))
    for i, line in enumerate(lines):
        figure.text(4.0 / width, 1.0 - (4.0 + (i + 0.75) * _CAPTION_ROWS_PER_LINE) / rows, line, color="white",
                    fontsize=size, family="monospace", va="center", ha="left")
    canvas.draw()
    return np.asarray(canvas.buffer_rgba())[..., :3].copy()
