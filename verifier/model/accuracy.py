"""Plain data of the sampled floating-point accuracy estimate (``features/accuracy.py`` computes it)."""
from __future__ import annotations

from dataclasses import dataclass, field

DEFAULT_SAMPLES = 500
DEFAULT_RANGE = (-10.0, 10.0)


@dataclass(frozen=True)
class AccuracySettings:
    samples: int = DEFAULT_SAMPLES
    seed: int = 0
    default_range: tuple[float, float] = DEFAULT_RANGE
    ranges: tuple[tuple[str, float, float], ...] = ()  # per-variable (name, low, high)

    def range_of(self, name: str) -> tuple[float, float]:
        for variable, low, high in self.ranges:
            if variable == name:
                return low, high
        return self.default_range


@dataclass(frozen=True)
class SideAccuracy:
    median_ulps: float
    worst_ulps: float
    worst_point: tuple[tuple[str, float], ...]  # the double inputs where the worst error occurred
    worst_computed: float
    worst_exact: str  # the exact value there, as a decimal with 17 significant digits
    non_finite: int = 0  # samples where the double evaluation overflowed or was undefined


@dataclass(frozen=True)
class AccuracyEstimate:
    label: str  # the obligation's label
    samples: int  # points used
    rejected: int  # drawn points that failed a condition or a domain rule
    left: SideAccuracy | None
    right: SideAccuracy | None
    more_accurate: str | None  # "left", "right" or None (equal on these samples, or not measured)
    equations_solved: tuple[str, ...] = ()  # variables computed from equation conditions
    problem: str | None = None  # why nothing was measured
    notes: tuple[str, ...] = field(default=())
