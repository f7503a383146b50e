"""What every reading of the lineage probe shares: its name, its kind, one evidence maker."""

from __future__ import annotations

from featureaudit.probes.lineage._rules import Rule
from featureaudit.vocab.evidence import Evidence

__all__ = ["NAME", "LATER", "make_evidence"]

NAME = "lineage"
LATER = "computed_from_later_rows"


def make_evidence(
    column: str, kind: str, rule: Rule, statistic: str, value: float, threshold: float,
    summary: str, severity: float, detail: dict,
) -> Evidence:  # fmt: skip
    """One piece of evidence at ``rule``'s level, the rule named in its detail."""
    return Evidence(
        NAME, kind, statistic, value, threshold, rule.level, column, summary,
        min(max(severity, 0.0), 1.0), {"rule": rule.name, **detail},
    )  # fmt: skip
