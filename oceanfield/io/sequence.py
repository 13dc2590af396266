"""Reading a frame sequence from disk: files, frame numbers, channels and header numbers.

Knows nothing of physics or synthesis: it finds files and hands back arrays and header numbers.

A sequence is named by a glob (``renders/x/height.*.exr``) or by a pattern whose file
name holds one run of ``#`` for the frame number (``renders/x/height.####.exr``).
`expand_sequence` finds its files in frame order, `select_frames` keeps a run of them
without gaps, `read_channels` reads one frame's channels (OpenEXR, or 16-bit PNG with
its sidecar) and header attributes, and `choose_layout` finds where a file keeps its
height and, in a displacement map, its lateral displacement: from the channel names and
the ``oceanfield.map`` attribute our renders write (see `oceanfield.surface.maps` for the scene
axes of a displacement map). `parse_crop` reads a square region in texels and
`header_number` a number from a header.

Nothing here knows of physics. Bad input raises ValueError with one line naming the
command-line argument concerned (``sequence``, ``--frames``, ``--channel``, ``--crop``),
the value and what is allowed; an unreadable or corrupt file raises ValueError naming it.
"""

from __future__ import annotations

import glob
import math
import os
import re
from dataclasses import dataclass
from pathlib import Path
from typing import Any, Iterable

import numpy as np
from numpy.typing import NDArray

from oceanfield.io.errors import CorruptFileError
from oceanfield.io.exr import read_exr
from oceanfield.io.png import MissingSidecarError, read_png16

__all__ = [
    "folder_sequence",
    "ChannelLayout",
    "choose_layout",
    "expand_sequence",
    "header_number",
    "mixed_settings_note",
    "parse_crop",
    "read_channels",
    "select_frames",
]

_FRAME_RUN = re.compile(r"#+")
_DIGITS = re.compile(r"-?\d+")
_FORMATS = (".exr", ".png")
_HEIGHT_CHANNELS = ("Y", "height.Y")
_DISPLACEMENT_LAYERS = ("", "displacement.")
_NOT_HEIGHT_MAPS = ("normal", "foam", "velocity")


#: Height sources preferred, in order, when a folder holds several of our map sequences.
_PREFERRED_MAPS = ("height", "displacement")
_FRAME_FILE = re.compile(r"^(?P<prefix>.*?)(?P<digits>\d+)(?P<suffix>\.(?:exr|png))$", re.IGNORECASE)


def folder_sequence(folder: str) -> str:
    """The ``#`` pattern of the height sequence in ``folder``.

    Files named ``<prefix><frame digits>.exr`` (or ``.png``) are grouped by prefix and
    extension. One group is taken as it is; among several, a ``height`` sequence, then a
    ``displacement`` one (oceanfield's own maps) is chosen, of a band stack's render the
    ``composite_`` one, else ``band0_`` (the widest band), and the sea's before a wake's
    (``wake_``); otherwise the groups are listed so the user can pick one.

    Raises
    ------
    ValueError
        When the folder holds no numbered EXR or PNG files, or several sequences and none
        of them is a height or displacement map.
    """
    groups: dict[tuple[str, str], int] = {}
    widths: dict[tuple[str, str], int] = {}
    for entry in sorted(os.listdir(os.path.expanduser(folder))):
        match = _FRAME_FILE.match(entry)
        if match is None or entry.startswith("."):
            continue
        key = (match.group("prefix"), match.group("suffix"))
        groups[key] = groups.get(key, 0) + 1
        widths[key] = len(match.group("digits"))
    if not groups:
        raise ValueError(f"sequence: the folder {folder!r} holds no numbered .exr or .png frames")
    chosen = None
    if len(groups) == 1:
        chosen = next(iter(groups))
    else:
        for name in _PREFERRED_MAPS:
            matches = [key for key in groups if key[0].rstrip("._-").lower().endswith(name)]
            # a render with vessels: the sea's maps, not the wake's (wake_<map>, its own region)
            matches = [key for key in matches if not key[0].lower().startswith("wake_")] or matches
            if len(matches) > 1:  # a band stack's render: the bands summed, else its widest band
                matches = ([key for key in matches if key[0].lower().startswith("composite")]
                           or [key for key in matches if key[0].lower().startswith("band0_")])
            if len(matches) == 1:
                chosen = matches[0]
                break
    if chosen is None:
        listed = ", ".join(f"{prefix}{'#' * widths[(prefix, suffix)]}{suffix} ({groups[(prefix, suffix)]} files)"
                           for prefix, suffix in groups)
        raise ValueError(f"sequence: the folder {folder!r} holds several sequences ({listed}); allowed: name one")
    prefix, suffix = chosen
    return os.path.join(os.path.expanduser(folder), prefix + "#" * widths[chosen] + suffix)


def expand_sequence(sequence: str) -> list[tuple[int | None, Path]]:
    """The files of a sequence, sorted by frame number: (frame number or None, path).

    ``sequence`` is a glob (``renders/x/height.*.exr``), a pattern whose file name has
    one run of ``#`` standing for the frame number (``renders/x/height.####.exr``), or a
    folder (see :func:`folder_sequence`). A glob's frame numbers are the last run of
    digits in each file's name.

    Parameters
    ----------
    sequence : str
        The glob or ``#`` pattern; ``~`` expands to the home folder.

    Returns
    -------
    list of (int or None, Path)
        Each file with its frame number (None where its name holds no digits), frame
        numbers first in ascending order, then the unnumbered by name.

    Raises
    ------
    ValueError
        When nothing matches, the pattern has several runs of ``#``, or two files have
        the same frame number.
    """
    if os.path.isdir(os.path.expanduser(sequence)):
        sequence = folder_sequence(sequence)
    folder, name = os.path.split(os.path.expanduser(sequence))
    runs = list(_FRAME_RUN.finditer(name))
    found: list[tuple[int | None, Path]] = []
    if runs:
        if len(runs) > 1:
            raise ValueError(f"sequence: {sequence!r} has {len(runs)} runs of '#'; allowed: one, for the frame number")
        run = runs[0]
        prefix, suffix = name[: run.start()], name[run.end():]
        matcher = re.compile(re.escape(prefix) + r"(-?\d+)" + re.escape(suffix) + r"\Z")
        candidates = glob.glob(os.path.join(folder, glob.escape(prefix) + "*" + glob.escape(suffix)))
        for path in candidates:
            match = matcher.match(os.path.basename(path))
            if match:
                found.append((int(match.group(1)), Path(path)))
    else:
        for path in glob.glob(os.path.expanduser(sequence)):
            base = os.path.basename(path)
            stem = base[: -len(os.path.splitext(base)[1])] if os.path.splitext(base)[1] else base
            digits = _DIGITS.findall(stem)
            found.append((int(digits[-1]) if digits else None, Path(path)))
    found = [(frame, path) for frame, path in found if path.is_file()]
    if not found:
        raise ValueError(f"sequence: no files match {sequence!r}")
    found.sort(key=lambda item: (item[0] is None, item[0] if item[0] is not None else 0, str(item[1])))
    numbers = [frame for frame, _ in found if frame is not None]
    if len(set(numbers)) != len(numbers):
        seen: dict[int, Path] = {}
        for frame, path in found:
            if frame is not None and frame in seen:
                raise ValueError(
                    f"sequence: frame {frame} matches both '{seen[frame]}' and '{path}'; narrow the pattern"
                )
            if frame is not None:
                seen[frame] = path
    return found


def select_frames(files: list[tuple[int | None, Path]], frames: str | None) -> list[tuple[int | None, Path]]:
    """The files within ``--frames A-B``; their frame numbers must then run without gaps.

    Parameters
    ----------
    files : list of (int or None, Path)
        A sequence's files as `expand_sequence` gives them, in frame order.
    frames : str or None
        ``A-B``: the first and last frame number kept (inclusive); None keeps every file.

    Returns
    -------
    list of (int or None, Path)
        The files kept, in frame order.

    Raises
    ------
    ValueError
        When ``frames`` is not a range A-B with A <= B, selects nothing or the file names
        carry no frame numbers, or when frames are missing between the first and the last.
    """
    if frames is not None:
        match = re.fullmatch(r"\s*(-?\d+)\s*-\s*(-?\d+)\s*", frames)
        if not match or int(match.group(1)) > int(match.group(2)):
            raise ValueError(f"--frames: {frames!r} is not allowed; allowed: a range A-B of frame numbers with A <= B")
        first, last = int(match.group(1)), int(match.group(2))
        if any(frame is None for frame, _ in files):
            raise ValueError("--frames: the file names carry no frame numbers to select by")
        files = [(frame, path) for frame, path in files if first <= frame <= last]  # type: ignore[operator]
        if not files:
            raise ValueError(f"--frames: no file of the sequence has a frame number from {first} to {last}")
    numbers = [frame for frame, _ in files]
    if all(frame is not None for frame in numbers) and len(numbers) > 1:
        expected = set(range(numbers[0], numbers[-1] + 1))  # type: ignore[arg-type]
        missing = sorted(expected - set(numbers))  # type: ignore[arg-type]
        if missing:
            shown = ", ".join(str(m) for m in missing[:5]) + (", ..." if len(missing) > 5 else "")
            raise ValueError(
                f"sequence: {'frame' if len(missing) == 1 else 'frames'} {shown} {'is' if len(missing) == 1 else 'are'} "
                f"missing between {numbers[0]} and {numbers[-1]}; the analysis "
                f"needs evenly spaced frames (use --frames A-B to pick a complete run)"
            )
    return files


def read_channels(path: Path) -> tuple[dict[str, NDArray[np.float32]], dict[str, Any]]:
    """Every channel of one frame file and its header attributes.

    Parameters
    ----------
    path : Path
        An OpenEXR file, or a 16-bit PNG with its value-range sidecar (see
        `oceanfield.io.png`).

    Returns
    -------
    channels : dict of str to ndarray
        Each channel by name, float32 in the file's own units: an EXR's channel names; a
        grey PNG's ``Y``, an RGB PNG's ``R``, ``G``, ``B``. Row 0 is the image's *bottom*
        row (y = 0 where a package's UV origin is the bottom-left corner, and where
        oceanfield's maps put it), so rows run along +y and columns along +x.
    attributes : dict
        The EXR header's attributes (a PNG has none: empty).

    Raises
    ------
    ValueError
        When the file is of another format, cannot be read or is corrupt (naming it).
    """
    suffix = path.suffix.lower()
    if suffix not in _FORMATS:
        raise ValueError(f"sequence: '{path}' is not a supported format; allowed: {', '.join(_FORMATS)}")
    try:
        if suffix == ".exr":
            channels, attributes = read_exr(path)
            return {name: array[::-1] for name, array in channels.items()}, attributes
        values, _ = read_png16(path)
        values = values[::-1]  # row 0 = y = 0, the image's bottom row
        if values.ndim == 2:
            return {"Y": values}, {}
        return {name: values[..., i] for i, name in enumerate("RGB")}, {}
    except (CorruptFileError, MissingSidecarError) as error:
        raise ValueError(str(error)) from None
    except OSError as error:
        reason = error.strerror or str(error)
        missing = f" ({error.filename})" if error.filename and str(error.filename) != str(path) else ""
        raise ValueError(f"cannot read '{path}': {reason}{missing}") from None


@dataclass(frozen=True)
class ChannelLayout:
    """Where a file keeps height and, for displacement maps, the lateral displacement.

    Attributes
    ----------
    height : str
        The channel holding height (up), in scene units.
    lateral : (str, float, str, float) or None
        For a displacement map, the channels holding the lateral displacement along
        internal x and y, each with the sign that turns the scene axis into the internal
        one: (x channel, sign, y channel, sign); None otherwise.
    description : str
        The layout in words, for the report (``channel Y``).
    """

    height: str
    lateral: tuple[str, float, str, float] | None  # (x channel, sign, y channel, sign)
    description: str


def _displacement_layout(prefix: str, up_axis: str) -> ChannelLayout:
    """Scene axes of a displacement map (see `oceanfield.surface.maps`): z-up (X, Y, Z) = (x, y, z);
    y-up (X, Y, Z) = (x, z, −y). Channels R, G, B hold scene X, Y, Z."""
    r, g, b = (prefix + c for c in "RGB")
    if up_axis == "z":
        return ChannelLayout(b, (r, 1.0, g, 1.0), f"{b} of an RGB displacement map (z up)")
    return ChannelLayout(g, (r, 1.0, b, -1.0), f"{g} of an RGB displacement map (y up)")


def choose_layout(
    names: Iterable[str], attributes: dict[str, Any], *, channel: str | None, up_axis: str, path: Path
) -> ChannelLayout:
    """Where a frame file keeps its height: the channel asked for, else found by name.

    Parameters
    ----------
    names : iterable of str
        The file's channel names.
    attributes : dict
        Its header attributes: an ``oceanfield.map`` of ``displacement`` selects the RGB
        displacement channels; one of ``normal``, ``foam``, ``velocity`` is refused.
    channel : str or None
        A channel forced by the user (``--channel``); it is then read as height alone.
    up_axis : {"y", "z"}
        The scene's up axis, for the channels of a displacement map.
    path : Path
        The file, for messages.

    Returns
    -------
    ChannelLayout
        The forced channel; else ``Y`` or ``height.Y``; else the RGB channels of a
        displacement map (bare or in a ``displacement.`` layer), height and lateral.

    Raises
    ------
    ValueError
        When the forced channel is absent, the file holds another map, or no height
        channel is found (listing the channels available).
    """
    names = list(names)
    available = ", ".join(sorted(names))
    if channel is not None:
        if channel not in names:
            raise ValueError(f"--channel: {channel!r} is not in '{path}'; available: {available}")
        return ChannelLayout(channel, None, f"channel {channel}")
    kind = attributes.get("oceanfield.map")
    if isinstance(kind, str) and kind in _NOT_HEIGHT_MAPS:
        raise ValueError(
            f"sequence: '{path}' holds a {kind} map, not heights; analyse the height or displacement "
            f"sequence, or pass --channel to force a channel (available: {available})"
        )
    if kind != "displacement":
        for name in _HEIGHT_CHANNELS:
            if name in names:
                return ChannelLayout(name, None, f"channel {name}")
    for prefix in _DISPLACEMENT_LAYERS:
        if all(prefix + c in names for c in "RGB"):
            return _displacement_layout(prefix, up_axis)
    raise ValueError(
        f"sequence: no height channel in '{path}' (looked for Y, height.Y and an RGB displacement map); "
        f"available: {available}; pass --channel NAME"
    )


def parse_crop(text: str, rows: int, cols: int, *, min_size: int) -> tuple[int, int, int]:
    """A square region ``X,Y,SIZE`` (or ``X,Y,W,H`` with W = H) in texels.

    Parameters
    ----------
    text : str
        The region as given (``--crop``): column and row of its first texel, its side;
        rows count from the image's bottom row (y = 0), as `read_channels` gives them.
    rows, cols : int
        The frame's size in texels; the region must lie inside it.
    min_size : int
        Smallest side allowed, texels.

    Returns
    -------
    (int, int, int)
        x (first column), y (first row) and the side, in texels.

    Raises
    ------
    ValueError
        When the text is not three (or four, square) whole numbers, the side is below
        ``min_size``, or the region reaches outside the frame.
    """
    parts = [part.strip() for part in text.split(",")]
    try:
        numbers = [int(part) for part in parts]
    except ValueError:
        numbers = []
    if len(numbers) == 4 and numbers[2] != numbers[3]:
        raise ValueError(
            f"--crop: {text!r} is {numbers[2]}×{numbers[3]} texels, not square; allowed: X,Y,SIZE "
            f"(the analysis needs a square region)"
        )
    if len(numbers) == 4:
        numbers = numbers[:3]
    if len(numbers) != 3:
        raise ValueError(f"--crop: {text!r} is not allowed; allowed: X,Y,SIZE in whole texels")
    x, y, size = numbers
    if size < min_size:
        raise ValueError(f"--crop: size {size} is not allowed; allowed: at least {min_size} texels")
    if x < 0 or y < 0 or x + size > cols or y + size > rows:
        raise ValueError(
            f"--crop: {text!r} reaches outside the {cols}×{rows} frame; allowed: X >= 0, Y >= 0, "
            f"X + SIZE <= {cols}, Y + SIZE <= {rows}"
        )
    return x, y, size


def header_number(attributes: dict[str, Any], name: str, *, positive: bool = True) -> float | None:
    """A finite number from a file's header attributes (above 0 if ``positive``), else None.

    Parameters
    ----------
    attributes : dict
        Header attributes, as `read_channels` gives them.
    name : str
        The attribute (``oceanfield.fps``, ``oceanfield.tile_size``, ...).
    positive : bool
        Whether 0 and negative values count as absent.

    Returns
    -------
    float or None
        The value, or None where it is absent, not a number, not finite or not allowed.
    """
    value = attributes.get(name)
    if isinstance(value, bool) or not isinstance(value, (int, float)):
        return None
    value = float(value)
    return value if math.isfinite(value) and (value > 0 or not positive) else None




def mixed_settings_note(frames: Iterable[tuple[int | None, str | None]]) -> str | None:
    """A note when a sequence's frames were rendered with different settings, else None.

    ``frames`` gives each frame's number and the settings hash its header carries
    (``oceanfield.preset_hash``; None where a file has none, which says nothing). The note
    names the runs of frames sharing one setting, in frame order.
    """
    runs: list[list[Any]] = []  # [first, last, hash]
    for number, value in frames:
        if value is None:
            continue
        if runs and runs[-1][2] == value:
            runs[-1][1] = number
        else:
            runs.append([number, number, value])
    if len({value for _, _, value in runs}) < 2:
        return None
    shown = ", ".join(f"{a}" if a == b else f"{a}–{b}" for a, b, _ in runs[:6]) + (" …" if len(runs) > 6 else "")
    return (f"the frames were rendered with {len({v for _, _, v in runs})} different settings "
            f"(runs: {shown}); a mixed sequence jumps where they change: re-render it into one folder")
