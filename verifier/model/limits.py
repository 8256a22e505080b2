"""The default limits of one decision, defined once: the config, the workers, the cache key and the
explanation all read them from here (a command-line option or ``[tool.idealcheck]`` overrides them)."""
from __future__ import annotations

import time

DEFAULT_TIMEOUT_SECONDS = 10.0  # per claim, all its obligations together
DEFAULT_MEMORY_MB = 2048  # address-space limit of each worker process
# A worker is also killed after this many times its time limit in wall-clock time, computing or not (the
# safety net for a job blocked in a wait that uses no CPU).
WALL_SAFETY_FACTOR = 3.0


def decision_clock() -> float:
    """The clock that per-claim time limits count: CPU seconds of this process (a worker runs one job at a
    time), so that a verdict does not change with how busy the machine is."""
    return time.process_time()
