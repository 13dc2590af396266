"""Tests for oceanfield.preset.preview: honest titles, axes in period and wavelength, a foam
panel, units that suit the sea, and the flipbook."""

from __future__ import annotations

import math

import imageio.v3 as iio
import numpy as np
import pytest

from oceanfield.cli import main
from oceanfield.preset import load_preset
from oceanfield.preset.preview import length_text, preview_figure

SMALL = ("tile.resolution=64",)


@pytest.mark.parametrize(
    "metres, text",
    [(0.012, "1.2 cm"), (0.0081, "8.1 mm"), (0.0034, "3.4 mm"), (0.034, "3.4 cm"), (0.5, "50 cm"), (2.17, "2.17 m"), (1024.0, "1024 m"),
     (25_000.0, "25 km")],
)
def test_lengths_in_the_unit_that_suits_them(metres, text):
    assert length_text(metres) == text


def _panels(figure):
    return {axes.get_title(): axes for axes in figure.axes if axes.get_title()}


def test_pond_preview_reads_in_small_units_with_period_and_wavelength_axes():
    figure = preview_figure(load_preset("pond_ripples", overrides=SMALL))
    title = figure._suptitle.get_text()
    hs = load_preset("pond_ripples").sea_state().statistics().hs
    assert f"Hs {length_text(hs)}" in title and "cm" in title and " 0.01 m" not in title
    panels = _panels(figure)
    assert not any("camera" in name for name in panels)  # the shaded panel is a top view and says so
    assert any(name.startswith("top view") for name in panels)
    assert any(name.startswith("foam") for name in panels)
    spectrum = panels["frequency spectrum"]
    assert spectrum.get_xlabel() == "period (s)"
    assert [child.get_xlabel() for child in spectrum.child_axes] == ["wavelength (cm)"]
    labels = [t.get_text() for t in spectrum.get_xticklabels() if t.get_text()]
    assert len(labels) >= 3  # round periods labelled, not one lone tick
    height = [axes for axes in figure.axes if axes.get_ylabel().startswith("height")]
    assert height and height[0].get_ylabel() == "height (mm)"


def test_large_tile_top_view_shows_a_window_of_a_few_mean_wavelengths():
    """storm_force_ten: a 768 m tile; the top view shows four wavelengths of the mean period
    Tm02 (9.7 s, 146 m in deep water, L = gT²/2π), where the look of the surface is set."""
    preset = load_preset("storm_force_ten", overrides=SMALL)
    figure = preview_figure(preset)
    top = next(axes for name, axes in _panels(figure).items() if name.startswith("top view"))
    assert "corner of the tile" in top.get_title()
    tm02 = preset.sea_state().statistics().tm02
    mean_wavelength = 9.80665 * tm02**2 / (2 * math.pi)  # deep water
    shown = top.get_images()[0].get_extent()[1]  # metres across
    texel = preset.tile.size_m / preset.tile.resolution
    assert shown == pytest.approx(4.0 * mean_wavelength, abs=texel)


def test_flipbook_gif_moves_at_the_preset_rate(tmp_path, capsys):
    out = tmp_path / "look.gif"
    args = ["preview", "fresh_chop", "--set", "tile.resolution=32", "--frames", "1001-1006", "--out", str(out)]
    assert main(args) == 0
    assert "6 frames" in capsys.readouterr().out
    frames = iio.imread(out)
    assert frames.shape[0] == 6 and frames.shape[1] >= 384 and frames.shape[3] == 3
    # a GIF stores delays in hundredths of a second: 1000/24 ms is kept as 40 ms
    assert iio.immeta(out)["duration"] == 40
    changes = [float(np.mean(np.abs(frames[i + 1].astype(int) - frames[i]))) for i in range(5)]
    assert min(changes) > 1.0  # the sea moves from frame to frame


def test_flipbook_errors_exit_2(tmp_path, capsys):
    base = ["preview", "fresh_chop", "--set", "tile.resolution=32"]
    assert main([*base, "--frames", "1001-1003", "--out", str(tmp_path / "x.png")]) == 2
    assert "--out" in capsys.readouterr().err
    assert main([*base, "--frames", "1003-1001", "--out", str(tmp_path / "x.gif")]) == 2
    assert "--frames" in capsys.readouterr().err
    try:
        import imageio_ffmpeg  # noqa: F401
    except ImportError:
        assert main([*base, "--frames", "1001-1003", "--out", str(tmp_path / "x.mp4")]) == 2
        assert "oceanfield[video]" in capsys.readouterr().err
    assert not list(tmp_path.iterdir())


def test_preview_makes_its_folder_and_refuses_one_under_a_file(tmp_path, capsys):
    """--out's folder is made if missing, as render, probe, float and scene make theirs; a
    path under a file is one line, exit status 2, nothing written."""
    base = ["preview", "fresh_chop", "--set", "tile.resolution=32"]
    out = tmp_path / "shots" / "day1" / "p.png"
    assert main([*base, "--out", str(out)]) == 0
    assert out.stat().st_size > 0
    (tmp_path / "afile").write_text("x", encoding="utf-8")
    assert main([*base, "--out", str(tmp_path / "afile" / "p.png")]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and "--out" in err[0] and "is a file" in err[0]


#: A launch running straight along +x at 8 m/s on a small tile: the preview's wake column.
BOAT = {"tile": {"resolution": 32}, "time": {"first_frame": 1001, "last_frame": 1002},
        "vessels": [{"name": "launch", "length_m": 10.0, "beam_m": 3.0, "draft_m": 0.5,
                     "course": {"keys": [{"time_s": -18.0, "x_m": 0.0, "y_m": 0.0},
                                         {"time_s": 2.0, "x_m": 160.0, "y_m": 0.0}]}}],
        "wake": {"lookback_s": 20.0}}

def test_the_sea_under_the_wake_keeps_only_the_waves_the_wake_region_can_hold():
    """The wake region's texels are coarser than the tile's: the sea drawn under the wake is
    the tile's height with the waves shorter than two region texels removed, not the tile
    picked at every fourth texel (which turns a 4 m wave sampled every 4 m into a flat 1 m
    offset: short waves folded into false long ones)."""
    from oceanfield.preset.preview import sea_height_over_region

    x = np.arange(64) * 1.0                                   # a 64 m tile of 1 m texels
    long_wave = np.cos(2 * np.pi * x / 32.0)                  # 32 m: the region holds it
    short_wave = np.cos(2 * np.pi * x / 4.0)                  # 4 m: shorter than two 4 m texels
    height = np.broadcast_to(long_wave + short_wave, (64, 64))
    sea = sea_height_over_region(height, 64.0, origin_x=-128.0, origin_y=0.0, spacing=4.0, count=80)
    cells = -128.0 + np.arange(80) * 4.0
    np.testing.assert_allclose(sea[7], np.cos(2 * np.pi * cells / 32.0), atol=1e-9)  # the long wave, repeated
    np.testing.assert_allclose(sea, np.broadcast_to(sea[:1], sea.shape), atol=1e-9)  # nothing along y


def test_no_title_or_text_runs_into_another_panel_with_the_wake_column(preset_file):
    """With the wake's fourth column the panels are narrower: every title and the figures'
    text stay clear of the other panels and colour bars (they ran into them)."""
    import matplotlib.pyplot as plt

    figure = preview_figure(load_preset(preset_file("boat", settings=BOAT)))
    figure.canvas.draw()
    renderer = figure.canvas.get_renderer()
    boxes = [axes.get_tightbbox(renderer) for axes in figure.axes]  # with their labels
    clashes = []
    for index, axes in enumerate(figure.axes):
        for text in [axes.title, *axes.texts]:
            if not text.get_text():
                continue
            extent = text.get_window_extent(renderer)
            clashes += [(text.get_text(), other) for other, box in enumerate(boxes)
                        if other != index and extent.overlaps(box)]
    plt.close(figure)
    assert clashes == [], clashes


def test_a_flipbook_of_a_preset_with_vessels_says_it_leaves_their_wakes_out(preset_file, tmp_path, capsys):
    """The flipbook is the tile's top view: on a boat chase one warning says the wakes are
    not in it and where they are."""
    status = main(["preview", str(preset_file("boat", settings=BOAT)), "--frames", "1001-1002",
                   "--out", str(tmp_path / "boat.gif")])
    err = capsys.readouterr().err
    assert status == 0
    assert ("warning: preview --frames: the wakes of the vessels (launch) are not drawn, only the sea; "
            "the still preview shows them") in err
