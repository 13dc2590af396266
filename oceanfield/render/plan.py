"""The render plan: which frames, which files, and whether a frame is already done.

Holds frame-range and chunk parsing, the render hash, `RenderPlan` (frames and their file
paths) and the completeness check. Both the job (``job``) and the frame writer
(``writing``) import it; it knows nothing of executors, of synthesis or of formulas.
"""

from __future__ import annotations

import dataclasses
import os
import re
from dataclasses import dataclass
from pathlib import Path
from typing import Any, Sequence

__all__ = [
    "ATTRIBUTE_PREFIX",
    "FILE_LAYOUT",
    "COMPOSITE_SUMS",
    "LAYERS_MAP",
    "MANIFEST_NAME",
    "RenderPlan",
    "frame_is_complete",
    "frames_on_disk",
    "parse_frames",
    "plan_render",
    "render_hash",
    "select_chunk",
]

MANIFEST_NAME = "oceanfield-manifest.json"
ATTRIBUTE_PREFIX = "oceanfield."  # every header attribute we write starts with this
LAYERS_MAP = "layers"  # the multi-layer file's {map} in the file pattern
#: How a tile is laid into its files; raise it whenever that changes, so that frames written
#: the old way are re-rendered, never mixed with new ones. 2: the tile's y = 0 is the
#: image's bottom row (1 had it in the top row).
FILE_LAYOUT = 2
#: How a band stack's foam is shared among its bands' maps, in a banded render's hash only
#: (single tiles are unchanged). 2: the whitecaps in the peak's band alone, the composite
#: with its own threshold (1 had one threshold over the summed bands: nearly bare maps).
BAND_FOAM = 2
#: How a band stack's composite map is summed, in the hash of a render that writes one only.
#: 2: by non-uniform FFTs (``surface.composite``; within 1e-6 σ of 1's exact chirp-z sums,
#: but not their bits).
COMPOSITE_SUMS = 2


# -- what to render --------------------------------------------------------------------------


def parse_frames(text: str | None, default: range) -> list[int]:
    """Frame numbers from ``A-B`` (inclusive), ``A,B,C`` or a mix (``1001-1010,1020``).

    ``None`` gives ``default``. Raises ValueError naming ``--frames`` on anything else.
    """
    if text is None:
        return list(default)
    frames: list[int] = []
    allowed = "allowed: A-B with A <= B, a comma-separated list of frames, or a mix (1001-1010,1020)"
    for part in text.split(","):
        part = part.strip()
        match = re.fullmatch(r"(-?\d+)\s*-\s*(-?\d+)", part) or re.fullmatch(r"(-?\d+)", part)
        if not match:
            raise ValueError(f"--frames: {text!r} is not a frame range; {allowed}")
        first = int(match.group(1))
        last = int(match.group(2)) if match.lastindex == 2 else first
        if last < first:
            raise ValueError(f"--frames: {text!r} runs backwards ({first} to {last}); {allowed}")
        if last - first > 10_000_000:
            raise ValueError(f"--frames: {text!r} is over ten million frames; {allowed}")
        frames.extend(range(first, last + 1))
    return sorted(set(frames))


def select_chunk(frames: Sequence[int], text: str | None) -> list[int]:
    """Chunk ``I/N`` (1-based) of ``frames``: N near-equal contiguous runs, the I-th of them.

    Any farm manager can split a job this way and the chunks together cover every frame
    exactly once. ``None`` gives every frame.
    """
    if text is None:
        return list(frames)
    match = re.fullmatch(r"\s*(\d+)\s*/\s*(\d+)\s*", text)
    index, count = (int(match.group(1)), int(match.group(2))) if match else (0, 0)
    if not match or count < 1 or not 1 <= index <= count:
        raise ValueError(f"--chunk: {text!r} is not allowed; allowed: I/N with 1 <= I <= N, e.g. 3/8")
    start = (index - 1) * len(frames) // count
    stop = index * len(frames) // count
    return list(frames[start:stop])


def render_hash(preset) -> str:
    """Hash of everything in ``preset`` that changes a frame's files.

    The preset's hash with ``last_frame`` left out, together with :data:`FILE_LAYOUT` (and,
    for a banded preset, :data:`BAND_FOAM`; with a composite map, :data:`COMPOSITE_SUMS`):
    extending a sequence keeps the frames already rendered valid, while any change to the
    sea, tile, time mapping, maps or encoding — or to how this version lays a tile into a
    file — changes the hash, so frames of another layout are never taken as done.
    """
    import hashlib

    from ..preset.schema import preset_hash

    timing = dataclasses.replace(preset.time, last_frame=preset.time.first_frame)
    settings = preset_hash(dataclasses.replace(preset, time=timing))
    layout = f"layout {FILE_LAYOUT}" + (f" band foam {BAND_FOAM}" if preset.bands.active else "")
    if preset.bands.active and preset.bands.composite_extent_m is not None:
        layout += f" composite sums {COMPOSITE_SUMS}"
    return hashlib.sha256(f"{settings} {layout}".encode("utf-8")).hexdigest()


@dataclass(frozen=True)
class RenderPlan:
    """What one render run will do: the preset, the output root and the frames."""

    preset: Any
    root: Path
    frames: tuple[int, ...]
    hash: str

    @property
    def folder(self) -> Path:
        """The preset's output folder (where the manifest lives)."""
        return self.root / self.preset.output.folder.format(preset=self.preset.name, map="", ext="")

    def files(self, frame: int) -> dict[str, Path]:
        """Map name (or ``layers``) → file of one frame.

        A banded preset writes each band's maps as ``band<b>_<map>`` and, with a composite,
        ``composite_<map>`` (see ``preset.banding``), each its own sequence; a preset with
        vessels adds the wake's ``wake_<map>`` (see ``preset.vessels``).
        """
        output = self.preset.output
        names = list(self.preset.maps)
        if self.preset.bands.active:
            from ..preset.banding import band_map_names

            names = [name for name, _, _ in band_map_names(self.preset)]
        layered = output.multilayer and output.format == "exr"
        if layered:
            names.append(LAYERS_MAP)
        if self.preset.vessels:  # the wake's own sequences, wake_<map> (see preset.vessels)
            from ..preset.vessels import wake_map_names

            names.extend(name for name, _ in wake_map_names(self.preset, LAYERS_MAP if layered else None))
        return {name: self.root / output.relative_path(self.preset.name, name, frame) for name in names}


def plan_render(preset, *, root: str | os.PathLike[str] = "renders", frames: str | None = None,
                chunk: str | None = None) -> RenderPlan:
    """Choose the frames (``--frames``, then ``--chunk``) of a resolved preset under ``root``."""
    selected = select_chunk(parse_frames(frames, preset.time.frames), chunk)
    return RenderPlan(preset, Path(root), tuple(selected), render_hash(preset))


# -- what is already done ----------------------------------------------------------------------


def frame_is_complete(plan: RenderPlan, frame: int) -> bool:
    """Whether every file of ``frame`` exists, is whole, and was rendered from this preset."""
    for name, path in plan.files(frame).items():
        if not path.is_file():
            return False
        if plan.preset.output.format == "exr":
            from ..io.exr import exr_is_complete, read_exr_attributes

            if not exr_is_complete(path, decode=False):
                return False
            attributes = read_exr_attributes(path)
            if attributes.get(f"{ATTRIBUTE_PREFIX}preset_hash") != plan.hash:
                return False
        else:
            from ..io.png import read_png16, sidecar_path

            if not sidecar_path(path).is_file():
                return False
            try:
                read_png16(path)
            except (OSError, ValueError):
                return False
    return True


def frames_on_disk(plan: RenderPlan) -> list[int]:
    """Frame numbers with a file of the plan's first map in its folder, whatever settings
    made them and whatever the frame range (found from ``output.pattern``)."""
    output = plan.preset.output
    name = next(iter(plan.files(plan.preset.time.first_frame)))
    folder = plan.files(plan.preset.time.first_frame)[name].parent
    values = {"preset": plan.preset.name, "map": name, "ext": output.format}
    pieces = re.split(r"#+", output.pattern.replace("\\", "/").rsplit("/", 1)[-1])
    if len(pieces) < 2:
        return []
    number = r"(?P<frame>-?\d+)"
    expression = number.join(re.escape(piece.format(**values)) for piece in pieces[:2])
    expression += "".join(r"-?\d+" + re.escape(piece.format(**values)) for piece in pieces[2:])
    matcher = re.compile(expression + "$")
    try:
        names = os.listdir(folder)
    except OSError:
        return []
    return sorted({int(found.group("frame")) for found in map(matcher.match, names) if found})
