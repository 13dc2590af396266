"""Tests for oceanfield.surface.maps: scene axes (Y-up, Z-up), scene units, channel naming."""

from __future__ import annotations

import math

import numpy as np
import pytest

from oceanfield.surface.fields import Fields
from oceanfield.surface.maps import MAPS, layered_channels, map_channels, map_sources

#: float32 division by metres_per_unit is correctly rounded: relative error ≤ 2**-24, with
#: room for the reciprocal's own rounding.
UNIT_RTOL = 2.0**-22


def _fields(n: int = 4, *, normal=(0.0, 0.0, 1.0), velocity: bool = True) -> Fields:
    """A tiny frame whose fields are distinct ramps, so a swapped channel shows."""
    ramp = np.arange(n * n, dtype=np.float32).reshape(n, n)
    vel = None
    if velocity:
        vel = np.stack([ramp + 100, ramp + 200, ramp + 300], axis=-1).astype(np.float32)
    return Fields(
        time=0.25,
        height=ramp + 1000,
        displacement_x=ramp + 2000,
        displacement_y=ramp + 3000,
        jacobian=np.ones((n, n), np.float32),
        normal=np.broadcast_to(np.asarray(normal, np.float32), (n, n, 3)).copy(),
        foam=ramp / (n * n),
        velocity=vel,
    )


def test_file_rows_put_y_zero_at_the_bottom():
    """Row 0 of a map is the image's top row: the tile's last row; its last row is y = 0."""
    fields = _fields(n=5)
    height = map_channels(fields, "height")["Y"]
    np.testing.assert_array_equal(height[-1], fields.height[0])
    np.testing.assert_array_equal(height[0], fields.height[-1])


def _vector(channels: dict) -> np.ndarray:
    """The (R, G, B) = scene (X, Y, Z) of texel (0, 0)."""
    return np.array([channels["R"][0, 0], channels["G"][0, 0], channels["B"][0, 0]], float)


def test_z_up_keeps_internal_axes():
    fields = _fields()
    channels = map_channels(fields, "displacement", up_axis="z")
    np.testing.assert_array_equal(channels["R"], fields.displacement_x[::-1])
    np.testing.assert_array_equal(channels["G"], fields.displacement_y[::-1])
    np.testing.assert_array_equal(channels["B"], fields.height[::-1])


def test_y_up_maps_x_z_minus_y():
    """Y-up: scene (X, Y, Z) = internal (x, z, −y)."""
    fields = _fields()
    channels = map_channels(fields, "displacement", up_axis="y")
    np.testing.assert_array_equal(channels["R"], fields.displacement_x[::-1])
    np.testing.assert_array_equal(channels["G"], fields.height[::-1])
    np.testing.assert_array_equal(channels["B"], -fields.displacement_y[::-1])


@pytest.mark.parametrize(
    ("internal", "up_axis", "scene"),
    [
        ((0, 1, 0), "y", (0, 0, -1)),  # internal +y (down the rows) is scene −Z in Y-up
        ((0, 0, 1), "y", (0, 1, 0)),  # up is up
        ((1, 0, 0), "y", (1, 0, 0)),
        ((0, 1, 0), "z", (0, 1, 0)),
        ((0, 0, 1), "z", (0, 0, 1)),
    ],
)
def test_normal_axes(internal, up_axis, scene):
    channels = map_channels(_fields(normal=internal), "normal", up_axis=up_axis)
    np.testing.assert_array_equal(_vector(channels), scene)


@pytest.mark.parametrize("up_axis", ["y", "z"])
def test_mapping_is_right_handed(up_axis):
    """The images of x̂, ŷ, ẑ satisfy X̂ × Ŷ = Ẑ: a rotation, not a mirror (det = +1)."""
    basis = [
        _vector(map_channels(_fields(normal=axis), "normal", up_axis=up_axis))
        for axis in ((1, 0, 0), (0, 1, 0), (0, 0, 1))
    ]
    np.testing.assert_array_equal(np.cross(basis[0], basis[1]), basis[2])
    assert np.linalg.det(np.array(basis)) == pytest.approx(1.0, abs=0)


def test_velocity_uses_the_same_axes_and_scene_units():
    fields = _fields()
    channels = map_channels(fields, "velocity", up_axis="y", metres_per_unit=0.01)
    np.testing.assert_allclose(channels["R"], fields.velocity[..., 0][::-1] * 100, rtol=UNIT_RTOL)
    np.testing.assert_allclose(channels["G"], fields.velocity[..., 2][::-1] * 100, rtol=UNIT_RTOL)
    np.testing.assert_allclose(channels["B"], -fields.velocity[..., 1][::-1] * 100, rtol=UNIT_RTOL)


@pytest.mark.parametrize("metres_per_unit", [0.01, 2.5, 1.0])
def test_lengths_divide_by_metres_per_unit_and_normals_do_not(metres_per_unit):
    fields = _fields(normal=(0.6, 0.0, 0.8))
    disp = map_channels(fields, "displacement", up_axis="z", metres_per_unit=metres_per_unit)
    np.testing.assert_allclose(disp["B"], fields.height[::-1] / metres_per_unit, rtol=UNIT_RTOL)
    np.testing.assert_allclose(disp["R"], fields.displacement_x[::-1] / metres_per_unit,
                               rtol=UNIT_RTOL)
    height = map_channels(fields, "height", metres_per_unit=metres_per_unit)
    np.testing.assert_allclose(height["Y"], fields.height[::-1] / metres_per_unit, rtol=UNIT_RTOL)
    normal = map_channels(fields, "normal", up_axis="z", metres_per_unit=metres_per_unit)
    np.testing.assert_array_equal(_vector(normal), np.float32([0.6, 0.0, 0.8]))
    foam = map_channels(fields, "foam", metres_per_unit=metres_per_unit)
    np.testing.assert_array_equal(foam["Y"], fields.foam[::-1])


@pytest.mark.parametrize(("name", "names"), [
    ("displacement", {"R", "G", "B"}), ("normal", {"R", "G", "B"}),
    ("velocity", {"R", "G", "B"}), ("height", {"Y"}), ("foam", {"Y"}),
])
def test_channel_names_and_arrays(name, names):
    channels = map_channels(_fields(n=6), name)
    assert set(channels) == names
    for array in channels.values():
        assert array.dtype == np.float32
        assert array.shape == (6, 6)
        assert array.flags.c_contiguous


def test_strided_input_gives_contiguous_channels():
    """The synthesiser's fields are strided views; channels come out contiguous."""
    n = 4
    base = _fields(n)
    packed = np.zeros((n, 2 * n), np.float32)
    packed[:, 0::2] = base.height
    fields = Fields(time=0.0, height=packed[:, 0::2], displacement_x=base.displacement_x,
                    displacement_y=base.displacement_y, jacobian=base.jacobian,
                    normal=base.normal, foam=base.foam, velocity=None)
    channels = map_channels(fields, "displacement", up_axis="y")
    assert channels["G"].flags.c_contiguous
    np.testing.assert_array_equal(channels["G"], base.height[::-1])


def test_layered_names_follow_openexr_layer_convention():
    fields = _fields()
    layered = layered_channels(fields, ["displacement", "foam", "normal"], up_axis="y",
                               metres_per_unit=0.5)
    assert list(layered) == ["displacement.R", "displacement.G", "displacement.B", "foam.Y",
                             "normal.R", "normal.G", "normal.B"]
    single = map_channels(fields, "displacement", up_axis="y", metres_per_unit=0.5)
    for channel in "RGB":
        np.testing.assert_array_equal(layered[f"displacement.{channel}"], single[channel])


def test_all_maps_layer_together():
    assert len(layered_channels(_fields(), MAPS)) == 3 + 3 + 1 + 1 + 3


@pytest.mark.parametrize(
    ("kwargs", "message"),
    [
        ({"name": "heights"}, "displacement, normal, foam, height, velocity"),
        ({"name": "normal", "up_axis": "x"}, "up_axis.*'x'.*y, z"),
        ({"name": "normal", "up_axis": "Y"}, "up_axis"),
        ({"name": "height", "metres_per_unit": 0.0}, "metres_per_unit.*0.0"),
        ({"name": "height", "metres_per_unit": -1.0}, "metres_per_unit"),
        ({"name": "height", "metres_per_unit": math.nan}, "metres_per_unit"),
        ({"name": "height", "metres_per_unit": math.inf}, "metres_per_unit"),
        ({"name": "height", "metres_per_unit": True}, "metres_per_unit"),
        ({"name": "height", "metres_per_unit": "0.01"}, "metres_per_unit"),
    ],
)
def test_bad_arguments(kwargs, message):
    name = kwargs.pop("name")
    with pytest.raises(ValueError, match=message):
        map_channels(_fields(), name, **kwargs)


def test_velocity_requested_without_velocity_field():
    with pytest.raises(ValueError, match="velocity"):
        map_channels(_fields(velocity=False), "velocity")
    with pytest.raises(ValueError, match="velocity"):
        layered_channels(_fields(velocity=False), ["height", "velocity"])


@pytest.mark.parametrize(
    ("names", "message"),
    [("normal", "string"), ([], "no maps"), (["foam", "foam"], "'foam'.*more than once"),
     (["foam", "waves"], "'waves'")],
)
def test_layered_bad_names(names, message):
    with pytest.raises(ValueError, match=message):
        layered_channels(_fields(), names)


@pytest.mark.parametrize("up_axis", ["y", "z"])
@pytest.mark.parametrize("metres_per_unit", [1.0, 0.01])
@pytest.mark.parametrize("name", MAPS)
def test_sources_materialise_to_the_channels(name, metres_per_unit, up_axis):
    """map_sources are views (no copy) that give map_channels' arrays bit for bit once negated
    and divided in float32 as documented."""
    fields = _fields(n=6)
    channels = map_channels(fields, name, metres_per_unit=metres_per_unit, up_axis=up_axis)
    sources = map_sources(fields, name, metres_per_unit=metres_per_unit, up_axis=up_axis)
    assert list(sources) == list(channels)
    for channel, source in sources.items():
        assert source.array.base is not None  # a view into the frame
        value = -source.array if source.negate else source.array
        made = np.divide(value, source.divisor, dtype=np.float32) if source.divisor != 1.0 else value
        np.testing.assert_array_equal(np.asarray(made, np.float32).view(np.uint32), channels[channel].view(np.uint32))
