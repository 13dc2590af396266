"""The measured foam coverage of a foam sequence (analysis/foam.py, ``oceanfield analyze``)."""

from __future__ import annotations

import json

import numpy as np
import pytest

from oceanfield.analysis.foam import FoamAccumulator
from oceanfield.cli import main
from oceanfield.io.exr import write_exr


def test_accumulator_counts_the_share_above_one_half():
    accumulator = FoamAccumulator()
    assert accumulator.add(np.array([[0.0, 0.6], [0.5, 1.0]])) == 0.5  # 0.5 itself is not above
    accumulator.add(np.zeros((2, 2)))
    result = accumulator.finish()
    assert (result.foam_coverage, result.least, result.most, result.frames) == (0.25, 0.0, 0.5, 2)
    with pytest.raises(ValueError, match="frames"):
        FoamAccumulator().finish()


def test_analyze_reports_the_foam_coverage_of_a_foam_sequence(tmp_path, capsys):
    shares = [0.1, 0.3, 0.2]
    for frame, share in enumerate(shares, start=1001):
        foam = np.zeros((32, 32), dtype=np.float32)
        foam.reshape(-1)[: int(share * foam.size)] = 0.8
        write_exr(tmp_path / f"foam.{frame}.exr", {"Y": foam}, attributes={"oceanfield.map": "foam"})
    pattern = str(tmp_path / "foam.####.exr")
    assert main(["analyze", pattern, "--json"]) == 0
    report = json.loads(capsys.readouterr().out)
    expected = np.mean([int(s * 1024) / 1024 for s in shares])
    assert report["foam_coverage"] == pytest.approx(expected, rel=1e-12)
    assert report["frames"] == 3
    assert main(["analyze", pattern]) == 0
    assert f"foam coverage: {expected * 100:.2f} %" in capsys.readouterr().out
