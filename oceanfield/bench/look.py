"""The look's row: a still of `oceanfield look` as the command renders it, in this process.

Knows nothing of formulas or of shading: it times the look's public entry points.
"""

from __future__ import annotations

import time

__all__ = ["look_benchmark"]


def look_benchmark(preset_name: str, size: str, repeat: int) -> dict[str, float]:
    """`oceanfield look PRESET --size size` as the command renders it, in this process:
    median wall and CPU seconds of a still (frame, pyramid, march and shading; kernels
    warm), each part's share, and the ocean's build."""
    from argparse import Namespace

    from ..look.writing import look_from_arguments
    from ..preset.schema import load_preset

    options = dict(size=size, camera_height=None, heading=None, pitch=None, fov=None, sun_elevation=None,
                   sun_azimuth=None, turbidity=None, exposure=None, flat_sea=False, clear_air=False)
    started = time.perf_counter()
    look = look_from_arguments(load_preset(preset_name), Namespace(**options))
    build = time.perf_counter() - started
    look.picture(look.render())  # warm: kernels loaded, caption font cached
    walls, cpus, parts = [], [], []
    for _ in range(repeat):
        look.seconds = dict.fromkeys(look.seconds, 0.0)
        wall, cpu = time.perf_counter(), time.process_time()
        look.picture(look.render())
        walls.append(time.perf_counter() - wall)
        cpus.append(time.process_time() - cpu)
        parts.append(dict(look.seconds))
    middle = sorted(range(repeat), key=walls.__getitem__)[repeat // 2]
    row = {"wall_s": walls[middle], "cpu_s": cpus[middle], "build_s": build}
    row.update({f"{name}_s": seconds for name, seconds in parts[middle].items()})
    return row
