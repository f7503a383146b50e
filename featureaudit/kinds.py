"""The kinds of finding: one record per kind, the single source of their names, scopes,
remedies and words.

``findings.json`` (the contract's fixed list), the README's kinds table (a test keeps them
equal), the remedies, the pairs of partitions a kind is judged on, the common probe checks and
the dossier all read this table; nothing else lists kinds.
"""

from __future__ import annotations

from dataclasses import dataclass

__all__ = [
    "COLUMN_KINDS",
    "KEEP_REMEDIES",
    "KINDS",
    "KIND_TABLE",
    "PAIR_KINDS",
    "REMEDIES",
    "REMEDY_WORDS",
    "SPLIT_KINDS",
    "Kind",
    "kind",
]

# The remedies a finding can call for, as codes and in words (the contract's list).
REMEDIES = (
    "drop",
    "refit_on_training_rows",
    "recompute_before_cutoff",
    "regroup_split",
    "split_by_time",
    "deduplicate",
    "review",
)
# remedies that keep the column: it is rebuilt, not removed, whatever its level
KEEP_REMEDIES = ("refit_on_training_rows", "recompute_before_cutoff")
REMEDY_WORDS = {
    "drop": "drop the column from the model's inputs",
    "refit_on_training_rows": "refit its preprocessing (scaler, imputer, cap or encoding) on "
    "the training rows only and apply it to the held-out rows; keep "
    "the column",
    "recompute_before_cutoff": "recompute it from the rows known at the moment of prediction "
    "(a window or statistic ending before the label, a lag that looks back, a group mean "
    "cross-fitted on the training rows, a note written before the decision), or drop it",
    "regroup_split": "split by entity, so every entity's rows fall on one side (grouped folds)",
    "split_by_time": "split by time: train on earlier rows, validate on later ones",
    "deduplicate": "remove held-out rows that have a copy among the training rows",
    "review": "review it: the evidence is not strong enough, or the fix depends on how the "
    "data was made",
}


@dataclass(frozen=True)
class Kind:
    """One kind of finding.

    ``scope`` is ``"column"`` (evidence about one column) or ``"split"`` (about the split
    itself); ``remedy`` is the contract's remedy code taken when the evidence is strong;
    ``meaning`` is the contract's sentence (the README's table); ``per_pair`` says the kind is
    judged again on each pair of partitions and on each CV fold, since it depends on which rows
    sit on which side.
    """

    name: str
    scope: str
    remedy: str
    meaning: str
    per_pair: bool

    @property
    def words(self) -> str:
        """The kind as the dossier writes it."""
        return self.name.replace("_", " ")


KIND_TABLE: tuple[Kind, ...] = (
    Kind(
        "target_proxy",
        "column",
        "drop",
        "the column carries the outcome itself, or something only known because of it",
        per_pair=False,
    ),
    Kind(
        "recorded_after_cutoff",
        "column",
        "drop",
        "the column's value is not available at the moment of prediction",
        per_pair=False,
    ),
    Kind(
        "fit_on_all_rows",
        "column",
        "refit_on_training_rows",
        "scaled, imputed, capped or encoded with statistics that include held-out rows",
        per_pair=True,
    ),
    Kind(
        "row_order_tells_target",
        "split",
        "review",
        "the row order or a row identifier predicts the target",
        per_pair=False,
    ),
    Kind(
        "duplicate_rows_across_split",
        "split",
        "deduplicate",
        "held-out rows have exact or near copies among the training rows",
        per_pair=True,
    ),
    Kind(
        "shared_entities_across_split",
        "split",
        "regroup_split",
        "the same entity has rows on both sides of the split",
        per_pair=True,
    ),
    Kind(
        "time_overlap_across_split",
        "split",
        "split_by_time",
        "held-out rows are not later than the training rows in time",
        per_pair=True,
    ),
    Kind(
        "split_shift",
        "split",
        "review",
        "a model tells held-out rows from training rows (adversarial validation)",
        per_pair=True,
    ),
    Kind(
        "computed_from_later_rows",
        "column",
        "recompute_before_cutoff",
        "the value was computed from the entity's later rows or from the row's own outcome: a "
        "window that includes the label, a lead used as a lag, a per-entity statistic over "
        "every period, a group mean of the target in sample, a note written after the decision",
        per_pair=False,
    ),
)

_BY_NAME = {k.name: k for k in KIND_TABLE}
KINDS: tuple[str, ...] = tuple(_BY_NAME)
# row_order_tells_target is about the table's order, but solo reports it on the identifier
# column that carries the order as well as on the split; it counts as a target kind.
COLUMN_KINDS: tuple[str, ...] = tuple(k.name for k in KIND_TABLE if k.scope == "column")
SPLIT_KINDS: tuple[str, ...] = tuple(k.name for k in KIND_TABLE if k.scope == "split")
PAIR_KINDS: tuple[str, ...] = tuple(k.name for k in KIND_TABLE if k.per_pair)


def kind(name: str) -> Kind:
    """The record of kind ``name`` (``KeyError`` naming the known kinds otherwise)."""
    try:
        return _BY_NAME[name]
    except KeyError:
        raise KeyError(f"kind {name!r} is not one of {', '.join(KINDS)}") from None
