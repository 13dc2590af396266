"""The analyzer: any height sequence read back and measured against physics.

Frames (ours, another tool's, a simulation's) read by ``io.sequence`` become spectra,
statistics and directions (``measure``) and a wave-timing fit ω² = g_eff·k·tanh(kh)
(``timing``), judged against a preset (``verdict``) and drawn (``plot``). It knows
nothing of synthesis: it never imports ``surface``.

===============  ====================================================================
``measure``      the streaming accumulator: spectra, statistics, directions of a sequence
``results``      SequenceAnalysis: the figures measured, and their JSON form
``spectral``     the Hann window, the seam test, the frequency spectrum of point series
``directions``   mean direction and directional spread (Kuik et al. 1988)
``folding``      the lateral map's Jacobian: where the surface folds
``bands``        energy in half-octave bands against a target sea
``timing``       the dispersion fit, its status and notes
``reliability``  which figures a clip's length or tile cannot support, and the clip that would
``verdict``      the text verdict and the ``oceanfield analyze`` command
``plot``         the report picture (matplotlib, loaded on first use)
``foam``         the measured foam coverage of a foam sequence
===============  ====================================================================
"""

from __future__ import annotations

from . import measure as _measure, reliability as _reliability, timing as _timing, verdict as _verdict, foam as _foam
from .measure import *  # noqa: F401,F403  (the names in measure.__all__, those of the modules split from it too)
from .reliability import *  # noqa: F401,F403  (the names in reliability.__all__)
from .timing import *  # noqa: F401,F403  (the names in timing.__all__)
from .verdict import *  # noqa: F401,F403  (the names in verdict.__all__)
from .foam import *  # noqa: F401,F403  (the names in foam.__all__)

__all__ = [*_measure.__all__, *_reliability.__all__, *_timing.__all__, *_verdict.__all__, *_foam.__all__]
