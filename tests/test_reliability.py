"""Tests for oceanfield.analysis.reliability and the report picture: what a clip can support.

A clip of D seconds resolves frequencies in steps of 2π/D; a period longer than D/3 has
fewer than three bins and its measured value is set by the clip (common practice, the
timing fit's own three-bin rule). The seas are synthesised with a known peak period, so
which figures must be flagged follows from the clip's length alone.
"""

from __future__ import annotations

import json
import math
import re

import numpy as np
import pytest

from oceanfield.analysis import analyze_heights, format_verdict
from oceanfield.analysis.plot import report_figure
from oceanfield.analysis.reliability import MIN_CYCLES, assess
from oceanfield.cli import main
from oceanfield.io.exr import write_exr
from oceanfield.physics.constants import GRAVITY
from oceanfield.physics.seastate import SeaState, height_period
from oceanfield.surface.synth import Ocean
from oceanfield.surface.tile import Tile

TP = 4.0  # s
SIZE = 8.0 * GRAVITY * TP**2 / (2.0 * math.pi)  # 8 deep-water peak wavelengths, L0 = gT²/2π
FPS = 3.0
#: Tp from the wavenumber peak of a 64² realisation: within 10 % of the sea's (the lattice
#: has 8 annuli to the peak, so one step is 12 % in k, 6 % in T).
TP_TOLERANCE = 0.10


def _heights(frames: int) -> np.ndarray:
    sea = SeaState((height_period(1.0, TP, spread=math.radians(25.0)),))
    ocean = Ocean(sea, Tile(SIZE, 64), seed=3)
    return np.array([ocean.frame(i / FPS).height for i in range(frames)])


@pytest.fixture(scope="module")
def short_clip():
    """24 frames at 3 fps: an 8 s clip of a 4 s sea, two cycles (a third of it is 2.67 s)."""
    return analyze_heights(_heights(24), SIZE, FPS)


def test_short_clip_flags_the_peak_and_what_rests_on_it(short_clip):
    trust = assess(short_clip)
    assert short_clip.tp > 8.0 / MIN_CYCLES  # the clip sets it
    assert {"tp_s", "significant_steepness"} <= set(trust.unreliable)
    assert "tp_from_wavenumber_s" not in trust.unreliable  # the tile holds 8 peak wavelengths
    assert short_clip.tp_from_wavenumber == pytest.approx(TP, rel=TP_TOLERANCE)
    # the steepness to trust comes from the wavenumber peak: 2πHs/(gTp²)
    expected = 2 * math.pi * short_clip.hs / (GRAVITY * short_clip.tp_from_wavenumber**2)
    assert trust.steepness_from_wavenumber == pytest.approx(expected, rel=1e-12)
    # a clip of three peak periods, in frames at the clip's rate
    assert trust.needed_duration == pytest.approx(MIN_CYCLES * short_clip.tp_from_wavenumber, rel=1e-12)
    assert trust.needed_frames == math.ceil(trust.needed_duration * FPS)
    assert trust.too_short


def test_short_clip_text_marks_figures_and_says_how_long(short_clip):
    text = format_verdict(short_clip)
    assert f"Tp {short_clip.tp:#.3g} s [unreliable]" in text
    assert "significant steepness" in text and "from the wavenumber peak" in text
    trust = assess(short_clip)
    assert f"a clip of at least {trust.needed_duration:.3g} s ({trust.needed_frames} frames at 3 fps)" in text
    verdict = next(line for line in text.splitlines() if line.startswith("Verdict"))
    assert f"cannot support {len(trust.unreliable)} figure(s) marked [unreliable]" in verdict


def test_long_clip_flags_nothing():
    """96 frames at 3 fps: 32 s, eight cycles of the 4 s peak."""
    result = analyze_heights(_heights(96), SIZE, FPS)
    trust = assess(result)
    assert trust.unreliable == {} and not trust.too_short
    assert "[unreliable]" not in format_verdict(result)


def test_report_carries_verdict_labels_and_nyquist(short_clip):
    verdict = format_verdict(short_clip)
    figure = report_figure(short_clip, title="clip", verdict=verdict)
    texts = [t.get_text() for t in figure.texts]
    assert any("Verdict" in t and "[unreliable]" in t for t in texts)
    assert "unreliable" in figure._suptitle.get_text()
    panels = {axes.get_title(): axes for axes in figure.axes}
    omega_k = panels["Frequency–wavenumber spectrum"]
    nyquist = math.pi * FPS
    # A Nyquist line the legend names lies inside the plot; one beyond it is said to be above.
    named = [line for line in omega_k.get_lines() if line.get_label().startswith("Nyquist")]
    legend = [text.get_text() for text in omega_k.get_legend().get_texts()]
    if named:
        assert named[0].get_ydata()[0] == pytest.approx(nyquist) and omega_k.get_ylim()[1] > nyquist
    else:
        assert not any("Nyquist" in entry for entry in legend)
        assert any("above the plot" in text.get_text() for text in omega_k.texts)
    # here the frequencies shown stop at 1.6 × the fastest declared wave, below Nyquist
    assert not named and omega_k.get_ylim()[1] < nyquist
    frequency = panels["Frequency spectrum of the time series"]
    shaded = [p.get_label() for p in frequency.patches]
    assert any("too long for the clip" in label for label in shaded)
    # top axes read in wavelength and period
    tops = [child for axes in figure.axes for child in axes.child_axes]
    assert {"wavelength (m)", "period (s)"} <= {child.get_xlabel() for child in tops}


def test_json_marks_unreliable_figures(tmp_path, capsys):
    heights = _heights(24)
    for index, frame in enumerate(heights):
        write_exr(tmp_path / f"h.{1001 + index:04d}.exr", {"Y": frame}, precision="float")
    assert main(["analyze", str(tmp_path / "h.####.exr"), "--tile-size", str(SIZE), "--fps", "3", "--json"]) == 0
    data = json.loads(capsys.readouterr().out)
    assert "tp_s" in data["unreliable"] and "significant_steepness" in data["unreliable"]
    assert data["clip_needed_frames"] == math.ceil(data["clip_needed_s"] * 3)
    assert data["clip_needed_s"] == pytest.approx(MIN_CYCLES * data["tp_from_wavenumber_s"], rel=1e-9)
    assert any(note.startswith("unreliable: Tp") for note in data["notes"])


def test_report_draws_a_nearby_nyquist_line():
    """At 1.2 fps (Nyquist 3.77 rad/s) the line is within the frequencies shown: drawn, named."""
    result = analyze_heights(_heights(24), SIZE, 1.2)
    omega_k = {axes.get_title(): axes for axes in report_figure(result).axes}["Frequency–wavenumber spectrum"]
    named = [line for line in omega_k.get_lines() if line.get_label().startswith("Nyquist")]
    assert named and named[0].get_ydata()[0] == pytest.approx(math.pi * 1.2)
    assert omega_k.get_ylim()[1] > math.pi * 1.2


def test_report_marks_a_direction_the_clip_cannot_support():
    """16 frames at 24 fps (0.67 s) of the 4 s sea: too short to tell which way most of its
    waves run. The text marked the direction [unreliable]; the report's title and its
    direction panel gave it plain."""
    sea = SeaState((height_period(1.0, TP, spread=math.radians(25.0)),))
    ocean = Ocean(sea, Tile(SIZE, 64), seed=3)
    result = analyze_heights(np.array([ocean.frame(i / 24.0).height for i in range(16)]), SIZE, 24.0)
    assert "towards_deg" in assess(result).unreliable
    figure = report_figure(result, title="clip", verdict=format_verdict(result))
    assert re.search(r"towards \d+° \(unreliable\)", figure._suptitle.get_text()), figure._suptitle.get_text()
    titles = [axes.get_title() for axes in figure.axes]
    assert any(re.match(r"Energy by direction of travel \(towards \d+° \(unreliable\), spread \d+° "
                        r"\(unreliable\)\)", t) for t in titles), titles
