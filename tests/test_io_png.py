"""Tests for oceanfield.io.png: 16-bit quantisation, the sidecar, PNG conformance, damage.

The independent reader is imageio (Pillow backend). It reads 16-bit grey PNGs exactly; it
reduces 16-bit RGB to 8 bits by keeping each sample's high byte, which is checked as such.
Pillow also writes 16-bit grey PNGs with its own adaptive row filters, a test of the
decoder on files this project did not write.
"""

from __future__ import annotations

import errno
import json
import os
import struct
import zlib

import imageio.v3 as iio
import numpy as np
import pytest

from oceanfield.io import png
from oceanfield.io.atomic import is_temporary
from oceanfield.io.errors import CorruptFileError, OutputError
from oceanfield.io.png import LEVELS, read_png16, sidecar_path, write_png16

#: float32 keeps 24 significand bits: converting the float64 reconstruction to float32
#: adds up to half an ulp, a relative 2**-24 (IEEE 754).
FLOAT32_RTOL = 2.0**-24


def _field(shape, seed=0, scale=3.0, offset=0.0):
    rng = np.random.default_rng(seed)
    return (rng.standard_normal(shape) * scale + offset).astype(np.float32)


def _quantisation_bound(values, lo, hi):
    """Half a step of the 16-bit range plus float32 rounding of the value read back."""
    return (hi - lo) / LEVELS / 2 + np.abs(values).astype(np.float64) * FLOAT32_RTOL


@pytest.mark.parametrize("shape", [(1, 1), (17, 23), (64, 64), (12, 20, 3)])
def test_round_trip_within_half_a_step(tmp_path, shape):
    path = tmp_path / "map.png"
    values = _field(shape, offset=5.0)
    write_png16(path, values)
    read, (lo, hi) = read_png16(path)
    assert (lo, hi) == (float(values.min()), float(values.max()))
    assert read.dtype == np.float32 and read.shape == values.shape
    error = np.abs(read.astype(np.float64) - values)
    assert np.all(error <= _quantisation_bound(values, lo, hi))
    if values.size > 1:  # the quantiser does use the whole range of steps
        assert error.max() > 0.25 * (hi - lo) / LEVELS


def test_range_ends_are_exact(tmp_path):
    path = tmp_path / "ends.png"
    values = np.array([[-1.25, 0.3], [2.75, 1.0]], np.float32)
    write_png16(path, values)
    read, _ = read_png16(path)
    assert read[0, 0] == np.float32(-1.25) and read[1, 0] == np.float32(2.75)


def test_sidecar_records_range_and_channels(tmp_path):
    grey, rgb = tmp_path / "grey.png", tmp_path / "rgb.png"
    values = _field((8, 8, 3))
    write_png16(grey, values[..., 0], value_range=(-10, 10))
    write_png16(rgb, values)
    record = json.loads(sidecar_path(grey).read_text())
    assert record["value_range"] == [-10.0, 10.0]
    assert record["channels"] == ["Y"]
    assert sidecar_path(grey).name == "grey.png.json"
    record = json.loads(sidecar_path(rgb).read_text())
    assert record["channels"] == ["R", "G", "B"]
    assert record["value_range"] == [float(values.min()), float(values.max())]


def test_given_range_clips_outside_values(tmp_path):
    path = tmp_path / "clip.png"
    values = np.array([[-5.0, -1.0, 0.0], [0.5, 1.0, 9.0]], np.float32)
    write_png16(path, values, value_range=(-1, 1))
    read, value_range = read_png16(path)
    assert value_range == (-1.0, 1.0)
    clipped = np.clip(values, -1, 1)
    assert np.all(np.abs(read - clipped) <= _quantisation_bound(clipped, -1, 1))
    assert read.min() == -1 and read.max() == 1


def test_constant_array(tmp_path):
    path = tmp_path / "flat.png"
    write_png16(path, np.full((6, 5), 0.7, np.float32))
    read, value_range = read_png16(path)
    assert value_range == (float(np.float32(0.7)),) * 2
    np.testing.assert_array_equal(read, np.full((6, 5), 0.7, np.float32))


def test_imageio_reads_the_grey_samples(tmp_path):
    """16-bit grey: Pillow reads every sample exactly; compare with q computed by hand."""
    path = tmp_path / "grey.png"
    values = _field((33, 47), seed=3)
    lo, hi = float(values.min()), float(values.max())
    write_png16(path, values)
    expected = np.rint((values.astype(np.float64) - lo) / (hi - lo) * 65535).astype(np.uint16)
    samples = iio.imread(path)
    assert samples.dtype == np.uint16
    np.testing.assert_array_equal(samples, expected)


def test_imageio_reads_the_rgb_high_bytes(tmp_path):
    path = tmp_path / "rgb.png"
    values = _field((9, 13, 3), seed=4)
    lo, hi = float(values.min()), float(values.max())
    write_png16(path, values)
    expected = np.rint((values.astype(np.float64) - lo) / (hi - lo) * 65535).astype(np.uint16)
    samples = iio.imread(path)
    assert samples.shape == (9, 13, 3)
    np.testing.assert_array_equal(samples, (expected >> 8).astype(np.uint8))


def _write_sidecar(path, lo, hi, channels):
    sidecar_path(path).write_text(json.dumps({"value_range": [lo, hi], "channels": channels}))


def test_reads_grey_png_written_by_pillow(tmp_path):
    """Pillow filters rows adaptively (None, Sub, Up, Paeth): the decoder must undo them."""
    path = tmp_path / "pillow.png"
    rng = np.random.default_rng(5)
    samples = rng.integers(0, 65536, size=(24, 31)).astype(np.uint16)
    samples[:12] = np.arange(31, dtype=np.uint16) * 2000  # smooth rows favour other filters
    iio.imwrite(path, samples)
    _write_sidecar(path, 0.0, 65535.0, ["Y"])
    read, _ = read_png16(path)
    np.testing.assert_array_equal(read, samples.astype(np.float32))


def _filtered_png(samples, filter_type):
    """A PNG whose rows all use one filter, encoded literally from the PNG spec, 9.2-9.4."""
    height, width, channels = samples.shape
    raw = samples.astype(">u2").tobytes()
    stride, bpp = width * channels * 2, channels * 2
    out, prior = bytearray(), bytes(stride)
    for row in range(height):
        line = raw[row * stride:(row + 1) * stride]
        out.append(filter_type)
        for i, byte in enumerate(line):
            a = line[i - bpp] if i >= bpp else 0
            b = prior[i]
            c = prior[i - bpp] if i >= bpp else 0
            predictor = (0, a, b, (a + b) // 2, _paeth(a, b, c))[filter_type]
            out.append((byte - predictor) % 256)
        prior = line

    def chunk(kind, body):
        crc = struct.pack(">I", zlib.crc32(kind + body))
        return struct.pack(">I", len(body)) + kind + body + crc

    colour_type = {1: 0, 3: 2}[channels]
    return (b"\x89PNG\r\n\x1a\n"
            + chunk(b"IHDR", struct.pack(">IIBBBBB", width, height, 16, colour_type, 0, 0, 0))
            + chunk(b"IDAT", zlib.compress(bytes(out)))
            + chunk(b"IEND", b""))


def _paeth(a, b, c):
    p = a + b - c
    pa, pb, pc = abs(p - a), abs(p - b), abs(p - c)
    if pa <= pb and pa <= pc:
        return a
    return b if pb <= pc else c


@pytest.mark.parametrize("filter_type", [0, 1, 2, 3, 4])
@pytest.mark.parametrize("channels", [1, 3])
def test_decoder_undoes_every_filter_type(tmp_path, filter_type, channels):
    rng = np.random.default_rng(filter_type)
    samples = rng.integers(0, 65536, size=(7, 11, channels)).astype(np.uint16)
    path = tmp_path / "filtered.png"
    path.write_bytes(_filtered_png(samples, filter_type))
    _write_sidecar(path, 0.0, 65535.0, ["Y"] if channels == 1 else ["R", "G", "B"])
    read, _ = read_png16(path)
    expected = samples[..., 0] if channels == 1 else samples
    np.testing.assert_array_equal(read, expected.astype(np.float32))


# --- bad input and damage ------------------------------------------------------------------

@pytest.mark.parametrize(
    ("array", "kwargs", "message"),
    [
        (np.zeros((4, 4, 2)), {}, "shape"),
        (np.zeros((4, 4, 4)), {}, "shape"),
        (np.zeros(5), {}, "shape"),
        (np.zeros((0, 4)), {}, "non-empty"),
        (np.array([[1.0, np.nan]]), {}, "1 non-finite"),
        (np.array([[1.0, np.inf]]), {}, "non-finite"),
        (np.zeros((2, 2), complex), {}, "real numbers"),
        (np.zeros((2, 2)), {"value_range": (1, 0)}, "lo ≤ hi"),
        (np.zeros((2, 2)), {"value_range": (0, np.nan)}, "finite"),
        (np.zeros((2, 2)), {"value_range": (0, 1, 2)}, "two numbers"),
        (np.zeros((2, 2)), {"value_range": "01"}, "value_range"),
        (np.zeros((2, 2)), {"value_range": (-1e308, 1e308)}, "finite"),
    ],
)
def test_bad_input(tmp_path, array, kwargs, message):
    with pytest.raises(ValueError, match=message):
        write_png16(tmp_path / "bad.png", array, **kwargs)
    assert list(tmp_path.iterdir()) == []


def _written(tmp_path):
    path = tmp_path / "map.png"
    write_png16(path, _field((40, 40)))
    return path, path.read_bytes()


def test_missing_sidecar(tmp_path):
    path, _ = _written(tmp_path)
    sidecar_path(path).unlink()
    with pytest.raises(FileNotFoundError, match="map.png.json"):
        read_png16(path)


@pytest.mark.parametrize("keep", [10, 40, 0.5, -1])
def test_truncated_image(tmp_path, keep):
    path, data = _written(tmp_path)
    path.write_bytes(data[:int(len(data) * keep) if isinstance(keep, float) else keep % len(data)])
    with pytest.raises(CorruptFileError) as caught:
        read_png16(path)
    assert "\n" not in str(caught.value) and str(path) in str(caught.value)


def test_corrupt_byte_fails_the_crc(tmp_path):
    path, data = _written(tmp_path)
    damaged = bytearray(data)
    damaged[60] ^= 0xFF  # inside the image data
    path.write_bytes(bytes(damaged))
    with pytest.raises(CorruptFileError, match="IDAT"):
        read_png16(path)


def test_eight_bit_png_is_refused(tmp_path):
    path = tmp_path / "eight.png"
    iio.imwrite(path, np.zeros((4, 4), np.uint8))
    _write_sidecar(path, 0.0, 1.0, ["Y"])
    with pytest.raises(CorruptFileError, match="bit depth 8"):
        read_png16(path)


@pytest.mark.parametrize(("record", "message"), [
    ({"value_range": [0, 1], "channels": ["R", "G", "B"]}, "1 channel"),
    ({"value_range": [1, 0], "channels": ["Y"]}, "lo ≤ hi"),
    ({"channels": ["Y"]}, "value_range"),
    ("not json", "value_range"),
])
def test_bad_sidecar(tmp_path, record, message):
    path, _ = _written(tmp_path)
    text = record if isinstance(record, str) else json.dumps(record)
    sidecar_path(path).write_text(text)
    with pytest.raises(CorruptFileError, match=message):
        read_png16(path)


def test_failed_write_leaves_neither_file(tmp_path, monkeypatch):
    """Full disk while writing the image: no image, no sidecar, no temporaries."""
    def full_disk(self, data):
        raise OSError(errno.ENOSPC, os.strerror(errno.ENOSPC))

    monkeypatch.setattr(png.Path, "write_bytes", full_disk)
    path = tmp_path / "map.png"
    with pytest.raises(OutputError) as caught:
        write_png16(path, _field((8, 8)))
    assert caught.value.errno == errno.ENOSPC
    assert "\n" not in str(caught.value) and str(path) in str(caught.value)
    assert list(tmp_path.iterdir()) == []


def test_failed_write_keeps_the_previous_pair(tmp_path, monkeypatch):
    path = tmp_path / "map.png"
    old = _field((8, 8), seed=1)
    write_png16(path, old, value_range=(-20, 20))

    def full_disk(self, data):
        raise OSError(errno.ENOSPC, os.strerror(errno.ENOSPC))

    monkeypatch.setattr(png.Path, "write_bytes", full_disk)
    with pytest.raises(OutputError):
        write_png16(path, _field((8, 8), seed=2), value_range=(0, 1))
    monkeypatch.undo()
    read, value_range = read_png16(path)
    assert value_range == (-20.0, 20.0)
    assert np.all(np.abs(read - old) <= _quantisation_bound(old, -20, 20))
    assert not any(is_temporary(p) for p in tmp_path.iterdir())


def test_missing_sidecar_says_what_to_write(tmp_path):
    """The image is there; the message names the missing sidecar and its content, not the PNG."""
    path, _ = _written(tmp_path)
    sidecar_path(path).unlink()
    with pytest.raises(png.MissingSidecarError) as caught:
        read_png16(path)
    text = str(caught.value)
    assert "has no value-range sidecar 'map.png.json'" in text and '"value_range": [LO, HI]' in text
    assert "No such file" not in text and "\n" not in text


def test_analyze_on_pngs_without_sidecars_names_the_sidecar(tmp_path, capsys):
    """A folder of plain 16-bit PNGs (from another tool): exit 2, one block naming the sidecar."""
    from oceanfield.cli import main

    for frame in range(20):
        iio.imwrite(tmp_path / f"img{frame:03d}.png", np.full((32, 32), 1000 * frame, np.uint16))
    status = main(["analyze", str(tmp_path), "--tile-size", "10", "--fps", "24"])
    err = capsys.readouterr().err
    assert status == 2
    assert "img000.png' has no value-range sidecar 'img000.png.json'" in err
    assert "No such file" not in err and "Traceback" not in err
