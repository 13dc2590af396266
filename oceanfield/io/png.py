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
interlaced, every row filtered with the "Up" filter, which suits smooth maps. libpng
encodes and decodes them, through ``imagecodecs`` (Pillow 13 cannot write 16-bit RGB).
Measured on a 1024² displacement map against the hand-written zlib codec this replaced:
the same size (+0.1 %), encoding in 0.94–0.98× and decoding in 0.98–1.08× its time.
libpng decodes any filter type and interlacing and checks every chunk; the one check kept
by hand is that the file ends with its IEND chunk, because libpng accepts a file cut
inside it.
"""

from __future__ import annotations

import json
import math
import os
from collections.abc import Sequence
from pathlib import Path

import numpy as np
from numpy.typing import ArrayLike, NDArray

from oceanfield.io.atomic import atomic_output
from oceanfield.io.errors import CorruptFileError

__all__ = ["LEVELS", "MissingSidecarError", "write_png16", "read_png16", "sidecar_path"]

#: Largest 16-bit sample: the value range spans LEVELS steps.
LEVELS = 65535

_CHANNEL_NAMES = {1: ["Y"], 3: ["R", "G", "B"]}
_ZLIB_LEVEL = 6
#: The IEND chunk every PNG ends with: length 0, type, CRC-32 of the type (PNG spec, 11.2.5).
_IEND = b"\x00\x00\x00\x00IEND\xaeB`\x82"
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
        When the image is missing; `MissingSidecarError` (one) when its sidecar is, saying
        what to write there.
    CorruptFileError
        When either is unreadable, truncated or not as described, or they disagree.
    """
    path = Path(path)
    data = path.read_bytes()  # a missing image is reported as such, before its sidecar
    lo, hi, names = _read_sidecar(sidecar_path(path))
    try:
        samples = _decode_png(data)
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


class MissingSidecarError(FileNotFoundError):
    """A 16-bit PNG without the JSON sidecar that says what its samples mean."""

    def __init__(self, sidecar: Path) -> None:
        image = sidecar.with_name(sidecar.name[: -len(".json")])
        message = (
            f"'{image}' has no value-range sidecar '{sidecar.name}' beside it: its 16-bit samples "
            f"0…65535 need the heights they stand for; write '{sidecar.name}' holding "
            f'{{"value_range": [LO, HI], "channels": ["Y"]}} (LO and HI the heights, in scene units, '
            f'of samples 0 and 65535; "channels": ["R", "G", "B"] for an RGB map)'
        )
        super().__init__(2, message, str(sidecar))
        self.message = message

    def __str__(self) -> str:
        return self.message


def _read_sidecar(sidecar: Path) -> tuple[float, float, list[str]]:
    try:
        text = sidecar.read_text(encoding="utf-8")
    except FileNotFoundError:
        raise MissingSidecarError(sidecar) from None
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
    """A 16-bit grey or RGB PNG of `samples`, every row "Up"-filtered (PNG spec, 9.2), by libpng."""
    import imagecodecs

    return bytes(imagecodecs.png_encode(samples, level=_ZLIB_LEVEL, filter=imagecodecs.PNG.FILTER.UP))


def _decode_png(data: bytes) -> NDArray[np.uint16]:
    """The samples of a 16-bit grey or RGB PNG, by libpng; ValueError otherwise."""
    import imagecodecs

    if not data.endswith(_IEND):  # libpng reads a file cut inside its IEND chunk (measured)
        raise ValueError("truncated: the file does not end with its IEND chunk")
    try:
        samples = imagecodecs.png_decode(data)
    except imagecodecs.PngError as exc:
        raise ValueError(f"libpng cannot decode it: {exc}") from None
    channels = 1 if samples.ndim == 2 else samples.shape[2]
    if samples.dtype != np.uint16 or channels not in _CHANNEL_NAMES:
        depth = samples.dtype.itemsize * 8
        raise ValueError(f"bit depth {depth} with {channels} channel(s); expected a 16-bit grey or RGB image")
    return samples
