"""Presets: a sea, a tile and a render described in YAML, read into validated settings.

Knows nothing of rendering or of the analyzer.

A preset file is a mapping of keys documented one by one in ``presets/reference.yaml``.
:func:`load_preset` reads one (a shipped preset by name, or a path), follows its
``extends`` chain, applies ``--set key=value`` overrides, fills every default and checks
every value. Mistakes are collected, not stopped at: one :class:`PresetError` lists them
all, each naming the file and line (or the override) it came from, the value, and what is
allowed, with a suggestion for a misspelt key.

YAML is read with PyYAML's safe loader only, into the located tree of
:mod:`oceanfield.preset._yamltree` (which also merges ``extends`` and applies overrides), so
that every value remembers where it was written. This module is the schema: the settings,
their defaults and checks, and what a preset becomes (a sea state, YAML, a hash).

Conventions at this edge (SI inside, see the design notes): lengths in metres, periods in
seconds, speeds in m/s; ``towards_deg`` is the direction the waves travel *towards*, in
degrees counter-clockwise from the tile's +x axis; ``depth_m: deep`` is infinite depth.
"""

from __future__ import annotations

import difflib
import hashlib
import json
import math
import os
import re
import string
from dataclasses import dataclass, field, fields, is_dataclass, replace
from importlib.util import find_spec
from pathlib import Path, PurePosixPath
from typing import Any, Sequence

import yaml

from ._yamltree import (
    BAD,
    Context,
    Node,
    Section,
    apply_override,
    describe,
    in_reading_order,
    is_name,
    read_tree,
    valid,
)
from .banding import NO_BANDS, SHORT_WAVES_NEED_TENSION_M, BandSettings, read_bands
from ..physics.constants import GRAVITY, SEAWATER_DENSITY, SURFACE_TENSION
from ..surface.amplitudes import WAVE_HEIGHTS
from ..surface.maps import MAPS, UP_AXES
from ..physics.seastate import Component, SeaState, beaufort_sea, height_period, wind_sea
from ..physics.spectra import JONSWAP_GAMMA, SPECTRA
from ..physics.spreading import SPREADING
from .record import RecordSettings, read_record, record_component

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
    "load_preset",
    "list_presets",
    "dump_preset",
    "preset_hash",
    "to_sea_state",
]

_FORMATS = ("exr", "png")
_PRECISIONS = ("half", "float")
_COMPRESSIONS = ("zip", "piz", "dwaa", "none")
_PATTERN_FIELDS = ("preset", "map", "ext")

_DEFAULT_COMPONENT_WIND = 10.0  # m/s: the default sea is a fully developed Beaufort 5 sea
_DEFAULT_SPREAD_DEG = 25.0  # cos-2s spread; s = 2/σ² − 1 ≈ 9.5 (Kuik et al. 1988)
_MAX_SEED = 2**63 - 1

_MIN_PEAK_VARIANCE_KEPT_AT_ALL = 0.01  # below this the cut-off is an error, not a warning

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


# -- public functions --------------------------------------------------------------------


def load_preset(
    ref: str | os.PathLike[str],
    *,
    overrides: Sequence[str] = (),
    allow_outside_output: bool = False,
) -> Preset:
    """Read, merge, override and validate a preset.

    Parameters
    ----------
    ref : str or path
        A shipped preset's name (see :func:`list_presets`), or the path of a YAML file. A
        string without a folder separator and without a ``.yaml``/``.yml`` suffix is a name.
    overrides : sequence of str
        ``key=value`` settings applied after the file and its ``extends`` chain, in order,
        e.g. ``tile.resolution=1024`` or ``sea.components.0.wind_speed_mps=14``. The value
        is read as YAML (``maps=[height,normal]``).
    allow_outside_output : bool
        Accept an absolute ``output.folder`` or one climbing out with ``..`` (for a path
        the user typed on the command line); otherwise output stays under the output root.

    Returns
    -------
    Preset

    Raises
    ------
    PresetError
        Listing every mistake found, each with its file:line or override.
    """
    if isinstance(overrides, str):
        overrides = (overrides,)
    errors: list[str] = []
    path = _top_path(ref)
    tree = read_tree(path, errors, _shipped_path)
    preset = None
    if tree is not None:
        _resize_by_extension(tree)
        for text in overrides:
            apply_override(tree, text, errors)
            _resize_by_override(tree, text)
        preset = _build_preset(tree, errors, path, allow_outside_output)
    if errors or preset is None:
        raise PresetError(in_reading_order(errors) or [f"{path}: the preset could not be read"])
    return preset


def list_presets() -> list[tuple[str, Path, str]]:
    """The shipped presets as (name, path, description), sorted by name.

    A preset that does not load is listed with its first problem as its description.
    """
    found = []
    for path in sorted(_shipped_folder().glob("*.yaml")):
        try:
            description = load_preset(path).description
        except PresetError as error:
            description = f"(does not load: {error.messages[0]})"
        found.append((path.stem, path, description))
    return found


def dump_preset(preset: Preset) -> str:
    """The preset as fully resolved YAML: every key written out, no ``extends``.

    Loading the text back gives a preset equal to ``preset``.
    """
    header = (
        f"# oceanfield preset `{preset.name}`, fully resolved: every key written out.\n"
        "# A null key is derived from the others (its value in the comment) and stays derived\n"
        "# when you edit them; --set on one sizing key replaces the component's sizing.\n"
    )
    tree = _as_tree(preset)
    derived = [_derive_defaults(tree["sea"]["components"][i], item) for i, item in enumerate(preset.sea.components)]
    text = yaml.safe_dump(tree, sort_keys=False, allow_unicode=True, default_flow_style=False, width=100)
    return header + _comment_derived(text, derived)


# -- editable resolved presets -----------------------------------------------------------
#
# A resolved preset is a starting point to edit: a key whose value the schema derived from
# the others (the default γ, the spreading that suits the sizing, ...) is written null, so
# it follows an edit of the others instead of contradicting it; a comment gives its value.

_SIZING_KEYS = ("wind_speed_mps", "beaufort", "significant_height_m", "peak_period_s", "record")
_REPLACED_BY = {
    "wind_speed_mps": ("beaufort", "significant_height_m", "peak_period_s", "record"),
    "beaufort": ("wind_speed_mps", "significant_height_m", "peak_period_s", "record"),
    "significant_height_m": ("wind_speed_mps", "beaufort", "fetch_km", "record"),
    "peak_period_s": ("wind_speed_mps", "beaufort", "fetch_km", "record"),
    # A measured record sizes, shapes and directs the component: it replaces every key but the label.
    "record": tuple(name for name in ComponentSettings.__dataclass_fields__ if name not in ("label", "record")),
}


def _resize_by_override(tree: Node, text: str) -> None:
    """``--set sea.components.N.<sizing>=V`` replaces the component's sizing from the files.

    Sizing keys written by an earlier override stay (two overrides that size twice are the
    user's own contradiction and are reported as such).
    """
    key, _, _ = text.partition("=")
    parts = key.strip().split(".")
    if len(parts) < 4 or parts[:2] != ["sea", "components"] or parts[3] not in _REPLACED_BY:
        return
    node: Any = tree
    for part in ("sea", "components", parts[2]):
        value = node.value if node is not None else None
        if isinstance(value, dict):
            node = value.get(part)
        elif isinstance(value, list) and part.isdigit() and int(part) < len(value):
            node = value[int(part)]
        else:
            return
    if node is not None and isinstance(node.value, dict):
        _replace_sizing(node, parts[3], lambda other: other.where.startswith("--set"))


def _resize_by_extension(tree: Node) -> None:
    """A sizing key written in the preset itself replaces the sizing it ``extends``."""
    top = tree.where.rsplit(":", 1)[0]
    sea = tree.value.get("sea") if isinstance(tree.value, dict) else None
    components = sea.value.get("components") if sea is not None and isinstance(sea.value, dict) else None
    if components is None or not isinstance(components.value, list):
        return
    for node in components.value:
        if not isinstance(node.value, dict):
            continue
        for key in _SIZING_KEYS:
            written = node.value.get(key)
            if written is not None and written.where.rsplit(":", 1)[0] == top:
                _replace_sizing(node, key, lambda other: other.where.rsplit(":", 1)[0] == top)


def _replace_sizing(component: Node, key: str, keep) -> None:
    """Drop the sizing keys ``key`` replaces from ``component``, except those ``keep`` names."""
    written = component.value.get(key)
    if written is None or written.value is None:
        return
    for other in _REPLACED_BY[key]:
        old = component.value.get(other)
        if old is not None and not keep(old):
            del component.value[other]


def _derive_defaults(written: dict[str, Any], item: ComponentSettings) -> dict[str, Any]:
    """Null the keys of one dumped component that equal what the schema derives; {key: value}."""
    if item.record is not None:  # a record component writes only its label and record
        return {}
    wind_driven = item.significant_height_m is None
    defaults = {
        "label": "wind sea" if wind_driven else "wave system",
        "peak_enhancement": JONSWAP_GAMMA,
        "spreading": "mitsuyasu" if wind_driven else "cos2s",
        "spread_deg": _DEFAULT_SPREAD_DEG if item.spreading == "cos2s" else None,
    }
    derived = {}
    for key, default in defaults.items():
        if default is not None and written.get(key) == default:
            derived[key] = written[key]
            written[key] = None
    return derived


def _comment_derived(text: str, derived: list[dict[str, Any]]) -> str:
    """Append ``# derived: value`` to the null lines of each component's derived keys."""
    lines, index, inside = [], -1, False
    for line in text.splitlines():
        if line.startswith("  components:"):
            inside = True
        elif inside and not line.startswith("  "):
            inside = False
        elif inside and line.startswith("  - "):
            index += 1
        key = line.strip().lstrip("- ").partition(":")[0]
        if inside and 0 <= index < len(derived) and key in derived[index] and line.endswith(": null"):
            line += f"  # derived: {derived[index][key]}"
        lines.append(line)
    return "\n".join(lines) + "\n"


def preset_hash(preset: Preset) -> str:
    """SHA-256 (hex) of everything in the preset that changes what a render writes.

    Computed over the canonical resolved form without ``description``, ``name`` and
    ``source``, so renaming or re-describing a preset keeps its hash; stable across runs
    and machines.
    """
    tree = _as_tree(preset)
    del tree["description"]
    for component in tree["sea"]["components"]:  # a record counts by its contents, not its path
        if component.get("record"):
            del component["record"]["file"]
    if not preset.bands.active and preset.bands == NO_BANDS:
        del tree["bands"]  # a single tile hashes as it did before bands existed
    canonical = json.dumps(tree, sort_keys=True, separators=(",", ":"), allow_nan=False)
    return hashlib.sha256(canonical.encode("utf-8")).hexdigest()


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


# -- shipped presets and names ------------------------------------------------------------


def _shipped_folder() -> Path:
    """The folder of the shipped presets: the installed package, else the source tree's."""
    spec = find_spec("oceanfield.presets")
    locations = spec.submodule_search_locations if spec is not None else None
    for location in locations or []:
        if Path(location).is_dir():
            return Path(location)
    return Path(__file__).resolve().parents[2] / "presets"


def _shipped_path(name: str) -> tuple[Path | None, str]:
    """(path of a shipped preset, '') or (None, why not)."""
    folder = _shipped_folder()
    path = folder / f"{name}.yaml"
    if path.is_file():
        return path, ""
    names = sorted(p.stem for p in folder.glob("*.yaml"))
    close = difflib.get_close_matches(name, names, n=1)
    hint = f" — did you mean `{close[0]}`?" if close else ""
    return None, (
        f"no shipped preset named `{name}`{hint} (shipped: {', '.join(names) or 'none'}; "
        f"a file of your own needs a .yaml suffix or a folder in its path)"
    )


def _top_path(ref: str | os.PathLike[str]) -> Path:
    if isinstance(ref, str) and is_name(ref):
        path, why = _shipped_path(ref)
        if path is None:
            raise PresetError([why])
        return path
    path = Path(ref)
    if not path.is_file():
        why = "no such preset file" if not path.exists() else "not a file"
        if not path.exists() and _shipped_path(path.stem)[0] is not None:
            why += f" (the shipped preset of that name is `{path.stem}`, without .yaml)"
        raise PresetError([f"{path}: {why}"])
    return path


# -- validation ----------------------------------------------------------------------------


def _build_preset(tree: Node, errors: list[str], path: Path, allow_outside_output: bool) -> Preset | None:
    context = Context(errors)
    component_sections: list[Section] = []
    top = Section(context, tree, "")
    top.asked.append("extends")  # read before merging; listed so typos of it get a suggestion
    description = top.text("description", "")
    seed = top.number("seed", 0, low=0, high=_MAX_SEED, whole=True)
    sea_section = top.section("sea")
    sea = _read_sea(sea_section, component_sections)
    tile_section = top.section("tile")
    tile = _read_tile(tile_section)
    surface = _read_surface(top.section("surface"))
    maps = _read_maps(top)
    time = _read_time(top.section("time"))
    output = _read_output(top.section("output"), maps, allow_outside_output)
    scene = _read_scene(top.section("scene"))
    # tile keys written with values other than the defaults (a dumped preset writes them all)
    tile_written = {key for key in tile_section.items
                    if valid(tile) and getattr(tile, str(key), None) != getattr(_DEFAULT_TILE, str(key), None)}
    bands = read_bands(top.section("bands"), tile_written=tile_written, maps=maps,
                       multilayer=output.multilayer if valid(output) else None)
    context.report_unknown_keys()
    if valid(bands) and valid(sea) and bands.active and "surface_tension_npm" not in sea_section.items:
        # Bands reaching ripples shorter than ~10 cm: clean water's surface tension by default.
        shortest = bands.shortest_wave_m if bands.reach_m is not None else min(
            (t.shortest_wave_m or 2.0 * t.size_m / t.resolution) for t in bands.tiles)
        if shortest < SHORT_WAVES_NEED_TENSION_M:
            sea = replace(sea, surface_tension_npm=SURFACE_TENSION)
    if not errors:
        _check_physics(sea, component_sections, scene.north_deg)
    if errors:
        return None
    return Preset(
        description, seed, sea, tile, surface, maps, time, output, scene, bands, name=path.stem, source=path.resolve()
    )


def _check_physics(sea: SeaSettings, sections: list[Section], north_deg: float) -> None:
    """Build each component as :func:`to_sea_state` will; report what fails where it was written."""
    for item, sec in zip(sea.components, sections):
        if item.record is not None:
            try:
                _component(sea, item, north_deg)
            except ValueError as error:
                sec.fail("record", str(error))
            continue
        try:
            if item.small_wave_cutoff_m > 0:
                uncut = _component(sea, replace(item, small_wave_cutoff_m=0.0))
                k_peak = float(SeaState((uncut,), **_fluid(sea)).wavenumber(uncut.peak_frequency))
                if math.exp(-((k_peak * item.small_wave_cutoff_m) ** 2)) < _MIN_PEAK_VARIANCE_KEPT_AT_ALL:
                    sec.fail(
                        "small_wave_cutoff_m",
                        f"`{item.small_wave_cutoff_m:g}` m removes over 99 % of the variance at this "
                        f"component's peak (wavelength {2 * math.pi / k_peak:.3g} m); keep it under a "
                        f"twentieth of that",
                    )
                    continue
            _component(sea, item)
        except ValueError as error:
            sec.fail("", f"cannot build this component: {error}")


def _read_sea(sec: Section, component_sections: list[Section]) -> SeaSettings:
    """The sea section; the components' sections go into ``component_sections``."""
    depth = sec.number("depth_m", math.inf, low=0.01, high=20_000.0, words={"deep": math.inf})
    gravity = sec.number("gravity_mps2", GRAVITY, low=0.1, high=100.0)
    tension = sec.number("surface_tension_npm", 0.0, low=0.0, high=1.0)
    density = sec.number("density_kgpm3", SEAWATER_DENSITY, low=1.0, high=25_000.0)
    node = sec.node("components")
    components: Any = BAD
    if node is None:
        components = (_default_component(),)
    elif not isinstance(node.value, list) or not node.value:
        got = "an empty list" if node.value == [] else describe(node)
        sec.fail("components", f"expected a list of one or more components, got {got}")
    else:
        sections = [
            Section(sec.context, item, f"{sec.path}.components.{index}") for index, item in enumerate(node.value)
        ]
        component_sections[:] = sections
        components = tuple(_read_component(section, depth) for section in sections)
    return SeaSettings(depth, gravity, tension, density, components)


def _default_component() -> ComponentSettings:
    return ComponentSettings(
        label="wind sea",
        spectrum="jonswap",
        wind_speed_mps=_DEFAULT_COMPONENT_WIND,
        fetch_km=None,
        significant_height_m=None,
        peak_period_s=None,
        beaufort=None,
        peak_enhancement=None,
        towards_deg=0.0,
        spreading="mitsuyasu",
        spread_deg=None,
        suppress_opposing=False,
        small_wave_cutoff_m=0.0,
    )


def _read_component(sec: Section, depth: float) -> ComponentSettings:
    record = sec.node("record")
    if record is not None and record.value is not None:
        return _read_record_component(sec)
    label = sec.text("label", "")
    spectrum = sec.choice("spectrum", "jonswap", SPECTRA)
    wind = sec.number("wind_speed_mps", None, low=0.1, high=75.0, optional=True)
    fetch = sec.number("fetch_km", None, low=0.001, high=5000.0, optional=True)
    hs = sec.number("significant_height_m", None, low=0.0001, high=40.0, optional=True)
    tp = sec.number("peak_period_s", None, low=0.05, high=60.0, optional=True)
    force = sec.number("beaufort", None, low=1, high=12, whole=True, optional=True)
    gamma = sec.number("peak_enhancement", None, low=1, high=10, optional=True)
    towards = sec.number("towards_deg", 0.0, low=-360, high=360)
    spreading = sec.choice("spreading", None, SPREADING, optional=True)
    spread = sec.number("spread_deg", None, low=1, high=80, optional=True)
    suppress = sec.flag("suppress_opposing", False)
    cutoff = sec.number("small_wave_cutoff_m", 0.0, low=0, high=1000)

    sizings = [
        key
        for key, given in (
            ("wind_speed_mps", wind is not None),
            ("significant_height_m", hs is not None or tp is not None),
            ("beaufort", force is not None),
        )
        if given
    ]
    sizing = sizings[0] if len(sizings) == 1 else None
    if not sizings:
        sec.fail(
            "",
            "size the component with one of: wind_speed_mps (with optional fetch_km), "
            "significant_height_m with peak_period_s, or beaufort",
        )
    elif len(sizings) > 1:
        sec.fail(sizings[-1], f"the component is sized twice ({' and '.join(sizings)}); keep one")
    if sizing == "significant_height_m" and tp is None:
        sec.fail("significant_height_m", "needs peak_period_s too: the two size the component together")
    if sizing == "significant_height_m" and hs is None:
        sec.fail("peak_period_s", "needs significant_height_m too: the two size the component together")
    wind_driven = sizing in ("wind_speed_mps", "beaufort")

    if fetch is not None and sizing == "significant_height_m":
        sec.fail("fetch_km", "applies to a component sized by wind_speed_mps or beaufort")
    if spectrum == "phillips" and sizing == "significant_height_m":
        sec.fail("spectrum", "phillips is sized by the wind (wind_speed_mps or beaufort), not height and period")
    if spectrum == "phillips" and fetch is not None:
        sec.fail("fetch_km", "the phillips spectrum has no fetch law; set fetch_km: null")
    if spectrum == "pierson_moskowitz" and fetch is not None:
        sec.fail("fetch_km", "pierson_moskowitz is the fully developed sea; fetch-limited seas are jonswap or tma")
    if spectrum == "tma" and depth == math.inf:
        sec.fail("spectrum", "tma needs a finite sea.depth_m (its depth factor), but the sea is deep")

    # JONSWAP's γ shapes a sized or fetch-limited peak; a fully developed wind sea is
    # Pierson–Moskowitz whatever γ says, so γ is left unset there.
    shapes_peak = spectrum in ("jonswap", "tma") and (sizing == "significant_height_m" or fetch is not None)
    if not shapes_peak and gamma not in (None, BAD):
        if spectrum in ("jonswap", "tma"):
            why = "a fully developed wind sea (no fetch_km) is Pierson–Moskowitz"
        else:
            why = f"{spectrum} has no peak enhancement"
        gamma = sec.fail("peak_enhancement", f"has no effect here: {why}; set peak_enhancement: null")
    elif shapes_peak and gamma is None:
        gamma = JONSWAP_GAMMA

    if spreading is None:
        spreading = "mitsuyasu" if wind_driven or sizing is None else "cos2s"
    if spreading == "cos2s" and spread is None:
        spread = _DEFAULT_SPREAD_DEG
    elif spreading not in ("cos2s", BAD) and spread not in (None, BAD):
        spread = sec.fail(
            "spread_deg", f"applies to spreading cos2s only; {spreading} sets its own (set spread_deg: null)"
        )
    if not label:
        label = "wind sea" if wind_driven or sizing is None else "wave system"
    return ComponentSettings(
        label, spectrum, wind, fetch, hs, tp, force, gamma, towards, spreading, spread, suppress, cutoff
    )


def _read_record_component(sec: Section) -> Any:
    """A component sized by a measured record: a label and the record, nothing else."""
    label = sec.text("label", "record")
    record = read_record(sec.section("record"))
    for key in list(sec.items):
        if key not in sec.asked:
            sec.asked.append(key)
            sec.fail(key, "does not apply to a component sized by a record (it takes label and record only)")
    if not valid(label, record):
        return BAD
    return ComponentSettings(label, "record", None, None, None, None, None, None, 0.0, "record", None, False, 0.0,
                             record)


_DEFAULT_TILE = TileSettings(256.0, 512)


def _read_tile(sec: Section) -> TileSettings:
    size = sec.number("size_m", _DEFAULT_TILE.size_m, low=0.01, high=100_000.0)
    resolution = sec.number("resolution", _DEFAULT_TILE.resolution, low=16, high=16384, whole=True)
    if valid(resolution) and resolution % 2:
        resolution = sec.fail("resolution", f"`{resolution}` is odd (allowed: an even whole number)")
    heights = sec.choice("wave_heights", "as_requested", WAVE_HEIGHTS)
    return TileSettings(size, resolution, heights)


def _read_surface(sec: Section) -> SurfaceSettings:
    lateral = sec.number("lateral_factor", 1.0, low=0.0, high=5.0)
    threshold = sec.number("fold_threshold", None, low=-1.0, high=1.0, optional=True)
    memory = sec.number("foam_memory_s", 0.0, low=0.0, high=60.0)
    scale = sec.number("whitecap_scale", 1.0, low=0.0, high=10.0)
    if valid(threshold, scale) and threshold is not None and scale != 1.0:
        scale = sec.fail(
            "whitecap_scale", f"`{scale:g}` has no effect with a fold_threshold set (allowed: 1, or fold_threshold null)"
        )
    bound = _read_bound_waves(sec)
    return SurfaceSettings(lateral, threshold, memory, scale, bound)


def _read_bound_waves(sec: Section) -> Any:
    """``surface.bound_waves``: auto, true or false (second-order crests and troughs)."""
    node = sec.node("bound_waves")
    if node is None or node.value == "auto":
        return "auto"
    if isinstance(node.value, bool):
        return node.value
    return sec.fail("bound_waves", f"expected auto, true or false, got {describe(node)}")


def _read_maps(top: Section) -> Any:
    node = top.node("maps")
    if node is None:
        return ("displacement", "normal", "foam")
    if not isinstance(node.value, list) or not node.value:
        got = "an empty list" if node.value == [] else describe(node)
        return top.fail("maps", f"expected a list of one or more of {', '.join(MAPS)}, got {got}")
    names: list[str] = []
    for index, item in enumerate(node.value):
        if not isinstance(item.value, str) or item.value not in MAPS:
            close = difflib.get_close_matches(str(item.value), MAPS, n=1)
            hint = f" — did you mean `{close[0]}`?" if close else ""
            allowed = ", ".join(MAPS)
            problem = f"{describe(item)} is not a map{hint} (allowed: {allowed})"
            top.context.errors.append(f"{item.where}: maps.{index}: {problem}")
            return BAD
        if item.value in names:
            top.context.errors.append(f"{item.where}: maps.{index}: `{item.value}` is listed twice")
            return BAD
        names.append(item.value)
    return tuple(names)


def _read_time(sec: Section) -> TimeSettings:
    fps = sec.number("fps", 24.0, low=0.0, high=1000.0, low_open=True)
    first = sec.number("first_frame", 1001, low=-1_000_000_000, high=1_000_000_000, whole=True)
    last = sec.number("last_frame", 1048, low=-1_000_000_000, high=1_000_000_000, whole=True)
    loop = sec.number("loop_period_s", None, low=0.0, high=1.0e6, low_open=True, optional=True)
    offset = sec.number("time_offset_s", 0.0, low=-1.0e9, high=1.0e9)
    if valid(first, last) and last < first:
        last = sec.fail("last_frame", f"`{last}` is before first_frame {first}")
    if valid(fps) and loop not in (None, BAD) and loop <= 1.0 / fps:
        frame = f"{1.0 / fps:.4g} s at {fps:g} fps"
        loop = sec.fail("loop_period_s", f"`{loop:g}` s is not longer than one frame ({frame})")
    return TimeSettings(fps, first, last, loop, offset)


def _read_output(sec: Section, maps: Any, allow_outside_output: bool) -> OutputSettings:
    folder = sec.text("folder", "{preset}")
    pattern = sec.text("pattern", "{map}.####.{ext}")
    file_format = sec.choice("format", "exr", _FORMATS)
    precision = sec.choice("precision", "half", _PRECISIONS)
    per_map = _read_precision_per_map(sec.section("precision_per_map"))
    compression = sec.choice("compression", "zip", _COMPRESSIONS)
    multilayer = sec.flag("multilayer", False)
    if valid(folder):
        _check_template(sec, "folder", folder, frame_run=False, allow_outside=allow_outside_output)
    if valid(pattern):
        _check_template(sec, "pattern", pattern, frame_run=True, allow_outside=False)
        if valid(file_format) and "{ext}" not in pattern and not pattern.lower().endswith(f".{file_format}"):
            sec.fail("pattern", f"`{pattern}` would not end in .{file_format}; end it with .{{ext}}")
    if valid(folder, pattern, maps) and len(maps) > 1 and "{map}" not in folder + pattern:
        sec.fail("pattern", f"`{pattern}` has no {{map}}: the {len(maps)} maps would overwrite each other")
    if multilayer is True and file_format == "png":
        sec.fail("multilayer", "layered files are EXR only; set format: exr or multilayer: false")
    return OutputSettings(folder, pattern, file_format, precision, per_map, compression, multilayer)


def _read_precision_per_map(sec: Section) -> Any:
    chosen = []
    for name in MAPS:
        value = sec.choice(name, None, _PRECISIONS, optional=True)
        if value is BAD:
            return BAD
        if value is not None:
            chosen.append((name, value))
    return tuple(chosen)


def _check_template(sec: Section, key: str, template: str, *, frame_run: bool, allow_outside: bool) -> None:
    """Placeholders, the frame-number run and the path's staying under the output root."""
    try:
        parsed = list(string.Formatter().parse(template))
    except ValueError as error:
        sec.fail(key, f"`{template}`: {error} (write a literal brace as {{{{ or }}}})")
        return
    for _, name, spec, conversion in parsed:
        if name is None:
            continue
        if name not in _PATTERN_FIELDS or spec or conversion:
            close = difflib.get_close_matches(name, _PATTERN_FIELDS, n=1)
            hint = f" — did you mean {{{close[0]}}}?" if close else ""
            sec.fail(key, f"`{{{name}}}` is not a placeholder{hint} (allowed: {{preset}}, {{map}}, {{ext}})")
            return
    runs = _FRAME_RUN.findall(template)
    if frame_run and len(runs) != 1:
        sec.fail(key, f"`{template}` needs exactly one run of # for the frame number (found {len(runs)})")
    if not frame_run and runs:
        sec.fail(key, f"`{template}`: frame numbers (#) belong in output.pattern, not the folder")
    parts = template.replace("\\", "/").split("/")
    absolute = template.startswith(("/", "\\", "~")) or re.match(r"^[A-Za-z]:", template) is not None
    outside = absolute or ".." in parts
    if outside and not allow_outside:
        sec.fail(
            key,
            f"`{template}` leaves the output root (no absolute paths, no `..`); a path outside it "
            f"can be given on the command line",
        )
    if frame_run and (not parts[-1] or parts[-1] in (".", "..")):
        sec.fail(key, f"`{template}` does not end in a file name")


def _read_scene(sec: Section) -> SceneSettings:
    metres = sec.number("metres_per_unit", 1.0, low=1.0e-6, high=1.0e6)
    up_axis = sec.choice("up_axis", "y", UP_AXES)
    north = sec.number("north_deg", 90.0, low=-360, high=360)
    return SceneSettings(metres, up_axis, north)


# -- writing -------------------------------------------------------------------------------


def _as_tree(preset: Preset) -> dict[str, Any]:
    """The preset as plain YAML/JSON-ready data, keys in reading order."""

    def plain(value: Any) -> Any:
        if is_dataclass(value):
            return {f.name: plain(getattr(value, f.name)) for f in fields(value) if f.compare}
        if isinstance(value, tuple):
            return [plain(item) for item in value]
        return value

    tree = plain(preset)
    tree["sea"]["depth_m"] = "deep" if preset.sea.depth_m == math.inf else preset.sea.depth_m
    tree["output"]["precision_per_map"] = dict(preset.output.precision_per_map)
    tree["sea"]["components"] = [
        {"label": item["label"], "record": item["record"]} if item["record"] else item
        for item in tree["sea"]["components"]
    ]
    return tree
