"""Who computes which frames: this process's frame loop, local worker processes, Dask tasks.

Orchestration only; it knows nothing of formulas. :func:`_render_frames` is the loop every
executor runs (skip complete frames, synthesise, encode, hand the files to the writer
thread); local workers are long-lived spawned processes, each with a contiguous share of
the frames, stopped by the SIGTERM their render sends; Dask tasks take groups of frames
and read a cluster-wide stop flag between frames. ``job`` decides how many and runs them.
"""

from __future__ import annotations

import os
import queue
import signal
import sys
import threading
import time
from contextlib import contextmanager
from typing import Any, Callable, Iterable, Sequence

from .plan import RenderPlan, frame_is_complete
from .writing import FrameResult, _png_scales, _ThreadSink, encode_frame, write_jobs

__all__ = ["collect_rarely"]


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
        if plan.preset.vessels:  # the sea's frame and the wake's on its own region
            from ..preset.vessels import WakeRenderer

            _OCEANS[key] = WakeRenderer(plan.preset, _OCEANS[key], fft_workers=threads)
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
