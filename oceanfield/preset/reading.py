"""Reading a preset's located YAML tree into checked settings: every key, default and check.

Knows nothing of rendering or of the analyzer. Mistakes are collected, not stopped at:
each section's reader records a ``file:line: key: problem`` line through its
:class:`~oceanfield.preset._yamltree.Section` and returns ``BAD`` for what it could not
read, so one :class:`~oceanfield.preset.settings.PresetError` lists them all. Each
component is built once here as :func:`~oceanfield.preset.settings.to_sea_state` will
build it, so a sea the physics refuses is reported where it was written.
"""

from __future__ import annotations

import difflib
import math
import re
import string
from dataclasses import replace
from pathlib import Path
from typing import Any

from ._yamltree import BAD, Context, Node, Section, describe, valid
from .banding import SHORT_WAVES_NEED_TENSION_M, read_bands
from ..physics.constants import GRAVITY, SEAWATER_DENSITY, SURFACE_TENSION
from ..surface.amplitudes import WAVE_HEIGHTS
from ..surface.maps import MAPS, UP_AXES
from ..physics.seastate import SeaState
from ..physics.spectra import JONSWAP_GAMMA, SPECTRA
from ..physics.spreading import SPREADING
from .record import read_record
from .vessels import NO_WAKE, check_region, read_vessels, read_wake
from .settings import (
    _DEFAULT_SPREAD_DEG,
    _FRAME_RUN,
    ComponentSettings,
    OutputSettings,
    Preset,
    SceneSettings,
    SeaSettings,
    SurfaceSettings,
    TileSettings,
    TimeSettings,
    _component,
    _fluid,
)

__all__: list[str] = []  # the readers are the schema's; load_preset is the public entry

_FORMATS = ("exr", "png")
_PRECISIONS = ("half", "float")
_COMPRESSIONS = ("zip", "piz", "dwaa", "none")
_PATTERN_FIELDS = ("preset", "map", "ext")

_DEFAULT_COMPONENT_WIND = 10.0  # m/s: the default sea is a fully developed Beaufort 5 sea
_MAX_SEED = 2**63 - 1

_MIN_PEAK_VARIANCE_KEPT_AT_ALL = 0.01  # below this the cut-off is an error, not a warning


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
    vessels = read_vessels(top, time, scene)
    wake_section = top.section("wake")
    wake = read_wake(wake_section)
    if valid(vessels, wake) and not vessels and wake != NO_WAKE:
        wake = wake_section.fail("", "has no effect: the preset has no vessels (add vessels, or leave wake out)")
    check_region(wake_section, vessels, wake, time, scene)
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
        description, seed, sea, tile, surface, maps, time, output, scene, bands, vessels, wake,
        name=path.stem, source=path.resolve(),
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

