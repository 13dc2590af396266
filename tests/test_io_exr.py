"""Tests for oceanfield.io.exr: round trips, pixel types, compressions, attributes, damage.

Second readers. imageio cannot read OpenEXR on this machine (its FreeImage plugin needs a
binary download, which is impossible offline, and no OpenCV backend is installed), so the
files are read back two other ways besides `read_exr`:

- the `OpenEXR` package's older, lower-level ``InputFile`` API (raw channel bytes);
- `_read_exr_by_layout` below, a reader written here from the published file layout
  ("OpenEXR File Layout", openexr.com, and "Technical Introduction to OpenEXR",
  Kainz & Bogart) for uncompressed and ZIP files, sharing no code with the writer.
"""

from __future__ import annotations

import errno
import os
import struct
import zlib

import numpy as np
import OpenEXR
import pytest

from oceanfield.surface.fields import Fields
from oceanfield.io import exr
from oceanfield.io.atomic import is_temporary
from oceanfield.io.errors import CorruptFileError, OutputError
from oceanfield.io.exr import (
    COMPRESSIONS,
    LOSSLESS_COMPRESSIONS,
    exr_is_complete,
    read_exr,
    to_pixels,
    write_exr,
)
from oceanfield.surface.maps import layered_channels

#: Unit roundoff of IEEE 754 binary16 (11-bit significand): round-to-nearest keeps a
#: normal number within a relative 2**-11 (IEEE 754-2008, 3.6).
HALF_RTOL = 2.0**-11
#: PXR24 rounds 32-bit floats to 24 bits, keeping 15 of 23 significand bits, so within a
#: relative 2**-16 ("Technical Introduction to OpenEXR", data compression).
PXR24_RTOL = 2.0**-16
#: DWA compression is lossy (DCT quantisation, default level 45) on half channels and
#: on channels named like colours. Loose bound, common practice for "visually lossless":
#: 2 % of the largest magnitude; measured about 0.7 % on this test's data.
DWA_ATOL_FRACTION = 0.02


def _random(shape, seed=0, dtype=np.float32):
    rng = np.random.default_rng(seed)
    return (rng.standard_normal(shape) * 3).astype(dtype)


def _magnitudes(shape, seed=1):
    """Normal (not subnormal) half-float values across many octaves, both signs."""
    rng = np.random.default_rng(seed)
    sign = rng.choice([-1.0, 1.0], size=shape)
    return (sign * np.exp(rng.uniform(np.log(1e-3), np.log(6e4), size=shape))).astype(np.float32)


# --- an independent reader from the published file layout --------------------------------

_PIXEL_BYTES = {1: 2, 2: 4}  # HALF, FLOAT
_PIXEL_DTYPES = {1: "<f2", 2: "<f4"}


def _read_exr_by_layout(path):
    """Channels of an uncompressed or ZIP scan-line OpenEXR file, parsed by hand."""
    data = path.read_bytes()
    assert struct.unpack("<i", data[:4])[0] == 20000630  # magic number
    position, header = 8, {}
    while data[position] != 0:
        name_end = data.index(b"\0", position)
        type_end = data.index(b"\0", name_end + 1)
        size = struct.unpack("<i", data[type_end + 1:type_end + 5])[0]
        header[data[position:name_end].decode()] = data[type_end + 5:type_end + 5 + size]
        position = type_end + 5 + size
    position += 1
    channels, chlist = [], header["channels"]
    while chlist[0] != 0:  # name, int32 pixel type, pLinear, 3 reserved, x/y sampling
        end = chlist.index(b"\0")
        channels.append((chlist[:end].decode(), struct.unpack("<i", chlist[end + 1:end + 5])[0]))
        chlist = chlist[end + 17:]
    xmin, ymin, xmax, ymax = struct.unpack("<4i", header["dataWindow"])
    width, height = xmax - xmin + 1, ymax - ymin + 1
    compression = header["compression"][0]
    lines = {0: 1, 3: 16}[compression]  # NO_COMPRESSION, ZIP_COMPRESSION
    chunks = -(-height // lines)
    offsets = struct.unpack(f"<{chunks}Q", data[position:position + 8 * chunks])
    out = {name: np.empty((height, width), np.float32) for name, _ in channels}
    for offset in offsets:
        y, size = struct.unpack("<2i", data[offset:offset + 8])
        block = data[offset + 8:offset + 8 + size]
        rows = min(lines, ymax + 1 - y)
        expected = rows * width * sum(_PIXEL_BYTES[kind] for _, kind in channels)
        if compression == 3 and size < expected:
            block = _unzip_block(block)
        at = 0
        for row in range(y - ymin, y - ymin + rows):
            for name, kind in channels:  # each line: every channel in turn, all its pixels
                nbytes = width * _PIXEL_BYTES[kind]
                out[name][row] = np.frombuffer(block[at:at + nbytes], _PIXEL_DTYPES[kind])
                at += nbytes
    return out, dict(channels)


def _unzip_block(block):
    """Undo OpenEXR's ZIP: inflate, undo the byte-delta predictor, re-interleave halves."""
    deltas = np.frombuffer(zlib.decompress(block), np.uint8).astype(np.int64)
    deltas[1:] -= 128
    t = (np.cumsum(deltas) & 0xFF).astype(np.uint8)
    half = (len(t) + 1) // 2
    out = np.empty_like(t)
    out[0::2], out[1::2] = t[:half], t[half:]
    return out.tobytes()


# --- round trips ---------------------------------------------------------------------------

@pytest.mark.parametrize("shape", [(1, 1), (16, 16), (37, 29), (64, 128)])
def test_float_round_trip_is_exact(tmp_path, shape):
    path = tmp_path / "f.exr"
    values = {"R": _random(shape, 1), "G": _random(shape, 2), "Y": _random(shape, 3)}
    write_exr(path, values, precision="float")
    channels, _ = read_exr(path)
    assert set(channels) == set(values)
    for name, array in values.items():
        assert channels[name].dtype == np.float32
        np.testing.assert_array_equal(channels[name], array)


def test_half_round_trip_within_half_precision(tmp_path):
    path = tmp_path / "h.exr"
    values = _magnitudes((48, 40))
    write_exr(path, {"Y": values}, precision="half")
    channels, _ = read_exr(path)
    np.testing.assert_allclose(channels["Y"], values, rtol=HALF_RTOL, atol=0)
    np.testing.assert_array_equal(channels["Y"], values.astype(np.float16).astype(np.float32))


def test_second_reader_openexr_input_file(tmp_path):
    """The older lower-level API: raw bytes per channel, pixel types from the header."""
    path = tmp_path / "two.exr"
    half, full = _magnitudes((20, 24)), _random((20, 24))
    write_exr(path, {"a.Y": half, "b.Y": full}, precision={"a": "half", "b": "float"})
    legacy = OpenEXR.InputFile(str(path))
    try:
        types = {name: str(channel) for name, channel in legacy.header()["channels"].items()}
        raw_half, raw_full = legacy.channel("a.Y"), legacy.channel("b.Y")
    finally:
        legacy.close()
    assert types["a.Y"].startswith("HALF") and types["b.Y"].startswith("FLOAT")
    np.testing.assert_array_equal(np.frombuffer(raw_half, np.float16).reshape(20, 24),
                                  half.astype(np.float16))
    np.testing.assert_array_equal(np.frombuffer(raw_full, np.float32).reshape(20, 24), full)


@pytest.mark.parametrize("compression", ["none", "zip"])
def test_second_reader_from_the_file_layout(tmp_path, compression):
    path = tmp_path / "layout.exr"
    half, full = _magnitudes((37, 29)), _random((37, 29))
    write_exr(path, {"d.R": half, "d.G": full, "foam.Y": half}, compression=compression,
              precision={"d.G": "float"})
    channels, kinds = _read_exr_by_layout(path)
    assert kinds == {"d.G": 2, "d.R": 1, "foam.Y": 1}  # FLOAT = 2, HALF = 1
    np.testing.assert_array_equal(channels["d.G"], full)
    np.testing.assert_array_equal(channels["d.R"], half.astype(np.float16).astype(np.float32))
    np.testing.assert_array_equal(channels["foam.Y"], channels["d.R"])


def test_pixel_types_by_layer_and_channel(tmp_path):
    path = tmp_path / "types.exr"
    shape = (8, 8)
    names = ["displacement.R", "displacement.G", "displacement.B", "normal.R", "foam.Y", "Y"]
    precision = {"displacement": "float", "displacement.B": "half", "normal": "half"}
    write_exr(path, {name: _random(shape) for name in names}, precision=precision)
    with OpenEXR.File(str(path), separate_channels=True) as image:
        types = {name: channel.type() for name, channel in image.channels().items()}
    assert types == {
        "displacement.R": OpenEXR.FLOAT, "displacement.G": OpenEXR.FLOAT,
        "displacement.B": OpenEXR.HALF, "normal.R": OpenEXR.HALF,
        "foam.Y": OpenEXR.HALF, "Y": OpenEXR.HALF,
    }


@pytest.mark.parametrize("compression", COMPRESSIONS)
def test_each_compression_round_trips(tmp_path, compression):
    path = tmp_path / f"{compression}.exr"
    half, full = _magnitudes((40, 36)), _random((40, 36))
    write_exr(path, {"h.Y": half, "f.Y": full, "f.Z": full}, compression=compression,
              precision={"h": "half", "f": "float"})
    with OpenEXR.File(str(path), separate_channels=True) as image:
        assert image.header()["compression"] == exr._COMPRESSION_VALUES[compression]
    channels, _ = read_exr(path)
    stored_half = half.astype(np.float16).astype(np.float32)
    if compression in LOSSLESS_COMPRESSIONS:
        np.testing.assert_array_equal(channels["h.Y"], stored_half)
        np.testing.assert_array_equal(channels["f.Y"], full)
        np.testing.assert_array_equal(channels["f.Z"], full)
    elif compression == "pxr24":
        np.testing.assert_array_equal(channels["h.Y"], stored_half)  # lossless on half
        np.testing.assert_allclose(channels["f.Y"], full, rtol=PXR24_RTOL, atol=0)
    else:  # dwaa, dwab
        for name, reference in (("f.Y", full), ("f.Z", full)):
            bound = DWA_ATOL_FRACTION * np.abs(reference).max()
            np.testing.assert_allclose(channels[name], reference, rtol=0, atol=bound)
        np.testing.assert_array_equal(channels["f.Z"], full)  # a non-colour float channel


@pytest.mark.parametrize("compression", COMPRESSIONS)
def test_complete_files_are_complete_for_every_compression(tmp_path, compression):
    """300 rows: several chunks for every compression (1 to 256 lines a chunk), one partial."""
    path = tmp_path / "tall.exr"
    write_exr(path, {"Y": _random((300, 6))}, compression=compression)
    assert exr_is_complete(path)
    assert exr_is_complete(path, ["Y"])
    assert not exr_is_complete(path, ["Y", "R"])
    assert exr_is_complete(path, ["Y"], decode=False)
    assert not exr_is_complete(path, ["Y", "R"], decode=False)


def test_layered_maps_round_trip(tmp_path):
    """A multi-layer file of map channels from a tiny frame."""
    n = 8
    ramp = np.linspace(-2, 2, n * n, dtype=np.float32).reshape(n, n)
    normal = np.zeros((n, n, 3), np.float32)
    normal[..., 2] = 1
    fields = Fields(time=0.5, height=ramp, displacement_x=ramp * 0.5,
                    displacement_y=-ramp, jacobian=np.ones((n, n), np.float32),
                    normal=normal, foam=np.abs(ramp) / 2)
    channels = layered_channels(fields, ["displacement", "normal", "foam"], up_axis="y",
                                metres_per_unit=0.01)
    path = tmp_path / "ocean.0001.exr"
    write_exr(path, channels, precision={"displacement": "float"},
              attributes={"oceanfield.time": fields.time})
    read, attributes = read_exr(path)
    assert set(read) == set(channels)
    np.testing.assert_array_equal(read["displacement.G"], channels["displacement.G"])
    np.testing.assert_array_equal(read["normal.G"], np.ones((n, n), np.float32))
    assert attributes == {"oceanfield.time": 0.5}


# --- attributes ----------------------------------------------------------------------------

def test_attributes_round_trip(tmp_path):
    path = tmp_path / "attrs.exr"
    attributes = {
        "oceanfield.preset": "north sea, force 6",
        "oceanfield.seed": 42,
        "oceanfield.frame": -(2**31),
        "oceanfield.count": 2**31 - 1,
        "oceanfield.time": 0.1,  # not a binary fraction: exact only as a double
        "oceanfield.tile_size": 1.0 / 3.0,
        "oceanfield.looping": True,
        "oceanfield.wind": (12.5, -3.25),
        "oceanfield.origin": (0.1, 0.2, 0.3),
        "oceanfield.texels": (1024, 1024),
        "oceanfield.cell": (1, 2, 3),
        "oceanfield.maps": ["displacement", "normal"],
        "comments": "ünïcödé text",
    }
    write_exr(path, {"Y": _random((4, 4))}, attributes=attributes)
    _, read = read_exr(path)
    assert read == attributes
    assert isinstance(read["oceanfield.time"], float)
    assert read["oceanfield.looping"] == 1 and isinstance(read["oceanfield.looping"], int)
    assert isinstance(read["oceanfield.wind"], tuple)


@pytest.mark.parametrize(
    ("attributes", "message"),
    [
        ({"oceanfield.seed": 2**31}, "32-bit"),
        ({"oceanfield.x": None}, "cannot store None"),
        ({"oceanfield.x": {"a": 1}}, "cannot store"),
        ({"oceanfield.x": (1.0, 2.0, 3.0, 4.0)}, "2 or 3 numbers"),
        ({"oceanfield.x": []}, "cannot store"),
        ({"oceanfield.x": ("a", 1)}, "cannot store"),
        ({"compression": "zip"}, "set by the writer"),
        ({"dataWindow": (0, 0)}, "reserved"),
        ({"": 1}, "attribute name"),
        ({"a\0b": 1}, "attribute name"),
    ],
)
def test_unsupported_attributes(tmp_path, attributes, message):
    path = tmp_path / "bad.exr"
    with pytest.raises(ValueError, match=message):
        write_exr(path, {"Y": _random((4, 4))}, attributes=attributes)
    assert list(tmp_path.iterdir()) == []


# --- bad input -----------------------------------------------------------------------------

@pytest.mark.parametrize(
    ("channels", "kwargs", "message"),
    [
        ({}, {}, "non-empty mapping"),
        ([np.zeros((4, 4))], {}, "mapping"),
        ({"R": np.zeros((4, 4)), "G": np.zeros((4, 5))}, {}, "'G'.*\\(4, 5\\).*'R'"),
        ({"R": np.zeros(4)}, {}, "2-D"),
        ({"R": np.zeros((0, 4))}, {}, "non-empty"),
        ({"R": np.zeros((4, 4), complex)}, {}, "real numbers"),
        ({"R": np.zeros((4, 4), bool)}, {}, "real numbers"),
        ({"": np.zeros((4, 4))}, {}, "channel name"),
        ({"R": np.zeros((4, 4))}, {"compression": "lzw"}, "zip, zips, piz, rle, none"),
        ({"R": np.zeros((4, 4))}, {"compression": "b44"}, "'b44'"),
        ({"R": np.zeros((4, 4))}, {"precision": "double"}, "half, float"),
        ({"R": np.zeros((4, 4))}, {"precision": 16}, "precision"),
        ({"R": np.zeros((4, 4))}, {"precision": {"R": ["half"]}}, "precision\\['R'\\]"),
        ({"R": np.zeros((4, 4))}, {"compression": ["zip"]}, "compression"),
        ({"a.R": np.zeros((4, 4))}, {"precision": {"b": "float"}}, "'b' names no channel"),
        ({"a.R": np.zeros((4, 4))}, {"precision": {"a": "single"}}, "precision\\['a'\\]"),
        ({"R": np.full((4, 4), 7e4)}, {}, "70000.*half.*'float'"),
    ],
)
def test_bad_input(tmp_path, channels, kwargs, message):
    with pytest.raises(ValueError, match=message):
        write_exr(tmp_path / "bad.exr", channels, **kwargs)
    assert list(tmp_path.iterdir()) == []


def test_half_keeps_infinities_and_large_values_as_float(tmp_path):
    path = tmp_path / "inf.exr"
    values = np.array([[np.inf, -np.inf], [65504.0, 1e6]], np.float32)
    write_exr(path, {"Y": values}, precision="float")
    np.testing.assert_array_equal(read_exr(path)[0]["Y"], values)
    write_exr(path, {"Y": values[:1]}, precision="half")
    np.testing.assert_array_equal(read_exr(path)[0]["Y"], values[:1])


@pytest.mark.parametrize(("value", "stored"), [(65519.0, 65504.0), (-65519.0, -65504.0), (65520.0, None),
                                              (-1e6, None)])
def test_half_overflow_boundary(value, stored):
    """IEEE 754 binary16 rounds to nearest even: magnitudes below 65504 + 16 round to the
    largest finite half (65504), from 65520 on to infinity, which to_pixels refuses."""
    source = np.array([[value, np.nan, 1.0]], np.float32)
    if stored is None:
        with pytest.raises(ValueError, match="exceeds the half-float range"):
            to_pixels("Y", source, "half")
    else:
        assert float(to_pixels("Y", source, "half")[0, 0]) == stored


def test_any_real_input_layout(tmp_path):
    """float64, integer and non-contiguous arrays are converted, not refused."""
    path = tmp_path / "conv.exr"
    base = _random((10, 12)).astype(np.float64)
    write_exr(path, {"A": base, "B": np.arange(30).reshape(5, 6).repeat(2, 0).repeat(2, 1),
                     "C": np.asfortranarray(base)[:, ::-1]}, precision="float")
    channels, _ = read_exr(path)
    np.testing.assert_array_equal(channels["A"], base.astype(np.float32))
    np.testing.assert_array_equal(channels["C"], base[:, ::-1].astype(np.float32))
    assert channels["B"][9, 11] == 29


# --- damage --------------------------------------------------------------------------------

def _written(tmp_path, compression="zip"):
    path = tmp_path / "whole.exr"
    write_exr(path, {"R": _random((64, 64)), "G": _random((64, 64), 2)},
              compression=compression)
    return path, path.read_bytes()


@pytest.mark.parametrize("keep", [0, 7, 100, 0.5, -1])
def test_truncated_file_is_incomplete(tmp_path, keep):
    path, data = _written(tmp_path)
    cut = tmp_path / "cut.exr"
    length = int(len(data) * keep) if isinstance(keep, float) else keep % len(data)
    cut.write_bytes(data[:length])
    assert exr_is_complete(path)
    assert not exr_is_complete(cut)
    assert not exr_is_complete(cut, decode=False)
    with pytest.raises(CorruptFileError) as caught:
        read_exr(cut)
    assert "\n" not in str(caught.value) and str(cut) in str(caught.value)


def test_unwritten_offset_table_is_incomplete(tmp_path):
    """A writer killed before it filled in the chunk offsets leaves zeros there."""
    path, data = _written(tmp_path, compression="none")
    header_end = exr._header_fields(data)[1]
    damaged = bytearray(data)
    damaged[header_end + 8 * 10:header_end + 8 * 11] = bytes(8)  # chunk 11 of 64
    path.write_bytes(bytes(damaged))
    assert not exr_is_complete(path)
    assert not exr_is_complete(path, decode=False)


def test_corrupt_chunk_data_is_incomplete(tmp_path):
    """Damage inside a chunk keeps the layout whole; only decoding finds it."""
    path, data = _written(tmp_path)
    damaged = bytearray(data)
    middle = len(data) // 2
    damaged[middle:middle + 40] = bytes(byte ^ 0x5A for byte in damaged[middle:middle + 40])
    path.write_bytes(bytes(damaged))
    assert exr_is_complete(path, decode=False)
    assert not exr_is_complete(path)
    with pytest.raises(CorruptFileError, match="does not decode"):
        read_exr(path)


def test_missing_and_foreign_files(tmp_path):
    assert not exr_is_complete(tmp_path / "missing.exr")
    with pytest.raises(FileNotFoundError):
        read_exr(tmp_path / "missing.exr")
    foreign = tmp_path / "picture.exr"
    foreign.write_bytes(b"\x89PNG\r\n\x1a\n" + bytes(100))
    assert not exr_is_complete(foreign)
    with pytest.raises(CorruptFileError, match="not an OpenEXR file"):
        read_exr(foreign)


def test_expected_channels_must_be_a_collection(tmp_path):
    path, _ = _written(tmp_path)
    with pytest.raises(ValueError, match="expected_channels"):
        exr_is_complete(path, "R")


# --- failed writes leave nothing behind ----------------------------------------------------

class _FakeFile:
    """Stands in for OpenEXR.File to simulate failures the real library meets on disk."""

    behaviour = "raise"

    def __init__(self, header, channels):
        self.image = OpenEXR.File(header, channels)

    def write(self, path):
        if self.behaviour == "raise":
            raise RuntimeError(f'Cannot write image file "{path}". No space left on device.')
        if self.behaviour == "enospc":
            raise OSError(errno.ENOSPC, os.strerror(errno.ENOSPC))
        self.image.write(path)  # "short": a full disk the library did not notice
        with open(path, "r+b") as out:
            out.truncate(os.path.getsize(path) - 50)


class _FakeModule:
    File = _FakeFile

    def __getattr__(self, name):
        return getattr(OpenEXR, name)


@pytest.mark.parametrize(("behaviour", "message"), [
    ("raise", "No space left on device"),
    ("enospc", os.strerror(errno.ENOSPC)),
    ("short", "incomplete"),
])
def test_failed_write_leaves_no_file(tmp_path, monkeypatch, behaviour, message):
    monkeypatch.setattr(exr, "OpenEXR", _FakeModule())
    monkeypatch.setattr(_FakeFile, "behaviour", behaviour)
    path = tmp_path / "frame.0001.exr"
    with pytest.raises(OutputError) as caught:
        write_exr(path, {"Y": _random((64, 64))})
    text = str(caught.value)
    assert "\n" not in text and str(path) in text and message in text
    assert list(tmp_path.iterdir()) == []


def test_failed_write_keeps_the_previous_frame(tmp_path, monkeypatch):
    path = tmp_path / "frame.0001.exr"
    write_exr(path, {"Y": np.ones((4, 4), np.float32)})
    monkeypatch.setattr(exr, "OpenEXR", _FakeModule())
    monkeypatch.setattr(_FakeFile, "behaviour", "short")
    with pytest.raises(OutputError):
        write_exr(path, {"Y": np.zeros((64, 64), np.float32)})
    monkeypatch.undo()
    np.testing.assert_array_equal(read_exr(path)[0]["Y"], np.ones((4, 4), np.float32))
    assert not any(is_temporary(p) for p in tmp_path.iterdir())


@pytest.mark.parametrize("negate", [False, True])
@pytest.mark.parametrize("divisor", [1.0, 0.01, 0.3048])
def test_strided_views_convert_like_numpy(negate, divisor):
    """A strided float32 view with a sign and a divisor gives exactly the halves (and floats)
    of numpy's own arithmetic: −x rounds to −(x rounded) (IEEE 754 round to nearest even is
    symmetric), and the division is float32's."""
    rng = np.random.default_rng(5)
    packed = (rng.normal(0, 3, (33, 40)) + 1j * rng.normal(0, 3, (33, 40))).astype(np.complex64)
    packed[0, :4] = [0.0, -0.0, 6.1e-5 + 1j * 1e-8, 65519.0 * 0.01]
    view = packed.imag[::-1]  # the kind of view a render hands over
    expected = np.divide(-view if negate else view, divisor, dtype=np.float32)
    for precision, dtype in (("half", np.float16), ("float", np.float32)):
        got = to_pixels("R", view, precision, negate=negate, divisor=divisor)
        assert got.dtype == dtype and got.flags.c_contiguous
        np.testing.assert_array_equal(got.view(np.uint16 if dtype == np.float16 else np.uint32),
                                      expected.astype(dtype).view(np.uint16 if dtype == np.float16 else np.uint32))
    np.testing.assert_array_equal(view, packed.imag[::-1])  # the source is left alone


def test_negated_overflow_is_refused():
    with pytest.raises(ValueError, match=r"channel 'B': value 70000 exceeds"):
        to_pixels("B", np.array([[1.0, 70000.0]], np.float32), "half", negate=True)


# -- the compiled half converter (io._half) ----------------------------------------------------


def _numpy_halves(values: np.ndarray) -> np.ndarray:
    with np.errstate(all="ignore"):
        return values.astype(np.float16).view(np.uint16)


def test_the_compiled_half_converter_is_in_use_here():
    """x86-64 and ARM64 have a float → half instruction; on them the converter must build
    (a silent fall-back to numpy would cost ~12 ms of CPU a 1024² frame)."""
    from oceanfield.io import exr

    assert exr._half_converter() is not None


def test_compiled_halves_are_numpys_at_every_rounding_boundary():
    """IEEE 754 binary16 round to nearest even (numpy as the oracle): every finite half, the
    float32 midpoints to its neighbours and the float32 values one step either side of
    them, both signs, subnormals and overflow included; and a million random bit patterns.
    (All 2³² float32 patterns were compared once when the converter was written: the same
    bits for every non-NaN value.)"""
    from oceanfield.io._half import convert

    halves = np.arange(0x7C00, dtype=np.uint16).view(np.float16).astype(np.float32)  # 0 … 65504
    upper = np.append(halves[1:], np.float32(65536.0))  # their midpoint, 65520, rounds to infinity
    middle = ((halves.astype(np.float64) + upper.astype(np.float64)) / 2).astype(np.float32)
    probes = np.concatenate([halves, middle, np.nextafter(middle, np.float32(0)),
                             np.nextafter(middle, np.float32(np.inf))])
    probes = np.concatenate([probes, -probes, [np.inf, -np.inf]]).astype(np.float32)
    rng = np.random.default_rng(7)
    patterns = rng.integers(0, 2**32, size=1 << 20, dtype=np.uint64).astype(np.uint32).view(np.float32)
    for values in (probes, patterns[~np.isnan(patterns)]):
        out = np.empty((1, values.size), np.uint16)
        values = values.reshape(1, -1)
        values.flags.writeable = False
        convert(values, np.float32(1.0), np.uint16(0), out)
        np.testing.assert_array_equal(out[0], _numpy_halves(values[0]))
    nan = np.full((1, 3), np.nan, np.float32)
    nan.flags.writeable = False
    out = np.empty((1, 3), np.uint16)
    assert convert(nan, np.float32(1.0), np.uint16(0), out) >= 0x7C00
    assert np.isnan(out.view(np.float16)).all()


def test_numpy_converts_where_the_converter_cannot_be_built(monkeypatch):
    """Without the compiled converter to_pixels gives the same halves and errors."""
    from oceanfield.io import exr

    rng = np.random.default_rng(3)
    view = rng.normal(0, 300, (40, 64)).astype(np.float32)[:, ::2]
    view.flags.writeable = False  # as a frame's maps are
    compiled = to_pixels("R", view, "half", negate=True, divisor=0.3048)
    monkeypatch.setattr(exr, "_HALF_CONVERTER", [None])
    fallback = to_pixels("R", view, "half", negate=True, divisor=0.3048)
    np.testing.assert_array_equal(compiled.view(np.uint16), fallback.view(np.uint16))
    with pytest.raises(ValueError, match=r"channel 'B': value 70000 exceeds"):
        to_pixels("B", np.array([[1.0, 70000.0]], np.float32), "half")
