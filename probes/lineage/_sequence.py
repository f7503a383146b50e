"""Each entity's rows in time order, and sums of the target over windows of them.

The order is the cutoff time, else the label time, else ``--order``; rows are grouped by
``--entity`` (one series without it). Sorting ties are broken by nothing: an entity with two
rows at one moment has no "earlier" or "later" between them, so the probe does not judge it
(a verdict never depends on the order of rows in the file).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pandas as pd

from featureaudit.load.table import AuditTable

__all__ = ["Sequence", "sequence", "order_source"]


@dataclass(frozen=True)
class Sequence:
    """Rows sorted by entity then moment: ``rows`` index the table, the rest align with it."""

    rows: np.ndarray
    group: np.ndarray  # entity code of each sorted row
    position: np.ndarray  # 0, 1, ... within the entity
    size: np.ndarray  # rows of the row's entity
    source: str  # what ordered the rows, in words

    def window(
        self, values: np.ndarray, end: int, width: int | None, *, total: bool = False
    ) -> np.ndarray:
        """Mean (or with ``total`` the sum) of ``values`` (sorted) over the ``width`` rows
        ending ``end`` rows after each row (``width`` None: from the entity's first row); NaN
        where the window leaves the entity or holds a missing value."""
        n = len(values)
        missing = np.isnan(values)
        c0 = np.r_[0.0, np.cumsum(np.where(missing, 0.0, values))]
        m0 = np.r_[0, np.cumsum(missing)]
        last = self.position + end
        inside = (last >= 0) & (last < self.size)
        first = np.zeros(n, dtype=np.int64) if width is None else last - width + 1
        inside &= first >= 0
        b = np.clip(np.arange(n) + end, 0, n - 1)
        a = np.clip(b - (last - first), 0, n - 1)
        total_sum = c0[b + 1] - c0[a]
        gaps = m0[b + 1] - m0[a]
        count = (b - a + 1).astype("float64")
        with np.errstate(invalid="ignore", divide="ignore"):
            value = total_sum if total else total_sum / count
        return np.where(inside & (gaps == 0), value, np.nan)


def order_source(table: AuditTable) -> tuple[np.ndarray, str] | None:
    """The moment of each row as a float key, and what it is; None without one."""
    if table.cutoff_time is not None:
        key = _as_key(table.cutoff_time)
        return key, f"cutoff time ({table.cutoff_source})"
    if table.label_time is not None:
        return _as_key(table.label_time), f"label time {table.label_time_column!r}"
    if table.order is not None:
        return table.order.astype("float64"), f"--order {table.order_column!r}"
    return None


def _as_key(times: pd.Series) -> np.ndarray:
    values = times.to_numpy(dtype="datetime64[us]").astype("int64").astype("float64")
    values[times.isna().to_numpy()] = np.nan
    return values


def sequence(table: AuditTable) -> tuple[Sequence | None, str]:
    """The rows in entity-then-time order, or None and the reason it cannot be built."""
    found = order_source(table)
    if found is None:
        return None, "windows not read: no order (pass --label-time, --cutoff-time or --order)"
    key, source = found
    if table.entity is not None:
        entity = table.frame[table.entity]
        codes, _ = pd.factorize(entity, sort=True, use_na_sentinel=True)
        name = f"{source} within entity {table.entity!r}"
    else:
        codes, name = np.zeros(table.n_rows, dtype=np.int64), f"{source} (one series)"
    keep = np.flatnonzero(~np.isnan(key) & (codes >= 0))
    rows = keep[np.lexsort((key[keep], codes[keep]))]
    group, moment = codes[rows], key[rows]
    tied = (group[1:] == group[:-1]) & (moment[1:] == moment[:-1])
    if tied.any():
        return None, (
            f"windows not read: {int(tied.sum())} rows share their entity's moment ({name}); "
            "pass --order with one row per entity and moment"
        )
    starts = np.r_[True, group[1:] != group[:-1]]
    first = np.maximum.accumulate(np.where(starts, np.arange(len(rows)), 0))
    position = np.arange(len(rows)) - first
    _, inverse, counts = np.unique(group, return_inverse=True, return_counts=True)
    return Sequence(rows, group, position, counts[inverse], name), ""
