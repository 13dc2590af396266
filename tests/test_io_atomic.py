"""Tests for oceanfield.io.atomic: complete files or none, clear errors, stale cleanup.

Tests run as root here, where chmod cannot make a folder read-only, so the operating
system's refusals (read-only folder, full disk) are simulated by raising the OSError the
system would raise, with its errno.
"""

from __future__ import annotations

import errno
import os
import pickle
import subprocess
import sys
import time
from pathlib import Path

import pytest

from oceanfield.io import atomic
from oceanfield.io.atomic import (
    OutputError,
    atomic_output,
    is_temporary,
    remove_stale_temporaries,
)
from oceanfield.io.errors import CorruptFileError

REPO = Path(__file__).resolve().parents[1]
#: A process id above Linux's largest possible pid_max (2**22), so never a live process.
DEAD_PID = 2**22 + 1


def _temporaries(folder: Path) -> list[str]:
    return sorted(p.name for p in folder.iterdir() if is_temporary(p))


def test_clean_exit_renames_the_temporary(tmp_path):
    final = tmp_path / "frame.0001.exr"
    with atomic_output(final) as temporary:
        assert temporary.parent == tmp_path
        assert temporary.name.startswith(".")
        assert str(os.getpid()) in temporary.name
        assert temporary.suffix == ".exr"
        assert temporary.exists()  # reserved at once
        assert not final.exists()
        temporary.write_bytes(b"complete")
    assert final.read_bytes() == b"complete"
    assert _temporaries(tmp_path) == []


def test_temporary_names_are_unique(tmp_path):
    final = tmp_path / "a.png"
    with atomic_output(final) as first, atomic_output(final) as second:
        assert first != second
        first.write_bytes(b"1")
        second.write_bytes(b"2")
    assert final.read_bytes() == b"1"  # the outer context exits last and wins


def test_exception_leaves_no_file_and_propagates(tmp_path):
    """A writer that dies mid-write leaves neither a final file nor a temporary."""
    final = tmp_path / "frame.exr"
    with pytest.raises(RuntimeError, match="killed"):
        with atomic_output(final) as temporary:
            temporary.write_bytes(b"half a fr")
            raise RuntimeError("killed")
    assert not final.exists()
    assert list(tmp_path.iterdir()) == []


def test_exception_keeps_the_previous_file(tmp_path):
    final = tmp_path / "frame.exr"
    final.write_bytes(b"old")
    with pytest.raises(KeyboardInterrupt):
        with atomic_output(final) as temporary:
            temporary.write_bytes(b"new, unfinish")
            raise KeyboardInterrupt
    assert final.read_bytes() == b"old"
    assert _temporaries(tmp_path) == []


def _assert_one_line_naming(error: OutputError, final: Path, reason: str) -> None:
    text = str(error)
    assert "\n" not in text
    assert str(final) in text
    assert reason in text


def test_full_disk_while_writing(tmp_path):
    final = tmp_path / "frame.exr"
    with pytest.raises(OutputError) as caught:
        with atomic_output(final) as temporary:
            temporary.write_bytes(b"partial")
            raise OSError(errno.ENOSPC, os.strerror(errno.ENOSPC))
    assert caught.value.errno == errno.ENOSPC
    _assert_one_line_naming(caught.value, final, os.strerror(errno.ENOSPC))
    assert list(tmp_path.iterdir()) == []


def test_read_only_folder_at_rename(tmp_path, monkeypatch):
    def refuse(source, destination):
        raise OSError(errno.EROFS, os.strerror(errno.EROFS), str(destination))

    monkeypatch.setattr(atomic.os, "replace", refuse)
    final = tmp_path / "frame.exr"
    with pytest.raises(OutputError) as caught:
        with atomic_output(final) as temporary:
            temporary.write_bytes(b"complete")
    assert caught.value.errno == errno.EROFS
    _assert_one_line_naming(caught.value, final, os.strerror(errno.EROFS))
    assert list(tmp_path.iterdir()) == []


def test_read_only_folder_at_creation(tmp_path, monkeypatch):
    real_open = os.open

    def refuse(path, flags, *args, **kwargs):
        if flags & os.O_CREAT:
            raise PermissionError(errno.EACCES, os.strerror(errno.EACCES), str(path))
        return real_open(path, flags, *args, **kwargs)

    monkeypatch.setattr(atomic.os, "open", refuse)
    final = tmp_path / "frame.exr"
    with pytest.raises(OutputError) as caught:
        with atomic_output(final):
            pytest.fail("the body must not run when no temporary can be created")
    _assert_one_line_naming(caught.value, final, os.strerror(errno.EACCES))
    assert list(tmp_path.iterdir()) == []


def test_missing_folder(tmp_path):
    final = tmp_path / "no" / "such" / "frame.exr"
    with pytest.raises(OutputError, match="No such file or directory"):
        with atomic_output(final):
            pass


def test_writer_that_writes_nothing(tmp_path):
    final = tmp_path / "frame.exr"
    with pytest.raises(OutputError, match="produced no file"):
        with atomic_output(final) as temporary:
            temporary.unlink()
    assert list(tmp_path.iterdir()) == []


def test_final_path_that_is_a_folder(tmp_path):
    with pytest.raises(OutputError, match="folder"):
        with atomic_output(tmp_path):
            pass


def test_long_file_name(tmp_path):
    """A temporary's name must still fit the 255-byte limit when the final name nearly fills it."""
    final = tmp_path / ("f" * 240 + ".exr")
    with atomic_output(final) as temporary:
        assert len(temporary.name.encode()) <= 255
        assert is_temporary(temporary)
        temporary.write_bytes(b"x")
    assert final.read_bytes() == b"x"


@pytest.mark.parametrize("error", [
    OutputError("/renders/frame.exr", "No space left on device", errno.ENOSPC),
    CorruptFileError("/renders/frame.exr", "truncated"),
])
def test_errors_survive_pickling(error):
    """Errors cross process boundaries when a render farm's worker reports them."""
    copy = pickle.loads(pickle.dumps(error))
    assert type(copy) is type(error)
    assert str(copy) == str(error)
    assert (copy.errno, copy.filename) == (error.errno, error.filename)
    assert isinstance(copy, OSError)


def _make_temporary(folder: Path, pid: int, age: float, name: str = "frame.exr") -> Path:
    path = folder / atomic._temporary_name(Path(name), pid, "0123456789abcdef")
    path.write_bytes(b"partial")
    past = time.time() - age
    os.utime(path, (past, past))
    return path


def test_remove_stale_temporaries(tmp_path):
    old_dead = _make_temporary(tmp_path, DEAD_PID, age=3600)
    recent_dead = _make_temporary(tmp_path, DEAD_PID, age=0, name="frame2.exr")
    old_live = _make_temporary(tmp_path, os.getpid(), age=3600, name="frame3.exr")
    keep = [tmp_path / "frame.exr", tmp_path / ".hidden", tmp_path / ".frame.exr.partial-1-2.exr"]
    for path in keep:
        path.write_bytes(b"keep me")

    assert remove_stale_temporaries(tmp_path) == [old_dead]
    assert recent_dead.exists() and old_live.exists()
    assert remove_stale_temporaries(tmp_path, min_age=0) == [recent_dead]
    assert old_live.exists()  # its process (this one) is alive
    assert all(path.read_bytes() == b"keep me" for path in keep)


@pytest.mark.parametrize("min_age", [-1.0, float("nan"), float("inf"), "10", True])
def test_remove_stale_temporaries_rejects_bad_age(tmp_path, min_age):
    with pytest.raises(ValueError, match="min_age"):
        remove_stale_temporaries(tmp_path, min_age=min_age)


_WRITER = """
import sys
from oceanfield.io.atomic import atomic_output
path, byte, count = sys.argv[1], sys.argv[2].encode(), int(sys.argv[3])
payload = byte * (1 << 20)
for _ in range(count):
    with atomic_output(path) as temporary:
        with open(temporary, "wb") as out:
            for start in range(0, len(payload), 1 << 16):  # many small writes
                out.write(payload[start:start + (1 << 16)])
"""


def test_two_processes_writing_one_path_never_leave_a_mixed_file(tmp_path):
    """Each process writes its own temporary; a reader only ever sees one whole payload."""
    final = tmp_path / "frame.bin"
    env = dict(os.environ, PYTHONPATH=os.pathsep.join(
        [str(REPO), *filter(None, [os.environ.get("PYTHONPATH")])]))
    writers = [
        subprocess.Popen([sys.executable, "-c", _WRITER, str(final), byte, "25"], env=env)
        for byte in ("a", "b")
    ]
    seen = set()
    while any(writer.poll() is None for writer in writers):
        try:
            data = final.read_bytes()
        except FileNotFoundError:
            continue
        assert len(data) == 1 << 20
        assert data.count(data[:1]) == len(data), "a reader saw a mixed or partial file"
        seen.add(data[:1])
    assert [writer.wait() for writer in writers] == [0, 0]
    data = final.read_bytes()
    assert data in (b"a" * (1 << 20), b"b" * (1 << 20))
    assert _temporaries(tmp_path) == []
    assert seen  # the reader did overlap the writers
