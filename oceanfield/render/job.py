"""The render job: a preset's map sequence on disk, locally or on a farm, resumable.

Orchestration only: how many workers, the summary, interrupts, progress and the
``render`` command. Which frames and files make up a job is ``plan``'s; who computes which
frames (this process, local worker processes or Dask tasks) is ``workers``'; the manifest
is ``manifest``'s; encoding and writing one frame is ``writing``'s. It knows nothing of
formulas.
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

import os
import re
import signal
import sys
import threading
import time
from contextlib import contextmanager
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any, Callable

from .manifest import _prepare_folder, _update_manifest
from .plan import RenderPlan, parse_frames, plan_render
from .workers import (
    _OCEANS,
    _connect,
    _render_frames,
    _render_on_dask,
    _render_on_processes,
    collect_rarely,
)
from .writing import FrameResult

__all__ = ["RenderInterrupted", "RenderSummary", "collect_rarely", "default_workers", "render", "run_render_command"]


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
        rate = ""
        if self.written and self.wall_seconds > 0:  # (none written: no rate, not "0.00 frames/s")
            rate = f" ({len(self.written) / self.wall_seconds:.2f} frames/s)"
        return (
            f"{len(self.written)} written, {len(self.skipped)} skipped (already complete), "
            f"{len(self.failed)} failed of {_count(self.requested, 'frame')} in {self.wall_seconds:.1f} s{rate}"
        )


def _count(number: int, noun: str) -> str:
    """``"1 frame"``, ``"2 frames"``."""
    return f"{number} {noun}{'' if number == 1 else 's'}"



class RenderInterrupted(KeyboardInterrupt):
    """A render stopped by SIGINT (Ctrl-C) or SIGTERM (a farm manager's kill).

    Raised by :func:`render` once every worker, writer and cluster task has stopped and
    the frames finished so far are in the manifest; ``summary`` holds them and ``signum``
    the signal. Frames not finished have no file under their names, so running the same
    render again completes the sequence.
    """

    def __init__(self, signum: int, summary: RenderSummary | None = None) -> None:
        super().__init__(signal.Signals(signum).name)
        self.signum = signum
        self.summary = summary


@contextmanager
def _signals_interrupt():
    """SIGINT and SIGTERM raise :class:`RenderInterrupted` once; later ones are ignored
    while the render stops. Outside the main thread signals cannot be caught: no change."""
    received: list[int] = []
    if threading.current_thread() is not threading.main_thread():
        yield received
        return

    def handler(signum, frame) -> None:  # noqa: ARG001 - a signal handler's signature
        if not received:
            received.append(signum)
            raise RenderInterrupted(signum)

    def quiet(unraisable) -> None:
        # A signal that lands while native code calls back into Python (numba loading a
        # kernel through llvmlite) raises inside that callback, where it is swallowed: the
        # render then stops at its next frame (``received``), without this traceback.
        if not isinstance(unraisable.exc_value, RenderInterrupted):
            hook(unraisable)

    hook = sys.unraisablehook
    sys.unraisablehook = quiet
    previous = {number: signal.signal(number, handler) for number in (signal.SIGINT, signal.SIGTERM)}
    try:
        yield received
    finally:
        for number, old in previous.items():
            signal.signal(number, old)
        sys.unraisablehook = hook



def render(plan: RenderPlan, *, workers: int | None = None, scheduler: str | Any | None = None,
           overwrite: bool = False, progress: Callable[[FrameResult], None] | None = None,
           announce: Callable[[str], None] | None = None,
           build_progress: Callable[[int], None] | None = None) -> RenderSummary:
    """Render the plan's frames and return the summary.

    Parameters
    ----------
    plan : RenderPlan
        From :func:`plan_render`.
    workers : int or None
        Local worker processes (default: :func:`default_workers`, from the job's size and
        the machine's cores and memory). Each gets cores/workers threads for its FFTs,
        kernels and EXR compression so the machine is not oversubscribed; 1 renders in
        this process.
    scheduler : str, distributed.Client or None
        A Dask distributed scheduler's address (or a client) to render on instead.
    overwrite : bool
        Render every frame even if complete, and remove frames rendered with other settings.
    progress : callable or None
        Called with each :class:`FrameResult` as it arrives.
    announce : callable or None
        Called with a line to tell the user before frames render (frames of other
        settings removed under ``overwrite``).
    build_progress : callable or None
        Called with the lattice rows done while this process builds its Ocean.

    Raises
    ------
    RenderInterrupted
        On SIGINT or SIGTERM (when called from the main thread), after everything it
        started has stopped; its ``summary`` holds the frames finished.
    """
    started = time.perf_counter()
    summary = RenderSummary(requested=len(plan.frames))
    cores = os.cpu_count() or 1
    if workers is not None and (isinstance(workers, bool) or not isinstance(workers, int) or workers < 1):
        raise ValueError(f"--workers: {workers!r} is not allowed; allowed: an integer >= 1")
    count = default_workers(plan, cores=cores) if workers is None else workers
    if not plan.frames:
        return summary
    interrupted: RenderInterrupted | None = None
    with _signals_interrupt() as received:
        try:
            # Reach the scheduler before anything is created, so a wrong address writes nothing.
            client, own_client = _connect(scheduler) if scheduler is not None else (None, False)
            try:
                removed = _prepare_folder(plan, overwrite)
                if removed and announce is not None:
                    announce(removed)
                _update_manifest(plan, [])  # claim the folder at once: a killed first run still leaves it
                _run(plan, summary, client, count, cores, overwrite, progress, build_progress,
                     stop=lambda: bool(received))
                if received:  # an interrupt swallowed where it landed: the frames stopped, say so
                    raise RenderInterrupted(received[0])
            finally:
                if own_client:
                    client.close()
        except RenderInterrupted as error:
            interrupted = error
        except KeyboardInterrupt:  # another handler's (not the main thread), or a swallowed one of ours
            interrupted = RenderInterrupted(received[0] if received else signal.SIGINT)
        except Exception:
            if not received:
                raise
            # the signal landed inside native code, which then failed in its own way
            # (numba whose kernel compilation was cut short): that failure is the interrupt
            interrupted = RenderInterrupted(received[0])
        finally:
            _OCEANS.clear()  # the render is over: do not keep its Ocean (12 bytes a texel)
        summary.written.sort()
        summary.skipped.sort()
        if plan.folder.is_dir():  # (an interrupt may come before the folder is made)
            _update_manifest(plan, summary.written + summary.skipped)
    summary.wall_seconds = time.perf_counter() - started
    if interrupted is not None:
        raise RenderInterrupted(interrupted.signum, summary)
    return summary


#: Frames that repay one more local worker process, for a 1024² frame and for the
#: (1024/N)² part that grows as frames shrink: a worker pays its start (interpreter,
#: imports, kernel cache, its own ocean: about a second) once, and gains on every frame
#: because separate processes keep the cores busier than one process's threads do.
#: Fitted to renders of moderate_breeze on 2 cores (displacement + normal + foam, ZIP
#: half; 1 vs 2 workers, seconds, interleaved): 256² × 96 frames 1.55 / 1.98, × 480
#: 7.19 / 5.86; 512² × 48 2.01 / 2.42, × 240 9.65 / 7.75; 1024² × 24 3.21 / 3.80, × 96
#: 11.97 / 10.90; 2048² × 8 4.69 / 5.71, × 32 14.46 / 14.76. The second worker breaks
#: even at about 190, 83, 49 and 42 frames, which 40 + 9 (1024/N)² follows.
_FRAMES_PER_EXTRA_WORKER = 40.0
_SMALL_FRAME_FRAMES = 9.0
#: Memory one worker needs per texel: a frame (32 B), h0 and ω (12 B) and two encoded
#: frames in flight (half floats of seven channels, 14 B each).
_WORKER_BYTES_PER_TEXEL = 72


def default_workers(plan: RenderPlan, *, cores: int | None = None, memory: int | None = None) -> int:
    """Local worker processes for a job when ``--workers`` is not given.

    One more worker for every ``40 + 9 (1024/N)²`` frames of an N² job (a second worker's
    start is repaid only by enough frames; see :data:`_FRAMES_PER_EXTRA_WORKER`), at most
    ``cores``, and no more than the memory (``memory`` bytes, default: what is free now)
    holds. Each worker gets cores/workers threads.
    """
    cores = cores or os.cpu_count() or 1
    n = plan.preset.tile.resolution
    texels = n * n
    per_worker = _FRAMES_PER_EXTRA_WORKER + _SMALL_FRAME_FRAMES * (1024.0 / n) ** 2
    count = max(1, min(cores, 1 + int(len(plan.frames) // per_worker)))
    if memory is None:
        from ..surface.synth import available_memory

        memory = available_memory()
    if memory is not None:
        count = min(count, max(1, memory // (_WORKER_BYTES_PER_TEXEL * texels)))
    return count


def _run(plan: RenderPlan, summary: RenderSummary, client, count: int, cores: int, overwrite: bool,
         progress: Callable[[FrameResult], None] | None,
         build_progress: Callable[[int], None] | None = None, *,
         stop: Callable[[], bool] | None = None) -> None:
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
        _render_frames(plan, plan.frames, threads=threads, overwrite=overwrite, report=record,
                       build_progress=build_progress, should_stop=stop)
    else:
        _render_on_processes(plan, count, threads, overwrite, record, build_progress, stop=stop)



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
    if args.workers is not None and args.scheduler is not None:
        raise ValueError(f"--workers: {args.workers} has no effect with --scheduler (the cluster's workers render); "
                         f"allowed: one of the two")
    # Warnings about the preset are the job's, not each farm chunk's: the whole job and its
    # first chunk print them; other chunks skip the sea's statistics they need (a
    # noticeable share of a short chunk's start-up).
    if args.chunk is None or re.match(r"\s*1\s*/", args.chunk):
        folding = fold_warning(preset) if plan.frames else None
        for message in [*preset_warnings(preset), folding]:
            if message:
                print(f"oceanfield: warning: {message}", file=sys.stderr)
    if not plan.frames:
        print(f"nothing to render: chunk {args.chunk} of {len(parse_frames(args.frames, preset.time.frames))} frames is empty")
        return 0
    wake = f", and the wake of {_count(len(preset.vessels), 'vessel')} (wake_*)" if preset.vessels else ""
    print(f"rendering {_count(len(plan.frames), 'frame')} of {preset.name} ({', '.join(preset.maps)}{wake}) "
          f"into {plan.folder}")
    cores = os.cpu_count() or 1
    workers = args.workers if args.workers is not None else default_workers(plan, cores=cores)
    building = None
    n = preset.tile.resolution
    if args.scheduler is None and (n >= _ESTIMATE_RESOLUTION or n * n * len(plan.frames) >= _ESTIMATE_TEXELS):
        from .estimate import estimate_render

        estimate = estimate_render(plan, workers, cores)
        print(estimate.line(len(plan.frames), workers), flush=True)
        if estimate.build_seconds >= _BUILD_BAR_SECONDS:
            building = _BuildProgress(preset.tile.resolution)
    progress = _Progress(len(plan.frames))
    try:
        summary = render(plan, workers=workers, scheduler=args.scheduler, overwrite=args.overwrite,
                         progress=progress.update, announce=lambda line: print(f"oceanfield: {line}", file=sys.stderr),
                         build_progress=None if building is None else building.update)
    except RenderInterrupted as interrupt:
        progress.close()
        print(f"oceanfield: {interrupted_line(interrupt)}", file=sys.stderr)
        return 128 + interrupt.signum
    finally:
        progress.close()
        if building is not None:
            building.close()
    print(summary.line())
    for error, frames in _grouped_failures(summary.failed):
        which = f"frame {frames[0]}" if len(frames) == 1 else f"{len(frames)} frames ({frames[0]}–{frames[-1]})"
        print(f"oceanfield: error: {which}: {error}", file=sys.stderr)
    if summary.ok:
        print(f"frames are in {plan.folder}")
        return 0
    return 1


def interrupted_line(interrupt: RenderInterrupted) -> str:
    """One line for an interrupted render: what stopped it, what is done, how to finish."""
    summary = interrupt.summary
    cause = "interrupted (Ctrl-C)" if interrupt.signum == signal.SIGINT else "stopped by SIGTERM"
    if summary is None:
        return f"{cause}"
    done = len(summary.written) + len(summary.skipped)
    left = summary.requested - done
    rest = (f"running the same command again renders the other {left}" if left
            else "nothing is left to render")
    return f"{cause}: {done} of {summary.requested} frames are complete; {rest}"


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


#: Jobs of at least this many texels (all frames) get a memory and time estimate up front
#: (2048² × 16 frames: about a minute on a few cores) ...
_ESTIMATE_TEXELS = 2048 * 2048 * 16
_ESTIMATE_RESOLUTION = 4096  # ... and so do frames this large (a frame takes seconds)
_BUILD_BAR_SECONDS = 5.0  # a longer Ocean build shows a progress bar


class _BuildProgress:
    """A tqdm bar over the lattice rows while this process builds its Ocean."""

    def __init__(self, rows: int) -> None:
        from tqdm import tqdm

        self.bar = tqdm(total=rows, unit="row", desc="building the ocean", file=sys.stderr,
                        mininterval=0.5 if sys.stderr.isatty() else 10.0)

    def update(self, rows: int) -> None:
        if self.bar is not None:
            self.bar.update(rows)
            if self.bar.n >= self.bar.total:
                self.close()

    def close(self) -> None:
        if self.bar is not None:
            self.bar.close()
            self.bar = None


class _Progress:
    """A tqdm bar on a terminal; one plain line per frame otherwise (farm logs)."""

    def __init__(self, total: int) -> None:
        self.bar = None
        self.quiet = False  # the log's reader has gone: keep rendering, stop telling
        if sys.stdout.isatty() and sys.stderr.isatty():  # a log file gets one line per frame
            from tqdm import tqdm

            self.bar = tqdm(total=total, unit="frame", file=sys.stderr)

    def update(self, result: FrameResult) -> None:
        if self.bar is not None:
            self.bar.update(1)
            if result.status == "failed":
                self.bar.write(f"frame {result.frame} failed: {result.error}")
            return
        if self.quiet:
            return
        detail = f" in {result.seconds:.2f} s" if result.status == "written" else ""
        suffix = f": {result.error}" if result.error else ""
        try:
            print(f"frame {result.frame} {result.status}{detail}{suffix}", flush=True)
        except BrokenPipeError:
            # `render | head`, or a farm's log collector that died: the frames matter more
            # than their log, so the render goes on; the command's last line meets the
            # closed pipe again and ends it as one (cli: status 141).
            self.quiet = True

    def close(self) -> None:
        if self.bar is not None:
            self.bar.close()
            self.bar = None
