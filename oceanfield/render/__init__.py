"""The render job: a preset's map sequence written to disk, locally or on a farm.

A ``RenderPlan`` (``plan``: frames, chunks, file names, completeness, the render hash) is
carried out by the job (``job``: local worker processes or Dask tasks, the manifest,
resume, progress); each frame is synthesised by ``surface`` and written by ``writing``
(encoding in scene axes and units, then the ``io`` writers). Orchestration only: it
knows nothing of formulas.

============  ====================================================================
``plan``      which frames and files a job has, and which are already complete
``writing``   one frame's files: encode, then write while the next frame computes
``job``       workers chosen, summary, interrupts, progress and the ``render`` command
``workers``   the frame loop, local worker processes and Dask tasks (executors)
``manifest``  the folder's manifest; frames of other settings refused or removed
``shot``      the ``probe``, ``float`` and ``scene`` commands (CSV, JSON, USD)
============  ====================================================================
"""

from __future__ import annotations

from . import plan as _plan, writing as _writing, job as _job, shot as _shot
from .plan import *  # noqa: F401,F403  (the names in plan.__all__)
from .writing import *  # noqa: F401,F403  (the names in writing.__all__)
from .job import *  # noqa: F401,F403  (the names in job.__all__)
from .shot import *  # noqa: F401,F403  (the names in shot.__all__)

__all__ = [*_plan.__all__, *_writing.__all__, *_job.__all__, *_shot.__all__]
