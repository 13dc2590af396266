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
import signal
import sys
import threading
import time
from contextlib import contextmanager
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any, Callable, Iterable, Sequence

from .plan import (
    ATTRIBUTE_PREFIX,
    MANIFEST_NAME,
    RenderPlan,
    frame_is_complete,
    frames_on_disk,
    parse_frames,
    plan_render,
)
from .writing import FrameResult, _png_scales, _ThreadSink, encode_frame, write_jobs

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


def _set_threads(threads: int) -> None:
    """Limit numba's threads in this process (the FFT's are passed per call)."""
    import numba

    numba.set_num_threads(max(1, min(threads, numba.config.NUMBA_NUM_THREADS)))


def _render_frames(plan: RenderPlan, frames: Iterable[int], *, threads: int, overwrite: bool,
                   report: Callable[[FrameResult], None],
                   should_stop: Callable[[], bool] | None = None,
                   build_progress: Callable[[int], None] | None = None) -> None:
    """Render ``frames`` in this process, overlapping each frame's compute with the last's writes.

    The compute side synthesises a frame and encodes its files (scene axes and units,
    half floats); a writer thread only hands the encoded channels to the file libraries,
    which release Python's lock and compress on ``threads`` threads, so a frame costs
    about max(compute, write), not their sum. ``should_stop`` is asked before each frame
    (a cluster's stop flag); an exception here (an interrupt) waits only for the file
    being written, never for queued frames.
    """
    todo = []
    for frame in frames:
        if not overwrite and frame_is_complete(plan, frame):
            report(FrameResult(frame, "skipped"))
        else:
            todo.append(frame)
    if not todo:
        return
    scales = _png_scales(plan.preset) if plan.preset.output.format == "png" else None
    stop: list[FrameResult] = []  # the first fatal failure, if any

    def watch(result: FrameResult) -> None:
        if result.fatal and not stop:
            stop.append(result)
        report(result)

    if plan.preset.output.format == "exr":
        from ..io.exr import set_encoder_threads

        set_encoder_threads(threads)
    if should_stop is not None and should_stop():
        return
    _set_threads(threads)
    sink = _ThreadSink(watch, write_jobs)  # looked up here: replacing job.write_jobs reaches it
    done: set[int] = set()
    try:
        ocean = _cached_ocean(plan, threads, build_progress)
        buffer = ocean.new_buffer()
        for frame in todo:
            if stop:  # the disk is full or read-only: no later frame can be written
                break
            if should_stop is not None and should_stop():
                break  # (the writer still finishes and reports the frame in hand)
            done.add(frame)
            started = time.perf_counter()
            fields = ocean.frame(plan.preset.time.frame_time(frame), buffer=buffer)
            try:
                jobs = encode_frame(plan, frame, fields, scales)
            except ValueError as error:  # e.g. a value beyond the half-float range
                report(FrameResult(frame, "failed", time.perf_counter() - started, str(error)))
                continue
            sink.submit(frame, jobs, started)
        sink.close()  # inside: an interrupt while the last frames are written still waits for the one in hand
    except BaseException:
        sink.close(abort=True)
        raise
    if stop:
        for frame in todo:
            if frame not in done:
                report(FrameResult(frame, "failed", 0.0, stop[0].error, fatal=True))


_OCEANS: dict[tuple[str, int], Any] = {}


def _cached_ocean(plan: RenderPlan, threads: int, build_progress: Callable[[int], None] | None = None):
    """The plan's Ocean (or band stack), kept for the next group of frames this process
    renders (Dask tasks); ``build_progress`` sees a single tile's amplitude build."""
    from ..preset.banding import synthesizer
    from ..surface.synth import Ocean

    key = (plan.hash, threads)
    if key not in _OCEANS:
        _OCEANS.clear()  # one at a time: an Ocean holds 12 bytes a texel
        if plan.preset.bands.active:
            _OCEANS[key] = synthesizer(plan.preset, fft_workers=threads)
        else:
            _OCEANS[key] = Ocean.from_preset(plan.preset, fft_workers=threads, build_progress=build_progress)
    return _OCEANS[key]


class _WorkerStopped(Exception):
    """A local worker process was told to stop (SIGTERM from the render that started it)."""


#: Set in a local worker once its render told it to stop (see :func:`_stop_worker`).
_STOP_REQUESTED = threading.Event()


def _stop_worker(signum, frame) -> None:  # noqa: ARG001 - a signal handler's signature
    """SIGTERM in a local worker: stop now, or at the next frame where now is not possible.

    The exception stops the worker wherever Python runs; but a signal that lands while
    native code calls back into Python (numba compiling or loading a kernel through
    llvmlite) raises inside that callback, where the exception is swallowed. The flag then
    stops the worker before its next frame, and :func:`_quiet_swallowed_stop` keeps the
    swallowed exception from printing a traceback.
    """
    signal.signal(signal.SIGTERM, signal.SIG_IGN)  # once is enough: finish cleaning up
    _STOP_REQUESTED.set()
    raise _WorkerStopped


def _quiet_swallowed_stop(unraisable) -> None:
    """``sys.unraisablehook`` of a local worker: a swallowed stop is expected, not an error."""
    if isinstance(unraisable.exc_value, _WorkerStopped):
        return
    sys.__unraisablehook__(unraisable)


#: Collections of the middle generation between two full ones in a render process
#: (Python's default is 10; see ``cli.main``).
_FULL_COLLECTION_THRESHOLD = 100


def collect_rarely() -> None:
    """Full garbage collections ten times less often in this process: numba's set-up
    makes millions of long-lived objects, and scanning them again and again cost a short
    render a tenth of a second (the young generations are still collected as usual)."""
    import gc

    young, middle, full = gc.get_threshold()
    gc.set_threshold(young, middle, max(full, _FULL_COLLECTION_THRESHOLD))


def _process_worker(plan: RenderPlan, frames: list[int], threads: int, overwrite: bool, events) -> None:
    """A local worker process: render its frames, sending each result as it happens.

    Ctrl-C at a terminal reaches every process of the group: a worker ignores SIGINT and
    stops when the render that started it sends SIGTERM, after the file it is writing
    (quietly: the render prints the one line). It also stops by itself if that render
    goes away (a killed render must not leave workers writing on behind its back).
    """
    signal.signal(signal.SIGINT, signal.SIG_IGN)
    sys.unraisablehook = _quiet_swallowed_stop
    signal.signal(signal.SIGTERM, _stop_worker)
    parent = os.getppid()
    collect_rarely()
    try:
        _render_frames(plan, frames, threads=threads, overwrite=overwrite, report=events.put,
                       should_stop=lambda: _STOP_REQUESTED.is_set() or os.getppid() != parent)
    except _WorkerStopped:
        pass
    except Exception:
        # A stop that landed inside native code can leave it failing in its own way (numba
        # whose kernel compilation was cut short); once told to stop, that is the stop.
        if not _STOP_REQUESTED.is_set():
            raise
    finally:
        # The interpreter's last collections over numba's objects took 0.2-0.4 s of every
        # worker's exit, which the render waits for; its files are all written by now.
        import gc

        gc.freeze()


def _dask_frames(plan: RenderPlan, frames: list[int], threads: int, overwrite: bool,
                 stop_event: str | None = None) -> list[FrameResult]:
    """A cluster task: render a group of frames; stop between frames once ``stop_event`` is set."""
    should_stop = None
    if stop_event is not None:
        from distributed import Event

        event = Event(stop_event)
        should_stop = event.is_set
    results: list[FrameResult] = []
    _render_frames(plan, frames, threads=threads, overwrite=overwrite, report=results.append,
                   should_stop=should_stop)
    return results


def _groups(frames: Sequence[int], count: int) -> list[list[int]]:
    """Split frames into ``count`` contiguous groups of near-equal size (none empty)."""
    count = max(1, min(count, len(frames)))
    return [list(frames[i * len(frames) // count:(i + 1) * len(frames) // count]) for i in range(count)]


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


@contextmanager
def _children_ignore_sigint():
    """Processes started inside ignore SIGINT from their first instruction (the
    disposition is inherited): Ctrl-C reaches the whole process group, and a worker still
    importing would print a traceback; the render stops its workers itself."""
    if threading.current_thread() is not threading.main_thread():
        yield
        return
    previous = signal.signal(signal.SIGINT, signal.SIG_IGN)
    try:
        yield
    finally:
        signal.signal(signal.SIGINT, previous)


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


def _render_on_processes(plan: RenderPlan, count: int, threads: int, overwrite: bool,
                         record: Callable[[FrameResult], None],
                         build_progress: Callable[[int], None] | None = None, *,
                         stop: Callable[[], bool] | None = None) -> None:
    """``count`` workers, each with a contiguous share of the frames: this process renders
    the first share itself (it has already paid for its imports and compiled kernels) and
    spawns a long-lived process for each other share; their results arrive through a
    queue that a thread of this process reads while it renders. Interrupted, it sends
    each worker SIGTERM and waits for it (a worker finishes the file it is writing).
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
    pending = {frame for share in shares for frame in share}

    def collect() -> None:
        while pending:
            try:
                result = events.get(timeout=0.2)
            except queue.Empty:
                if any(worker.is_alive() for worker in workers if worker.pid is not None):
                    continue
                try:  # every worker is gone: take what is left in the queue, then stop
                    result = events.get(timeout=0.5)
                except queue.Empty:
                    return
            pending.discard(result.frame)
            record(result)

    collector = threading.Thread(target=collect, name="oceanfield-results", daemon=True)
    try:
        with _children_ignore_sigint():
            for worker in workers:
                worker.start()
        collector.start()
        _render_frames(plan, own, threads=threads, overwrite=overwrite, report=record,
                       build_progress=build_progress, should_stop=stop)
        if stop is not None and stop():  # interrupted where the signal could not raise: stop the workers
            raise KeyboardInterrupt
        collector.join()
    except BaseException:  # interrupted or failed here: stop the others too
        for worker in workers:
            if worker.pid is not None and worker.is_alive():
                worker.terminate()
        raise
    finally:
        for worker in workers:
            if worker.pid is None:
                continue
            worker.join(timeout=60)
            if worker.is_alive():
                worker.kill()
                worker.join()
        if collector.is_alive():
            collector.join(timeout=5)
        events.close()
        events.join_thread()
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
    """Groups of frames as cluster tasks. Interrupted, it raises a cluster-wide stop flag
    that each task reads between frames, collects what the running tasks finished, and
    cancels the rest before the interrupt goes on."""
    import uuid

    from distributed import Event, as_completed

    n_workers = max(1, len(client.scheduler_info().get("workers", {})))
    groups = _groups(plan.frames, n_workers * 4)
    stop_name = f"oceanfield-stop-{uuid.uuid4().hex}"
    stop = Event(stop_name, client=client)
    # as_completed yields in completion order: look each future's frames up, never zip.
    futures = {client.submit(_dask_frames, plan, group, 1, overwrite, stop_name, pure=False): group
               for group in groups}
    seen: set[Any] = set()

    def take(future) -> None:
        seen.add(future)
        group = futures[future]
        try:
            results = future.result()
        except Exception as error:  # noqa: BLE001 - a remote failure is reported per frame
            results = [FrameResult(f, "failed", 0.0, f"cluster task failed: {error}") for f in group]
        for result in results:
            record(result)

    try:
        for future in as_completed(futures):
            take(future)
    except BaseException:
        stop.set()  # tasks not yet started return at once; running ones after their frame
        deadline = time.monotonic() + _DASK_STOP_S
        while time.monotonic() < deadline and any(f.status == "pending" for f in futures):
            time.sleep(0.05)
        for future in futures:
            if future not in seen and future.status == "finished":
                take(future)
        client.cancel(list(futures))
        raise
    finally:
        try:
            stop.clear()
        except Exception:  # noqa: BLE001 - the client may be closing
            pass


#: How long an interrupted render waits for running cluster tasks to finish their frame.
_DASK_STOP_S = 30.0


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
    print(f"rendering {_count(len(plan.frames), 'frame')} of {preset.name} ({', '.join(preset.maps)}) into {plan.folder}")
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
