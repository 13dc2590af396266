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
