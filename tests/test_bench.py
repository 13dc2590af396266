"""The benchmark script runs end to end at toy sizes and prints every figure it promises.

Speed is never asserted here (timed tests are unreliable on shared machines); the ratios
themselves are checked only for being finite and positive.
"""

from __future__ import annotations

import re

from oceanfield import bench


def test_benchmark_prints_frame_render_and_analyzer_figures(capsys):
    code = bench.main([
        "--sizes", "32,64", "--repeat", "1", "--workers", "1",
        "--render-frames", "2", "--render-size", "32", "--skip-cold",
        "--analyze-frames", "16", "--analyze-size", "32",
        "--bands-reach", "40", "--bands-size", "64", "--bands-composite", "32",
        "--workers-sizes", "32", "--wake-size", "32", "--wake-lookback", "5",
        "--only", "wake,frames,bands,bound,render,workers,analyze",
    ])
    assert code == 0
    out = capsys.readouterr().out
    rows = re.findall(r"^\s+(32|64)\s+([0-9.]+)\s+([0-9.]+)\s+([0-9.]+)\s+([0-9.]+)\s+([0-9.]+)$", out, re.M)
    assert [row[0] for row in rows] == ["32", "64"]
    for row in rows:
        assert all(float(value) > 0 for value in row[1:])
    bound = re.findall(r"^\s+(32|64)\s+([0-9.]+)\s+([0-9.]+)\s+([0-9.]+)$", out, re.M)
    assert [row[0] for row in bound] == ["32", "64"]  # the frame with bound waves
    assert all(float(value) > 0 for row in bound for value in row[1:])
    assert re.search(r"render [0-9.]+ s: ratio to floors [0-9.]+", out)
    assert re.search(r"warm [0-9.]+ s = that frame's compute and write [0-9.]+ s \+ -?[0-9.]+ s", out)
    assert re.search(r"[0-9.]+ ms per frame streamed", out)
    wake = re.search(r"frame ([0-9.]+) ms, bare FFTs ([0-9.]+) ms \(eight real, padded lattice\): ratio ([0-9.]+)", out)
    assert wake and all(float(value) > 0 for value in wake.groups())
    workers = re.search(r"^\s+32\s+16\s+1: ([0-9.]+)\s+1\s+([0-9.]+)$", out, re.M)
    assert workers and float(workers.group(1)) > 0 and float(workers.group(2)) == 1.0  # one core: one count
    band = re.search(r"bare FFTs of all bands ([0-9.]+) ms: ratio ([0-9.]+)", out)
    assert band and float(band.group(1)) > 0 and float(band.group(2)) > 0
    cpu = re.search(r"ratio [0-9.]+ \(target <= 1.3\); CPU time ratio ([0-9.]+); bound waves in (\d+) band", out)
    assert cpu and float(cpu.group(1)) > 0
    linear = re.search(r"without bound waves ([0-9.]+) ms: ratio ([0-9.]+); CPU time ratio ([0-9.]+)", out)
    assert linear and all(float(value) > 0 for value in linear.groups())


TOY_BANDS = """\
description: two listed bands for the benchmark's composite and probe rows
sea:
  components:
    - wind_speed_mps: 8
bands:
  tiles:
    - {size_m: 60, resolution: 32, shortest_wave_m: 2.5}
    - {size_m: 19.843, resolution: 32, longest_wave_m: 2.5}
  composite_extent_m: 60
  composite_resolution: 48
"""


def test_benchmark_prints_the_composite_and_probe_rows_alone(capsys, tmp_path):
    path = tmp_path / "toy_bands.yaml"
    path.write_text(TOY_BANDS, encoding="utf-8")
    code = bench.main(["--only", "composite,probes", "--composite-preset", str(path), "--probes", "40",
                       "--repeat", "2", "--workers", "1"])
    assert code == 0
    out = capsys.readouterr().out
    assert "One full frame" not in out  # the other sections are left out
    before = re.search(r"before \(exact sums, chirp z\) [0-9]+ ms: ([0-9.]+)x", out)
    after = re.search(r"after \(non-uniform FFTs\) +[0-9]+ ms: ([0-9.]+)x", out)
    assert before and after and float(before.group(1)) > 0 and float(after.group(1)) > 0
    assert re.search(r"one probe: before \(exact, per-mode sines\) [0-9]+ ms \(CPU [0-9]+ ms\), "
                     r"after \(auto: blocked exact sums\) [0-9]+ ms", out)
    assert re.search(r"40 probes: before \(exact, per-mode sines, timed on 10 and scaled\) [0-9.]+ s, "
                     r"blocked exact sums [0-9.]+ s, after", out)


def test_benchmark_refuses_an_unknown_section():
    import pytest

    with pytest.raises(SystemExit) as raised:
        bench.main(["--only", "frames,colour"])
    assert raised.value.code == 2
