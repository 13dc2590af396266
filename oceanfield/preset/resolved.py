"""A resolved preset written back: editable YAML, and its render hash.

Knows nothing of rendering or of the analyzer. :func:`dump_preset` writes every key (the
keys the schema derived as null, their values in comments, so an edited file re-derives
them); :func:`preset_hash` is the SHA-256 of what changes a render's pixels. The sizing
replacement that keeps an edited or extended component consistent (a sizing key written
later replaces the sizing written before) lives here too, beside the derived keys it mirrors.
"""

from __future__ import annotations

import hashlib
import json
import math
from dataclasses import fields, is_dataclass
from typing import Any

import yaml

from ._yamltree import Node
from .banding import NO_BANDS
from .vessels import NO_WAKE
from ..physics.spectra import JONSWAP_GAMMA
from .settings import _DEFAULT_SPREAD_DEG, ComponentSettings, Preset

__all__ = ["dump_preset", "preset_hash"]


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
    if not preset.vessels and preset.wake == NO_WAKE:
        del tree["vessels"], tree["wake"]  # a sea without vessels hashes as it did before them
    for vessel in tree["vessels"] if "vessels" in tree else ():  # a course file counts by its contents
        vessel["course"].pop("file", None)
        vessel["course"].pop("usd_file", None)
    canonical = json.dumps(tree, sort_keys=True, separators=(",", ":"), allow_nan=False)
    return hashlib.sha256(canonical.encode("utf-8")).hexdigest()



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
    for vessel in tree["vessels"]:  # a course writes only the keys of its own kind
        course = vessel["course"]
        keep = ("interpolation", "keys") if course["keys"] else ("interpolation", "file", "usd_file", "prim", "sha256")
        vessel["course"] = {key: course[key] for key in keep if course[key] is not None}
        for key in vessel["course"].get("keys", ()):
            for name in ("time_s", "frame", "heading_deg"):
                if key[name] is None:
                    del key[name]
    return tree
