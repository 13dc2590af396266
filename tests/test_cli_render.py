"""Tests for ``oceanfield render``: refusals, progress, exit status, chunks, a real SIGKILL.

Commands run in-process through `oceanfield.cli.main` (stdout and stderr captured); the
kill test and one end-to-end test run the installed ``oceanfield`` command.
"""

from __future__ import annotations

import json
import os
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
from oceanfield.preset import load_preset
from oceanfield.render import MANIFEST_NAME, plan_render, render

#: How long an unreachable scheduler may take to be reported (the issue's bound, seconds).
_SCHEDULER_REFUSAL_S = 15.0
_FRAME_LINE = re.compile(r"^frame (\d+) (written in \d+\.\d\d s|skipped|failed: .+)$")


def _render_args(preset: Path, out: Path, *extra: str) -> list[str]:
    return ["render", str(preset), "--out", str(out), "--workers", "1", *extra]


def _files(root: Path) -> dict[str, tuple[int, int]]:
    """Every file under ``root`` (hidden ones too) → (size, modification time in ns)."""
    if not root.exists():
        return {}
    return {str(p.relative_to(root)): (p.stat().st_size, p.stat().st_mtime_ns)
            for p in sorted(root.rglob("*")) if p.is_file()}


def _assert_one_error_block(err: str, *needles: str) -> None:
    lines = err.strip("\n").splitlines()
    assert len(lines) == 1 and lines[0].startswith("oceanfield: error: "), err
    for needle in needles:
        assert needle in lines[0], (needle, err)


def _same_frames(a: Path, b: Path) -> None:
    names = sorted(p.relative_to(a) for p in a.rglob("*.exr") if not is_temporary(p))
    assert names == sorted(p.relative_to(b) for p in b.rglob("*.exr") if not is_temporary(p))
    for name in names:
        assert (a / name).read_bytes() == (b / name).read_bytes(), name


# -- refusals --------------------------------------------------------------------------------


@pytest.mark.parametrize(
    ("extra", "needles"),
    [
        (("--frames", "5-1"), ("--frames", "'5-1'", "allowed")),
        (("--frames", "a-b"), ("--frames", "'a-b'", "allowed")),
        (("--chunk", "9/8"), ("--chunk", "'9/8'", "allowed")),
        (("--chunk", "0/3"), ("--chunk", "'0/3'", "allowed")),
        (("--workers", "0"), ("--workers", "0", "allowed")),
    ],
    ids=["frames-backwards", "frames-not-numbers", "chunk-beyond", "chunk-zero", "no-workers"],
)
def test_bad_arguments_are_refused_before_anything_is_written(tmp_path, preset_file, capsys, extra, needles):
    out = tmp_path / "out"
    status = main(["render", str(preset_file()), "--out", str(out), *extra])
    captured = capsys.readouterr()
    assert status == 2
    assert captured.out == ""
    _assert_one_error_block(captured.err, *needles)
    assert not out.exists()


def test_an_unwritable_output_root_is_refused(tmp_path, preset_file, capsys):
    # Tests run as root, so permissions stop nothing: put the root under a file instead.
    blocker = tmp_path / "a-file"
    blocker.write_text("not a folder", encoding="utf-8")
    status = main(_render_args(preset_file(), blocker / "renders"))
    captured = capsys.readouterr()
    assert status == 2
    _assert_one_error_block(captured.err, "not writable", str(blocker))
    assert sorted(_files(tmp_path)) == ["a-file", "tiny.yaml"]


def test_an_unreachable_scheduler_is_refused_quickly(tmp_path, preset_file, capsys):
    pytest.importorskip("distributed")
    out = tmp_path / "out"
    started = time.perf_counter()
    status = main(["render", str(preset_file()), "--out", str(out), "--scheduler", "tcp://127.0.0.1:9"])
    elapsed = time.perf_counter() - started
    captured = capsys.readouterr()
    assert status == 2
    _assert_one_error_block(captured.err, "--scheduler", "tcp://127.0.0.1:9")
    assert elapsed < _SCHEDULER_REFUSAL_S
    assert _files(out) == {}  # no frames, no temporaries, no manifest


def test_workers_with_a_scheduler_are_refused(tmp_path, preset_file, capsys):
    """--workers sets local processes; with --scheduler the cluster's workers render, so
    the two together are a mistake, not a silent no-op."""
    out = tmp_path / "out"
    status = main(["render", str(preset_file()), "--out", str(out), "--workers", "3", "--scheduler", "tcp://127.0.0.1:9"])
    captured = capsys.readouterr()
    assert status == 2
    _assert_one_error_block(captured.err, "--workers", "--scheduler")
    assert _files(out) == {}


def test_another_preset_into_a_rendered_folder_is_refused(tmp_path, preset_file, capsys):
    out = tmp_path / "out"
    assert main(_render_args(preset_file(), out, "--frames", "1001-1002")) == 0
    # Another preset, another sea, told to write into tiny's folder.
    other = preset_file("other", settings={"seed": 9, "output": {"folder": "tiny"}})
    capsys.readouterr()
    before = _files(out)
    status = main(_render_args(other, out, "--frames", "1001-1002"))
    captured = capsys.readouterr()
    assert status == 2
    _assert_one_error_block(captured.err, str(out / "tiny"), "rendered from tiny", "--overwrite")
    assert _files(out) == before
    # --overwrite replaces them.
    assert main(_render_args(other, out, "--frames", "1001-1002", "--overwrite")) == 0
    assert "2 written, 0 skipped" in capsys.readouterr().out
    assert '"preset_name": "other"' in (out / "tiny" / MANIFEST_NAME).read_text(encoding="utf-8")


# -- progress, summary, exit status ------------------------------------------------------------


def test_progress_lines_summary_and_exit_status(tmp_path, preset_file, capsys):
    out = tmp_path / "out"
    path = preset_file()
    assert main(_render_args(path, out, "--frames", "1001-1004")) == 0
    lines = capsys.readouterr().out.splitlines()
    assert lines[0] == f"rendering 4 frames of tiny (displacement, normal, foam) into {out / 'tiny'}"
    progress = [_FRAME_LINE.match(line) for line in lines[1:5]]
    assert all(progress), lines
    assert sorted(int(m.group(1)) for m in progress) == [1001, 1002, 1003, 1004]
    assert all(m.group(2).startswith("written") for m in progress)
    assert re.fullmatch(r"4 written, 0 skipped \(already complete\), 0 failed of 4 frames in "
                        r"\d+\.\d s \(\d+\.\d\d frames/s\)", lines[5])
    assert lines[6:] == [f"frames are in {out / 'tiny'}"]

    # Again: every frame is complete, so every frame is skipped.
    assert main(_render_args(path, out, "--frames", "1001-1004")) == 0
    lines = capsys.readouterr().out.splitlines()
    assert sorted(lines[1:5]) == [f"frame {f} skipped" for f in range(1001, 1005)]
    # (no rate: nothing was rendered, and "0.00 frames/s" read as a render that stalled)
    assert re.fullmatch(r"0 written, 4 skipped \(already complete\), 0 failed of 4 frames in \d+\.\d s", lines[5])


def test_overwrite_does_what_its_help_says(tmp_path, preset_file, capsys):
    """--overwrite renders complete frames again (its help said only "replace frames and a
    manifest from another preset"), and its help says so."""
    out = tmp_path / "out"
    assert main(_render_args(preset_file(), out, "--frames", "1001-1002")) == 0
    capsys.readouterr()
    assert main(_render_args(preset_file(), out, "--frames", "1001-1002", "--overwrite")) == 0
    assert "2 written, 0 skipped" in capsys.readouterr().out
    with pytest.raises(SystemExit):
        main(["render", "--help"])
    text = " ".join(capsys.readouterr().out.split())
    assert "--overwrite render every frame again, complete ones too, after removing the folder's frames of " \
           "other settings (all of them, also outside --frames)" in text


def test_a_log_whose_reader_goes_away_does_not_hang_the_render(tmp_path, preset_file):
    """`oceanfield render ... | head -1`, or a farm's log collector that dies: the frame
    lines meet a closed pipe. The render used to hang for ever (its writer thread died on
    the error and the frames queued for it waited). It now renders every frame, says
    nothing more, and ends as a closed pipe does (141), with no traceback."""
    out = tmp_path / "out"
    process = subprocess.Popen(["oceanfield", *_render_args(preset_file(), out, "--frames", "1001-1012")],
                               stdout=subprocess.PIPE, stderr=subprocess.PIPE)
    assert process.stdout.readline().startswith(b"rendering 12 frames")
    process.stdout.close()  # the reader goes away after the first line
    try:
        _, err = process.communicate(timeout=120)
    except subprocess.TimeoutExpired:
        process.kill()
        process.communicate()
        pytest.fail("the render hung once its log's reader went away")
    assert process.returncode == 141, err.decode()
    assert b"Traceback" not in err, err.decode()
    manifest = json.loads((out / "tiny" / MANIFEST_NAME).read_text(encoding="utf-8"))
    assert manifest["frames_done"] == list(range(1001, 1013))


def test_a_failing_progress_callback_fails_the_render_instead_of_hanging_it(tmp_path, preset_file):
    """Whatever the callback raises on the writer's thread reaches the caller of render()."""
    import threading

    def broken(result):
        raise RuntimeError("progress callback broke")

    outcome = []

    def run():
        try:
            render(plan_render(load_preset(preset_file()), root=tmp_path), workers=1, progress=broken)
            outcome.append(None)
        except RuntimeError as error:
            outcome.append(error)

    thread = threading.Thread(target=run, daemon=True)
    thread.start()
    thread.join(timeout=120)
    assert not thread.is_alive(), "render() hung after its progress callback raised"
    assert outcome and str(outcome[0]) == "progress callback broke"


def test_a_one_frame_job_says_frame_not_frames(tmp_path, preset_file, capsys):
    """A farm chunk is often one frame: "rendering 1 frame", "of 1 frame", not "1 frames"."""
    out = tmp_path / "out"
    assert main(_render_args(preset_file(), out, "--frames", "1003")) == 0
    lines = capsys.readouterr().out.splitlines()
    assert lines[0] == f"rendering 1 frame of tiny (displacement, normal, foam) into {out / 'tiny'}"
    assert re.fullmatch(r"1 written, 0 skipped \(already complete\), 0 failed of 1 frame in \d+\.\d s "
                        r"\(\d+\.\d\d frames/s\)", lines[2]), lines


def test_a_frame_that_cannot_be_written_fails_the_run(tmp_path, preset_file, capsys):
    out = tmp_path / "out"
    path = preset_file()
    blocked = plan_render(load_preset(path), root=out).files(1003)["normal"]
    blocked.mkdir(parents=True)  # a folder where the file should go
    status = main(_render_args(path, out, "--frames", "1001-1004"))
    captured = capsys.readouterr()
    assert status == 1
    assert "frame 1003 failed: cannot write" in captured.out
    assert "3 written, 0 skipped (already complete), 1 failed of 4 frames" in captured.out
    assert "frames are in" not in captured.out
    assert captured.err.startswith(f"oceanfield: error: frame 1003: cannot write '{blocked}'")
    assert '"frames_done": [\n    1001,\n    1002,\n    1004\n  ]' in (out / "tiny" / MANIFEST_NAME).read_text()


def test_chunks_from_the_command_line_match_one_run(tmp_path, preset_file, capsys):
    path = preset_file()
    for chunk in ("2/3", "3/3", "1/3"):  # in any order
        assert main(_render_args(path, tmp_path / "chunks", "--chunk", chunk)) == 0
        assert "2 written, 0 skipped" in capsys.readouterr().out
    assert main(_render_args(path, tmp_path / "whole")) == 0
    _same_frames(tmp_path / "whole", tmp_path / "chunks")
    assert main(_render_args(path, tmp_path / "chunks")) == 0
    assert "0 written, 6 skipped" in capsys.readouterr().out.splitlines()[-2]


# -- the installed command ---------------------------------------------------------------------


def _command() -> str:
    command = shutil.which("oceanfield")
    assert command, "the oceanfield command is not on PATH (pip install -e .)"
    return command


def test_installed_command_renders_a_tiny_preset(tmp_path, preset_file):
    out = tmp_path / "out"
    result = subprocess.run(
        [_command(), "render", str(preset_file()), "--out", str(out), "--frames", "1001-1002", "--workers", "1"],
        capture_output=True, text=True, timeout=120, check=False,
    )
    assert result.returncode == 0, result.stderr
    assert result.stderr == ""
    assert result.stdout.splitlines()[-1] == f"frames are in {out / 'tiny'}"
    assert sorted(p.name for p in (out / "tiny").glob("*.exr")) == [
        f"{m}.{f}.exr" for m in ("displacement", "foam", "normal") for f in (1001, 1002)]


def test_sigkill_mid_render_leaves_no_partial_frame_and_resumes(tmp_path, preset_file, capsys):
    """A real SIGKILL mid-run: every file under a frame's name is whole; a re-run completes."""
    frames = 48
    last = 1000 + frames
    path = preset_file("killed", settings={"tile": {"resolution": 256}, "time": {"last_frame": last}})
    out = tmp_path / "out"
    folder = out / "killed"
    log = (tmp_path / "killed.log").open("w")
    process = subprocess.Popen([_command(), *_render_args(path, out)], stdout=log, stderr=subprocess.STDOUT,
                               start_new_session=True)
    caught_writing = False
    children_outlived = None
    try:
        deadline = time.monotonic() + 60.0
        while process.poll() is None and time.monotonic() < deadline:
            names = os.listdir(folder) if folder.is_dir() else []
            done = Counter(n.split(".")[1] for n in names if n.endswith(".exr") and not is_temporary(n))
            whole = sum(count == 3 for count in done.values())
            # Once a frame is whole, kill while a file is being written if we catch one,
            # else after a few frames.
            if whole and any(is_temporary(n) for n in names):
                caught_writing = True
                break
            if whole >= 6:
                break
            time.sleep(0.001)
        os.kill(process.pid, signal.SIGKILL)  # the render process alone, as an OOM killer would
        process.wait(timeout=30)
        # Nothing the render started may outlive it for long.
        for _ in range(50):
            try:
                os.killpg(process.pid, 0)
            except ProcessLookupError:
                children_outlived = False
                break
            time.sleep(0.1)
        else:
            children_outlived = True
    finally:
        log.close()
        try:  # anything the killed render started itself (its session is its own)
            os.killpg(process.pid, signal.SIGKILL)
        except ProcessLookupError:
            pass
    assert process.returncode == -signal.SIGKILL, "the render ended before it was killed"

    finals = [p for p in folder.glob("*.exr") if not is_temporary(p)]
    assert finals, "no frame was written before the kill"
    assert len(finals) < 3 * frames, "every frame was written before the kill"
    for file in finals:
        assert exr_is_complete(file, decode=True), f"{file.name} is partial"
    leftovers = [p.name for p in folder.iterdir() if is_temporary(p)]

    status = main(_render_args(path, out))
    captured = capsys.readouterr()
    assert status == 0, captured.err
    summary = captured.out.splitlines()[-2]
    written, skipped = (int(n) for n in re.match(r"(\d+) written, (\d+) skipped", summary).groups())
    assert written > 0 and skipped > 0 and written + skipped == frames

    clean = render(plan_render(load_preset(path), root=tmp_path / "clean"), workers=1)
    assert clean.ok
    _same_frames(out, tmp_path / "clean")
    # Report what the kill left beside the frames (hidden temporaries of the dead writer are
    # removed by a later run once five minutes old; see io.atomic.remove_stale_temporaries).
    print(f"killed while writing: {caught_writing}; temporaries left: {leftovers}; "
          f"processes outlived the render by 5 s: {children_outlived}; "
          f"frames redone: {written}, skipped: {skipped}")


def test_a_disk_that_fills_mid_render_stops_with_one_clear_line(tmp_path, preset_file, capsys, monkeypatch):
    """A full disk (ENOSPC) after two frames: the render stops rendering (no point trying
    the rest), every unwritten frame counts as failed, stderr names the cause once, the
    exit status is non-zero, and no partial file is left under a frame's name."""
    import errno

    import oceanfield.render.workers as render_module
    from oceanfield.io.errors import OutputError

    original = render_module.write_jobs
    written: list[int] = []

    def filling_disk(jobs):
        if len(written) >= 2:
            raise OutputError(jobs[0].path, "No space left on device", errno.ENOSPC)
        written.append(1)
        return original(jobs)

    monkeypatch.setattr(render_module, "write_jobs", filling_disk)
    preset = preset_file(settings={"time": {"last_frame": 1012}})
    code = main(["render", str(preset), "--out", str(tmp_path / "out"), "--workers", "1"])
    captured = capsys.readouterr()
    assert code == 1
    errors = [line for line in captured.err.splitlines() if line.startswith("oceanfield: error:")]
    assert len(errors) == 1, captured.err
    assert "10 frames (1003–1012)" in errors[0] and "No space left on device" in errors[0]
    assert "2 written, 0 skipped (already complete), 10 failed of 12 frames" in captured.out
    frames = sorted((tmp_path / "out").rglob("*.exr"))
    assert len(frames) == 2 * 3  # two frames of three maps, whole
    assert all(exr_is_complete(path) for path in frames)


def test_overwrite_of_part_of_a_range_never_leaves_a_mixed_sequence(tmp_path, preset_file, capsys):
    """The new user's case: a 16-frame render (the analyzer's least), then two frames with other settings under
    --overwrite. The old settings' other frames go (one line says so), and the analyzer
    names a folder mixed by hand (old frames copied back in)."""
    preset = preset_file(settings={"time": {"last_frame": 1016}})
    out = tmp_path / "out"
    assert main(_render_args(preset, out)) == 0
    folder = out / "tiny"
    keep = tmp_path / "old"
    shutil.copytree(folder, keep)
    capsys.readouterr()

    # Without --overwrite other settings are refused and nothing changes.
    before = _files(folder)
    assert main(_render_args(preset, out, "--frames", "1001-1002", "--set", "seed=9")) == 2
    _assert_one_error_block(capsys.readouterr().err, "holds frames rendered from tiny with different settings",
                            "16 frames (1001–1016)", "--overwrite")
    assert _files(folder) == before

    assert main(_render_args(preset, out, "--frames", "1001-1002", "--set", "seed=9", "--overwrite")) == 0
    captured = capsys.readouterr()
    assert captured.err == (f"oceanfield: --overwrite: removed 16 frames (1001–1016) rendered from tiny with "
                            f"different settings from {folder}\n")
    assert sorted({p.name.split(".")[1] for p in folder.glob("*.exr")}) == ["1001", "1002"]

    # Mixed by hand behind the tool's back: the analyzer says so, in text and JSON.
    for frame in range(1003, 1017):
        shutil.copyfile(keep / f"displacement.{frame}.exr", folder / f"displacement.{frame}.exr")
    assert main(["analyze", str(folder / "displacement.####.exr"), "--json"]) == 0
    notes = json.loads(capsys.readouterr().out)["notes"]
    assert notes[0].startswith("the frames were rendered with 2 different settings (runs: 1001–1002, 1003–1016)")


def test_large_jobs_print_an_estimate_and_show_the_build(tmp_path, preset_file, capsys, monkeypatch):
    """A job past the size thresholds says its memory and time up front and shows the
    Ocean's build as a progress bar (thresholds lowered here to fit a 64² test)."""
    import oceanfield.render.job as job
    from oceanfield.render.estimate import estimate_render
    from oceanfield.surface.synth import frame_bytes_per_texel

    monkeypatch.setattr(job, "_ESTIMATE_TEXELS", 0)
    monkeypatch.setattr(job, "_BUILD_BAR_SECONDS", 0.0)
    preset = preset_file()
    assert main(_render_args(preset, tmp_path / "out")) == 0
    captured = capsys.readouterr()
    lines = captured.out.splitlines()
    assert re.fullmatch(r"estimate: about [\d.]+ (KB|MB) of memory and \d+ s for 6 frames on 1 worker "
                        r"\(\d+ s of it building the ocean\)", lines[1]), captured.out
    assert "building the ocean" in captured.err and "64/64" in captured.err

    estimate = estimate_render(plan_render(load_preset(preset), root=tmp_path), workers=2, cores=2)
    # Two workers, each an Ocean and a frame plus two encoded frames of 28 B a texel.
    assert estimate.memory_bytes == 2 * 64 * 64 * (frame_bytes_per_texel(False) + 28)
    assert 0 < estimate.build_seconds <= estimate.total_seconds


def test_preset_warnings_are_printed_by_the_job_or_its_first_chunk_only(tmp_path, preset_file, capsys):
    """Farm chunks other than the first skip the preset's warnings (and the statistics they
    cost at start-up); the first chunk and an unchunked job print them."""
    preset = preset_file()
    printed = {}
    for chunk in (None, "1/3", "2/3"):
        extra = ("--set", "output.compression=dwaa") + (("--chunk", chunk) if chunk else ())
        assert main(_render_args(preset, tmp_path / str(chunk).replace("/", "of"), *extra)) == 0
        err = capsys.readouterr().err
        printed[chunk] = [line for line in err.splitlines() if line.startswith("oceanfield: warning:")]
    assert printed[None] and printed["1/3"] == printed[None]
    assert printed["2/3"] == []
