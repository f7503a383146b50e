"""Split conventions: the simulated split, and the pairs of sides that probes compare.

A table with one held-out partition is audited as one pair (training vs held out). With
several partitions, or with CV folds, each pair is a view of the table restricted to the
rows of its two sides, so a probe written for two sides audits each pair unchanged.
"""

from __future__ import annotations

import dataclasses
import re
from collections.abc import Mapping
from dataclasses import dataclass

import numpy as np

from featureaudit.table import AuditTable

__all__ = ["SIMULATED_HELDOUT_SHARE", "PairView", "heldout_order", "pair_views", "restrict"]

# Without a split, probes simulate a random split that holds out this share of the rows
# (the common 80/20 split; common practice, no source).
SIMULATED_HELDOUT_SHARE = 0.2

# Names that usually come first among held-out partitions: tuning sets before final tests
# (common practice, no source). Anything else sorts between them, then by name.
_EARLY = re.compile(r"^(val|valid|validation|dev|development|tune|tuning)", re.IGNORECASE)
_LATE = re.compile(r"^(test|holdout|hold_out|hold-out|eval|evaluation|final)", re.IGNORECASE)


@dataclass(frozen=True)
class PairView:
    """One pair of sides: ``table`` holds only their rows, its ``heldout`` marks ``sides[1]``.

    ``probes`` are the probes that compare these sides; ``fold`` says the pair biases the
    cross-validated score rather than the test score.
    """

    sides: tuple[str, str]
    table: AuditTable
    probes: tuple[str, ...]
    fold: bool = False


def heldout_order(table: AuditTable) -> list[str]:
    """The held-out partitions in the order they are meant to be used (validation, then test)."""
    if table.partition_of is None or table.heldout is None:
        return []
    train = _train_name(table)
    names = [p for p in table.partitions if p != train]

    def key(name: str) -> tuple[int, str]:
        return (0 if _EARLY.match(name) else 2 if _LATE.match(name) else 1, name)

    return sorted(names, key=key)


def _train_name(table: AuditTable) -> str:
    return next(iter(table.partitions))


def restrict(table: AuditTable, rows: np.ndarray, heldout: np.ndarray, sides: tuple[str, str]):
    """A view of ``table`` with only ``rows`` (bool mask) and ``heldout`` marking side two."""
    idx = np.flatnonzero(rows)
    held = heldout[idx]
    frame = table.frame.iloc[idx].reset_index(drop=True)
    return dataclasses.replace(
        table,
        frame=frame,
        y=None if table.y is None else table.y[idx],
        heldout=held,
        label_time=_take(table.label_time, idx),
        cutoff_time=_take(table.cutoff_time, idx),
        partitions={sides[0]: int((~held).sum()), sides[1]: int(held.sum())},
        partition_of=None if table.partition_of is None else table.partition_of[idx],
        folds=None if table.folds is None else table.folds[idx],
        warnings=[],
        roles=dict(table.roles),
        features=list(table.features),
        id_columns=list(table.id_columns),
    )


def _take(series, idx: np.ndarray):  # noqa: ANN001, ANN202 — a pandas Series or None
    return None if series is None else series.iloc[idx].reset_index(drop=True)


def pair_views(table: AuditTable, pairs: Mapping[str, tuple[str, ...]]) -> list[PairView]:
    """Every pair beyond the one the whole table already is (empty for one held-out partition
    and no folds, so that case runs exactly as before).

    ``pairs`` maps each kind of pair (``registry.PAIRS``) to the probes that declare it: each
    view carries the probes to run on it.
    """
    views: list[PairView] = []
    held = heldout_order(table)
    if len(held) >= 2 and table.partition_of is not None:
        part = table.partition_of
        train = _train_name(table)
        is_train = part == train
        for name in held:
            mine = part == name
            views.append(
                PairView(
                    (train, name),
                    restrict(table, is_train | mine, mine, (train, name)),
                    pairs.get("partition", ()),
                )
            )
        for i, later in enumerate(held):
            for earlier in held[:i]:
                a, b = part == earlier, part == later
                views.append(
                    PairView(
                        (earlier, later),
                        restrict(table, a | b, b, (earlier, later)),
                        pairs.get("between_heldout", ()),
                    )
                )
            if i >= 1:
                fitted = is_train | np.isin(part, held[:i])
                side = "+".join([train, *held[:i]])
                mine = part == later
                views.append(
                    PairView(
                        (side, later),
                        restrict(table, fitted | mine, mine, (side, later)),
                        pairs.get("growing_fit", ()),
                    )
                )
    if table.folds is not None:
        train_rows = np.ones(table.n_rows, bool) if table.heldout is None else ~table.heldout
        for fold in sorted(set(table.folds[train_rows].tolist()), key=_natural):
            mine = train_rows & (table.folds == fold)
            sides = (f"fold {fold}", "other folds")
            # side two of the pair is the fold; the view's training side is the other folds
            view = restrict(table, train_rows, mine, (sides[1], sides[0]))
            views.append(PairView(sides, view, pairs.get("fold", ()), fold=True))
    return views


def _natural(text: str) -> tuple[int, float, str]:
    try:
        return (0, float(text), text)
    except ValueError:
        return (1, 0.0, text)
