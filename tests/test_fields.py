"""Tests for oceanfield.fields: the Fields contract (shapes, dtypes, immutability)."""

from __future__ import annotations

import dataclasses

import numpy as np
import pytest

from oceanfield.surface.fields import Fields


def _arrays(n: int = 8, velocity: bool = True) -> dict:
    rng = np.random.default_rng(1)
    scalar = lambda: rng.standard_normal((n, n)).astype(np.float32)  # noqa: E731
    normal = np.zeros((n, n, 3), np.float32)
    normal[..., 2] = 1.0
    return dict(
        time=1.5,
        height=scalar(),
        displacement_x=scalar(),
        displacement_y=scalar(),
        jacobian=scalar(),
        normal=normal,
        foam=np.clip(scalar(), 0, 1),
        velocity=rng.standard_normal((n, n, 3)).astype(np.float32) if velocity else None,
    )


def test_resolution_is_texels_per_side():
    assert Fields(**_arrays(8)).resolution == 8
    assert Fields(**_arrays(16)).resolution == 16


def test_velocity_is_optional():
    arrays = _arrays(velocity=False)
    del arrays["velocity"]
    assert Fields(**arrays).velocity is None


def test_frozen():
    fields = Fields(**_arrays())
    with pytest.raises(dataclasses.FrozenInstanceError):
        fields.time = 2.0  # type: ignore[misc]


def test_accepts_strided_views():
    """The synthesiser hands out views into its packed buffers; those must be accepted."""
    n = 8
    packed = np.zeros((n, 2 * n), np.float32)
    arrays = _arrays(n)
    arrays["height"] = packed[:, 0::2]
    arrays["displacement_x"] = packed[:, 1::2]
    assert Fields(**arrays).resolution == n


@pytest.mark.parametrize(
    ("name", "value", "message"),
    [
        ("height", np.zeros((8, 4), np.float32), "height"),
        ("foam", np.zeros((4, 4), np.float32), "foam"),
        ("jacobian", np.zeros((8, 8), np.float64), "jacobian"),
        ("normal", np.zeros((8, 8), np.float32), "normal"),
        ("velocity", np.zeros((8, 8, 2), np.float32), "velocity"),
        ("displacement_x", [[0.0] * 8] * 8, "displacement_x"),
    ],
)
def test_rejects_bad_shapes_and_dtypes(name, value, message):
    arrays = _arrays(8)
    arrays[name] = value
    with pytest.raises(ValueError, match=message):
        Fields(**arrays)
