"""``python -m oceanfield.bench``: run the benchmark command.

Knows nothing of formulas: it calls `oceanfield.bench.command.main`.
"""

from .command import main

raise SystemExit(main())
