"""An identifier issued in the order of a feature carries that feature's signal, not its own.

Ids are often numbered after the rows were sorted by some column (an amount, a date, a
size). Such an id predicts the target exactly as well as that column does, and removing it
removes nothing the model would not see anyway: it is a copy of an input, not a leak. The
id "follows" a feature when their rank correlation, taken within each partition of the
table (an id may run on from the training file into the test file), is at least
``FOLLOW_RHO`` and the feature predicts the target at least as well as the id, within
``POWER_MARGIN``.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from featureaudit.io import numeric_view
from featureaudit.oof import CellScore, Target
from featureaudit.sample import content_keys
from featureaudit.table import AuditTable

FOLLOW_RHO = 0.9  # common practice, no source: rank correlation of a near-monotone relation
POWER_MARGIN = 0.05  # the feature explains the id's power when it has this much of it or more
MAX_ROWS = 20_000  # rows compared per partition, chosen by content (not file order)


def followed_feature(
    table: AuditTable,
    t: Target,
    name: str,
    scores: dict[str, CellScore],
    features: list[str],
    seed: int,
) -> dict | None:
    """The feature whose order the identifier ``name`` follows, with the rank correlation;
    None when it follows none closely or the feature predicts less than the id does."""
    rows = _rows(table, t, features, seed)
    id_ranks = _ranks(table.frame[name], rows)
    if id_ranks is None:
        return None
    groups = (
        table.partition_of[rows] if table.partition_of is not None else np.zeros(len(rows), int)
    )
    best: tuple[float, str] | None = None
    for f in features:
        if f not in scores or scores[f].power < scores[name].power - POWER_MARGIN:
            continue
        f_ranks = _ranks(table.frame[f], rows)
        if f_ranks is None:
            continue
        rho = _within(id_ranks, f_ranks, groups)
        if abs(rho) >= FOLLOW_RHO and (best is None or abs(rho) > abs(best[0])):
            best = (rho, f)
    if best is None:
        return None
    return {"feature": best[1], "spearman": round(best[0], 4), "threshold": FOLLOW_RHO}


def _rows(table: AuditTable, t: Target, features: list[str], seed: int) -> np.ndarray:
    """Labelled rows, at most MAX_ROWS of them, those of smallest content key."""
    rows = t.rows
    if len(rows) <= MAX_ROWS:
        return rows
    keys = content_keys(table.frame.iloc[rows], features, seed)
    return np.sort(rows[np.argsort(keys, kind="stable")[:MAX_ROWS]])


def order_values(s: pd.Series) -> np.ndarray:
    """An identifier's values as numbers in their sorted order (text by its sorted codes),
    NaN where missing."""
    values = numeric_view(s)
    if values is not None:
        return values.astype("float64")
    codes, _ = pd.factorize(s, sort=True)
    return np.where(codes < 0, np.nan, codes).astype("float64")


def _ranks(s: pd.Series, rows: np.ndarray) -> np.ndarray | None:
    """The column's values on ``rows`` in their sorted order (ranked within each partition
    by :func:`_within`, over the rows where both columns have a value); None when fewer
    than half the rows have one, or a single value."""
    values = order_values(s)[rows]
    ok = np.isfinite(values)
    if ok.mean() < 0.5 or np.unique(values[ok]).size < 2:
        return None
    return values


def _within(a: np.ndarray, b: np.ndarray, groups: np.ndarray) -> float:
    """Rank correlation of ``a`` and ``b`` within each group, weighted by the group's size,
    over the rows where both have a value."""
    total, weight = 0.0, 0
    both = np.isfinite(a) & np.isfinite(b)
    for g in pd.unique(groups):
        m = (groups == g) & both
        if m.sum() < 3:
            continue
        ra = pd.Series(a[m]).rank().to_numpy()
        rb = pd.Series(b[m]).rank().to_numpy()
        if ra.std() == 0 or rb.std() == 0:
            continue
        total += float(np.corrcoef(ra, rb)[0, 1]) * int(m.sum())
        weight += int(m.sum())
    return total / weight if weight else 0.0


def within_partition_order(table: AuditTable, name: str) -> pd.Series | None:
    """The identifier's values replaced by their rank fraction within each partition: what
    its order says once partitions numbered one after another (a training file, then a test
    file) no longer count. None when the table is one pool."""
    groups = table.partition_of
    if groups is None or pd.unique(groups).size < 2:
        return None
    values = pd.Series(order_values(table.frame[name]))
    ranks = values.groupby(pd.Series(groups, dtype=object)).rank(method="average", pct=True)
    return ranks


def stored_in_order(s: pd.Series) -> bool:
    """Whether the file's rows are stored in the order of this identifier (its values, where
    present, never fall or never rise down the file, with at least two of them distinct):
    the row position then carries the identifier's order and tells what it tells."""
    values = order_values(s)
    values = values[np.isfinite(values)]
    if np.unique(values).size < 2:
        return False
    step = np.diff(values)
    return bool((step >= 0).all() or (step <= 0).all())
