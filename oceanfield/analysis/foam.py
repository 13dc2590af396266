"""How much of a foam sequence's surface is foam: the measured ``foam_coverage``.

Knows nothing of synthesis: it reads foam values (0…1) frame by frame, as written by any
tool, and counts the share of texels above a level.

The share above ½ is what whitecap measurements report (a surface is whitecap-covered or
not; Monahan & O'Muircheartaigh 1980 fit that share against the wind speed), so a foam
sequence can be held against the coverage its wind calls for.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike

__all__ = ["FOAM_LEVEL", "FoamCoverage", "FoamAccumulator", "format_foam_coverage"]

#: Foam above this value counts as covered.
FOAM_LEVEL = 0.5


@dataclass(frozen=True)
class FoamCoverage:
    """Share of the surface with foam above ``level``: mean, least and most over the frames."""

    foam_coverage: float
    least: float
    most: float
    frames: int
    level: float = FOAM_LEVEL

    def to_dict(self) -> dict[str, float | int]:
        return {
            "foam_coverage": self.foam_coverage,
            "foam_coverage_least": self.least,
            "foam_coverage_most": self.most,
            "frames": self.frames,
            "foam_level": self.level,
        }


class FoamAccumulator:
    """Adds foam frames one at a time (no frame is kept); ``finish`` gives the coverage."""

    def __init__(self, level: float = FOAM_LEVEL) -> None:
        self.level = float(level)
        self._shares: list[float] = []

    def add(self, foam: ArrayLike) -> float:
        """Count one frame; returns its share of texels with foam above the level."""
        share = float(np.mean(np.asarray(foam) > self.level))
        self._shares.append(share)
        return share

    def finish(self) -> FoamCoverage:
        if not self._shares:
            raise ValueError("frames: none were added; allowed: one or more foam frames")
        shares = np.array(self._shares)
        return FoamCoverage(float(shares.mean()), float(shares.min()), float(shares.max()), shares.size, self.level)


def format_foam_coverage(result: FoamCoverage, source: str = "") -> str:
    """One or two lines for a terminal."""
    lines = [source] if source else []
    lines.append(
        f"foam coverage: {result.foam_coverage * 100:.2f} % of the surface has foam above {result.level:g} "
        f"(over {result.frames} frame{'s' if result.frames != 1 else ''}: "
        f"{result.least * 100:.2f} – {result.most * 100:.2f} %)"
    )
    return "\n".join(lines)
