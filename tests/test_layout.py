"""The package's layout shows its data flow, and imports run one way.

Walks every module's imports with ``ast`` (nothing is executed, function-level imports
included) and checks the rules in DEVELOPERS.md: cli → render / analysis → preset →
surface → physics (look beside render and analysis); ``io`` is used from above and uses none of them; no import cycle.
"""

from __future__ import annotations

import ast
from pathlib import Path

import pytest

import oceanfield

PACKAGE = Path(oceanfield.__file__).resolve().parent

# Layer of each top-level room; a module may import its own room or a lower layer.
LAYERS = {"physics": 0, "surface": 1, "preset": 2, "render": 3, "analysis": 3, "look": 3, "cli": 4, "bench": 4}
# The rooms that may use io (files): physics and the surface know nothing of files.
USES_IO = {"preset", "render", "analysis", "look", "cli", "bench"}


def _module_name(path: Path) -> str:
    parts = list(path.relative_to(PACKAGE.parent).with_suffix("").parts)
    if parts[-1] == "__init__":
        parts.pop()
    return ".".join(parts)


def _modules() -> dict[str, Path]:
    return {_module_name(path): path for path in PACKAGE.rglob("*.py")}


def _imports(name: str, path: Path, known: set[str]) -> set[str]:
    """The oceanfield modules that ``name`` imports, anywhere in its file."""
    is_package = path.name == "__init__.py"
    found: set[str] = set()
    for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
        if isinstance(node, ast.Import):
            targets = [alias.name for alias in node.names]
        elif isinstance(node, ast.ImportFrom):
            if node.level:
                base = name.split(".") if is_package else name.split(".")[:-1]
                base = base[: len(base) - (node.level - 1)]
                module = ".".join(base + ([node.module] if node.module else []))
            else:
                module = node.module or ""
            # `from pkg import sub` imports the submodule where one exists
            targets = [f"{module}.{alias.name}" if f"{module}.{alias.name}" in known else module for alias in node.names]
        else:
            continue
        found.update(target for target in targets if target.split(".")[0] == "oceanfield")
    found.discard(name)
    return found


def _room(module: str) -> str:
    parts = module.split(".")
    return parts[1] if len(parts) > 1 else ""


@pytest.fixture(scope="module")
def graph() -> dict[str, set[str]]:
    modules = _modules()
    return {name: _imports(name, path, set(modules)) for name, path in modules.items()}


def test_every_module_lives_in_a_room_of_the_data_flow():
    rooms = {_room(name) for name in _modules()} - {""}
    assert rooms == {"physics", "surface", "preset", "render", "analysis", "look", "io", "cli", "bench"}


def test_imports_run_one_way(graph):
    wrong = []
    for module, targets in graph.items():
        room = _room(module)
        for target in targets:
            other = _room(target)
            if target == "oceanfield":
                continue  # the package root: __version__ only (checked below)
            if other == room or other == "presets":
                continue
            if other == "io":
                if room not in USES_IO:
                    wrong.append(f"{module} uses files ({target})")
                continue
            if room == "io":
                wrong.append(f"{module} (io) imports {target}")
            elif room not in LAYERS or LAYERS[other] >= LAYERS[room]:
                wrong.append(f"{module} imports {target} against the flow")
    assert wrong == []


def test_the_package_root_is_imported_for_its_version_only():
    for name, path in _modules().items():
        if name == "oceanfield":
            continue
        for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
            if isinstance(node, ast.ImportFrom) and (
                (node.level and node.module is None and name.count(".") + (path.name == "__init__.py") == node.level)
                or (node.level == 0 and node.module == "oceanfield")
            ):
                assert [alias.name for alias in node.names] == ["__version__"], f"{name}: {ast.dump(node)}"


def test_no_import_cycles(graph):
    """Depth-first search over the module graph; any back edge is a cycle."""
    state: dict[str, int] = {}
    cycles = []

    def visit(module: str, trail: list[str]) -> None:
        state[module] = 1
        for target in sorted(graph.get(module, ())):
            if target == "oceanfield":
                continue
            if state.get(target) == 1:
                cycles.append(" → ".join(trail[trail.index(target):] + [target]))
            elif target not in state:
                visit(target, trail + [target])
        state[module] = 2

    for module in sorted(graph):
        if module not in state:
            visit(module, [module])
    assert cycles == []


def test_the_checker_catches_a_backward_import(tmp_path):
    """The walker must see function-level and relative imports, or the checks above prove nothing."""
    source = "def f():\n    from ..preset.schema import load_preset\n    from . import _kernels\n"
    path = tmp_path / "synth.py"
    path.write_text(source, encoding="utf-8")
    known = {"oceanfield.preset.schema", "oceanfield.surface._kernels"}
    assert _imports("oceanfield.surface.synth", path, known) == known


def test_every_module_opens_with_a_docstring_saying_what_it_holds():
    missing = [name for name, path in _modules().items()
               if not ast.get_docstring(ast.parse(path.read_text(encoding="utf-8")))]
    assert missing == []


def test_every_module_says_what_it_knows_nothing_of():
    """Each module's opening docstring names what it does not know (DESIGN: the flow)."""
    silent = [name for name, path in _modules().items()
              if "nothing of" not in (ast.get_docstring(ast.parse(path.read_text(encoding="utf-8"))) or "")]
    assert silent == []


def test_the_public_api_is_importable_from_the_package():
    from oceanfield import Ocean, SeaState, Tile, load_preset, wind_sea

    assert Ocean.__module__ == "oceanfield.surface.synth"
    assert SeaState.__module__ == "oceanfield.physics.seastate"
    assert Tile.__module__ == "oceanfield.surface.tile"
    assert load_preset.__module__ == "oceanfield.preset.schema"
    assert wind_sea.__module__ == "oceanfield.physics.seastate"
    for name in oceanfield.__all__:
        assert getattr(oceanfield, name) is not None


def test_every_subpackage_is_installed():
    """`pip install .` (what CI and users run) installs only the packages pyproject.toml
    lists: a room missing there imports from a checkout but not from an install."""
    tomllib = pytest.importorskip("tomllib")  # Python 3.11+
    repository = Path(__file__).resolve().parents[1]  # the checkout's sources, not the installed copy
    root = repository / "oceanfield"
    listed = set(tomllib.loads((repository / "pyproject.toml").read_text())["tool"]["setuptools"]["packages"])
    found = {"oceanfield"} | {
        "oceanfield." + ".".join(path.parent.relative_to(root).parts)
        for path in root.rglob("__init__.py") if path.parent != root
    }
    assert found - listed == set()
