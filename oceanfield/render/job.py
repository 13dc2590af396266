"""The render job: a preset's map sequence on disk, locally or on a farm, resumable.

Orchestration only: who computes which frames (this process, local worker processes or
Dask tasks), the manifest, resume, progress and the ``render`` command. Which frames and
files make up a job is ``plan``'s; encoding and writing one frame is ``writing``'s. It
knows nothing of formulas.
Frames are pure functions of time (see ``synth``), so any chunk of frames can be rendered
on any machine in any order and give the same files.

Nothing lost, nothing half-written:

* every file is written to a hidden temporary beside its final name and renamed into place
  only when complete (``io.atomic``); a killed render leaves no partial file under a
  frame's name, and two processes rendering the same frame each write their own temporary;
* a re-run skips frames whose files are all complete (header, chunk table and size
  checked, and the render hash in the header matches) and redoes the rest;
* a manifest (``oceanfield-manifest.json``) beside the frames records the resolved preset,
  its render hash, the software version and the frames done; rendering a different preset
  into the same folder is refused unless ``overwrite``.
"""

from __future__ import annotations

import json
import os
import queue
import re
import sys
import threading
import time
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any, Callable, Iterable, Sequence

from .plan import MANIFEST_NAME, RenderPlan, frame_is_complete, parse_frames, plan_render
from .writing import (
    _WRITER_PROCESS_TEXELS,
    FrameResult,
    _arena_bytes,
    _png_scales,
    _ProcessSink,
    _ThreadSink,
    encode_frame,
    write_jobs,
)

__all__ = ["RenderSummary", "render", "run_render_command"]


# -- running ---------------------------------------------------------------------------------


@dataclass
class RenderSummary:
    """Totals of a render run."""

    requested: int
    written: list[int] = field(default_factory=list)
    skipped: list[int] = field(default_factory=list)
    failed: dict[int, str] = field(default_factory=dict)
    wall_seconds: float = 0.0

    @property
    def ok(self) -> bool:
        """Every requested frame exists and is complete."""
        return not self.failed and len(self.written) + len(self.skipped) == self.requested

    def line(self) -> str:
        rate = len(self.written) / self.wall_seconds if self.wall_seconds > 0 else 0.0
        return (
            f"{len(self.written)} written, {len(self.skipped)} skipped (already complete), "
            f"{len(self.failed)} failed of {self.requested} frames in {self.wall_seconds:.1f} s "
            f"({rate:.2f} frames/s)"
        )


def _set_threads(threads: int) -> None:
    """Limit numba's threads in this process (the FFT's are passed per call)."""
    import numba

    numba.set_num_threads(max(1, min(threads, numba.config.NUMBA_NUM_THREADS)))


def _render_frames(plan: RenderPlan, frames: Iterable[int], *, threads: int, overwrite: bool,
                   report: Callable[[FrameResult], None]) -> None:
    """Render ``frames`` in this process, overlapping each frame's compute with the last's writes.

    The compute side synthesises a frame and encodes its files (scene axes and units,
    half floats); a writer only hands the encoded channels to the file libraries, so a
    frame costs about max(compute, write), not their sum. The OpenEXR binding holds
    Python's lock while it compresses, so a writer *thread* overlaps poorly: on jobs large
    enough to repay its start the writer is a separate process that reads the encoded
    channels from shared memory.
    """
    todo = []
    for frame in frames:
        if not overwrite and frame_is_complete(plan, frame):
            report(FrameResult(frame, "skipped"))
        else:
            todo.append(frame)
    if not todo:
        return
    n = plan.preset.tile.resolution
    scales = _png_scales(plan.preset) if plan.preset.output.format == "png" else None
    stop: list[FrameResult] = []  # the first fatal failure, if any

    def watch(result: FrameResult) -> None:
        if result.fatal and not stop:
            stop.append(result)
        report(result)

    sink = None
    if len(todo) * n * n >= _WRITER_PROCESS_TEXELS:
        sink = _ProcessSink.start(_arena_bytes(plan), watch)
    if sink is None:
        sink = _ThreadSink(watch, write_jobs)  # looked up here: replacing render.write_jobs reaches it
    _set_threads(threads)
    done: set[int] = set()
    try:
        ocean = _cached_ocean(plan, threads)
        buffer = ocean.new_buffer()
        for frame in todo:
            if stop:  # the disk is full or read-only: no later frame can be written
                break
            done.add(frame)
            started = time.perf_counter()
            fields = ocean.frame(plan.preset.time.frame_time(frame), buffer=buffer)
            try:
                jobs = encode_frame(plan, frame, fields, scales)
            except ValueError as error:  # e.g. a value beyond the half-float range
                report(FrameResult(frame, "failed", time.perf_counter() - started, str(error)))
                continue
            sink.submit(frame, jobs, started)
    finally:
        sink.close()
    if stop:
        for frame in todo:
            if frame not in done:
                report(FrameResult(frame, "failed", 0.0, stop[0].error, fatal=True))


_OCEANS: dict[tuple[str, int], Any] = {}


def _cached_ocean(plan: RenderPlan, threads: int):
    """The plan's Ocean (or band stack), kept for the next group of frames this process renders (Dask tasks)."""
    from ..preset.banding import synthesizer

    key = (plan.hash, threads)
    if key not in _OCEANS:
        _OCEANS.clear()  # one at a time: an Ocean holds 12 bytes a texel
        _OCEANS[key] = synthesizer(plan.preset, fft_workers=threads)
    return _OCEANS[key]


def _process_worker(plan: RenderPlan, frames: list[int], threads: int, overwrite: bool, events) -> None:
    """A local worker process: render its frames, sending each result as it happens.

    It stops by itself if the process that started it goes away (a killed render must
    not leave workers writing on behind its back).
    """
    parent = os.getppid()

    def report(result: FrameResult) -> None:
        if os.getppid() != parent:
            raise SystemExit(1)
        events.put(result)

    _render_frames(plan, frames, threads=threads, overwrite=overwrite, report=report)


def _dask_frames(plan: RenderPlan, frames: list[int], threads: int, overwrite: bool) -> list[FrameResult]:
    results: list[FrameResult] = []
    _render_frames(plan, frames, threads=threads, overwrite=overwrite, report=results.append)
    return results


def _groups(frames: Sequence[int], count: int) -> list[list[int]]:
    """Split frames into ``count`` contiguous groups of near-equal size (none empty)."""
    count = max(1, min(count, len(frames)))
    return [list(frames[i * len(frames) // count:(i + 1) * len(frames) // count]) for i in range(count)]


def render(plan: RenderPlan, *, workers: int | None = None, scheduler: str | Any | None = None,
           overwrite: bool = False, progress: Callable[[FrameResult], None] | None = None) -> RenderSummary:
    """Render the plan's frames and return the summary.

    Parameters
    ----------
    plan : RenderPlan
        From :func:`plan_render`.
    workers : int or None
        Local worker processes (default: the machine's cores). Each gets cores/workers
        threads for its FFTs and kernels so the machine is not oversubscribed; 1 renders in
        this process.
    scheduler : str, distributed.Client or None
        A Dask distributed scheduler's address (or a client) to render on instead.
    overwrite : bool
        Render every frame even if complete, and replace a manifest from another preset.
    progress : callable or None
        Called with each :class:`FrameResult` as it arrives.
    """
    started = time.perf_counter()
    summary = RenderSummary(requested=len(plan.frames))
    cores = os.cpu_count() or 1
    count = cores if workers is None else workers
    if isinstance(count, bool) or not isinstance(count, int) or count < 1:
        raise ValueError(f"--workers: {workers!r} is not allowed; allowed: an integer >= 1")
    if not plan.frames:
        return summary
    # Reach the scheduler before anything is created, so a wrong address writes nothing.
    client, own_client = _connect(scheduler) if scheduler is not None else (None, False)
    try:
        _prepare_folder(plan, overwrite)
        _update_manifest(plan, [])  # claim the folder at once: a killed first run still leaves it
        _run(plan, summary, client, count, cores, overwrite, progress)
    finally:
        if own_client:
            client.close()
    _OCEANS.clear()  # the render is over: do not keep its Ocean (12 bytes a texel)
    summary.written.sort()
    summary.skipped.sort()
    _update_manifest(plan, summary.written + summary.skipped)
    summary.wall_seconds = time.perf_counter() - started
    return summary


def _run(plan: RenderPlan, summary: RenderSummary, client, count: int, cores: int, overwrite: bool,
         progress: Callable[[FrameResult], None] | None) -> None:
    lock = threading.Lock()

    def record(result: FrameResult) -> None:
        with lock:
            if result.status == "written":
                summary.written.append(result.frame)
            elif result.status == "skipped":
                summary.skipped.append(result.frame)
            else:
                summary.failed[result.frame] = result.error
        if progress is not None:
            progress(result)

    if client is not None:
        _render_on_dask(plan, client, overwrite, record)
        return
    count = min(count, len(plan.frames))
    threads = max(1, cores // count)
    if count == 1:
        _render_frames(plan, plan.frames, threads=threads, overwrite=overwrite, report=record)
    else:
        _render_on_processes(plan, count, threads, overwrite, record)


def _render_on_processes(plan: RenderPlan, count: int, threads: int, overwrite: bool,
                         record: Callable[[FrameResult], None]) -> None:
    """``count`` workers, each with a contiguous share of the frames: this process renders
    the first share itself (it has already paid for its imports and compiled kernels) and
    spawns a long-lived process for each other share; their results arrive through a
    queue that a thread of this process reads while it renders.
    """
    import multiprocessing

    context = multiprocessing.get_context("spawn")
    events = context.Queue()
    own, *shares = _groups(plan.frames, count)
    workers = [
        context.Process(target=_process_worker, args=(plan, share, threads, overwrite, events),
                        name=f"oceanfield-worker-{i + 1}")
        for i, share in enumerate(shares)
    ]
    for worker in workers:
        worker.start()
    pending = {frame for share in shares for frame in share}

    def collect() -> None:
        while pending:
            try:
                result = events.get(timeout=1.0)
            except queue.Empty:
                if any(worker.is_alive() for worker in workers):
                    continue
                try:  # every worker is gone: take what is left in the queue, then stop
                    result = events.get(timeout=1.0)
                except queue.Empty:
                    return
            pending.discard(result.frame)
            record(result)

    collector = threading.Thread(target=collect, name="oceanfield-results", daemon=True)
    collector.start()
    try:
        _render_frames(plan, own, threads=threads, overwrite=overwrite, report=record)
        collector.join()
    except BaseException:  # interrupted or failed here: stop the others too
        for worker in workers:
            worker.terminate()
        raise
    finally:
        for worker in workers:
            worker.join(timeout=60)
            if worker.is_alive():
                worker.terminate()
        collector.join(timeout=5)
    for frame in sorted(pending):
        record(FrameResult(frame, "failed", 0.0, "its worker process ended without rendering it"))


def _connect(scheduler: Any) -> tuple[Any, bool]:
    """(client, whether we own it) for a scheduler address or an existing client."""
    if not isinstance(scheduler, str):
        return scheduler, False
    try:
        from distributed import Client
    except ImportError:
        raise ValueError(
            "--scheduler: rendering on a cluster needs the 'distributed' package; "
            "install it with: pip install 'oceanfield[farm]'"
        ) from None
    try:
        return Client(scheduler, timeout="10s"), True
    except (OSError, TimeoutError, ValueError) as error:
        raise ValueError(f"--scheduler: could not reach a Dask scheduler at {scheduler!r} ({error})") from None


def _render_on_dask(plan: RenderPlan, client: Any, overwrite: bool,
                    record: Callable[[FrameResult], None]) -> None:
    from distributed import as_completed

    n_workers = max(1, len(client.scheduler_info().get("workers", {})))
    groups = _groups(plan.frames, n_workers * 4)
    # as_completed yields in completion order: look each future's frames up, never zip.
    futures = {client.submit(_dask_frames, plan, group, 1, overwrite, pure=False): group for group in groups}
    for future in as_completed(futures):
        group = futures[future]
        try:
            results = future.result()
        except Exception as error:  # noqa: BLE001 - a remote failure is reported per frame
            results = [FrameResult(f, "failed", 0.0, f"cluster task failed: {error}") for f in group]
        for result in results:
            record(result)


# -- the manifest ------------------------------------------------------------------------------


def _manifest_path(plan: RenderPlan) -> Path:
    return plan.folder / MANIFEST_NAME


def _read_manifest(path: Path) -> dict[str, Any] | None:
    try:
        return json.loads(path.read_text(encoding="utf-8"))
    except FileNotFoundError:
        return None
    except (OSError, ValueError):
        return {}


def _prepare_folder(plan: RenderPlan, overwrite: bool) -> None:
    """Create the output folder, prove it writable, refuse another preset's folder."""
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
    manifest = _read_manifest(_manifest_path(plan))
    if manifest is not None and manifest.get("render_hash") != plan.hash and not overwrite:
        other = manifest.get("preset_name") or "another preset"
        raise ValueError(
            f"output folder {folder} holds frames rendered from {other} with different settings; "
            "allowed: another --out folder, or --overwrite to replace them"
        )


def _update_manifest(plan: RenderPlan, frames_done: list[int]) -> None:
    """Record the frames done, merged with other chunks' records under a lock."""
    from .. import __version__
    from ..preset.schema import dump_preset

    path = _manifest_path(plan)
    lock_path = path.with_name("." + path.name + ".lock")
    with open(lock_path, "a+") as lock_file:
        try:
            import fcntl

            fcntl.flock(lock_file, fcntl.LOCK_EX)
        except (ImportError, OSError):  # no advisory locks here: last writer wins
            pass
        manifest = _read_manifest(path) or {}
        done = set(frames_done)
        if manifest.get("render_hash") == plan.hash:
            done |= set(manifest.get("frames_done", []))
        record = {
            "software": f"oceanfield {__version__}",
            "preset_name": plan.preset.name,
            "render_hash": plan.hash,
            "maps": list(plan.preset.maps),
            "frames_done": sorted(done),
            "files": {name: str(p.relative_to(plan.root)) for name, p in plan.files(plan.preset.time.first_frame).items()},
            "preset": dump_preset(plan.preset),
        }
        from ..io.atomic import atomic_output

        with atomic_output(path) as temporary:
            temporary.write_text(json.dumps(record, indent=2) + "\n", encoding="utf-8")


# -- the command -------------------------------------------------------------------------------


def run_render_command(args) -> int:
    """``oceanfield render``: plan, render with progress, summarise; exit 0 only if all done."""
    from ..preset.schema import load_preset
    from ..preset.warnings import preset_warnings
    from ..preset.stats import fold_warning

    preset = load_preset(args.preset, overrides=tuple(args.overrides), allow_outside_output=False)
    root = Path(args.out) if args.out else Path("renders")
    plan = plan_render(preset, root=root, frames=args.frames, chunk=args.chunk)
    if args.workers is not None and args.workers < 1:
        raise ValueError(f"--workers: {args.workers} is not allowed; allowed: an integer >= 1")
    # The folded share costs an Ocean and a few frames: check it once per job, not per
    # farm chunk (`oceanfield stats` reports it too).
    folding = fold_warning(preset) if args.chunk is None and plan.frames else None
    for message in [*preset_warnings(preset), folding]:
        if message:
            print(f"oceanfield: warning: {message}", file=sys.stderr)
    if not plan.frames:
        print(f"nothing to render: chunk {args.chunk} of {len(parse_frames(args.frames, preset.time.frames))} frames is empty")
        return 0
    print(f"rendering {len(plan.frames)} frames of {preset.name} ({', '.join(preset.maps)}) into {plan.folder}")
    progress = _Progress(len(plan.frames))
    try:
        summary = render(plan, workers=args.workers, scheduler=args.scheduler, overwrite=args.overwrite,
                         progress=progress.update)
    finally:
        progress.close()
    print(summary.line())
    for error, frames in _grouped_failures(summary.failed):
        which = f"frame {frames[0]}" if len(frames) == 1 else f"{len(frames)} frames ({frames[0]}–{frames[-1]})"
        print(f"oceanfield: error: {which}: {error}", file=sys.stderr)
    if summary.ok:
        print(f"frames are in {plan.folder}")
        return 0
    return 1


def _grouped_failures(failed: dict[int, str]) -> list[tuple[str, list[int]]]:
    """Failures grouped by message, so a full disk reads as one line, not one per frame.

    Messages that differ only in the file named (``cannot write '...': reason``) group
    together; the first frame's message, with its file, stands for the group.
    """
    groups: dict[str, tuple[str, list[int]]] = {}
    for frame, error in sorted(failed.items()):
        key = re.sub(r"^cannot write '[^']*': ", "cannot write: ", error)
        groups.setdefault(key, (error, []))[1].append(frame)  # the first frame's message stands
    return list(groups.values())


class _Progress:
    """A tqdm bar on a terminal; one plain line per frame otherwise (farm logs)."""

    def __init__(self, total: int) -> None:
        self.bar = None
        if sys.stdout.isatty() and sys.stderr.isatty():  # a log file gets one line per frame
            from tqdm import tqdm

            self.bar = tqdm(total=total, unit="frame", file=sys.stderr)

    def update(self, result: FrameResult) -> None:
        if self.bar is not None:
            self.bar.update(1)
            if result.status == "failed":
                self.bar.write(f"frame {result.frame} failed: {result.error}")
            return
        detail = f" in {result.seconds:.2f} s" if result.status == "written" else ""
        suffix = f": {result.error}" if result.error else ""
        print(f"frame {result.frame} {result.status}{detail}{suffix}", flush=True)

    def close(self) -> None:
        if self.bar is not None:
            self.bar.close()
