"""The ``bands`` section of a preset: a sea as several tiles, and what each band writes.

Knows nothing of rendering.

A preset without a ``bands`` section is one tile (``tile``), as always. With one, the sea
is a stack of bands (``surface.bands``): either laid out from the shot's reach and the
shortest wave wanted (``reach_m`` + ``shortest_wave_m``), or listed tile by tile
(``tiles``). Each band writes every map of ``maps`` under the name ``band<b>_<map>``; with
``composite_extent_m`` the bands summed onto one map over that extent are written too,
as ``composite_<map>``.
"""

from __future__ import annotations

import functools
import math
from dataclasses import dataclass
from typing import Any

from ._yamltree import BAD, Section, describe, valid

__all__ = [
    "BandSettings",
    "BandTileSettings",
    "NO_BANDS",
    "read_bands",
    "preset_bands",
    "band_stack",
    "synthesizer",
    "band_map_names",
    "BandedFrame",
    "BandRenderer",
    "band_texels",
    "SHORT_WAVES_NEED_TENSION_M",
]

#: Below this wavelength surface tension changes the phase speed by more than ~5 %
#: (c² = g/k + Tk/ρ: Tk²/ρg = 0.1 at λ ≈ 5 cm, 0.025 at 10 cm; common practice: ~10 cm).
SHORT_WAVES_NEED_TENSION_M = 0.1
_DEFAULT_MAX_RESOLUTION = 2048
_DEFAULT_COMPOSITE_RESOLUTION = 2048
_COMPOSITE_MAPS = ("displacement", "normal", "foam", "height")


@dataclass(frozen=True)
class BandTileSettings:
    """One band written out: its tile and the wavelengths it carries (None: no limit)."""

    size_m: float
    resolution: int
    longest_wave_m: float | None
    shortest_wave_m: float | None


@dataclass(frozen=True)
class BandSettings:
    """The ``bands`` section. Empty (``NO_BANDS``): a single tile."""

    reach_m: float | None = None
    shortest_wave_m: float | None = None
    max_resolution: int = _DEFAULT_MAX_RESOLUTION
    tiles: tuple[BandTileSettings, ...] = ()
    composite_extent_m: float | None = None
    composite_resolution: int = _DEFAULT_COMPOSITE_RESOLUTION

    @property
    def active(self) -> bool:
        """Whether the sea is a stack of bands rather than one tile."""
        return self.reach_m is not None or bool(self.tiles)


NO_BANDS = BandSettings()


def read_bands(sec: Section, *, tile_written: set[str], maps: Any, multilayer: Any) -> Any:
    """Read and check the ``bands`` section (``tile_written``: the tile keys written with
    values other than their defaults)."""
    reach = sec.number("reach_m", None, low=1.0, high=1.0e5, optional=True)
    shortest = sec.number("shortest_wave_m", None, low=1.0e-3, high=1.0e4, optional=True)
    max_resolution = sec.number("max_resolution", _DEFAULT_MAX_RESOLUTION, low=16, high=16384, whole=True)
    extent = sec.number("composite_extent_m", None, low=0.01, high=1.0e6, optional=True)
    composite_resolution = sec.number("composite_resolution", _DEFAULT_COMPOSITE_RESOLUTION, low=16, high=16384,
                                      whole=True)
    tiles: Any = ()
    node = sec.node("tiles")
    if node is not None and node.value not in (None, []):
        if not isinstance(node.value, list):
            tiles = sec.fail("tiles", f"expected a list of tiles, got {describe(node)}")
        else:
            read = []
            for index, item in enumerate(node.value):
                tile = Section(sec.context, item, f"{sec.path}.tiles.{index}")
                size = tile.number("size_m", None, low=0.01, high=1.0e5)
                resolution = tile.number("resolution", None, low=16, high=16384, whole=True)
                longest = tile.number("longest_wave_m", None, low=1.0e-3, high=1.0e6, optional=True)
                short = tile.number("shortest_wave_m", None, low=1.0e-3, high=1.0e6, optional=True)
                if size is None:
                    size = tile.fail("", "needs size_m (metres)")
                if resolution is None:
                    resolution = tile.fail("", "needs resolution (texels per side)")
                elif valid(resolution) and resolution % 2:
                    resolution = tile.fail("resolution", f"`{resolution}` is odd (allowed: an even whole number)")
                if valid(longest) and valid(short) and longest is not None and short is not None and short >= longest:
                    short = tile.fail("shortest_wave_m", f"`{short:g}` is not shorter than longest_wave_m `{longest:g}`")
                read.append(BandTileSettings(size, resolution, longest, short))
            tiles = tuple(read)
            if all(valid(t.size_m) and valid(t.resolution) and valid(t.longest_wave_m) and valid(t.shortest_wave_m)
                   for t in tiles):
                spans = sorted((t.shortest_wave_m or 0.0, t.longest_wave_m or math.inf, i) for i, t in enumerate(tiles))
                for (short_a, long_a, a), (short_b, long_b, b) in zip(spans[:-1], spans[1:]):
                    if short_b < long_a:
                        tiles = sec.fail("tiles", f"tiles {a} and {b} carry overlapping wavelengths "
                                         f"({short_a:g}–{long_a:g} m and {short_b:g}–{long_b:g} m); "
                                         "allowed: ranges that do not overlap, so no wave is counted twice")
                        break
    if not all(valid(v) for v in (reach, shortest, max_resolution, extent, composite_resolution, tiles)):
        return BAD
    if (reach is None) != (shortest is None):
        missing = "shortest_wave_m" if shortest is None else "reach_m"
        return sec.fail(missing, "needs a value: reach_m and shortest_wave_m go together")
    if reach is not None and tiles:
        return sec.fail("tiles", "give either reach_m with shortest_wave_m or tiles, not both")
    if reach is not None and shortest >= reach:
        return sec.fail("shortest_wave_m", f"`{shortest:g}` m is not shorter than reach_m `{reach:g}` m")
    settings = BandSettings(reach, shortest, max_resolution, tiles, extent, composite_resolution)
    if not settings.active:
        if extent is not None:
            return sec.fail("composite_extent_m", "has no effect without bands (give reach_m or tiles)")
        return settings
    if tiles and tile_written:
        return sec.fail("tiles", f"tile.{sorted(tile_written)[0]} has no effect with listed bands: leave the tile section out")
    if reach is not None and "size_m" in tile_written:
        return sec.fail("reach_m", "tile.size_m has no effect with reach_m (band 0 is twice the reach wide): leave it out")
    if valid(maps) and extent is not None and "velocity" in maps:
        return sec.fail("composite_extent_m", "the composite holds no velocity map; leave velocity out of maps")
    if multilayer is True:
        return sec.fail("", "output.multilayer is not available with bands (each band writes its own files)")
    return settings


def preset_bands(preset, sea_state=None):
    """The preset's bands (a tuple of :class:`~oceanfield.surface.bands.Band`), or None for one tile.

    A layout is computed once per preset (the render plan asks for it every frame).
    """
    try:
        return _cached_bands(preset)
    except TypeError:  # an unhashable hand-made preset
        return _bands(preset, sea_state)


@functools.lru_cache(maxsize=8)
def _cached_bands(preset):
    return _bands(preset, None)


def _bands(preset, sea_state):
    from ..surface.bands import Band, layout_bands
    from ..surface.tile import Tile

    settings = preset.bands
    if not settings.active:
        return None
    if settings.reach_m is not None:
        sea = sea_state if sea_state is not None else preset.sea_state()
        layout = layout_bands(sea, reach=settings.reach_m, shortest_wavelength=settings.shortest_wave_m,
                              resolution=preset.tile.resolution, max_resolution=settings.max_resolution)
        return layout.bands
    return tuple(
        Band(
            Tile(t.size_m, t.resolution),
            0.0 if t.longest_wave_m is None else 2.0 * math.pi / t.longest_wave_m,
            math.inf if t.shortest_wave_m is None else 2.0 * math.pi / t.shortest_wave_m,
        )
        for t in settings.tiles
    )


def band_stack(preset, *, fft_workers: int | None = None, foam_memory: float | None = None):
    """The :class:`~oceanfield.surface.bands.BandStack` of a banded preset."""
    from ..surface.bands import BandStack

    sea = preset.sea_state()
    return BandStack(
        sea,
        preset_bands(preset, sea),
        seed=preset.seed,
        lateral_factor=preset.surface.lateral_factor,
        loop_period=preset.time.loop_period_s,
        fold_threshold=preset.surface.fold_threshold,
        whitecap_scale=preset.surface.whitecap_scale,
        wave_heights=preset.tile.wave_heights,
        foam_memory=preset.surface.foam_memory_s if foam_memory is None else foam_memory,
        velocity="velocity" in preset.maps,
        bound_waves=preset.surface.bound_waves,
        fft_workers=fft_workers,
    )


def band_map_names(preset) -> list[tuple[str, int | None, str]]:
    """(file map name, band index or None for the composite, map) of every banded output."""
    names: list[tuple[str, int | None, str]] = []
    count = len(preset.bands.tiles) if preset.bands.tiles else len(preset_bands(preset))
    for band in range(count):
        names.extend((f"band{band}_{name}", band, name) for name in preset.maps)
    if preset.bands.composite_extent_m is not None:
        names.extend((f"composite_{name}", None, name) for name in preset.maps if name in _COMPOSITE_MAPS)
    return names


def band_texels(preset) -> list[tuple[str, int]]:
    """(map, texels) of every banded file of one frame (for sizing a writer's memory)."""
    bands = preset_bands(preset)
    out = []
    for _, band, name in band_map_names(preset):
        n = preset.bands.composite_resolution if band is None else bands[band].tile.resolution
        out.append((name, n * n))
    return out


@dataclass(frozen=True)
class BandedFrame:
    """One frame of a band stack: each band's Fields, and the composite's (or None)."""

    time: float
    bands: tuple
    composite: Any
    sizes: tuple[float, ...]
    composite_extent: float | None


class BandRenderer:
    """What the render job asks of a synthesiser, for a band stack: ``frame(t, buffer=)`` and
    ``new_buffer()`` (a list of one buffer per band)."""

    def __init__(self, preset, *, fft_workers: int | None = None) -> None:
        self.preset = preset
        self.stack = band_stack(preset, fft_workers=fft_workers)

    def new_buffer(self):
        return self.stack.new_buffers()

    def frame(self, t: float, *, buffer=None) -> BandedFrame:
        settings = self.preset.bands
        composite = None
        if settings.composite_extent_m is not None:
            composite = self.stack.composite(t, extent=settings.composite_extent_m,
                                             resolution=settings.composite_resolution)
        return BandedFrame(float(t), tuple(self.stack.frames(t, buffers=buffer)), composite,
                           tuple(b.tile.size for b in self.stack.bands), settings.composite_extent_m)


def synthesizer(preset, *, fft_workers: int | None = None):
    """The render job's synthesiser: an :class:`~oceanfield.surface.synth.Ocean` for one
    tile, a :class:`BandRenderer` for a banded preset."""
    if preset.bands.active:
        return BandRenderer(preset, fft_workers=fft_workers)
    from ..surface.synth import Ocean

    return Ocean.from_preset(preset, fft_workers=fft_workers)
