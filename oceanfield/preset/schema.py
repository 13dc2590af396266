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
that every value remembers where it was written.

Conventions at this edge (SI inside, see the design notes): lengths in metres, periods in
seconds, speeds in m/s; ``towards_deg`` is the direction the waves travel *towards*, in
degrees counter-clockwise from the tile's +x axis; ``depth_m: deep`` is infinite depth.

The schema is four modules: ``settings`` (the resolved dataclasses and the sea they make),
``reading`` (every key's default and check), ``resolved`` (dump and hash) and this one,
which loads a preset by name or path and re-exports their public names.
"""

from __future__ import annotations

import difflib
import os
from importlib.util import find_spec
from pathlib import Path
from typing import Sequence

from ._yamltree import apply_override, in_reading_order, is_name, read_tree
from .reading import _build_preset
from .resolved import _resize_by_extension, _resize_by_override, dump_preset, preset_hash
from . import settings as _settings
from .settings import *  # noqa: F401,F403  (the names in settings.__all__: Preset, PresetError, ...)
from .settings import Preset, PresetError

__all__ = [*_settings.__all__, "load_preset", "list_presets", "dump_preset", "preset_hash"]

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


