"""The look's files: a still as PNG (with its caption) and a linear EXR beside it, or a
flipbook of several frames; the options of ``oceanfield look`` checked into a Look.

Knows nothing of render jobs or map files: it takes a :class:`~oceanfield.look.picture.Look`.

Defaults compose a picture an FX supervisor reads at once: a camera 10 m up looking into
the waves' oncoming direction, 8° down, 60° across; the sun 25° up and 20° to the left
of the view (counter-clockwise), so its glitter path crosses the sea beside the centre.
"""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np

from .camera import Camera
from .optics import EARTH_RADIUS
from .picture import Look
from .sky import Sky

__all__ = ["DEFAULTS", "write_still", "write_look_flipbook", "look_from_arguments", "compile_look_kernels"]

#: The command's defaults (metres, degrees, pixels).
DEFAULTS = dict(camera_height=10.0, pitch=-8.0, fov=60.0, sun_elevation=25.0, sun_from_view=20.0,
                size=(1280, 720), turbidity=3.0)
_STILL_SUFFIXES = (".png",)
_FLIPBOOK_SUFFIXES = (".gif", ".mp4")
_MAX_PIXELS = 8192
_HALF_MAX = 65504.0  # the largest finite half float (IEEE 754 binary16)


def _size(text: str | None) -> tuple[int, int]:
    if text is None:
        return DEFAULTS["size"]
    try:
        width, rows = (int(part) for part in text.lower().split("x"))
    except ValueError:
        width = rows = 0
    if not (16 <= width <= _MAX_PIXELS and 16 <= rows <= _MAX_PIXELS):
        raise ValueError(f"--size: {text!r} is not allowed; allowed: WIDTHxHEIGHT in pixels, each 16 … {_MAX_PIXELS}")
    return width, rows


def _degrees(option: str, value: float | None, default: float, low: float, high: float) -> float:
    value = default if value is None else value
    if not (low <= value <= high) or not math.isfinite(value):
        raise ValueError(f"{option}: {value!r} is not allowed; allowed: {low:g} … {high:g} degrees")
    return value


def look_from_arguments(preset, args) -> Look:
    """The :class:`Look` the command's options describe (each checked, one-line errors)."""
    stats = preset.sea_state().statistics()
    width, rows = _size(args.size)
    height = DEFAULTS["camera_height"] if args.camera_height is None else args.camera_height
    if not (0.0 < height <= 100_000.0) or not math.isfinite(height):
        raise ValueError(f"--camera-height: {height!r} is not allowed; allowed: metres above the mean sea, > 0 and ≤ 100000")
    heading = (math.degrees(stats.mean_direction) + 180.0) if args.heading is None else args.heading
    _degrees("--heading", heading, 0.0, -360.0, 720.0)
    pitch = _degrees("--pitch", args.pitch, DEFAULTS["pitch"], -89.0, 89.0)
    fov = _degrees("--fov", args.fov, DEFAULTS["fov"], 1.0, 150.0)
    elevation = _degrees("--sun-elevation", args.sun_elevation, DEFAULTS["sun_elevation"], 0.5, 90.0)
    azimuth = heading + DEFAULTS["sun_from_view"] if args.sun_azimuth is None else args.sun_azimuth
    _degrees("--sun-azimuth", azimuth, 0.0, -360.0, 720.0)
    turbidity = DEFAULTS["turbidity"] if args.turbidity is None else args.turbidity
    if not (2.0 <= turbidity <= 10.0):
        raise ValueError(f"--turbidity: {turbidity!r} is not allowed; allowed: 2 (very clear) … 10 (thick haze)")
    exposure = 0.0 if args.exposure is None else args.exposure
    if not (-10.0 <= exposure <= 10.0):
        raise ValueError(f"--exposure: {exposure!r} is not allowed; allowed: -10 … 10 stops")
    camera = Camera(height, math.radians(heading), math.radians(pitch), math.radians(fov), width, rows)
    sky = Sky(math.radians(elevation), math.radians(azimuth), turbidity)
    return Look(preset, camera, sky, exposure=exposure, earth_radius=math.inf if args.flat_sea else EARTH_RADIUS,
                haze=not getattr(args, "clear_air", False))


def compile_look_kernels() -> None:
    """Run the look's kernels once on a tiny picture of a tiny tile (`oceanfield compile`)."""
    from ..preset.schema import load_preset

    preset = load_preset("glassy_calm", overrides=["tile.resolution=32"])
    look = Look(preset, Camera(10.0, 0.0, math.radians(-8.0), math.radians(60.0), 32, 18),
                Sky(math.radians(25.0), math.radians(20.0), 3.0))
    look.picture(look.render())


def _out(preset, out, suffixes: tuple[str, ...], default_suffix: str) -> Path:
    from ..io.atomic import prepare_option_output

    path = Path(out) if out is not None else Path("renders") / f"{preset.name or 'preset'}_look{default_suffix}"
    if path.suffix.lower() not in suffixes:
        raise ValueError(f"--out: {str(path)!r} is not allowed; allowed: a file name ending in {' or '.join(suffixes)}")
    return prepare_option_output("--out", path)


def write_still(look: Look, *, frame: int | None = None, out: str | Path | None = None) -> tuple[Path, Path]:
    """Write one frame as PNG (8-bit sRGB, caption below) and EXR beside it (linear RGB
    half, exposed: an 18 % grey card is 0.18; camera, sun and sea in the header). A sun
    disc in the picture can outshine half floats (about 7·10⁴ at 25° up): then the EXR is
    32-bit float."""
    import imageio.v3 as iio

    from ..io.atomic import atomic_output
    from ..io.exr import write_exr

    path = _out(look.preset, out, _STILL_SUFFIXES, ".png")
    exr_path = path.with_suffix(".exr")
    image = look.render(frame)
    picture = look.picture(image)
    lines = look.caption(image)
    radiance = image.radiance
    # half floats, unless the sun's disc in the picture outshines their range (±65504)
    precision = "half" if float(np.max(radiance)) < _HALF_MAX else "float"
    write_exr(exr_path, {"R": radiance[..., 0], "G": radiance[..., 1], "B": radiance[..., 2]}, precision=precision,
              attributes={"oceanfield_look": " | ".join(lines),
                          "oceanfield_look_units": "scene-linear sRGB primaries; 18% grey card = 0.18"})
    with atomic_output(path) as temporary:
        iio.imwrite(temporary, picture, extension=".png")
    return path, exr_path


def write_look_flipbook(look: Look, frames, *, out: str | Path | None = None) -> Path:
    """Write ``frames`` as an animated GIF (or MP4 with the video extra), each with its caption."""
    from ..preset.preview import save_flipbook, video_options

    frames = list(frames)
    if not frames:
        raise ValueError("--frames: no frames to look at; allowed: a range A-B")
    path = _out(look.preset, out, _FLIPBOOK_SUFFIXES, ".gif")
    options = video_options(path, look.preset.time.fps)
    pictures = [look.picture(look.render(frame)) for frame in frames]
    if path.suffix.lower() == ".mp4":  # H.264's 4:2:0 colour needs even sides
        pictures = [p[: p.shape[0] // 2 * 2, : p.shape[1] // 2 * 2] for p in pictures]
    return save_flipbook(path, pictures, options)
