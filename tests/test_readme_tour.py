"""The README's tour, command by command, at a small resolution: a new user's first hour.

The commands are read from README.md itself (the ``bash`` block under "A tour"), so the
test follows the README as it changes. Each runs in-process through ``main([...])`` in a
scratch folder, with ``--set tile.resolution=64`` added to the commands that take a preset
and the render shortened to a few frames; ``>`` redirections are honoured.
"""

from __future__ import annotations

import json
import re
import shlex
from pathlib import Path

import pytest
import yaml

from oceanfield.cli import main
from oceanfield.preset import load_preset

README = Path(__file__).resolve().parents[1] / "README.md"
_PRESET_COMMANDS = {"stats", "resolve", "preview", "look", "render", "probe", "float", "scene"}
_SMALL = ["--set", "tile.resolution=64"]
_FRAMES = "1001-1024"


def _tour() -> list[list[str]]:
    text = README.read_text(encoding="utf-8")
    block = re.search(r"## A tour\s+```bash\n(.*?)```", text, re.S)
    assert block, "README.md has no bash block under '## A tour'"
    commands = []
    for line in block.group(1).splitlines():
        words = shlex.split(line, comments=True)
        if words:
            assert words[0] == "oceanfield", line
            commands.append(words[1:])
    return commands


def _shrunk(words: list[str]) -> list[str]:
    words = list(words)
    if "--frames" in words:
        words[words.index("--frames") + 1] = _FRAMES
    if "--workers" in words:  # one worker: the tour's point is the files, not the pool
        words[words.index("--workers") + 1] = "1"
    if words[0] == "look":  # a small picture: the tour checks the files, the look's tests the pixels
        words += ["--size", "160x90"]
    if words[0] in _PRESET_COMMANDS:
        words += _SMALL
    if "headland_launch_chase" in words:  # its wake region at 64² too
        words += ["--set", "wake.resolution=64"]
    return words


def test_the_readme_tour_runs_from_top_to_bottom(tmp_path, monkeypatch, capsys):
    monkeypatch.chdir(tmp_path)
    tour = _tour()
    assert [words[0] for words in tour] == [
        "presets", "stats", "preview", "preview", "look", "resolve", "stats", "render", "analyze", "probe", "float",
        "scene", "stats", "render", "float",
    ], "the tour changed: check that this test still covers each step"
    for words in tour:
        target = None
        if ">" in words:
            at = words.index(">")
            words, target = words[:at], words[at + 1]
        status = main(_shrunk(words))
        captured = capsys.readouterr()
        assert status == 0, f"`oceanfield {' '.join(words)}` exited {status}: {captured.err}"
        assert "Traceback" not in captured.err
        if target:
            Path(target).write_text(captured.out, encoding="utf-8")
        if words[:2] == ["stats", "my_chop.yaml"]:
            # the override replaced the file's Beaufort sizing: 14 m/s over 60 km of fetch
            assert "Bft" in captured.out
    assert Path("renders/swell_under_wind_sea_preview.png").stat().st_size > 10_000
    assert Path("renders/swell_under_wind_sea_preview.gif").stat().st_size > 10_000
    assert Path("renders/fresh_chop_look.png").stat().st_size > 10_000
    assert Path("renders/fresh_chop_look.exr").is_file()
    assert len(list(Path("renders/my_chop").glob("displacement.*.exr"))) == 24
    assert Path("check.png").stat().st_size > 10_000
    assert len(Path("hero.csv").read_text().splitlines()) == 1 + 24 and Path("boat.csv").is_file()
    assert Path("shot.usda").stat().st_size > 10_000
    chase = Path("renders/headland_launch_chase")
    assert len(list(chase.glob("wake_displacement.*.exr"))) == 24 == len(list(chase.glob("displacement.*.exr")))
    launches = Path("launches.csv").read_text().splitlines()
    assert len(launches) == 1 + 24 * 2 and {row.split(",")[2] for row in launches[1:]} == {"lead", "chaser"}


def test_resolved_file_can_be_edited_where_the_readme_says(tmp_path, monkeypatch, capsys):
    """Sizing by wind after a Beaufort file, dropping the fetch, switching to Hs and Tp."""
    monkeypatch.chdir(tmp_path)
    assert main(["resolve", "fresh_chop"]) == 0
    Path("my_chop.yaml").write_text(capsys.readouterr().out, encoding="utf-8")
    tree = yaml.safe_load(Path("my_chop.yaml").read_text(encoding="utf-8"))
    component = tree["sea"]["components"][0]
    # the keys the schema derives are left to it (null), the sizing written stays
    assert component["peak_enhancement"] is None and component["spreading"] is None
    assert component["beaufort"] == 6 and component["wind_speed_mps"] is None

    by_wind = load_preset("my_chop.yaml", overrides=("sea.components.0.wind_speed_mps=14",))
    item = by_wind.sea.components[0]
    assert (item.wind_speed_mps, item.beaufort, item.fetch_km, item.peak_enhancement) == (14.0, None, 60.0, 3.3)

    by_height = load_preset(
        "my_chop.yaml",
        overrides=("sea.components.0.significant_height_m=2", "sea.components.0.peak_period_s=6"),
    )
    item = by_height.sea.components[0]
    assert (item.significant_height_m, item.fetch_km, item.beaufort, item.spreading) == (2.0, None, None, "cos2s")

    # removing the fetch makes a fully developed sea: γ follows instead of refusing
    component["fetch_km"] = None
    Path("developed.yaml").write_text(yaml.safe_dump(tree), encoding="utf-8")
    assert load_preset("developed.yaml").sea.components[0].peak_enhancement is None

    # a file that sizes a component twice is still refused
    component["wind_speed_mps"] = 14
    Path("twice.yaml").write_text(yaml.safe_dump(tree), encoding="utf-8")
    assert main(["stats", "twice.yaml"]) == 2
    assert "sized twice" in capsys.readouterr().err


def test_a_preset_that_extends_another_can_size_a_component_its_own_way(tmp_path):
    """`extends: fresh_chop` (sized by Beaufort 6) with its own wind speed: the child's sizing wins."""
    child = tmp_path / "child.yaml"
    child.write_text("extends: fresh_chop\nsea:\n  components:\n    0:\n      wind_speed_mps: 14\n", encoding="utf-8")
    item = load_preset(child).sea.components[0]
    assert (item.wind_speed_mps, item.beaufort, item.fetch_km) == (14.0, None, 60.0)
    twice = tmp_path / "twice.yaml"
    twice.write_text(
        "extends: fresh_chop\nsea:\n  components:\n    0:\n      wind_speed_mps: 14\n      beaufort: 5\n",
        encoding="utf-8",
    )
    with pytest.raises(ValueError, match="sized twice"):
        load_preset(twice)
