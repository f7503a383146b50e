"""Rows synthesised by interpolation across a split: oversampling done before partitioning.

SMOTE and its variants make a new row on the segment between a row and one of its nearest
neighbours of the same class. Made before the split, such a row held out lies between two
training rows (or a training row between two held-out rows): a twin in effect. For each
queried row the nearest rows of its class on the other side are paired up, and the row is
interpolated when it lies strictly inside one pair's segment, off it by less than
``RESIDUAL`` of the segment's length in robustly scaled units, and holds, in at least
``MIN_COLUMNS`` of the columns where the two ends differ, a value that no other row holds:
interpolation writes new values, while a natural row that happens to lie on a segment (a
record of the same person one year on, a point of a small grid) repeats values of its
column. Each direction queries at most ``MAX_QUERIES`` rows (fewer against pools past
200,000 rows, see ``PAIR_BUDGET``), chosen by content; in larger tables the share explained
is estimated from them (finds scaled by the share queried).
Anchor: oversampling before
partitioning made near-perfect preterm-birth results reachable (Vandewiele et al.,
Artificial Intelligence in Medicine 111:101987, 2021).
"""

from __future__ import annotations

from typing import Any

import numpy as np
from sklearn.neighbors import NearestNeighbors

from featureaudit.hashing import robust_params
from featureaudit.io import numeric_view
from featureaudit.probes.twins._nearcopy import row_labels
from featureaudit.table import AuditTable
from featureaudit.threads import openmp_threads

# A natural row lies within 0.1 % of a segment's length off it, in 3 or more continuous
# dimensions, essentially never (chance ~ 0.001^(d-1) per pair); rounding of stored values
# stays far below it (common practice, no source).
RESIDUAL = 1e-3
INSIDE = (0.01, 0.99)  # endpoints excluded: a row at an end is a copy, counted elsewhere
NEIGHBOURS = 12  # nearest rows of the other side paired up (SMOTE's default k is 5)
MIN_DISTINCT = 20  # a column with fewer distinct training values is not continuous
MIN_COLUMNS = 3
MAX_COLUMNS = 50
# the scaled matrix and the neighbour search cost rows x columns: past CELL_BUDGET cells
# the columns with the most distinct values are kept, never fewer than MIN_SCALED (oversampling
# writes every column, so 20 of them tell a segment as well as 50; cost, no source)
CELL_BUDGET = 10_000_000
MIN_SCALED = 20
MAX_QUERIES = 2000  # rows queried per direction, chosen by content, not by file order
# the exact neighbour search costs queries x pool rows: past 400 million pairs a direction
# (2,000 queries against 200,000 rows) fewer rows are queried, never under MIN_QUERIES; at
# 1,000,000 rows, 500 queries a direction still see ~25 rows of a 5 % share (cost, no source)
PAIR_BUDGET = 400_000_000
MIN_QUERIES = 500
# scaling needs the columns' median and IQR, not every training row's: past this many rows
# they come from a content-chosen subset (a median's SE at 50,000 rows is 0.6 % of an SD;
# cost, no source). Smaller tables are scaled exactly as before.
SCALE_ROWS = 50_000


def interpolated_rows(
    table: AuditTable, cols: list[str], heldout: np.ndarray, h: np.ndarray, n_jobs: int = 1
) -> dict[str, Any] | None:
    """The held-out rows explained by interpolation between training rows (and held-out
    endpoints of training rows interpolated between held-out rows); None when the table
    has too few continuous columns to tell. The neighbour search runs on ``n_jobs`` threads."""
    x = _scaled(table, cols, ~heldout, h)
    if x is None:
        return None
    ok = np.isfinite(x).all(axis=1)
    y = table.y if table.y is not None and table.task != "numeric" else None
    held_ok, train_ok = ok & heldout, ok & ~heldout
    q_held = _queries(held_ok, h, _budget(int(train_ok.sum())))
    q_train = _queries(train_ok, h, _budget(int(held_ok.sum())))
    asked = np.union1d(q_held, q_train)
    fresh = _fresh(x, asked)
    with openmp_threads(n_jobs):
        held_on_train = _search(x, fresh, asked, q_held, ok & ~heldout, y)
        train_on_held = _search(x, fresh, asked, q_train, ok & heldout, y)
    between = {q for q, _, _ in held_on_train}
    ends = {r for _, a, b in train_on_held for r in (a, b)} - between
    n_held = int(heldout.sum())
    # each direction queried a content-chosen share of its side's rows: its finds stand for
    # 1/share as many (all rows queried, as in tables up to MAX_QUERIES rows a side: exact)
    fraction_held = q_held.size / max(int(held_ok.sum()), 1)
    fraction_train = q_train.size / max(int(train_ok.sum()), 1)
    estimate = len(between) / max(fraction_held, 1e-12) + len(ends) / max(fraction_train, 1e-12)
    examples = [
        row_labels(table, np.array([a, q, b], dtype=np.int64))
        for q, a, b in (held_on_train + [(q, a, b) for q, a, b in train_on_held])[:5]
    ]
    return {
        "share": min(1.0, estimate / n_held) if n_held else 0.0,
        "heldout_rows_between_training_rows": len(held_on_train),
        "training_rows_between_heldout_rows": len(train_on_held),
        "heldout_rows_explained": len(between) + len(ends),
        "estimated_heldout_rows_explained": round(estimate, 1),
        "heldout_rows_queried": int(q_held.size),
        "training_rows_queried": int(q_train.size),
        "sampled": bool(fraction_held < 1 or fraction_train < 1),
        "heldout_rows": n_held,
        "columns_compared": int(x.shape[1]),
        "pairs": examples,  # [one end, the row between, the other end]
        "residual_tolerance": RESIDUAL,
    }


def _scaled(
    table: AuditTable, cols: list[str], train: np.ndarray, h: np.ndarray
) -> np.ndarray | None:
    """The continuous columns, robustly scaled on the training rows (at most MAX_COLUMNS,
    fewer past CELL_BUDGET cells; distinct counts, medians and IQRs from at most SCALE_ROWS
    of them, chosen by content)."""
    chosen: list[tuple[int, np.ndarray]] = []
    rows = _queries(train, h, SCALE_ROWS)
    for c in cols:
        v = numeric_view(table.frame[c])
        if v is None:
            continue
        v = np.asarray(v, dtype="float64")  # read only: no copy
        present = v[rows]
        distinct = np.unique(present[np.isfinite(present)]).size
        if distinct >= MIN_DISTINCT:
            chosen.append((distinct, v))
    if len(chosen) < MIN_COLUMNS:
        return None
    chosen.sort(key=lambda p: -p[0])
    limit = max(MIN_SCALED, min(MAX_COLUMNS, CELL_BUDGET // max(len(train), 1)))
    picked = chosen[:limit]
    out = np.empty((len(train), len(picked)))  # filled in place: no second copy
    for j, (_, v) in enumerate(picked):
        med, scale = robust_params(v, rows)
        np.divide(np.subtract(v, med), scale, out=out[:, j])
    return out


def _fresh(x: np.ndarray, rows: np.ndarray) -> np.ndarray:
    """For each of ``rows``: True where its value occurs in no other row of its column
    (counted in the sorted column, so equal values, NaN included, count together)."""
    out = np.zeros((rows.size, x.shape[1]), bool)
    for j in range(x.shape[1]):
        column = np.sort(x[:, j])
        v = x[rows, j]
        out[:, j] = np.searchsorted(column, v, "right") - np.searchsorted(column, v, "left") == 1
    return out


def _budget(pool: int) -> int:
    """Rows to query against a pool of ``pool`` rows: MAX_QUERIES within PAIR_BUDGET."""
    return int(min(MAX_QUERIES, max(MIN_QUERIES, PAIR_BUDGET // max(pool, 1))))


def _queries(mask: np.ndarray, h: np.ndarray, limit: int) -> np.ndarray:
    """At most ``limit`` rows of ``mask``, those of smallest row hash, in row order: the same
    rows whatever the file's order (content-chosen)."""
    idx = np.flatnonzero(mask)
    if idx.size <= limit:
        return idx
    return np.sort(idx[np.argsort(h[idx], kind="stable")[:limit]])


def _search(
    x: np.ndarray,
    fresh: np.ndarray,
    asked: np.ndarray,
    q_all: np.ndarray,
    pool: np.ndarray,
    y: np.ndarray | None,
) -> list[tuple[int, int, int]]:
    """(row, end a, end b) for each queried row ``q_all`` strictly inside a segment of two
    pool rows of its class; ``fresh`` holds the new-value flags of the rows ``asked``."""
    found: list[tuple[int, int, int]] = []
    labels = np.zeros(len(x), np.int64) if y is None else y.astype(np.int64)
    for cls in np.unique(labels[q_all]):
        q_idx = q_all[labels[q_all] == cls] if cls >= 0 else q_all[labels[q_all] < 0]
        p_idx = np.flatnonzero(pool & ((labels == cls) if cls >= 0 else True))
        if q_idx.size == 0 or p_idx.size < 2:
            continue
        k = min(NEIGHBOURS, p_idx.size)
        nn = NearestNeighbors(n_neighbors=k, n_jobs=1).fit(x[p_idx])
        near = p_idx[nn.kneighbors(x[q_idx], return_distance=False)]  # (q, k)
        found.extend(_on_segment(x, fresh[np.searchsorted(asked, q_idx)], q_idx, near))
    return found


def _on_segment(
    x: np.ndarray, fresh: np.ndarray, q_idx: np.ndarray, near: np.ndarray
) -> list[tuple[int, int, int]]:
    """Vectorised over all pairs of each row's neighbours: inside a segment, close to it, and
    with new values (``fresh``, one row per query) in enough of the columns where the ends
    differ."""
    k = near.shape[1]
    ia, ib = np.triu_indices(k, 1)
    q = x[q_idx][:, None, :]  # (n, 1, d)
    a, b = x[near[:, ia]], x[near[:, ib]]  # (n, p, d)
    ab = b - a
    length2 = np.einsum("npd,npd->np", ab, ab)
    with np.errstate(divide="ignore", invalid="ignore"):
        t = np.einsum("npd,npd->np", q - a, ab) / length2
        off = q - a - t[..., None] * ab
        residual = np.sqrt(np.einsum("npd,npd->np", off, off) / length2)
    new = ((np.abs(ab) > 1e-9) & fresh[:, None, :]).sum(axis=-1) >= MIN_COLUMNS
    hit = new & (length2 > 0) & (t > INSIDE[0]) & (t < INSIDE[1]) & (residual < RESIDUAL)
    out = []
    for r in np.flatnonzero(hit.any(axis=1)):
        p = int(np.flatnonzero(hit[r])[np.argmin(residual[r][hit[r]])])
        out.append((int(q_idx[r]), int(near[r, ia[p]]), int(near[r, ib[p]])))
    return out
