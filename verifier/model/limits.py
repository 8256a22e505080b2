"""The default limits of one decision, defined once: the config, the workers, the cache key and the
explanation all read them from here (a command-line option or ``[tool.idealcheck]`` overrides them)."""
from __future__ import annotations

DEFAULT_TIMEOUT_SECONDS = 10.0  # per claim, all its obligations together
DEFAULT_MEMORY_MB = 2048  # address-space limit of each worker process
