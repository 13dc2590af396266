"""The resolved settings of a preset, and the sea they describe.

Knows nothing of rendering, of YAML files or of the analyzer: the frozen dataclasses a
preset resolves into (:class:`Preset` and its sections), the one error every preset
mistake is reported through, and :func:`to_sea_state`, which turns the written sea
(degrees, kilometres, ``deep``) into the physics' :class:`~oceanfield.physics.seastate.SeaState`
(SI units, radians). Reading and checking YAML is ``reading``'s; writing a resolved preset
back and its hash are ``resolved``'s; ``schema`` loads presets by name or path.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass, field
from pathlib import Path, PurePosixPath
from typing import Any, Sequence

from .banding import NO_BANDS, BandSettings
from ..physics.seastate import Component, SeaState, beaufort_sea, height_period, wind_sea
from .record import RecordSettings, record_component
from .vessels import NO_WAKE, VesselSettings, WakeSettings

__all__ = [
    "PresetError",
    "ComponentSettings",
    "SeaSettings",
    "TileSettings",
    "SurfaceSettings",
    "TimeSettings",
    "OutputSettings",
    "SceneSettings",
    "Preset",
    "to_sea_state",
]

_DEFAULT_SPREAD_DEG = 25.0  # cos-2s spread; s = 2/σ² − 1 ≈ 9.5 (Kuik et al. 1988)

_FRAME_RUN = re.compile(r"#+")


class PresetError(ValueError):
    """One or more mistakes in a preset; ``messages`` lists them, one line each.

    ``str(error)`` is one block: the single message, or a count followed by the messages.
    """

    def __init__(self, messages: Sequence[str]) -> None:
        self.messages: list[str] = list(messages)
        if len(self.messages) == 1:
            text = self.messages[0]
        else:
            text = f"{len(self.messages)} problems in the preset:\n" + "\n".join(
                f"  {message}" for message in self.messages
            )
        super().__init__(text)


# -- the resolved settings ---------------------------------------------------------------


@dataclass(frozen=True)
class ComponentSettings:
    """One wave system of a preset, as written (degrees, km); see :func:`to_sea_state`.

    Exactly one sizing is set: ``wind_speed_mps`` (with optional ``fetch_km``),
    ``significant_height_m`` with ``peak_period_s``, or ``beaufort``. Settings that do not
    apply to the chosen spectrum or spreading are ``None``.
    """

    label: str
    spectrum: str
    wind_speed_mps: float | None
    fetch_km: float | None
    significant_height_m: float | None
    peak_period_s: float | None
    beaufort: int | None
    peak_enhancement: float | None
    towards_deg: float
    spreading: str
    spread_deg: float | None
    suppress_opposing: bool
    small_wave_cutoff_m: float
    record: RecordSettings | None = None  # a measured record sizes the component instead


@dataclass(frozen=True)
class SeaSettings:
    """The water and its wave components. ``depth_m`` is ``inf`` for deep water."""

    depth_m: float
    gravity_mps2: float
    surface_tension_npm: float
    density_kgpm3: float
    components: tuple[ComponentSettings, ...]


@dataclass(frozen=True)
class TileSettings:
    """The square periodic patch: side in metres, texels per side, and whether its wave
    heights are rescaled to the requested variance (``as_requested``) or left ``random``."""

    size_m: float
    resolution: int
    wave_heights: str = "as_requested"


@dataclass(frozen=True)
class SurfaceSettings:
    """Lateral displacement scale (0 = height only), the Jacobian below which foam forms
    (None: set from the wind's whitecap coverage, times ``whitecap_scale``), and how long
    foam lingers after the surface stops folding (0 = not at all)."""

    lateral_factor: float
    fold_threshold: float | None
    foam_memory_s: float = 0.0
    whitecap_scale: float = 1.0
    #: second-order bound waves: "auto" (when the sea is steep enough), True or False
    bound_waves: str | bool = "auto"


@dataclass(frozen=True)
class TimeSettings:
    """Frame range and rate; frame ``first_frame`` is at ``time_offset_s``."""

    fps: float
    first_frame: int
    last_frame: int
    loop_period_s: float | None
    time_offset_s: float

    @property
    def frames(self) -> range:
        """Every frame number of the range, first to last inclusive."""
        return range(self.first_frame, self.last_frame + 1)

    def frame_time(self, frame: int) -> float:
        """Time in seconds of frame number ``frame``: offset + (frame − first_frame)/fps."""
        return self.time_offset_s + (frame - self.first_frame) / self.fps


@dataclass(frozen=True)
class OutputSettings:
    """Where and how the maps are written, relative to the output root."""

    folder: str
    pattern: str
    format: str
    precision: str
    precision_per_map: tuple[tuple[str, str], ...]
    compression: str
    multilayer: bool

    def precision_for(self, map_name: str) -> str:
        """``half`` or ``float`` for one map: its own entry, else ``precision``."""
        return dict(self.precision_per_map).get(map_name, self.precision)

    def relative_path(self, preset_name: str, map_name: str, frame: int) -> str:
        """The file of one map and frame, relative to the output root, with ``/`` separators.

        Each run of ``#`` in ``pattern`` becomes the frame number zero-padded to its length.
        """
        values = {"preset": preset_name, "map": map_name, "ext": self.format}
        name = _FRAME_RUN.sub(lambda run: f"{frame:0{len(run.group())}d}", self.pattern)
        folder = self.folder.format(**values).replace("\\", "/")
        return str(PurePosixPath(folder) / name.format(**values).replace("\\", "/"))


@dataclass(frozen=True)
class SceneSettings:
    """How the maps meet the 3D package: metres per scene unit and the up axis; where
    north lies on the tile (degrees counter-clockwise from +x) for measured records."""

    metres_per_unit: float
    up_axis: str
    north_deg: float = 90.0


@dataclass(frozen=True)
class Preset:
    """A fully resolved preset: every default filled, every value checked.

    ``name`` (the file's stem) and ``source`` (its absolute path) say where it came from
    and take no part in equality or :func:`preset_hash`.
    """

    description: str
    seed: int
    sea: SeaSettings
    tile: TileSettings
    surface: SurfaceSettings
    maps: tuple[str, ...]
    time: TimeSettings
    output: OutputSettings
    scene: SceneSettings
    bands: BandSettings = NO_BANDS
    vessels: tuple[VesselSettings, ...] = ()
    wake: WakeSettings = NO_WAKE
    name: str = field(default="", compare=False)
    source: Path | None = field(default=None, compare=False)

    def sea_state(self) -> SeaState:
        """The preset's sea in SI units: :func:`to_sea_state` of this preset, built once (so
        its statistics, which the warnings and the Ocean's bound waves both ask for, are too)."""
        sea = self.__dict__.get("_sea_state")
        if sea is None:
            sea = to_sea_state(self)
            object.__setattr__(self, "_sea_state", sea)  # frozen: a cache, not a field
        return sea



def to_sea_state(preset: Preset) -> SeaState:
    """The preset's sea as a :class:`~oceanfield.physics.seastate.SeaState` (SI units, radians).

    Degrees become radians, kilometres metres, ``deep`` infinity.

    Raises
    ------
    PresetError
        If the physics refuses the sea; :func:`load_preset` has already built every
        component once, so only a hand-made :class:`Preset` can meet this.
    """
    sea, north = preset.sea, preset.scene.north_deg
    try:
        return SeaState(tuple(_component(sea, item, north) for item in sea.components), **_fluid(sea))
    except ValueError as error:
        raise PresetError([f"sea: {error}"]) from None


def _component(sea: SeaSettings, item: ComponentSettings, north_deg: float = 90.0) -> Component:
    """One component in SI units and radians, from the constructor its sizing calls for."""
    if item.record is not None:
        return record_component(item.record, north_deg=north_deg, label=item.label)
    options: dict[str, Any] = dict(
        spectrum=item.spectrum,
        depth=sea.depth_m,
        direction=math.radians(item.towards_deg),
        spreading=item.spreading,
        suppress_opposing=item.suppress_opposing,
        cutoff_length=item.small_wave_cutoff_m,
        gravity=sea.gravity_mps2,
        label=item.label,
    )
    if item.peak_enhancement is not None:
        options["gamma"] = item.peak_enhancement
    if item.spread_deg is not None:
        options["spread"] = math.radians(item.spread_deg)
    fetch = None if item.fetch_km is None else item.fetch_km * 1000.0
    if item.beaufort is not None:
        return beaufort_sea(item.beaufort, fetch=fetch, **options)
    if item.wind_speed_mps is not None:
        return wind_sea(item.wind_speed_mps, fetch=fetch, **options)
    return height_period(item.significant_height_m, item.peak_period_s, **options)


def _fluid(sea: SeaSettings) -> dict[str, float]:
    return dict(
        depth=sea.depth_m,
        gravity=sea.gravity_mps2,
        surface_tension=sea.surface_tension_npm,
        density=sea.density_kgpm3,
    )

