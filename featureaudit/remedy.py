"""A remedy for every finding: what to change, as a code and in words.

Preprocessing fitted on all rows is refitted, not dropped (its effect on a validation score is
small: Roth 2026 measured at most about 0.005 AUC across 2,047 tabular datasets); split
findings are fixed in the split; a column carrying the outcome or known too late is dropped
when the evidence is strong (high or above) and reviewed otherwise.
"""

from __future__ import annotations

from typing import Any

from featureaudit.kinds import KEEP_REMEDIES, REMEDIES, REMEDY_WORDS, kind
from featureaudit.levels import Level

__all__ = ["REMEDIES", "column_remedy", "dataset_remedy", "evidence_remedy", "remedy_words"]


def column_remedy(column: dict[str, Any]) -> str | None:
    """The remedy of one column verdict (``None`` for a column at level none).

    When every piece of evidence at the column's own level takes one remedy that keeps the
    column (a refit of preprocessing fitted on all rows, a recomputation from earlier rows),
    that is the remedy. A feature built from later rows is recomputed (from medium up) when
    that evidence is among the strongest, even beside the target power it lends: the feature's
    idea may be sound, its window is not. Otherwise the column is dropped at high or above and
    reviewed below.
    """
    level = Level.parse(column.get("level", "none"))
    if level == Level.NONE:
        return None
    evidence = column.get("evidence", [])
    top = [e for e in evidence if Level.parse(e.get("level", "none")) >= level]
    remedies = {evidence_remedy(e) for e in top}
    if len(remedies) == 1 and (only := remedies.pop()) in KEEP_REMEDIES:
        return only
    peak = max((Level.parse(e.get("level", "none")) for e in evidence), default=Level.NONE)
    strongest = [e for e in evidence if Level.parse(e.get("level", "none")) == peak]
    if level >= Level.MEDIUM and any(
        e.get("kind") == "computed_from_later_rows" for e in strongest
    ):
        return "recompute_before_cutoff"
    return "drop" if level >= Level.HIGH else "review"


def evidence_remedy(e: dict[str, Any]) -> str:
    """The remedy one piece of evidence calls for: its probe's declared remedy for the kind,
    else the kinds table's."""
    from featureaudit.registry import registered

    probe = registered().get(str(e.get("probe")))
    declared = probe.capabilities.remedies.get(e.get("kind", "")) if probe else None
    if declared:
        return declared
    try:
        return kind(str(e.get("kind"))).remedy
    except KeyError:
        return "review"


def dataset_remedy(finding: dict[str, Any]) -> str | None:
    """The remedy of one split finding (``None`` at level none)."""
    if Level.parse(finding.get("level", "none")) == Level.NONE:
        return None
    return evidence_remedy(finding)


def remedy_words(remedy: str | None) -> str:
    """The remedy in a sentence for the dossier and the summary."""
    return REMEDY_WORDS.get(remedy or "", "nothing to change")
