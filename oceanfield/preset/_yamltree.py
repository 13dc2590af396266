"""Reading YAML into a tree of nodes that remember where each value was written.

Knows nothing of the preset schema (``schema``), of physics or of rendering.

The preset reader (:mod:`oceanfield.preset`) works on this tree, not on plain data, so
that every mistake it reports can name the file and line (or the ``--set`` override) the
value came from. This module holds everything that knows about those locations:

- parsing with PyYAML's safe loader only into :class:`Node` trees, refusing duplicate
  keys, non-standard tags and documents too large or too deep (alias bombs);
- following an ``extends`` chain and merging each file over the one it extends;
- applying ``key.path=value`` overrides;
- :class:`Section`, which hands out checked values from one mapping and reports each
  mistake at its value's location, and :class:`Context`, which collects them and reports
  unknown keys;
- :func:`in_reading_order`, which sorts the collected messages by file and line.

Mistakes are collected into a list of one-line messages ``"file:line: problem"``, never
raised one at a time, so that one reading reports them all.
"""

from __future__ import annotations

import difflib
import math
import re
from dataclasses import dataclass
from pathlib import Path
from typing import Any, Callable, Iterable

import yaml

__all__ = [
    "Node",
    "read_tree",
    "apply_override",
    "is_name",
    "in_reading_order",
    "describe",
    "BAD",
    "valid",
    "Section",
    "Context",
]

_MAX_NODES = 50_000  # YAML nodes in one document (aliases expanded): far above any preset
_MAX_NESTING = 40
_SUFFIXES = (".yaml", ".yml")
_SEQUENCE_TAG = "tag:yaml.org,2002:seq"
_MAPPING_TAG = "tag:yaml.org,2002:map"
_LOCATED = re.compile(r"^(?P<file>.*?):(?P<line>\d+): ")


# -- parsing: a tree of nodes that remember where they were written --------------------


@dataclass
class Node:
    """A YAML value with where it was written.

    ``value`` is a dict of Node (mapping), a list of Node (sequence) or a scalar.
    ``where`` locates the value, ``key_where`` the key that holds it (for mapping
    entries); ``text`` is a scalar's source text (``yes`` for a boolean read from yes).
    """

    value: Any
    where: str
    key_where: str = ""
    text: str = ""


class _Located(Exception):
    """A mistake that stops reading one document, with its location."""

    def __init__(self, where: str, message: str) -> None:
        super().__init__(f"{where}: {message}")


def _parse_yaml(text: str, locate: Callable[[Any], str], errors: list[str]) -> tuple[bool, Node | None]:
    """Compose ``text`` with the safe loader into a Node tree: (ok, tree or None if empty)."""
    loader = None
    try:
        loader = yaml.SafeLoader(text)
        root = loader.get_single_node()
        if root is None:
            return True, None
        return True, _convert(loader, root, locate, errors, [0], 0)
    except yaml.MarkedYAMLError as error:
        mark = error.problem_mark or error.context_mark
        problem = error.problem or error.context or "unreadable"
        errors.append(f"{locate(mark)}: invalid YAML: {problem}")
    except yaml.YAMLError as error:
        errors.append(f"{locate(None)}: invalid YAML: {error}")
    except _Located as error:
        errors.append(str(error))
    finally:
        if loader is not None:
            loader.dispose()
    return False, None


def _convert(
    loader: yaml.SafeLoader,
    node: yaml.Node,
    locate: Callable[[Any], str],
    errors: list[str],
    count: list[int],
    depth: int,
) -> Node:
    """Turn a composed YAML node into a Node tree, checking keys as it goes."""
    where = locate(node.start_mark)
    count[0] += 1
    if count[0] > _MAX_NODES or depth > _MAX_NESTING:
        raise _Located(where, "the document is too large or too deeply nested to be a preset")
    if isinstance(node, yaml.ScalarNode):
        return Node(_scalar(loader, node, where), where, text=node.value)
    if node.tag not in (_SEQUENCE_TAG, _MAPPING_TAG):
        raise _Located(where, f"the tag {node.tag} is not allowed in a preset")
    if isinstance(node, yaml.SequenceNode):
        return Node([_convert(loader, item, locate, errors, count, depth + 1) for item in node.value], where)
    loader.flatten_mapping(node)  # resolves YAML merge keys (<<) as the safe loader does
    entries: dict[Any, Node] = {}
    for key_node, value_node in node.value:
        key_where = locate(key_node.start_mark)
        if not isinstance(key_node, yaml.ScalarNode):
            raise _Located(key_where, "a key must be a plain name, not a list or mapping")
        key = _scalar(loader, key_node, key_where)
        if isinstance(key, bool) or not isinstance(key, (str, int)):
            key = key_node.value  # `yes:` or `null:` as a key: keep the written name
        if key in entries:
            first = entries[key].key_where
            errors.append(f"{key_where}: key `{key_node.value}` is given twice (first at {first})")
            continue
        child = _convert(loader, value_node, locate, errors, count, depth + 1)
        child.key_where = key_where
        entries[key] = child
    return Node(entries, where)


def _scalar(loader: yaml.SafeLoader, node: yaml.ScalarNode, where: str) -> Any:
    """The value of a scalar node as the safe loader reads it (int, float, bool, str, ...)."""
    try:
        return loader.construct_object(node)
    except (ValueError, TypeError, AttributeError, OverflowError):  # e.g. `!!int twelve`
        raise _Located(where, f"cannot read `{node.value}` as {node.tag}") from None


def _file_locator(path: Path) -> Callable[[Any], str]:
    """A function giving ``file:line`` for a YAML mark (line 1 for no mark)."""
    shown = _display(path)
    return lambda mark: f"{shown}:{1 if mark is None else mark.line + 1}"


def _display(path: Path) -> str:
    """The path relative to the working folder when under it, else absolute."""
    resolved = path.resolve()
    try:
        return str(resolved.relative_to(Path.cwd().resolve()))
    except ValueError:
        return str(resolved)


# -- files and extends --------------------------------------------------------------------


def is_name(ref: str) -> bool:
    """Whether ``ref`` names a shipped preset rather than a file.

    Parameters
    ----------
    ref : str
        As written after ``extends:`` or on the command line.

    Returns
    -------
    bool
        True for a bare name: no folder separator, no ``.yaml``/``.yml`` suffix, not empty,
        ``.`` or ``..``.
    """
    return not ("/" in ref or "\\" in ref or ref.lower().endswith(_SUFFIXES) or ref in ("", ".", ".."))


def read_tree(
    path: Path,
    errors: list[str],
    find_named: Callable[[str], tuple[Path | None, str]],
    chain: tuple[Path, ...] = (),
) -> Node | None:
    """One file's tree merged over its ``extends`` chain.

    Parameters
    ----------
    path : Path
        The YAML file to read.
    errors : list of str
        Receives every mistake found, one line each, located by file and line.
    find_named : callable
        ``find_named(name)`` gives ``(path, "")`` for a preset that ``extends`` names (see
        :func:`is_name`), or ``(None, why)`` when there is none.
    chain : tuple of Path
        The resolved files already being read below this one, to catch a loop.

    Returns
    -------
    Node or None
        The merged mapping, without its ``extends`` key; None when the file or a file it
        extends cannot be read (the reason is in ``errors``).
    """
    locate = _file_locator(path)
    try:
        text = path.read_text(encoding="utf-8")
    except (OSError, UnicodeDecodeError) as error:
        errors.append(f"{locate(None)}: cannot read the file: {error}")
        return None
    ok, root = _parse_yaml(text, locate, errors)
    if not ok:
        return None
    if root is None:
        errors.append(f"{locate(None)}: the file is empty; a preset is a mapping of keys (see reference.yaml)")
        return None
    if not isinstance(root.value, dict):
        errors.append(f"{root.where}: a preset is a mapping of keys, got {describe(root)}")
        return None
    parent = root.value.pop("extends", None)
    if parent is None or parent.value is None:
        return root
    target = _extends_target(parent, path, errors, find_named)
    if target is None:
        return None
    here = path.resolve()
    if target.resolve() in chain + (here,):
        loop = " → ".join(p.name for p in chain + (here, target.resolve()))
        errors.append(f"{parent.where}: extends: the chain loops: {loop}")
        return None
    base = read_tree(target, errors, find_named, chain + (here,))
    if base is None:
        return None
    return _merge(base, root, errors, "")


def _extends_target(
    node: Node, path: Path, errors: list[str], find_named: Callable[[str], tuple[Path | None, str]]
) -> Path | None:
    """The file an ``extends`` node refers to: a named preset, or a path beside ``path``."""
    ref = node.value
    if not isinstance(ref, str) or not ref.strip():
        errors.append(
            f"{node.where}: extends: expected a shipped preset's name or a .yaml path, got {describe(node)}"
        )
        return None
    if is_name(ref):
        target, why = find_named(ref)
        if target is None:
            errors.append(f"{node.where}: extends: {why}")
        return target
    if not ref.lower().endswith(_SUFFIXES):
        errors.append(f"{node.where}: extends: `{ref}` is not a .yaml or .yml file")
        return None
    target = path.parent / ref
    if not target.is_file():
        stem = Path(ref).stem
        shipped = not target.exists() and is_name(stem) and find_named(stem)[0] is not None
        advice = f"; the shipped preset of that name is `{stem}`, without .yaml" if shipped else ""
        errors.append(f"{node.where}: extends: no preset file `{ref}` (looked for {target.resolve()}){advice}")
        return None
    return target


# -- merging and overrides ----------------------------------------------------------------


def _merge(base: Node, over: Node, errors: list[str], path: str) -> Node:
    """``over`` laid on ``base``: mappings merge key by key, anything else is replaced.

    A mapping of item numbers laid on a list changes those items (``components: {0:
    {wind_speed_mps: 14}}``); any other list replaces the inherited one whole.
    """
    if isinstance(base.value, dict) and isinstance(over.value, dict):
        merged = dict(base.value)
        for key, child in over.value.items():
            inherited = base.value.get(key)
            merged[key] = child if inherited is None else _merge(inherited, child, errors, _join(path, key))
        return Node(merged, over.where, over.key_where)
    if isinstance(base.value, list) and isinstance(over.value, dict) and _is_index_map(over.value):
        items = list(base.value)
        for index, child in over.value.items():
            if not 0 <= index < len(items):
                errors.append(
                    f"{child.key_where}: {_join(path, index)}: no item {index} to change; the inherited "
                    f"list has {len(items)} item(s), numbered from 0"
                )
                continue
            items[index] = _merge(items[index], child, errors, _join(path, index))
        return Node(items, over.where, over.key_where)
    return over


def _is_index_map(entries: dict) -> bool:
    return bool(entries) and all(isinstance(key, int) and not isinstance(key, bool) for key in entries)


def _join(path: str, key: Any) -> str:
    return f"{path}.{key}" if path else str(key)


def apply_override(tree: Node, text: str, errors: list[str]) -> None:
    """Apply one ``key.path=value`` override to the merged tree, in place.

    Parameters
    ----------
    tree : Node
        The merged mapping (from :func:`read_tree`).
    text : str
        ``key.path=value``: dotted keys, list items by number from 0; the value is read as
        YAML and every node of it is located at ``--set <text>``. Missing sections are made.
    errors : list of str
        Receives what is wrong with the override; the tree is then left as it was.
    """
    where = f"--set {text}"
    key, equals, raw = text.partition("=")
    parts = key.strip().split(".")
    if not equals or not all(parts):
        errors.append(f"{where}: expected key=value with a dotted key, e.g. tile.resolution=1024")
        return
    if parts[0] == "extends":
        errors.append(f"{where}: extends cannot be changed by an override; load the other preset instead")
        return
    problems: list[str] = []
    ok, value = _parse_yaml(raw, lambda mark: where, problems)
    if not ok:
        # The value is YAML, so text with braces or a colon (a file pattern's `{map}`) is
        # read as a mapping: say how to pass it as text.
        advice = f"; if the value is text, quote it: --set '{key.strip()}=\"{raw.strip()}\"'"
        errors.extend(p + advice if "invalid YAML" in p and '"' not in raw else p for p in problems)
        return
    value = value if value is not None else Node(None, where)
    _set_where(value, where)
    node = tree
    for depth, part in enumerate(parts):
        last = depth == len(parts) - 1
        done = ".".join(parts[:depth]) or "the top level"
        if isinstance(node.value, list):
            if not part.isdigit() or int(part) >= len(node.value):
                errors.append(
                    f"{where}: {done} is a list of {len(node.value)} item(s); `{part}` is not one of its "
                    f"numbers (0 to {len(node.value) - 1})"
                )
                return
            if last:
                node.value[int(part)] = value
                return
            node = node.value[int(part)]
        elif isinstance(node.value, dict) or node.value is None:
            if node.value is None:
                node.value = {}
            if last:
                node.value[part] = value
                return
            child = node.value.get(part)
            if child is None:
                child = node.value[part] = Node({}, where, where)
            node = child
        else:
            errors.append(f"{where}: {done} is a single value, not a section")
            return


def _set_where(node: Node, where: str) -> None:
    """Mark ``node`` and everything under it as written at ``where`` (an override)."""
    node.where = node.key_where = where
    if isinstance(node.value, dict):
        children = list(node.value.values())
    elif isinstance(node.value, list):
        children = node.value
    else:
        children = []
    for child in children:
        _set_where(child, where)


# -- error locations ----------------------------------------------------------------------


def in_reading_order(errors: list[str]) -> list[str]:
    """Errors grouped by file (first seen first) and sorted by line within each.

    Parameters
    ----------
    errors : list of str
        Messages as collected; those starting ``file:line: `` are sorted, the others
        (overrides, unlocated) follow in the order they came.

    Returns
    -------
    list of str
    """
    files: dict[str, int] = {}
    keyed = []
    for order, message in enumerate(errors):
        match = _LOCATED.match(message)
        if match is None:
            keyed.append(((len(errors), 0, order), message))
            continue
        rank = files.setdefault(match["file"], len(files))
        keyed.append(((rank, int(match["line"]), order), message))
    return [message for _, message in sorted(keyed)]


# -- checked reading -----------------------------------------------------------------------


class _Bad:
    """Stands for a value that failed its check (already reported)."""

    def __repr__(self) -> str:
        return "<invalid>"


BAD = _Bad()
"""What a :class:`Section` check returns for a value it has reported as wrong."""


def valid(*values: Any) -> bool:
    """Whether none of ``values`` is :data:`BAD` (a value that failed its check)."""
    return not any(value is BAD for value in values)


def describe(node: Node) -> str:
    """A node's value for a message: its kind for a mapping, list or null, else as written."""
    value = node.value
    if isinstance(value, dict):
        return "a mapping"
    if isinstance(value, list):
        return "a list"
    if value is None:
        return "nothing (null)"
    if isinstance(value, bool):
        return f"`{node.text}` (a boolean in YAML)"
    if isinstance(value, str):
        return f"the text {value!r}"
    return f"`{node.text or value}`"


def _allowed(low: float | None, high: float | None, low_open: bool) -> str:
    def shown(x: float | None) -> str:
        return str(x) if isinstance(x, int) else f"{x:g}"

    if high is None:
        return f"above {shown(low)}" if low_open else f"{shown(low)} or more"
    return f"above {shown(low)}, up to {shown(high)}" if low_open else f"{shown(low)} to {shown(high)}"


class Section:
    """One mapping of the tree being read: hands out checked values, records asked keys.

    Each check returns the value (or its default when the key is absent), or :data:`BAD`
    after adding a message located at the value (at the section when the key is absent).

    Parameters
    ----------
    context : Context
        Collects the messages and every section made.
    node : Node or None
        The mapping; None or null for an absent section (every key takes its default).
    path : str
        Dotted path of the section (``sea.components.0``); ``""`` for the top level.
    fallback : str
        Location to report at when ``node`` is None: the enclosing section's.
    """

    def __init__(self, context: Context, node: Node | None, path: str, fallback: str = "") -> None:
        self.context, self.path = context, path
        self.asked: list[str] = []
        self.where = node.where if node is not None else fallback
        self.items: dict[Any, Node] = {}
        if node is None or node.value is None:
            pass
        elif isinstance(node.value, dict):
            self.items = node.value
        else:
            got = describe(node)
            context.errors.append(f"{node.where}: {path or 'preset'}: expected a mapping of keys, got {got}")
        context.sections.append(self)

    def _get(self, key: str) -> Node | None:
        self.asked.append(key)
        return self.items.get(key)

    def fail(self, key: str, problem: str) -> _Bad:
        """Report ``problem`` at ``key``'s value (or at the section for key '')."""
        node = self.items.get(key)
        where = node.where if node is not None else self.where
        self.context.errors.append(f"{where}: {_join(self.path, key) if key else self.path}: {problem}")
        return BAD

    def section(self, key: str) -> Section:
        """The mapping under ``key`` as a :class:`Section` (empty if absent)."""
        return Section(self.context, self._get(key), _join(self.path, key), self.where)

    def number(
        self,
        key: str,
        default: float | None,
        *,
        low: float | None = None,
        high: float | None = None,
        low_open: bool = False,
        whole: bool = False,
        optional: bool = False,
        words: dict[str, float] | None = None,
    ) -> Any:
        """A finite number within [low, high] (or (low, high]); an int when ``whole``.

        ``words`` names values that may be written as a word (``{"deep": inf}``).
        """
        node = self._get(key)
        if node is None:
            return default
        words = words or {}
        if isinstance(node.value, str) and node.value in words:
            return words[node.value]
        allowed = "".join(f"{word}, or " for word in words) + ("a whole number, " if whole else "")
        allowed += _allowed(low, high, low_open) + (", or null" if optional else "")
        value = node.value
        if value is None:
            return None if optional else self.fail(key, f"needs a value (allowed: {allowed})")
        numeric = isinstance(value, int if whole else (int, float)) and not isinstance(value, bool)
        if not numeric:
            kind = "a whole number" if whole else "a number"
            return self.fail(key, f"expected {kind}, got {describe(node)} (allowed: {allowed})")
        if not math.isfinite(value):
            return self.fail(key, f"expected a finite number, got `{node.text}` (allowed: {allowed})")
        below = low is not None and (value <= low if low_open else value < low)
        if below or (high is not None and value > high):
            return self.fail(key, f"`{node.text}` is out of range (allowed: {allowed})")
        return int(value) if whole else float(value)

    def choice(self, key: str, default: str | None, choices: Iterable[str], *, optional: bool = False) -> Any:
        """One of ``choices``, with a suggestion for a misspelt one; null allowed when ``optional``."""
        node = self._get(key)
        if node is None or (node.value is None and optional):
            return default
        choices = tuple(choices)
        if isinstance(node.value, str) and node.value in choices:
            return node.value
        close = difflib.get_close_matches(node.value, choices, n=1) if isinstance(node.value, str) else []
        hint = f" — did you mean `{close[0]}`?" if close else ""
        return self.fail(key, f"{describe(node)} is not allowed{hint} (allowed: {', '.join(choices)})")

    def flag(self, key: str, default: bool) -> Any:
        """A YAML boolean."""
        node = self._get(key)
        if node is None:
            return default
        if isinstance(node.value, bool):
            return node.value
        return self.fail(key, f"expected true or false, got {describe(node)}")

    def text(self, key: str, default: str) -> Any:
        """One line of text, stripped; null gives the default."""
        node = self._get(key)
        if node is None or node.value is None:
            return default
        if not isinstance(node.value, str):
            return self.fail(key, f"expected text, got {describe(node)}")
        if "\n" in node.value.strip():
            return self.fail(key, "must be one line")
        return node.value.strip()

    def node(self, key: str) -> Node | None:
        """The raw node under ``key`` (None if absent), for a caller's own checks."""
        return self._get(key)


class Context:
    """The errors of one validation and every section read, for unknown-key reporting.

    Parameters
    ----------
    errors : list of str
        Receives every message, one line each.
    """

    def __init__(self, errors: list[str]) -> None:
        self.errors = errors
        self.sections: list[Section] = []

    def report_unknown_keys(self) -> None:
        """Report each key no section asked for, suggesting a close known key or its home section."""
        home: dict[str, str] = {}
        for section in self.sections:
            for key in section.asked:
                home.setdefault(key, section.path)
        for section in self.sections:
            known = section.asked
            for key, node in section.items.items():
                if key in known:
                    continue
                written = str(key)
                close = difflib.get_close_matches(written, known, n=1, cutoff=0.6)
                if close:
                    hint = f" — did you mean `{close[0]}`?"
                elif written in home:
                    hint = f" — it belongs in {home[written] or 'the top level'}"
                else:
                    hint = f" (known keys here: {', '.join(known)})"
                place = section.path or "the top level"
                where = node.key_where or node.where
                self.errors.append(f"{where}: unknown key `{written}` in {place}{hint}")

