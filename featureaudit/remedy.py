"""A remedy for every finding: what to change, as a code and in words.

Preprocessing fitted on all rows is refitted, not dropped (its effect on a validation score is
small: Roth 2026 measured at most about 0.005 AUC across 2,047 tabular datasets); split
findings are fixed in the split; a column carrying the outcome or known too late is dropped
when the evidence is strong (high or above) and reviewed otherwise.
"""

from __future__ import annotations

from typing import Any

from featureaudit.levels import Level

__all__ = ["REMEDIES", "column_remedy", "dataset_remedy", "remedy_words"]

REMEDIES = (
    "drop",
    "refit_on_training_rows",
    "regroup_split",
    "split_by_time",
    "deduplicate",
    "review",
    "recompute_before_cutoff",
)
_SPLIT = {
    "duplicate_rows_across_split": "deduplicate",
    "shared_entities_across_split": "regroup_split",
    "time_overlap_across_split": "split_by_time",
    "split_shift": "review",
    "row_order_tells_target": "review",
}
_WORDS = {
    "drop": "drop the column from the model's inputs",
    "refit_on_training_rows": "refit its preprocessing (scaler, imputer, cap or encoding) on "
    "the training rows only and apply it to the held-out rows; keep "
    "the column",
    "regroup_split": "split by entity, so every entity's rows fall on one side (grouped folds)",
    "split_by_time": "split by time: train on earlier rows, validate on later ones",
    "deduplicate": "remove held-out rows that have a copy among the training rows",
    "recompute_before_cutoff": "recompute it from the rows known at the moment of prediction "
    "(a window or statistic ending before the label, a lag that looks back, a group mean "
    "cross-fitted on the training rows, a note written before the decision), or drop it",
    "review": "review it: the evidence is not strong enough, or the fix depends on how the "
    "data was made",
}


def column_remedy(column: dict[str, Any]) -> str | None:
    """The remedy of one column verdict (``None`` for a column at level none).

    A column whose evidence at its own level is only preprocessing fingerprints (fitscope's,
    or the training code's fits on all rows) is refitted; one whose top evidence is
    ``computed_from_later_rows`` is recomputed before the cutoff; otherwise it is dropped at high or
    above and reviewed below.
    """
    level = Level.parse(column.get("level", "none"))
    if level == Level.NONE:
        return None
    top = [e for e in column.get("evidence", []) if Level.parse(e.get("level", "none")) >= level]
    if top and all(_refit_evidence(e) for e in top):
        return "refit_on_training_rows"
    if level >= Level.MEDIUM and _later_rows_on_top(column.get("evidence", [])):
        return "recompute_before_cutoff"
    return "drop" if level >= Level.HIGH else "review"


def _later_rows_on_top(evidence: list[dict[str, Any]]) -> bool:
    """Is ``computed_from_later_rows`` among the evidence at the strongest evidence level?"""
    levels = [Level.parse(e.get("level", "none")) for e in evidence]
    peak = max(levels, default=Level.NONE)
    return any(
        lv == peak and e.get("kind") == "computed_from_later_rows"
        for lv, e in zip(levels, evidence, strict=True)
    )


def _refit_evidence(e: dict[str, Any]) -> bool:
    probe = e.get("probe")
    return probe == "fitscope" or (probe == "code" and e.get("kind") == "fit_on_all_rows")


def dataset_remedy(finding: dict[str, Any]) -> str | None:
    """The remedy of one split finding (``None`` at level none)."""
    if Level.parse(finding.get("level", "none")) == Level.NONE:
        return None
    return _SPLIT.get(finding.get("kind", ""), "review")


def remedy_words(remedy: str | None) -> str:
    """The remedy in a sentence for the dossier and the summary."""
    return _WORDS.get(remedy or "", "nothing to change")
