"""USD reading and writing (io/usd.py): what a machine without usd-core is told."""

from __future__ import annotations

import sys

import pytest

from oceanfield.io.usd import require_usd


def test_without_usd_core_the_line_fits_reading_a_layout_as_well_as_writing_a_scene(monkeypatch):
    """The same line stops `oceanfield scene` and a vessel's ``usd_file`` course (a layout
    read, not written): it names both, the package and the extra to install."""
    monkeypatch.setitem(sys.modules, "pxr", None)  # as if usd-core were not installed
    with pytest.raises(ValueError) as caught:
        require_usd()
    message = str(caught.value)
    assert "\n" not in message
    assert message.startswith("USD files (a scene to write, a layout to read) need the usd-core package")
    assert message.endswith("pip install 'oceanfield[usd]'")


def test_two_names_that_become_one_prim_are_refused_before_the_stage_is_written(preset_file, tmp_path, capsys):
    """A prim name holds letters, digits and _ only: vessels `lead-boat` and `lead_boat`
    (both allowed names) would both be /Shot/Bodies/lead_boat, one animation overwriting the
    other. One line names both and the prim, exit 2, no stage file."""
    pytest.importorskip("pxr", reason="usd-core is in the test extra; install it with pip install '.[test]'")
    from oceanfield.cli import main

    def vessel(name, y):
        return {"name": name, "length_m": 6.0, "beam_m": 2.0, "draft_m": 0.3,
                "course": {"keys": [{"time_s": -10.0, "x_m": 0.0, "y_m": y}, {"time_s": 1.0, "x_m": 40.0, "y_m": y}]}}

    settings = {"tile": {"resolution": 32}, "time": {"first_frame": 1001, "last_frame": 1002},
                "vessels": [vessel("lead-boat", 0.0), vessel("lead_boat", 20.0)],
                "wake": {"lookback_s": 10.0, "resolution": 32}}
    out = tmp_path / "shot.usda"
    status = main(["scene", str(preset_file("two", settings=settings)), "--out", str(out),
                   "--maps", str(tmp_path / "maps")])
    err = [line for line in capsys.readouterr().err.splitlines() if "error" in line]
    assert status == 2
    assert err == ["oceanfield: error: bodies: `lead-boat` and `lead_boat` would both be the prim "
                   "/Shot/Bodies/lead_boat; allowed: names that differ in their letters, digits or _ "
                   "(a prim name holds nothing else)"]
    assert not out.exists()
