"""16-bit PNG writer and reader for one map, its value range kept in a JSON sidecar.

Knows nothing of physics: it writes and reads one array and its value range.

A map of real numbers is stored as 16-bit unsigned samples, mapped linearly from a value
range [lo, hi] to 0 … 65535::

    q = round((v − lo) / (hi − lo) · 65535)        v = lo + q · (hi − lo) / 65535

so a value inside the range comes back within half a step, (hi − lo) / 65535 / 2. The range
lives beside the image in ``<image>.json`` (``frame.0001.png.json``)::

    {"value_range": [lo, hi], "channels": ["Y"], "encoding": "..."}

with channels ``["Y"]`` for a grey image and ``["R", "G", "B"]`` for a three-channel one, as
in `oceanfield.surface.maps`. Both files are written atomically: both are complete before either
is renamed into place, the sidecar first, so an image on disk always has its sidecar.

The images are plain PNG (ISO/IEC 15948:2003; W3C "Portable Network Graphics (PNG)
Specification", 2nd ed., 2003): 16-bit grey (colour type 0) or RGB (colour type 2), not
interlaced, every row filtered with the "Up" filter, which suits smooth maps. They are
encoded here with zlib because the image libraries this project depends on cannot write
16-bit RGB; the reader decodes all five filter types, so images re-saved by other tools
still read (rows filtered "Average" or "Paeth" decode slowly, byte by byte).
"""

from __future__ import annotations

import json
import math
import os
import struct
import zlib
from collections.abc import Sequence
from pathlib import Path

import numpy as np
from numpy.typing import ArrayLike, NDArray

from oceanfield.io.atomic import atomic_output
from oceanfield.io.errors import CorruptFileError

__all__ = ["LEVELS", "write_png16", "read_png16", "sidecar_path"]

#: Largest 16-bit sample: the value range spans LEVELS steps.
LEVELS = 65535

_SIGNATURE = b"\x89PNG\r\n\x1a\n"  # PNG spec, 5.2
_COLOUR_TYPES = {1: 0, 3: 2}  # channels → PNG colour type (grey, truecolour); spec 11.2.2
_CHANNEL_NAMES = {1: ["Y"], 3: ["R", "G", "B"]}
_FILTER_UP = 2  # spec 9.2
_ZLIB_LEVEL = 6
_IDAT_BYTES = 1 << 24  # split the image data into chunks of at most this many bytes
_ENCODING = "value = lo + q * (hi - lo) / 65535, q the 16-bit sample"


def sidecar_path(path: str | os.PathLike[str]) -> Path:
    """The JSON sidecar holding an image's value range: ``<path>.json``."""
    path = Path(path)
    return path.with_name(path.name + ".json")


def write_png16(
    path: str | os.PathLike[str],
    array: ArrayLike,
    *,
    value_range: Sequence[float] | None = None,
) -> Path:
    """Write a map as a 16-bit PNG with its value range in a JSON sidecar.

    Parameters
    ----------
    path : str or path-like
        Output image; its folder must exist. The sidecar goes to `sidecar_path(path)`.
    array : array_like
        Finite real values, shape (rows, columns) for one channel or (rows, columns, 3).
    value_range : (float, float), optional
        The values stored as 0 and 65535, lo ≤ hi, in the array's units. Values outside
        are clipped to it. Default: the array's own minimum and maximum (a constant array
        gets lo = hi and every sample 0).

    Returns
    -------
    pathlib.Path
        The image written.

    Raises
    ------
    ValueError
        For an array of another shape, non-real or non-finite values, or a bad range.
    OutputError
        When a file cannot be written; neither is left half-written.
    """
    values = np.asarray(array)
    if values.dtype.kind not in "fiu":
        raise ValueError(f"array: dtype {values.dtype}; expected real numbers")
    if not (values.ndim == 2 or (values.ndim == 3 and values.shape[2] == 3)) or 0 in values.shape:
        raise ValueError(f"array: shape {values.shape}; expected (rows, columns) or "
                         f"(rows, columns, 3), non-empty")
    finite = np.isfinite(values)
    if not finite.all():
        raise ValueError(f"array: {values.size - np.count_nonzero(finite)} non-finite values "
                         f"(NaN or infinity); a PNG stores finite values only")
    lo, hi = _checked_range(values, value_range)
    samples = _quantise(values, lo, hi)
    channels = 1 if values.ndim == 2 else 3
    sidecar = {"value_range": [lo, hi], "channels": _CHANNEL_NAMES[channels],
               "encoding": _ENCODING}
    encoded = _encode_png(samples)
    final = Path(path)
    # Both temporaries are written before either is renamed; the inner (sidecar) is renamed
    # first, so an image under the final name always has its sidecar.
    with atomic_output(final) as image, atomic_output(sidecar_path(final)) as record:
        record.write_text(json.dumps(sidecar, indent=1) + "\n", encoding="utf-8")
        image.write_bytes(encoded)
    return final


def read_png16(
    path: str | os.PathLike[str],
) -> tuple[NDArray[np.float32], tuple[float, float]]:
    """Read a map written by `write_png16`, in its original units.

    Parameters
    ----------
    path : str or path-like
        The image; its sidecar `sidecar_path(path)` must be beside it.

    Returns
    -------
    array : NDArray[np.float32]
        Shape (rows, columns) or (rows, columns, 3); within (hi − lo) / 65535 / 2 of the
        values written (plus float32 rounding), where they lay inside the range.
    value_range : (float, float)
        The (lo, hi) the sidecar records.

    Raises
    ------
    FileNotFoundError
        When the image or its sidecar is missing.
    CorruptFileError
        When either is unreadable, truncated or not as described, or they disagree.
    """
    path = Path(path)
    lo, hi, names = _read_sidecar(sidecar_path(path))
    try:
        samples = _decode_png(path.read_bytes())
    except ValueError as exc:
        raise CorruptFileError(path, str(exc)) from exc
    channels = 1 if samples.ndim == 2 else samples.shape[2]
    if len(names) != channels:
        raise CorruptFileError(path, f"{channels} channel(s) but its sidecar lists {names}")
    values = lo + samples.astype(np.float64) * ((hi - lo) / LEVELS)
    return values.astype(np.float32), (lo, hi)


def _checked_range(values: np.ndarray, value_range: Sequence[float] | None) -> tuple[float, float]:
    if value_range is None:
        return float(values.min()), float(values.max())
    try:
        if isinstance(value_range, (str, bytes)):
            raise TypeError
        lo, hi = (float(bound) for bound in value_range)
    except (TypeError, ValueError):
        raise ValueError(f"value_range: got {value_range!r}; expected two numbers (lo, hi)") \
            from None
    if not (math.isfinite(lo) and math.isfinite(hi) and math.isfinite(hi - lo)) or lo > hi:
        raise ValueError(f"value_range: got {value_range!r}; expected finite (lo, hi) with "
                         f"lo ≤ hi")
    return lo, hi


def _quantise(values: np.ndarray, lo: float, hi: float) -> NDArray[np.uint16]:
    if hi == lo:
        return np.zeros(values.shape, dtype=np.uint16)
    scaled = (values.astype(np.float64) - lo) * (LEVELS / (hi - lo))
    return np.clip(np.rint(scaled), 0, LEVELS).astype(np.uint16)


def _read_sidecar(sidecar: Path) -> tuple[float, float, list[str]]:
    text = sidecar.read_text(encoding="utf-8")
    try:
        record = json.loads(text)
        lo, hi = (float(bound) for bound in record["value_range"])
        names = list(record["channels"])
    except (ValueError, TypeError, KeyError) as exc:
        raise CorruptFileError(sidecar, f"expected JSON with 'value_range': [lo, hi] and "
                                        f"'channels' ({exc})") from None
    if not (math.isfinite(lo) and math.isfinite(hi)) or lo > hi:
        raise CorruptFileError(sidecar, f"value_range {[lo, hi]} is not finite with lo ≤ hi")
    return lo, hi, names


def _encode_png(samples: NDArray[np.uint16]) -> bytes:
    """A 16-bit grey or RGB PNG of `samples`, every row "Up"-filtered (PNG spec, 9.2)."""
    height, width = samples.shape[:2]
    channels = 1 if samples.ndim == 2 else samples.shape[2]
    rows = samples.astype(">u2").reshape(height, -1).view(np.uint8)  # big-endian samples
    filtered = np.empty((height, 1 + rows.shape[1]), dtype=np.uint8)
    filtered[:, 0] = _FILTER_UP
    filtered[0, 1:] = rows[0]  # the row above the first counts as zeros
    np.subtract(rows[1:], rows[:-1], out=filtered[1:, 1:])  # modulo 256
    header = struct.pack(">IIBBBBB", width, height, 16, _COLOUR_TYPES[channels], 0, 0, 0)
    data = zlib.compress(filtered.tobytes(), _ZLIB_LEVEL)
    parts = [_SIGNATURE, _chunk(b"IHDR", header)]
    parts += [_chunk(b"IDAT", data[i:i + _IDAT_BYTES]) for i in range(0, len(data), _IDAT_BYTES)]
    parts.append(_chunk(b"IEND", b""))
    return b"".join(parts)


def _chunk(kind: bytes, body: bytes) -> bytes:
    """One PNG chunk: length, type, data, CRC-32 of type and data (PNG spec, 5.3)."""
    return struct.pack(">I", len(body)) + kind + body + struct.pack(">I", zlib.crc32(kind + body))


def _decode_png(data: bytes) -> NDArray[np.uint16]:
    """The samples of a 16-bit grey or RGB, non-interlaced PNG; ValueError otherwise."""
    if data[:8] != _SIGNATURE:
        raise ValueError("not a PNG file")
    header = None
    compressed = []
    position = 8
    while True:
        if position + 8 > len(data):
            raise ValueError("truncated: the file ends before its IEND chunk")
        length, kind = struct.unpack(">I4s", data[position:position + 8])
        body = data[position + 8:position + 8 + length]
        crc = data[position + 8 + length:position + 12 + length]
        if len(crc) != 4:
            raise ValueError(f"truncated in its {kind.decode('latin-1')} chunk")
        if zlib.crc32(kind + body) != int.from_bytes(crc, "big"):
            raise ValueError(f"its {kind.decode('latin-1')} chunk fails its CRC check")
        if kind == b"IHDR":
            header = struct.unpack(">IIBBBBB", body)
        elif kind == b"IDAT":
            compressed.append(body)
        elif kind == b"IEND":
            break
        position += 12 + length
    if header is None:
        raise ValueError("no IHDR chunk")
    width, height, depth, colour_type, _, _, interlace = header
    channels = {colour: count for count, colour in _COLOUR_TYPES.items()}.get(colour_type)
    if depth != 16 or channels is None or interlace != 0:
        raise ValueError(f"bit depth {depth}, colour type {colour_type}, interlace "
                         f"{interlace}; expected a 16-bit grey or RGB image, not interlaced")
    try:
        raw = zlib.decompress(b"".join(compressed))
    except zlib.error as exc:
        raise ValueError(f"its image data does not decompress ({exc})") from None
    stride = width * channels * 2
    if len(raw) != height * (stride + 1):
        raise ValueError(f"{len(raw)} bytes of image data, expected {height * (stride + 1)}")
    rows = _unfilter(np.frombuffer(raw, dtype=np.uint8).reshape(height, stride + 1), 2 * channels)
    samples = rows.view(">u2").astype(np.uint16).reshape(height, width, channels)
    return samples[..., 0] if channels == 1 else samples


def _unfilter(rows: NDArray[np.uint8], bpp: int) -> NDArray[np.uint8]:
    """Undo the per-row filters (PNG spec, 9.2-9.4); `bpp` bytes per pixel."""
    height, width = rows.shape[0], rows.shape[1] - 1
    out = np.empty((height, width), dtype=np.uint8)
    prior = np.zeros(width, dtype=np.uint8)
    for index in range(height):
        kind, line = rows[index, 0], rows[index, 1:]
        if kind == 0:  # None
            out[index] = line
        elif kind == 1:  # Sub: a running sum along each byte lane of the pixel
            out[index] = np.cumsum(line.reshape(-1, bpp), axis=0, dtype=np.uint8).reshape(-1)
        elif kind == 2:  # Up
            out[index] = line + prior
        elif kind in (3, 4):  # Average, Paeth: each byte depends on the one before
            out[index] = _unfilter_sequential(int(kind), line, prior, bpp)
        else:
            raise ValueError(f"row {index} has unknown filter type {kind}")
        prior = out[index]
    return out


def _unfilter_sequential(
    kind: int, line: NDArray[np.uint8], prior: NDArray[np.uint8], bpp: int
) -> NDArray[np.uint8]:
    current = bytearray(line.tobytes())
    above = prior.tobytes()
    for i in range(len(current)):
        left = current[i - bpp] if i >= bpp else 0
        if kind == 3:
            predictor = (left + above[i]) >> 1
        else:  # Paeth predictor (PNG spec, 9.4)
            upper_left = above[i - bpp] if i >= bpp else 0
            estimate = left + above[i] - upper_left
            to_left, to_above = abs(estimate - left), abs(estimate - above[i])
            to_upper_left = abs(estimate - upper_left)
            if to_left <= to_above and to_left <= to_upper_left:
                predictor = left
            elif to_above <= to_upper_left:
                predictor = above[i]
            else:
                predictor = upper_left
        current[i] = (current[i] + predictor) & 0xFF
    return np.frombuffer(bytes(current), dtype=np.uint8)
