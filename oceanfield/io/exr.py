"""OpenEXR writer and reader for map channels (the `OpenEXR` package's 3.x API).

Knows nothing of physics: it writes and reads named channels.

Files are single-part scan-line images. Channels are named by the OpenEXR convention
(``R``, ``G``, ``B``, ``Y``, or ``layer.R`` in a multi-layer file) and stored as 16-bit
half floats or 32-bit floats, chosen per channel or per layer.

Compression
-----------
==========  ========  ===========================================================
name        lossless  notes
==========  ========  ===========================================================
``zip``     yes       zlib, 16 scan lines a block; the default, good on smooth maps
``zips``    yes       zlib, one scan line a block
``piz``     yes       wavelet + Huffman, 32 lines a block
``rle``     yes       run-length
``none``    yes       uncompressed
``pxr24``   no        32-bit floats rounded to 24 bits (relative error ≤ 2⁻¹⁶);
                      half channels lossless
``dwaa``    no        DCT, 32 lines a block; lossy on half channels and on channels
``dwab``    no        named like colours (R, G, B, Y), so for previews, never for
                      displacement that will be rendered (DWAB: 256 lines a block)
==========  ========  ===========================================================

Header attributes
-----------------
`write_exr` stores these Python values and `read_exr` returns them unchanged:

=================================  ===========================  ======================
value                              stored as (OpenEXR type)     read back as
=================================  ===========================  ======================
str                                ``string``                   str
int in the 32-bit range, bool      ``int``                      int
float                              ``double``                   float (exact)
2 or 3 ints                        ``v2i`` / ``v3i``            tuple of int
2 or 3 numbers, any a float        ``v2d`` / ``v3d``            tuple of float (exact)
non-empty list or tuple of str     ``stringvector``             list of str
=================================  ===========================  ======================

Anything else (None, dicts, empty or longer numeric sequences, ints beyond 32 bits) is
refused with a ValueError. Attributes other files carry come back as Python values where
the binding gives numbers or arrays (floats, tuples, nested tuples for matrices) and as the
binding's objects otherwise. The attributes that describe the image layout (channels,
compression, dataWindow, ...) are set by the writer and not returned by the reader.
"""

from __future__ import annotations

import math
import os
import struct
from collections.abc import Iterable, Mapping
from pathlib import Path
from typing import Any

import numpy as np
import OpenEXR
from numpy.typing import ArrayLike, NDArray

from oceanfield.io.atomic import atomic_output
from oceanfield.io.errors import CorruptFileError, OutputError

__all__ = [
    "COMPRESSIONS",
    "LOSSLESS_COMPRESSIONS",
    "PRECISIONS",
    "write_exr",
    "read_exr",
    "read_exr_attributes",
    "to_pixels",
    "half_converter_ready",
    "exr_is_complete",
    "set_encoder_threads",
]

#: Compression names `write_exr` accepts, mapped to the binding's values.
_COMPRESSION_VALUES = {
    "zip": OpenEXR.ZIP_COMPRESSION,
    "zips": OpenEXR.ZIPS_COMPRESSION,
    "piz": OpenEXR.PIZ_COMPRESSION,
    "rle": OpenEXR.RLE_COMPRESSION,
    "none": OpenEXR.NO_COMPRESSION,
    "pxr24": OpenEXR.PXR24_COMPRESSION,
    "dwaa": OpenEXR.DWAA_COMPRESSION,
    "dwab": OpenEXR.DWAB_COMPRESSION,
}
COMPRESSIONS: tuple[str, ...] = tuple(_COMPRESSION_VALUES)
LOSSLESS_COMPRESSIONS: tuple[str, ...] = ("zip", "zips", "piz", "rle", "none")

#: Pixel precisions: 16-bit half float or 32-bit float.
_PIXEL_DTYPES = {"half": np.float16, "float": np.float32}
PRECISIONS: tuple[str, ...] = tuple(_PIXEL_DTYPES)

#: Largest finite half-float value (IEEE 754 binary16).
_HALF_MAX = float(np.finfo(np.float16).max)

#: Header attributes describing the image layout; the writer sets them, the reader omits them.
_LAYOUT_ATTRIBUTES = frozenset({
    "channels", "compression", "dataWindow", "displayWindow", "lineOrder",
    "pixelAspectRatio", "screenWindowCenter", "screenWindowWidth", "tiles", "type",
    "name", "version", "chunkCount",
})
_NAME_MAX_BYTES = 255  # channel and attribute names, with OpenEXR 2+ long-name support
_INT32 = (-(2**31), 2**31 - 1)

# File layout, from "OpenEXR File Layout" (openexr.com): magic number 20000630, version
# flags, header, chunk offset table, chunks (int32 y, int32 packed size, data).
_MAGIC = (20000630).to_bytes(4, "little")
_NOT_PLAIN_SCANLINE = 0x200 | 0x800 | 0x1000  # tiled, deep ("non-image"), multi-part
#: Scan lines in one chunk, by the compression byte stored in the file.
_LINES_PER_CHUNK = {0: 1, 1: 1, 2: 1, 3: 16, 4: 32, 5: 16, 6: 32, 7: 32, 8: 32, 9: 256}
_HEADER_READ = 1 << 20  # bytes read to parse the header; larger headers skip the check


def set_encoder_threads(count: int) -> int:
    """Compress and decompress on ``count`` threads of the binding's process-wide pool.

    The OpenEXR binding (3.4 and later) releases Python's lock while it reads or writes
    and splits a file's chunks over this pool; 0 or 1 means the calling thread alone.
    Files come out byte-identical whatever the count (chunks are compressed
    independently and stored in order). Returns the count set.
    """
    if isinstance(count, bool) or not isinstance(count, int) or count < 0:
        raise ValueError(f"count: {count!r} is not allowed; allowed: an integer >= 0")
    if OpenEXR.global_thread_count() != count:
        OpenEXR.set_global_thread_count(count)
    return count


def write_exr(
    path: str | os.PathLike[str],
    channels: Mapping[str, ArrayLike],
    *,
    precision: str | Mapping[str, str] = "half",
    compression: str = "zip",
    attributes: Mapping[str, Any] | None = None,
) -> Path:
    """Write channels to an OpenEXR file, atomically.

    Parameters
    ----------
    path : str or path-like
        Output file; its folder must exist. Written through a temporary and renamed into
        place only when complete (`oceanfield.io.atomic.atomic_output`).
    channels : mapping of str to array_like
        Channel name → 2-D array of real numbers; at least one, all the same shape
        (rows, columns). Names are non-empty, at most 255 bytes.
    precision : {"half", "float"} or mapping, optional
        Pixel type of every channel, or a mapping from channel names (``"foam.Y"``) or
        layer names (``"foam"``) to ``"half"`` / ``"float"``; a channel's own name wins
        over its layer's, and channels the mapping does not name are half.
    compression : str, optional
        One of `COMPRESSIONS`; see the module notes for which are lossy.
    attributes : mapping of str to value, optional
        Extra header attributes; see the module notes for the types kept.

    Returns
    -------
    pathlib.Path
        The file written.

    Raises
    ------
    ValueError
        For bad channels (shapes, dtypes, names), an unknown precision or compression, a
        half channel holding a finite value beyond ±65504, or an attribute of a type that
        is not kept or whose name the writer reserves.
    OutputError
        When the file cannot be written or comes out incomplete (read-only folder, full
        disk, missing folder); no file is left under `path`'s name.
    """
    arrays = _checked_channels(channels)
    precisions = _channel_precisions(precision, list(arrays))
    if not isinstance(compression, str) or compression not in _COMPRESSION_VALUES:
        raise ValueError(f"compression: got {compression!r}; expected one of "
                         f"{', '.join(COMPRESSIONS)}")
    header = {
        "type": OpenEXR.scanlineimage,
        "compression": _COMPRESSION_VALUES[compression],
        **_header_attributes(attributes),
    }
    pixels = {name: to_pixels(name, arrays[name], precisions[name]) for name in arrays}
    final = Path(path)
    with atomic_output(final) as temporary:
        try:
            OpenEXR.File(header, pixels).write(str(temporary))
        except RuntimeError as exc:
            raise OutputError(final, str(exc)) from exc
        # The library does not report every failed write (a full disk can pass silently),
        # so check that every chunk the offset table promises lies inside the file.
        problem = _layout_problem(temporary)
        if problem is not None:
            raise OutputError(final, f"the file came out incomplete ({problem}); "
                                     f"is the disk full?")
    return final


def read_exr(
    path: str | os.PathLike[str],
) -> tuple[dict[str, NDArray[np.float32]], dict[str, Any]]:
    """Read every channel and the extra header attributes of an OpenEXR file.

    Parameters
    ----------
    path : str or path-like
        The file. Multi-part files give their first part.

    Returns
    -------
    channels : dict of str to NDArray[np.float32]
        Channel name → (rows, columns) array, converted to float32 whatever the stored
        pixel type (half is exact in float32).
    attributes : dict of str to value
        The header attributes other than those describing the image layout; see the
        module notes for their Python types.

    Raises
    ------
    FileNotFoundError
        When there is no file.
    CorruptFileError
        When the file is not OpenEXR, or truncated, or its pixel data does not decode.
    """
    path = Path(path)
    problem = _layout_problem(path)
    if problem is not None:
        raise CorruptFileError(path, problem)
    try:
        # Copy everything out inside the block: leaving it releases the header and pixels.
        with OpenEXR.File(str(path), separate_channels=True) as exr:
            channels = {}
            for name, channel in exr.channels().items():
                if channel.pixels is None:
                    raise CorruptFileError(path, f"channel {name!r} has no pixel data")
                channels[name] = np.array(channel.pixels, dtype=np.float32)
            attributes = {
                name: _python_value(value)
                for name, value in exr.header().items()
                if name not in _LAYOUT_ATTRIBUTES
            }
    except (RuntimeError, ValueError) as exc:
        raise CorruptFileError(path, f"its data does not decode ({exc})") from exc
    return channels, attributes


def read_exr_attributes(path: str | os.PathLike[str]) -> dict[str, Any]:
    """The extra header attributes of an OpenEXR file, without reading its pixels.

    Raises
    ------
    FileNotFoundError
        When there is no file.
    CorruptFileError
        When the header cannot be read.
    """
    path = Path(path)
    if not path.is_file():
        raise FileNotFoundError(path)
    try:
        with OpenEXR.File(str(path), header_only=True) as exr:
            return {
                name: _python_value(value)
                for name, value in exr.header().items()
                if name not in _LAYOUT_ATTRIBUTES
            }
    except (RuntimeError, ValueError) as exc:
        raise CorruptFileError(path, f"its header does not read ({exc})") from exc


def exr_is_complete(
    path: str | os.PathLike[str],
    expected_channels: Iterable[str] | None = None,
    *,
    decode: bool = True,
) -> bool:
    """Whether a file is a whole, readable OpenEXR image (for resuming renders).

    The header is parsed, every chunk the offset table promises must lie inside the file,
    and, with `decode`, all pixel data must decode. Never raises for a missing, truncated
    or corrupt file: it returns False.

    Parameters
    ----------
    path : str or path-like
        The file.
    expected_channels : iterable of str, optional
        Channel names that must all be present (the file may hold more).
    decode : bool, optional
        Decode all pixel data (default). False checks the header and the chunk table
        only: it catches every truncation, which is how interrupted writes and full disks
        show, but not corrupted bytes inside a chunk, and is much faster on large frames.

    Returns
    -------
    bool
    """
    if isinstance(expected_channels, str):
        raise ValueError(f"expected_channels: got the string {expected_channels!r}; pass "
                         f"a collection of channel names")
    expected = set(expected_channels or ())
    try:
        if _layout_problem(Path(path)) is not None:
            return False
        with OpenEXR.File(os.fspath(path), separate_channels=True,
                          header_only=not decode) as exr:
            if decode:
                channels = exr.channels()
                if any(channel.pixels is None for channel in channels.values()):
                    return False
                names = set(channels)
            else:
                names = {channel.name for channel in exr.header()["channels"]}
    except (OSError, RuntimeError, ValueError):
        return False
    return expected <= names


def _checked_channels(channels: Mapping[str, ArrayLike]) -> dict[str, np.ndarray]:
    if not isinstance(channels, Mapping) or not channels:
        raise ValueError("channels: expected a non-empty mapping of channel name to 2-D "
                         f"array, got {type(channels).__name__}")
    arrays: dict[str, np.ndarray] = {}
    first = None
    for name, value in channels.items():
        _check_name("channel name", name)
        array = np.asarray(value)
        if array.dtype.kind not in "fiu":
            raise ValueError(f"channel {name!r}: dtype {array.dtype}; expected real numbers")
        if array.ndim != 2 or 0 in array.shape:
            raise ValueError(f"channel {name!r}: shape {array.shape}; expected a non-empty "
                             f"2-D array (rows, columns)")
        if first is None:
            first = name
        elif array.shape != arrays[first].shape:
            raise ValueError(f"channel {name!r}: shape {array.shape} differs from channel "
                             f"{first!r}'s {arrays[first].shape}; all must match")
        arrays[name] = array
    return arrays


def _check_name(what: str, name: object) -> None:
    if (
        not isinstance(name, str)
        or not name
        or "\0" in name
        or len(name.encode()) > _NAME_MAX_BYTES
    ):
        raise ValueError(f"{what}: got {name!r}; expected a non-empty string of at most "
                         f"{_NAME_MAX_BYTES} bytes without NUL")


def _channel_precisions(
    precision: str | Mapping[str, str], names: list[str]
) -> dict[str, str]:
    if isinstance(precision, str):
        _check_precision("precision", precision)
        return dict.fromkeys(names, precision)
    if not isinstance(precision, Mapping):
        raise ValueError(f"precision: got {precision!r}; expected 'half', 'float' or a "
                         f"mapping of channel or layer name to one of them")
    layers = {name.rpartition(".")[0] for name in names} - {""}
    for key, value in precision.items():
        _check_precision(f"precision[{key!r}]", value)
        if key not in names and key not in layers:
            raise ValueError(
                f"precision: key {key!r} names no channel or layer; channels: "
                f"{', '.join(sorted(names))}; layers: {', '.join(sorted(layers)) or 'none'}"
            )
    return {
        name: precision.get(name, precision.get(name.rpartition(".")[0], "half"))
        for name in names
    }


def _check_precision(what: str, value: object) -> None:
    if not isinstance(value, str) or value not in _PIXEL_DTYPES:
        raise ValueError(f"{what}: got {value!r}; expected one of {', '.join(PRECISIONS)}")


def to_pixels(name: str, array: ArrayLike, precision: str, *, negate: bool = False,
              divisor: float = 1.0) -> np.ndarray:
    """The C-contiguous array of the pixel type (``"half"`` or ``"float"``) a file stores.

    The stored values are ``(−array if negate else array) / divisor``, divided in float32
    for float32 input, so a caller can hand over a strided view of its data and let the
    conversion make the only copy (a render's maps are views into the frame's buffer).

    Raises ValueError when a finite value does not fit in a half float (±65504).
    """
    array = np.asarray(array)
    if precision == "half" and array.dtype == np.float32 and array.ndim == 2:
        convert = _half_converter()
        if convert is not None:  # the processor's conversion instruction (``io._half``)
            half = np.empty(array.shape, dtype=np.float16)
            source = array.view()
            source.flags.writeable = False  # the kernel's one signature
            worst = convert(source, np.float32(divisor), np.uint16(0x8000 if negate else 0), half.view(np.uint16))
            if worst >= 0x7C00:  # an infinity or NaN: was it a finite value that overflowed?
                _check_half_range(name, half, np.divide(array, divisor, dtype=np.float32))
            return half
    if divisor != 1.0:
        array = np.divide(array, divisor, dtype=np.float32 if array.dtype == np.float32 else None)
    if precision == "float":
        return np.ascontiguousarray(-array if negate else array, dtype=np.float32)
    if array.dtype == np.float16:  # already halves (encoded earlier): nothing can overflow
        return np.ascontiguousarray(-array if negate else array)
    with np.errstate(over="ignore", invalid="ignore"):
        half = np.ascontiguousarray(array, dtype=np.float16)
    bits = half.view(np.uint16)
    if negate:  # −x rounds to −(x rounded): flip the sign bits of the halves
        np.bitwise_xor(bits, np.uint16(0x8000), out=bits)
    # An exponent of all ones is infinity or NaN; only then look for finite values that
    # overflowed (values from 65520 on round to infinity: IEEE 754 binary16, round to nearest even).
    if bits.size and int((bits & np.uint16(0x7FFF)).max()) >= 0x7C00:
        _check_half_range(name, half, array)
    return half


def _check_half_range(name: str, half: np.ndarray, array: np.ndarray) -> None:
    """Raise ValueError if a finite value of ``array`` became an infinite half."""
    overflow = np.isinf(half) & np.isfinite(array)
    if overflow.any():
        peak = float(np.max(np.abs(array[overflow])))
        raise ValueError(
            f"channel {name!r}: value {peak:g} exceeds the half-float range ±{_HALF_MAX:g}; "
            f"store it with precision 'float' or use larger scene units"
        )


_HALF_CONVERTER: list = []  # [io._half.convert, or None where it cannot be built], once tried


def half_converter_ready() -> bool:
    """Compile (or load from numba's disk cache) the float32 → half converter half-float
    files are written with; False where it cannot be built and numpy converts instead.
    ``oceanfield compile`` calls it so a farm image's cache holds it."""
    return _half_converter() is not None


def _half_converter():
    """The compiled float32 → half converter (``io._half``), or None to convert with numpy."""
    if not _HALF_CONVERTER:
        try:
            from ._half import convert
        except Exception:  # noqa: BLE001 - no compiler for this processor: numpy converts
            convert = None
        _HALF_CONVERTER.append(convert)
    return _HALF_CONVERTER[0]


def _header_attributes(attributes: Mapping[str, Any] | None) -> dict[str, Any]:
    if attributes is None:
        return {}
    if not isinstance(attributes, Mapping):
        raise ValueError(f"attributes: got {type(attributes).__name__}; expected a mapping "
                         f"of attribute name to value")
    header = {}
    for name, value in attributes.items():
        _check_name("attribute name", name)
        if name in _LAYOUT_ATTRIBUTES:
            raise ValueError(f"attribute {name!r}: set by the writer; reserved names: "
                             f"{', '.join(sorted(_LAYOUT_ATTRIBUTES))}")
        header[name] = _header_value(name, value)
    return header


def _header_value(name: str, value: Any) -> Any:
    """The value the binding stores as the attribute type the module notes promise."""
    if isinstance(value, str):
        return value
    if _is_integer(value) or isinstance(value, (bool, np.bool_)):
        return _int32(name, int(value))
    if isinstance(value, (float, np.floating)):
        return np.array([float(value)], dtype=np.float64)  # the binding's "double"
    items = None
    if isinstance(value, np.ndarray) and value.ndim == 1:
        items = value.tolist()
    elif isinstance(value, (list, tuple)):
        items = list(value)
    if items:
        if all(isinstance(item, str) for item in items):
            return items
        if len(items) in (2, 3) and all(_is_number(item) for item in items):
            if all(_is_integer(item) for item in items):
                return tuple(_int32(name, int(item)) for item in items)
            return np.array(items, dtype=np.float64)  # v2d / v3d
    raise ValueError(
        f"attribute {name!r}: cannot store {value!r} ({type(value).__name__}); allowed: "
        f"str, int (32-bit), bool, float, 2 or 3 numbers, a non-empty list of str"
    )


def _is_integer(value: Any) -> bool:
    return isinstance(value, (int, np.integer)) and not isinstance(value, (bool, np.bool_))


def _is_number(value: Any) -> bool:
    return _is_integer(value) or isinstance(value, (float, np.floating))


def _int32(name: str, value: int) -> int:
    if not _INT32[0] <= value <= _INT32[1]:
        raise ValueError(f"attribute {name!r}: integer {value} is outside the 32-bit range "
                         f"the format stores; store it as a float or a string")
    return value


def _python_value(value: Any) -> Any:
    """A header value as plain Python: numbers, tuples, lists of str."""
    if isinstance(value, np.ndarray):
        if value.ndim == 1 and value.size == 1 and value.dtype.kind == "f":
            return float(value[0])  # a "double" attribute
        return _as_tuples(value.tolist())
    if isinstance(value, tuple):
        return tuple(_python_value(item) for item in value)
    return value


def _as_tuples(value: Any) -> Any:
    if isinstance(value, list):
        return tuple(_as_tuples(item) for item in value)
    return value


def _layout_problem(path: Path) -> str | None:
    """What makes a plain scan-line file structurally incomplete, or None.

    Reads the header and the chunk offset table only. Tiled, deep and multi-part files,
    unknown compressions and very large headers are not checked here (None); the full
    read in the callers still catches their damage.

    Raises
    ------
    OSError
        When the file cannot be opened (missing, unreadable).
    """
    size = os.path.getsize(path)
    with open(path, "rb") as file:
        head = file.read(min(size, _HEADER_READ))
        if len(head) < 8:
            return f"only {size} bytes, too short for an OpenEXR file"
        if head[:4] != _MAGIC:
            return "not an OpenEXR file (wrong magic number)"
        if int.from_bytes(head[4:8], "little") & _NOT_PLAIN_SCANLINE:
            return None
        parsed = _header_fields(head)
        if parsed is None:
            return "truncated in the header" if len(head) == size else None
        fields, table_start = parsed
        if len(fields.get("dataWindow", b"")) != 16 or len(fields.get("compression", b"")) != 1:
            return "the header lacks a valid dataWindow or compression"
        _, ymin, _, ymax = struct.unpack("<4i", fields["dataWindow"])
        lines = _LINES_PER_CHUNK.get(fields["compression"][0])
        if lines is None:
            return None
        chunks = math.ceil((ymax - ymin + 1) / lines)
        table_end = table_start + 8 * chunks
        if table_end > size:
            return "truncated in the chunk offset table"
        file.seek(table_start)
        offsets = np.frombuffer(file.read(8 * chunks), dtype="<u8")
        for index, offset in enumerate(offsets.tolist()):
            if offset < table_end or offset + 8 > size:
                return f"chunk {index + 1} of {chunks} is missing"
            file.seek(offset)
            y, packed = struct.unpack("<2i", file.read(8))
            if not ymin <= y <= ymax or packed < 0 or offset + 8 + packed > size:
                return f"chunk {index + 1} of {chunks} is truncated"
    return None


def _header_fields(head: bytes) -> tuple[dict[str, bytes], int] | None:
    """The dataWindow and compression values of a header and where it ends, or None."""
    fields = {}
    position = 8
    while position < len(head):
        if head[position] == 0:
            return fields, position + 1
        name_end = head.find(b"\0", position)
        type_end = head.find(b"\0", name_end + 1) if name_end >= 0 else -1
        if type_end < 0 or type_end + 5 > len(head):
            return None
        value_size = int.from_bytes(head[type_end + 1:type_end + 5], "little", signed=True)
        value_start = type_end + 5
        if value_size < 0 or value_start + value_size > len(head):
            return None
        name = head[position:name_end].decode("latin-1")
        if name in ("dataWindow", "compression"):
            fields[name] = head[value_start:value_start + value_size]
        position = value_start + value_size
    return None
