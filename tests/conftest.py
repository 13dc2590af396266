"""Shared pytest fixtures."""

from __future__ import annotations

from pathlib import Path
from typing import Any, Callable

import pytest
import yaml

#: A small sea for render-job tests: moderate_breeze on a 64² tile (no preset warnings at
#: this size: the 2 m texels resolve 95 % of its variance), six frames.
_TINY_PRESET: dict[str, Any] = {
    "extends": "moderate_breeze",
    "tile": {"resolution": 64},
    "time": {"first_frame": 1001, "last_frame": 1006},
}


def _merged(base: dict[str, Any], over: dict[str, Any]) -> dict[str, Any]:
    merged = dict(base)
    for key, value in over.items():
        if isinstance(value, dict) and isinstance(merged.get(key), dict):
            merged[key] = _merged(merged[key], value)
        else:
            merged[key] = value
    return merged


@pytest.fixture
def preset_file(tmp_path: Path) -> Callable[..., Path]:
    """Write a small preset YAML to ``tmp_path`` and return its path.

    ``preset_file(name="tiny", settings=None)``: ``settings`` (nested mappings, as in a
    preset) merge over the tiny sea above, which extends the shipped ``moderate_breeze``.
    The preset's name is ``name`` (the file's stem).
    """

    def write(name: str = "tiny", settings: dict[str, Any] | None = None) -> Path:
        path = tmp_path / f"{name}.yaml"
        path.write_text(yaml.safe_dump(_merged(_TINY_PRESET, settings or {}), sort_keys=False),
                        encoding="utf-8")
        return path

    return write
