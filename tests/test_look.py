"""The look measured on small pictures: the horizon, the glitter path, Fresnel, the
glitter's width against Cox & Munk; and the ``look`` command.

Each check's source is beside it. Tiles are cut to 64²–256² for speed (``--set``).
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from oceanfield.cli import main
from oceanfield.look import Camera, Look, Sky, cox_munk_slope_variance, fresnel_unpolarised, render_pyramid
from oceanfield.look.picture import DEEP_WATER_REFLECTANCE
from oceanfield.look.pyramid import build_pyramid
from oceanfield.preset.schema import load_preset
from oceanfield.surface.fields import Fields


_BANDED_SMALL = ("bands.max_resolution=128", "bands.shortest_wave_m=0.1")  # 6 small bands to 3 km


def _look(name: str, resolution: int, camera: Camera, sky: Sky, *, flat: bool = False) -> Look:
    extra = _BANDED_SMALL if name == "open_ocean_horizon" else ()
    preset = load_preset(name, overrides=(f"tile.resolution={resolution}", *extra))
    return Look(preset, camera, sky, earth_radius=math.inf if flat else 6_371_008.8)


def _luminance(radiance):
    return radiance @ np.array([0.2126, 0.7152, 0.0722])  # Rec. 709 / sRGB luminance weights (ITU-R BT.709)


@pytest.mark.parametrize("name, height, pitch_deg, flat", [
    ("glassy_calm", 10.0, 0.0, False), ("glassy_calm", 100.0, -0.2, False), ("glassy_calm", 30.0, 0.3, True),
    ("open_ocean_horizon", 20.0, 0.0, False),
])
def test_the_horizon_is_where_the_eye_height_and_the_earth_put_it(name, height, pitch_deg, flat):
    """First sea row in the picture's centre columns against the dip arccos(R/(R + h))
    of a spherical Earth of 6371 km (elementary geometry: the line of sight tangent to
    the sphere; 0 for a flat sea), within a pixel (0.025° at a 4° field of view)."""
    camera = Camera(height, math.radians(20.0), math.radians(pitch_deg), math.radians(4.0), 160, 90)
    image = _look(name, 64, camera, Sky(math.radians(30.0), math.radians(200.0)), flat=flat).render()
    expected = math.ceil(camera.horizon_row(radius=math.inf if flat else 6_371_008.8) - 0.5)
    for column in (79, 80):
        sea = np.nonzero(image.distance[:, column] > 0)[0]
        assert abs(int(sea[0]) - expected) <= 1, (sea[0], expected)
        assert np.all(image.distance[sea[0]:, column] > 0)  # everything below it is sea


@pytest.mark.parametrize("name, offset_deg", [("fresh_chop", 12.0), ("fresh_chop", -15.0),
                                              ("open_ocean_horizon", 8.0)])
def test_the_glitter_path_lies_under_the_sun(name, offset_deg):
    """The brightest column of the sea (summed over its rows) sits below the sun's azimuth:
    the column a ray at that azimuth crosses (pinhole, level camera), within 2 pixels; for
    a single tile repeated and for a stack of bands."""
    heading = 0.0
    camera = Camera(10.0, heading, 0.0, math.radians(60.0), 160, 90)
    sky = Sky(math.radians(20.0), math.radians(heading + offset_deg))
    image = _look(name, 128, camera, sky).render()
    sea = image.distance > 0
    profile = np.where(sea, _luminance(image.radiance), 0.0).sum(axis=0)
    profile = np.convolve(profile, np.ones(5) / 5.0, mode="same")
    tan_x = camera.tan_half[0]
    expected = (-math.tan(math.radians(offset_deg)) / tan_x + 1.0) * camera.width / 2.0 - 0.5
    assert abs(int(np.argmax(profile[3:-3])) + 3 - expected) <= 2.0


def test_the_far_sea_does_not_shimmer_from_frame_to_frame():
    """Filtered to each pixel's footprint, the sea beyond 500 m changes between frames a
    tenth as much as within 100 m (measured 0.07 of it here, 0.06 at 640×360); sampled without
    filtering, texels many times smaller than a pixel would flicker at random (common
    practice: the aliasing a mip pyramid exists to remove)."""
    from oceanfield.look import tone_map

    camera = Camera(10.0, math.pi, math.radians(-8.0), math.radians(60.0), 320, 180)
    look = _look("fresh_chop", 256, camera, Sky(math.radians(25.0), math.pi + math.radians(20.0)))
    first, second = look.render(1001), look.render(1002)
    change = np.abs(tone_map(second.radiance) - tone_map(first.radiance)).mean(axis=-1)
    near = (first.distance > 0) & (first.distance < 100.0)
    far = first.distance > 500.0
    assert near.sum() > 1000 and far.sum() > 300
    assert change[far].mean() < 0.1 * change[near].mean()


def test_a_flat_sea_mirrors_the_sky_with_waters_fresnel_reflectance():
    """A flat sea under no wind: the reflectance measured per row, (L − body)/(sky − body)
    solved from L = R S + (1 − R)/(1 − R₀) B, is the exact Fresnel reflectance of water
    (n = 1.333, Hale & Querry 1973) at that row's incidence, and grazing rows reflect far
    more than rows looking down (Fresnel 1823)."""
    n = 32
    zero = np.zeros((n, n), np.float32)
    normal = np.zeros((n, n, 3), np.float32)
    normal[..., 2] = 1.0
    pyramid = build_pyramid([(Fields(0.0, zero, zero, zero, zero + 1, normal, zero), 50.0)])
    camera = Camera(10.0, 0.0, math.radians(-30.0), math.radians(50.0), 40, 60)
    sky = Sky(math.radians(35.0), math.radians(180.0))  # behind the camera: no glitter in view
    image, distance = render_pyramid(pyramid, camera, sky, earth_radius=math.inf, haze=False)
    column = 20
    body = np.asarray(DEEP_WATER_REFLECTANCE) * sky.downwelling_irradiance() / (1.0 - fresnel_unpolarised(1.0))
    measured, exact = [], []
    for row in range(camera.rows):
        if distance[row, column] <= 0:
            continue
        d = camera.ray(row, column)
        mirror = sky.radiance(d * np.array([1.0, 1.0, -1.0]))
        measured.append(float(((image[row, column] - body) / (mirror - body))[1]))
        exact.append(float(fresnel_unpolarised(-d[2])))
    measured, exact = np.array(measured), np.array(exact)
    assert measured.size > 30
    # the sun's disc and the pixel's spread act as a little roughness: at incidence beyond
    # 88° (the two rows under the horizon) its hidden facets lower R by up to 1.5 %
    np.testing.assert_allclose(measured[2:], exact[2:], rtol=2e-3)
    np.testing.assert_allclose(measured[:2], exact[:2], rtol=0.02)
    assert measured[0] / measured[-1] > 5.0  # near the horizon (incidence ~86°) against ~50°


def _glitter_half_width(name: str, resolution: int) -> tuple[float, float]:
    """(measured, Cox & Munk) half-width at half maximum of the glitter across a row
    0.5° below the horizon of a flat sea, in degrees of azimuth, looking into a sun 8° up
    along the wind."""
    preset = load_preset(name, overrides=(f"tile.resolution={resolution}",))
    wind = max((c.wind_speed, c.direction) for c in preset.sea_state().components)
    heading = wind[1]
    camera = Camera(200.0, heading, math.radians(-2.0), math.radians(40.0), 320, 120)
    sky = Sky(math.radians(8.0), heading)
    image = Look(preset, camera, sky, earth_radius=math.inf, haze=False).render()  # the sea's own glitter
    tan_y = camera.tan_half[1]
    depression = math.radians(0.5)
    row = int(round((1.0 - math.tan(-depression - camera.pitch) / tan_y) * camera.rows / 2.0 - 0.5))
    profile = _luminance(image.radiance[row])
    assert np.all(image.distance[row] > 0)
    edge = camera.width // 8
    background = 0.5 * (np.median(profile[:edge]) + np.median(profile[-edge:]))
    peak = int(np.argmax(profile))
    half = background + 0.5 * (profile[peak] - background)

    def crossing(step: int) -> float:
        c = peak
        while profile[c + step] > half:
            c += step
        return c + step * (profile[c] - half) / (profile[c] - profile[c + step])

    def azimuth(col: float) -> float:
        d = camera.ray(row, col)
        return math.atan2(d[1], d[0]) - heading

    measured = abs(azimuth(crossing(1)) - azimuth(crossing(-1))) / 2.0
    d = camera.ray(row, peak)
    e_v, e_s = math.asin(-d[2]), sky.sun_elevation
    _upwind, crosswind = cox_munk_slope_variance(wind[0])
    # a facet at azimuth δ from the sun mirrors it with cross-path slope
    # s = cos e_v sin δ / (sin e_v + sin e_s); Gaussian slopes (Cox & Munk 1954) halve at s = σ_c √(2 ln 2)
    predicted = math.asin(math.sqrt(2.0 * math.log(2.0) * crosswind) * (math.sin(e_v) + math.sin(e_s)) / math.cos(e_v))
    return math.degrees(measured), math.degrees(predicted)


def test_the_glitters_width_follows_cox_and_munk_and_a_calm_is_narrower_than_a_gale():
    """Half-width across the path against δ½ = arcsin(√(2 ln 2) σ_c (sin e_v + sin e_s) /
    cos e_v), σ_c² the Cox & Munk (1954) crosswind mean-square slope for the preset's wind,
    within 10 % (Fresnel, cos⁴β and the along-path slope change little across the path;
    the tile's long waves, averaged over the footprint, shift it a little)."""
    calm, calm_predicted = _glitter_half_width("glassy_calm", 128)
    gale, gale_predicted = _glitter_half_width("near_gale_long_fetch", 128)
    assert calm == pytest.approx(calm_predicted, rel=0.10)
    assert gale == pytest.approx(gale_predicted, rel=0.10)
    assert calm < 0.7 * gale


# -- the command -------------------------------------------------------------------------


def test_the_command_writes_a_captioned_png_and_a_linear_exr(tmp_path, capsys):
    import imageio.v3 as iio

    from oceanfield.io.exr import read_exr

    out = tmp_path / "look" / "calm.png"
    status = main(["look", "glassy_calm", "--set", "tile.resolution=64", "--size", "96x54", "--out", str(out)])
    assert status == 0
    assert f"look written to {out}" in capsys.readouterr().out
    picture = iio.imread(out)
    assert picture.shape[1] == 96 and picture.shape[0] > 54 and picture.shape[2] == 3
    assert picture[-20:].mean() < 40  # the caption strip is white text on black
    channels = read_exr(out.with_suffix(".exr"))
    channels = channels[0] if isinstance(channels, tuple) else channels
    assert {"R", "G", "B"} <= set(channels)
    assert channels["G"].shape == (54, 96)
    assert float(np.max(channels["G"])) > 1.0  # scene-linear: the sky near the sun is above white


def test_a_sun_in_the_picture_keeps_its_radiance_in_the_exr(tmp_path):
    """The sun's disc (about 1.7·10⁵ × a grey card at 25° up) is beyond half floats' 65504:
    the EXR holds it in 32-bit floats rather than failing or clipping."""
    from oceanfield.io.exr import read_exr

    out = tmp_path / "sun.png"
    status = main(["look", "glassy_calm", "--set", "tile.resolution=64", "--size", "64x64", "--fov", "3",
                   "--heading", "0", "--sun-azimuth", "0", "--sun-elevation", "25", "--pitch", "25", "--out", str(out)])
    assert status == 0
    channels = read_exr(out.with_suffix(".exr"))
    channels = channels[0] if isinstance(channels, tuple) else channels
    assert max(float(np.max(channels[c])) for c in "RGB") > 65504.0


def test_the_command_writes_a_flipbook(tmp_path):
    import imageio.v3 as iio

    out = tmp_path / "calm.gif"
    status = main(["look", "glassy_calm", "--set", "tile.resolution=64", "--size", "48x27", "--frames", "1001-1003",
                   "--out", str(out)])
    assert status == 0
    assert iio.imread(out, index=None).shape[0] == 3


@pytest.mark.parametrize("argv, named", [
    (["--fov", "200"], "--fov: 200.0 is not allowed"),
    (["--size", "10x10"], "--size: '10x10' is not allowed"),
    (["--camera-height", "-3"], "--camera-height: -3.0 is not allowed"),
    (["--sun-elevation", "0"], "--sun-elevation: 0.0 is not allowed"),
    (["--out", "x.jpg"], "--out: 'x.jpg' is not allowed"),
])
def test_bad_options_are_one_line_naming_them(argv, named, capsys, tmp_path):
    status = main(["look", "glassy_calm", "--set", "tile.resolution=64", *argv])
    error = capsys.readouterr().err.strip()
    assert status == 2
    assert named in error and len(error.splitlines()) == 1
    assert not list(tmp_path.iterdir())


def test_a_preset_with_vessels_says_the_look_leaves_their_wakes_out(tmp_path, capsys):
    """The look draws the tiled sea alone: on a boat chase one warning says the wakes are
    missing and where to see them, so no one judges the shot by a picture without them."""
    preset = tmp_path / "boat.yaml"
    preset.write_text(
        "extends: glassy_calm\ntile: {resolution: 64}\n"
        "vessels:\n  - name: tender\n    length_m: 6\n    beam_m: 2\n    draft_m: 0.3\n"
        "    course: {keys: [{time_s: -40, x_m: -100, y_m: 0}, {time_s: 10, x_m: 50, y_m: 0}]}\n"
        "wake: {origin_x_m: -150, origin_y_m: -100, size_m: 200, resolution: 32, lookback_s: 30}\n")
    status = main(["look", str(preset), "--size", "32x18", "--out", str(tmp_path / "boat.png")])
    err = capsys.readouterr().err
    assert status == 0
    assert "warning: look: the wakes of the vessels (tender) are not drawn" in err
