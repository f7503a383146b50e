"""One-hot categories taken from all rows: a category column never 1 on a training row.

scikit-learn's ``OneHotEncoder`` (and ``pandas.get_dummies``) writes one 0/1 column per
category it was fitted on, side by side, exactly one of them 1 on each fitted row. Fitted on
the training rows, every column is 1 on some training row and a held-out row of an unseen
category is all zeros (or an error); fitted on all rows, a category that only held-out rows
hold gets a column of its own that no training row sets. The group is found without being
told: adjacent 0/1 columns never 1 on the same row that together are 1 exactly once on every
training row. Counts, not floats, are compared, so rounding plays no part.

Threshold: one held-out row in a column no training row sets is enough for ``leak`` (high): a
training-row fit cannot write that column at all. A dropped reference category (``drop=``)
leaves rows of zeros; such a run is read as a group only when its names share a prefix
ending in ``_``, ``=`` or ``.`` (``cat_Dream``, ``cat_Torgersen``: the names encoders
write), since exclusive flags alone are common.
"""

from __future__ import annotations

import os

import numpy as np
import pandas as pd

from featureaudit.load.io import numeric_view
from featureaudit.load.table import AuditTable
from featureaudit.probes.fitscope._fingerprint import verdict as _verdict
from featureaudit.vocab.evidence import Evidence

__all__ = ["onehot_groups", "onehot"]


def _binary(s: pd.Series) -> np.ndarray | None:
    """The column as 0/1 integers if every value is 0 or 1, else None."""
    if pd.api.types.is_datetime64_any_dtype(s.dtype):
        return None
    v = numeric_view(s)
    if v is None or not np.all((v == 0) | (v == 1)):
        return None
    return v.astype(np.int8)


def _named_group(names: list[str]) -> bool:
    """Whether the names read as one encoded category: a shared prefix ending in a separator."""
    prefix = os.path.commonprefix(names)
    return bool(prefix) and prefix[-1] in "_=." and all(len(n) > len(prefix) for n in names)


def onehot_groups(table: AuditTable, train: np.ndarray) -> list[tuple[list[str], np.ndarray]]:
    """Runs of adjacent, mutually exclusive 0/1 columns that are 1 exactly once on every
    training row (or, with a dropped reference category, at most once and named as one
    encoded category), with their 0/1 matrix (rows x members)."""
    found: list[tuple[list[str], np.ndarray]] = []
    run: list[str] = []
    cols: list[np.ndarray] = []
    total = np.zeros(table.n_rows, np.int64)

    def close() -> None:
        if len(run) >= 2 and (np.all(total[train] == 1) or _named_group(run)):
            found.append((list(run), np.column_stack(cols)))

    for name in table.features:
        b = _binary(table.frame[name])
        if b is not None and run and not np.any((total + b) > 1):
            run.append(name)
            cols.append(b)
            total += b
            continue
        close()
        run, cols = ([name], [b]) if b is not None else ([], [])
        total = b.astype(np.int64) if b is not None else np.zeros(table.n_rows, np.int64)
    close()
    return found


def _per(members: list[str], counts: np.ndarray) -> dict[str, int]:
    return {m: int(c) for m, c in zip(members, counts, strict=True)}


def onehot(table: AuditTable, train: np.ndarray, split: bool) -> list[Evidence]:
    """High evidence on each category column set only on held-out rows of a full group."""
    out: list[Evidence] = []
    for members, m in onehot_groups(table, train):
        on_train = m[train].sum(axis=0)
        on_held = m[~train].sum(axis=0)
        # every row, held-out rows included (a dropped reference: rows of zeros as in training)
        dropped = bool(np.any(m[train].sum(axis=1) == 0))
        covered = bool(np.all(m.sum(axis=1) <= 1)) if dropped else bool(np.all(m.sum(axis=1) == 1))
        all_exact = covered and bool(np.all(m.sum(axis=0) >= 1))
        train_exact = bool(np.all(on_train >= 1))
        unseen = [members[j] for j in np.flatnonzero((on_train == 0) & (on_held >= 1))]
        detail = {
            "group": members,
            "training_rows": {"ones_per_column": _per(members, on_train)},
            "heldout_rows": {"ones_per_column": _per(members, on_held)},
            "heldout_rows_without_a_category": int((m[~train].sum(axis=1) == 0).sum()),
            "dropped_reference": dropped,
        }
        for name in unseen:
            n_held = int(on_held[members.index(name)])
            found = _verdict(
                name,
                f"one-hot encoded with the categories of all rows ({len(members)} columns, "
                f"{name} 1 on {n_held} held-out rows and on no training row)",
                all_exact,
                train_exact,
                True,
                split,
                detail,
                "training_rows_with_category",
                0.0,
            )
            if found is not None:
                out.append(found)
    return out
