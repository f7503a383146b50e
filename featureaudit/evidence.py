"""Result types: one piece of evidence, one verdict per column, one dataset finding.

Their fields are the contract's findings.json fields; ``to_dict`` feeds the JSON writer,
the dossier and the Python result alike.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from featureaudit.kinds import KINDS
from featureaudit.levels import LEVEL_NAMES, Level

__all__ = ["Evidence", "ColumnVerdict", "Skip", "clean_json"]


def clean_json(value: Any) -> Any:
    """Numpy scalars to Python, NaN/inf to None, tuples to lists: safe for ``json.dumps``."""
    if isinstance(value, dict):
        return {str(k): clean_json(v) for k, v in value.items()}
    if isinstance(value, (list, tuple)):
        return [clean_json(v) for v in value]
    if isinstance(value, np.ndarray):
        return [clean_json(v) for v in value.tolist()]
    if isinstance(value, (np.bool_, bool)):
        return bool(value)
    if isinstance(value, (np.integer,)):
        return int(value)
    if isinstance(value, (float, np.floating)):
        f = float(value)
        return None if math.isnan(f) or math.isinf(f) else f
    return value


@dataclass(frozen=True)
class Evidence:
    """What one probe measured about one column (``column``) or the whole split (``None``).

    ``severity`` (0–1) places the value within its level, so the ranker can order columns
    of the same level; it is kept in ``detail`` of the JSON.
    """

    probe: str
    kind: str
    statistic: str
    value: float | None
    threshold: float | None
    level: str | Level
    column: str | None = None
    summary: str = ""
    severity: float = 0.0
    detail: dict[str, Any] = field(default_factory=dict)

    def __post_init__(self) -> None:
        if self.kind not in KINDS:
            raise ValueError(f"evidence kind {self.kind!r} is not one of {KINDS}")
        if isinstance(self.level, Level):
            object.__setattr__(self, "level", self.level.label)
        if self.level not in LEVEL_NAMES:
            raise ValueError(f"evidence level {self.level!r} is not one of {LEVEL_NAMES}")

    @property
    def rank(self) -> Level:
        """The level as an ordered :class:`Level`."""
        return Level.parse(self.level)

    def to_dict(self) -> dict[str, Any]:
        return clean_json(
            {
                "probe": self.probe,
                "kind": self.kind,
                "statistic": self.statistic,
                "value": self.value,
                "threshold": self.threshold,
                "level": self.level,
                "summary": self.summary,
                "detail": {**self.detail, "severity": round(float(self.severity), 4)},
            }
        )


@dataclass(frozen=True)
class ColumnVerdict:
    """The ranker's verdict on one column: score 0–1, level, kinds and a one-line summary."""

    column: str
    score: float
    level: str
    kinds: tuple[str, ...]
    summary: str
    evidence: tuple[Evidence, ...]
    role: str = "feature"
    description: str = ""

    def to_dict(self) -> dict[str, Any]:
        return {
            "column": self.column,
            "score": round(float(self.score), 4),
            "level": self.level,
            "kinds": list(self.kinds),
            "summary": self.summary,
            "role": self.role,
            "description": self.description,
            "evidence": [e.to_dict() for e in self.evidence],
        }  # each already clean


@dataclass(frozen=True)
class Skip:
    """A probe (or a probe on one column) that did not run, and why."""

    probe: str
    reason: str
    column: str | None = None

    def to_dict(self) -> dict[str, Any]:
        return {"probe": self.probe, "column": self.column, "reason": self.reason}
