"""The render folder's manifest and the frames of other settings found in it.

Orchestration only; it knows nothing of formulas. The manifest
(``oceanfield-manifest.json``) beside the frames records the resolved preset, its render
hash, the software version, every frame's hash (``frame_hashes``) and the frames done with
this plan's hash; it is merged under an advisory lock, so farm chunks writing into one
folder at once each add their own. Before a render, :func:`_prepare_folder` refuses a
folder holding frames of other settings, or under ``overwrite`` removes them.
"""

from __future__ import annotations

import json
from contextlib import contextmanager
from pathlib import Path
from typing import Any, Iterable, Sequence

from .plan import ATTRIBUTE_PREFIX, MANIFEST_NAME, RenderPlan, frames_on_disk

__all__: list[str] = []  # the job's; nothing here is called from outside the render room


def _manifest_path(plan: RenderPlan) -> Path:
    return plan.folder / MANIFEST_NAME


def _read_manifest(path: Path) -> dict[str, Any] | None:
    try:
        return json.loads(path.read_text(encoding="utf-8"))
    except FileNotFoundError:
        return None
    except (OSError, ValueError):
        return {}


def _recorded_hashes(manifest: dict[str, Any] | None) -> dict[int, str]:
    """Frame → settings hash, as the manifest records them (older manifests: one hash for all)."""
    if not manifest:
        return {}
    recorded = manifest.get("frame_hashes")
    if isinstance(recorded, dict):
        return {int(frame): str(value) for frame, value in recorded.items()}
    old = manifest.get("render_hash")
    return {int(frame): str(old) for frame in manifest.get("frames_done", [])} if old else {}


def _frame_hash_on_disk(plan: RenderPlan, frame: int) -> str | None:
    """The settings hash in the header of a frame's first file, None if none is readable."""
    from ..io.exr import read_exr_attributes

    for path in plan.files(frame).values():
        if path.suffix.lower() != ".exr" or not path.is_file():
            continue
        try:
            value = read_exr_attributes(path).get(f"{ATTRIBUTE_PREFIX}preset_hash")
        except (OSError, ValueError):
            continue
        return None if value is None else str(value)
    return None


def _foreign_frames(plan: RenderPlan, manifest: dict[str, Any] | None) -> list[int]:
    """Frames in the folder rendered with other settings than ``plan``'s: those the
    manifest records with another hash, and frame files it does not record (a killed run)
    whose header names another hash; only frames with a file still on disk count."""
    recorded = _recorded_hashes(manifest)
    foreign = {frame for frame, value in recorded.items() if value != plan.hash}
    for frame in frames_on_disk(plan):
        if frame not in recorded:
            value = _frame_hash_on_disk(plan, frame)
            if value is not None and value != plan.hash:
                foreign.add(frame)
    return sorted(frame for frame in foreign if any(p.is_file() for p in plan.files(frame).values()))


def _frames_text(frames: Sequence[int]) -> str:
    return f"frame {frames[0]}" if len(frames) == 1 else f"{len(frames)} frames ({frames[0]}–{frames[-1]})"


def _remove_frames(plan: RenderPlan, frames: Iterable[int]) -> list[int]:
    """Delete the files of ``frames`` that still hold other settings (a sibling farm chunk
    may have re-rendered one meanwhile); returns the frames removed."""
    from ..io.png import sidecar_path

    removed = []
    for frame in frames:
        if _frame_hash_on_disk(plan, frame) == plan.hash:
            continue
        for path in plan.files(frame).values():
            for file in (path, sidecar_path(path)) if path.suffix.lower() == ".png" else (path,):
                try:
                    file.unlink()
                except FileNotFoundError:
                    pass
        removed.append(frame)
    return removed


def _prepare_folder(plan: RenderPlan, overwrite: bool) -> str | None:
    """Create the output folder, prove it writable, and never let it mix settings.

    Frames rendered with other settings than the plan's are refused, or with
    ``overwrite`` removed (every one of them, also outside the frames asked for: a
    sequence whose frames come from two settings jumps where they change). Returns the
    one line to tell the user when frames were removed, else None.
    """
    from ..io.atomic import OutputError, atomic_output, remove_stale_temporaries

    folder = plan.folder
    try:
        folder.mkdir(parents=True, exist_ok=True)
        with atomic_output(folder / ".oceanfield-write-test") as probe:
            probe.write_bytes(b"ok")
        (folder / ".oceanfield-write-test").unlink()
    except OutputError as error:
        raise ValueError(f"output folder {folder} is not writable: {error}") from None
    except OSError as error:
        raise ValueError(f"output folder {folder} is not writable: {error.strerror or error}") from None
    remove_stale_temporaries(folder)
    with _manifest_lock(plan):
        manifest = _read_manifest(_manifest_path(plan))
        foreign = _foreign_frames(plan, manifest)
        if not foreign:
            return None
        other = (manifest or {}).get("preset_name") or "another preset"
        if not overwrite:
            raise ValueError(
                f"output folder {folder} holds frames rendered from {other} with different settings "
                f"({_frames_text(foreign)}); allowed: another --out folder, or --overwrite to remove "
                "them and render these settings"
            )
        removed = _remove_frames(plan, foreign)
        _write_manifest(plan, manifest, removed=removed, done=[])
    if not removed:
        return None
    return f"--overwrite: removed {_frames_text(removed)} rendered from {other} with different settings from {folder}"


@contextmanager
def _manifest_lock(plan: RenderPlan):
    """An advisory lock beside the manifest, held while it is read and rewritten."""
    path = _manifest_path(plan)
    lock_path = path.with_name("." + path.name + ".lock")
    with open(lock_path, "a+") as lock_file:
        try:
            import fcntl

            fcntl.flock(lock_file, fcntl.LOCK_EX)
        except (ImportError, OSError):  # no advisory locks here: last writer wins
            pass
        yield


def _update_manifest(plan: RenderPlan, frames_done: list[int]) -> None:
    """Record the frames done, merged with other chunks' records under a lock."""
    with _manifest_lock(plan):
        _write_manifest(plan, _read_manifest(_manifest_path(plan)), removed=[], done=frames_done)


def _write_manifest(plan: RenderPlan, manifest: dict[str, Any] | None, *, removed: Iterable[int],
                    done: Iterable[int]) -> None:
    """Rewrite the manifest (its lock held): each frame's settings hash, the frames with
    this plan's settings, and the resolved preset of the latest render."""
    from .. import __version__
    from ..io.atomic import atomic_output
    from ..preset.schema import dump_preset

    hashes = _recorded_hashes(manifest)
    for frame in removed:
        hashes.pop(frame, None)
    for frame in done:
        hashes[frame] = plan.hash
    record = {
        "software": f"oceanfield {__version__}",
        "preset_name": plan.preset.name,
        "render_hash": plan.hash,
        "maps": list(plan.preset.maps),
        "frames_done": sorted(frame for frame, value in hashes.items() if value == plan.hash),
        "frame_hashes": {str(frame): hashes[frame] for frame in sorted(hashes)},
        "files": {name: str(p.relative_to(plan.root)) for name, p in plan.files(plan.preset.time.first_frame).items()},
        "preset": dump_preset(plan.preset),
    }
    path = _manifest_path(plan)
    with atomic_output(path) as temporary:
        temporary.write_text(json.dumps(record, indent=2) + "\n", encoding="utf-8")
