"""Interrupting ``oceanfield render`` with real signals: Ctrl-C (SIGINT to the whole process
group, as a terminal sends it) and SIGTERM (to the render's process, as a farm manager
sends it), on this process, on local worker processes and on a Dask cluster.

Each test runs the installed command in a subprocess of its own session, waits until a
few frames are whole on disk, sends the signal, and checks: the exit status (128 + the
signal: 130, 143), exactly one line on stderr saying how many frames are complete and
that a re-run finishes the rest (no traceback, no "leaked" resource warning), that the
count is the frames whole on disk and in the manifest, that no file under a frame's name
is partial, and that nothing the render started outlives it.
"""

from __future__ import annotations

import json
import os
import queue
import re
import shutil
import signal
import subprocess
import time
from collections import Counter
from pathlib import Path

import pytest

from oceanfield.cli import main
from oceanfield.io.atomic import is_temporary
from oceanfield.io.exr import exr_is_complete
from oceanfield.render import MANIFEST_NAME

_FRAMES = 400  # far more than a test waits for: the signal always lands mid-render
_LINE = re.compile(
    r"^oceanfield: (interrupted \(Ctrl-C\)|stopped by SIGTERM): (\d+) of (\d+) frames are complete; "
    r"running the same command again renders the other (\d+)$"
)
_MAPS = 3  # displacement, normal, foam (the tiny preset's maps)


def _command() -> str:
    found = shutil.which("oceanfield")
    if found is None:
        pytest.skip("the oceanfield command is not installed")
    return found


def _whole_frames(folder: Path) -> set[int]:
    """Frames whose every map is on disk under its final name."""
    names = os.listdir(folder) if folder.is_dir() else []
    counts = Counter(n.split(".")[1] for n in names if n.endswith(".exr") and not is_temporary(n))
    return {int(frame) for frame, count in counts.items() if count == _MAPS}


def _group_gone(pgid: int, seconds: float) -> bool:
    """Whether every process of the group has ended (zombies awaiting their reaper count as ended)."""
    deadline = time.monotonic() + seconds
    while time.monotonic() < deadline:
        listing = subprocess.run(["ps", "-o", "stat=", "-g", str(pgid)], capture_output=True, text=True).stdout
        if all(state.startswith("Z") for state in listing.split()):
            return True
        time.sleep(0.1)
    return False


def _interrupt(tmp_path: Path, preset: Path, signum: int, *extra: str) -> tuple[int, str, Path]:
    out = tmp_path / "out"
    folder = out / preset.stem
    process = subprocess.Popen([_command(), "render", str(preset), "--out", str(out), *extra],
                               stdout=subprocess.DEVNULL, stderr=subprocess.PIPE, text=True,
                               start_new_session=True)
    try:
        deadline = time.monotonic() + 120.0
        while len(_whole_frames(folder)) < 2 and process.poll() is None and time.monotonic() < deadline:
            time.sleep(0.02)
        assert process.poll() is None, "the render ended before the signal"
        if signum == signal.SIGINT:
            os.killpg(process.pid, signum)  # Ctrl-C reaches every process of the group
        else:
            os.kill(process.pid, signum)
        _, err = process.communicate(timeout=90)
        assert _group_gone(process.pid, 10.0), "a process the render started outlived it"
    finally:
        try:
            os.killpg(process.pid, signal.SIGKILL)
        except ProcessLookupError:
            pass
    return process.returncode, err, folder


def _check_stopped_cleanly(code: int, err: str, folder: Path, signum: int) -> int:
    assert code == 128 + signum, err
    lines = err.splitlines()
    assert len(lines) == 1, err
    match = _LINE.match(lines[0])
    assert match, err
    done, total, left = (int(match.group(i)) for i in (2, 3, 4))
    assert total == _FRAMES and done + left == total
    whole = _whole_frames(folder)
    assert len(whole) == done >= 2
    assert set(json.loads((folder / MANIFEST_NAME).read_text())["frames_done"]) == whole
    for path in folder.glob("*.exr"):
        if not is_temporary(path):
            assert exr_is_complete(path, decode=False), f"{path.name} is partial"
    return done


@pytest.mark.parametrize(
    ("signum", "workers"),
    [(signal.SIGINT, "2"), (signal.SIGTERM, "1")],
    ids=["ctrl-c-local-workers", "sigterm-this-process"],
)
def test_a_signal_stops_the_render_with_one_line(tmp_path, preset_file, signum, workers):
    preset = preset_file("stopped", settings={"tile": {"resolution": 256},
                                              "time": {"last_frame": 1000 + _FRAMES}})
    code, err, folder = _interrupt(tmp_path, preset, signum, "--workers", workers)
    _check_stopped_cleanly(code, err, folder, signum)


def test_ctrl_c_stops_the_tasks_on_a_dask_cluster(tmp_path, preset_file):
    distributed = pytest.importorskip("distributed")
    preset = preset_file("stopped", settings={"tile": {"resolution": 256},
                                              "time": {"last_frame": 1000 + _FRAMES}})
    with distributed.LocalCluster(n_workers=1, threads_per_worker=1, processes=False, protocol="tcp",
                                  dashboard_address=":0") as cluster:
        code, err, folder = _interrupt(tmp_path, preset, signal.SIGINT, "--scheduler", cluster.scheduler_address)
        _check_stopped_cleanly(code, err, folder, signal.SIGINT)
        # The cluster's task saw the stop flag: it writes nothing more.
        before = sorted(os.listdir(folder))
        time.sleep(1.5)
        assert sorted(os.listdir(folder)) == before


def test_an_interrupt_before_rendering_is_one_line_and_status_130(tmp_path, preset_file, capsys, monkeypatch):
    """Ctrl-C while the job is still being checked (before any frame): one line, 130."""
    import oceanfield.preset.stats as stats

    def interrupted(*args, **kwargs):
        raise KeyboardInterrupt

    monkeypatch.setattr(stats, "fold_warning", interrupted)
    code = main(["render", str(preset_file()), "--out", str(tmp_path / "out"), "--workers", "1"])
    captured = capsys.readouterr()
    assert code == 130
    assert captured.err == "oceanfield: interrupted (Ctrl-C)\n"



def _signal_inside_native_code(signum: int) -> None:
    """Deliver ``signum`` while native code calls back into Python — as numba does through
    llvmlite while it compiles or loads a kernel — where an exception the handler raises
    is swallowed (``Exception ignored on calling ctypes callback function``)."""
    import ctypes

    @ctypes.CFUNCTYPE(None)
    def callback() -> None:
        signal.raise_signal(signum)
        for _ in range(1000):  # the handler runs here, between bytecodes of the callback
            pass

    callback()


@pytest.mark.parametrize("signum", [signal.SIGINT, signal.SIGTERM], ids=["ctrl-c", "sigterm"])
def test_a_signal_swallowed_inside_native_code_still_stops_the_render(tmp_path, preset_file, signum, capsys,
                                                                       monkeypatch):
    """On a fresh install the kernels compile while frames render; a signal landing inside
    llvmlite's callbacks cannot raise there. The render must still stop at the next frame,
    say so once (RenderInterrupted, the frames done recorded) and print no traceback."""
    import oceanfield.render.job as job
    import oceanfield.render.workers as workers
    from oceanfield.preset import load_preset
    from oceanfield.render import plan_render, render

    preset = load_preset(preset_file("swallowed", settings={"tile": {"resolution": 32},
                                                             "time": {"last_frame": 1006}}))
    encode = workers.encode_frame
    calls = []

    def encode_then_signal(plan, frame, fields, scales):
        calls.append(frame)
        if len(calls) == 2:
            _signal_inside_native_code(signum)
        return encode(plan, frame, fields, scales)

    monkeypatch.setattr(workers, "encode_frame", encode_then_signal)
    with pytest.raises(job.RenderInterrupted) as stopped:
        render(plan_render(preset, root=tmp_path), workers=1)
    assert stopped.value.signum == signum
    assert stopped.value.summary.written == [1001, 1002]  # the frame in hand is finished, no more
    assert calls == [1001, 1002]
    assert "Exception ignored" not in capsys.readouterr().err


def test_a_worker_told_to_stop_ends_quietly_whatever_native_code_then_raises(monkeypatch):
    """A stop cut short inside native code can leave it failing its own way (numba: "no
    compiled object yet"); once the worker was told to stop, that failure is the stop."""
    import oceanfield.render.workers as job

    def failing(*args, **kwargs):
        job._STOP_REQUESTED.set()
        raise RuntimeError("no compiled object yet")

    monkeypatch.setattr(job, "_render_frames", failing)
    monkeypatch.setattr(job.signal, "signal", lambda *args: None)  # leave this process's handlers alone
    monkeypatch.setattr(job.sys, "unraisablehook", job.sys.unraisablehook)
    try:
        job._process_worker(None, [], 1, False, queue.Queue())  # returns quietly
        job._STOP_REQUESTED.clear()

        def broken(*args, **kwargs):
            raise RuntimeError("a real failure")

        monkeypatch.setattr(job, "_render_frames", broken)
        with pytest.raises(RuntimeError, match="a real failure"):
            job._process_worker(None, [], 1, False, queue.Queue())
    finally:
        job._STOP_REQUESTED.clear()


def test_a_signal_while_the_last_frame_is_written_waits_for_it(tmp_path, preset_file, monkeypatch):
    """Ctrl-C that lands after the last frame was handed to the writer, while it is being
    written (the render is waiting for its writer to finish): the render still waits for
    that file, counts it, records it, and leaves no writer thread running behind it (a
    thread cut off when the process exits could leave a temporary, and it printed its
    frame's line after the summary's)."""
    import threading

    import oceanfield.render.job as job
    import oceanfield.render.workers as workers
    from oceanfield.preset import load_preset
    from oceanfield.render import plan_render, render

    preset = load_preset(preset_file("last", settings={"tile": {"resolution": 32},
                                                        "time": {"last_frame": 1003}}))
    write = workers.write_jobs
    main_thread = threading.main_thread().ident

    def write_slowly(jobs):
        if jobs and ".1003." in jobs[0].path.name:
            signal.pthread_kill(main_thread, signal.SIGINT)  # the main thread now waits in close()
            time.sleep(0.5)
        return write(jobs)

    monkeypatch.setattr(workers, "write_jobs", write_slowly)
    with pytest.raises(job.RenderInterrupted) as stopped:
        render(plan_render(preset, root=tmp_path), workers=1)
    assert stopped.value.summary.written == [1001, 1002, 1003]
    assert not [t for t in threading.enumerate() if t.name == "oceanfield-writer"]
    manifest = json.loads((tmp_path / "last" / MANIFEST_NAME).read_text())
    assert manifest["frames_done"] == [1001, 1002, 1003]
    assert not [n for n in os.listdir(tmp_path / "last") if is_temporary(n)]
