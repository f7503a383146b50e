"""Near copies across a split: banded hashing of robustly scaled numbers, then distance.

Candidate pairs share a band key (a few quantised columns and every category); a pair is a
near copy when its root-mean-squared scaled distance is below a threshold calibrated on
the data's own training-to-training nearest-neighbour distances. No all-pairs loop: the
work is a sort and a binary search per band.
"""

from __future__ import annotations

import numpy as np

from featureaudit.hashing import column_codes, robust_params
from featureaudit.io import numeric_view
from featureaudit.table import AuditTable

NEAR_FRACTION = 0.1  # a near copy lies closer than 10 % of the median train-train NN distance
BANDS, BAND_DIMS, CELL = 6, 6, 0.5
MAX_BUCKET = 50  # a band cell shared by more training rows than this is not evidence
MAX_QUERIES = 50_000  # held-out rows searched at most (the share is scaled back honestly)


def row_labels(table: AuditTable, rows: np.ndarray) -> list[str]:
    """The first identifier column's values for ``rows``, or their row numbers."""
    if table.id_columns:
        ids = table.frame[table.id_columns[0]].to_numpy()
        return [str(ids[i]) for i in rows]
    return [f"row {i}" for i in rows]


class _Scaled:
    """Numeric columns with robust training-row scales, scaled only where needed."""

    def __init__(self, raw: list[np.ndarray], train: np.ndarray, sample: int = 50_000) -> None:
        self.raw = raw
        t_idx = np.flatnonzero(train)
        rows = t_idx[:: max(1, t_idx.size // sample)]  # evenly spaced training rows
        self.params = [robust_params(v, rows) for v in raw]

    def __len__(self) -> int:
        return len(self.raw)

    def column(self, j: int, rows: np.ndarray | slice = slice(None)) -> np.ndarray:
        med, scale = self.params[j]
        z = (self.raw[j][rows] - med) / scale
        return np.nan_to_num(z, nan=-99.0, posinf=99.0, neginf=-99.0)

    def within(self, q: np.ndarray, t: np.ndarray, limit: float) -> tuple[np.ndarray, np.ndarray]:
        """The pairs (positions into ``q`` and ``t``, in their order) whose root mean squared
        scaled difference over all numeric columns may be at most ``limit``, and those
        distances; a pair is dropped as soon as its partial sum passes the limit.

        Squares are added column by column in the same order for every pair, and a float
        sum of non-negative terms never decreases, so a dropped pair's full distance is above
        ``limit`` and a kept pair's distance is exactly what the full sum gives. Each column
        is scaled once per distinct row, not once per pair.
        """
        n = len(self.raw)
        # a margin far above rounding, so no pair within the limit is ever dropped
        bound = limit * limit * n * (1 + 1e-9) + 1e-300
        uq, iq = np.unique(q, return_inverse=True)
        ut, it = np.unique(t, return_inverse=True)
        keep = np.arange(q.size)
        total = np.zeros(q.size)
        for j in range(n):
            diff = self.column(j, uq)[iq] - self.column(j, ut)[it]
            total += diff * diff
            if j + 1 < n:
                alive = total <= bound
                if not alive.all():
                    keep, total, iq, it = keep[alive], total[alive], iq[alive], it[alive]
                    if keep.size == 0:
                        break
                    if 4 * ut.size > keep.size:  # scale only the rows still paired
                        uq, iq = _compact(uq, iq)
                        ut, it = _compact(ut, it)
        return keep, np.sqrt(total / n)


def near_copies(
    table: AuditTable,
    cols: list[str],
    heldout: np.ndarray,
    exact: np.ndarray,
    rng: np.random.Generator,
    train: np.ndarray | None = None,
) -> tuple[np.ndarray, dict]:
    """Held-out rows with a near copy among training rows (banded hashing, then distance).

    ``train`` are the rows searched as partners (default: every row not held out); a
    subset serves to measure the natural near-copy rate between parts of the training rows.

    At most 50,000 held-out rows are searched; ``calib["searched_share"]`` says which share
    of the candidates that is, so the caller can scale the count honestly.
    """
    train = ~heldout if train is None else train
    raw: list[np.ndarray] = []
    cats: list[np.ndarray] = []
    for c in cols:
        v = numeric_view(table.frame[c])
        if v is None:
            continue
        head = v[:2_000]
        if np.unique(head[np.isfinite(head)]).size > 10:
            raw.append(v)
        else:
            cats.append(column_codes(table.frame[c]))
    near = np.zeros(table.n_rows, dtype=bool)
    if not raw:
        return near, {
            "method": "no continuous columns: exact copies only",
            "pairs": [],
            "searched_share": 1.0,
        }
    numeric = _Scaled(raw, train)
    cat_key: np.ndarray = np.zeros(table.n_rows, dtype=np.uint64)
    with np.errstate(over="ignore"):
        for codes in cats:
            cat_key = cat_key * np.uint64(1099511628211) ^ codes
    threshold, calib = _calibrate(numeric, cat_key, train, rng)
    candidates = np.flatnonzero(heldout & ~exact)
    queries = (
        candidates
        if candidates.size <= MAX_QUERIES
        else np.sort(rng.choice(candidates, MAX_QUERIES, replace=False))
    )
    calib["searched_share"] = float(queries.size / candidates.size) if candidates.size else 1.0
    t_idx = np.flatnonzero(train)
    best = np.full(table.n_rows, np.inf)
    partner = np.full(table.n_rows, -1)
    d = len(numeric)
    for _ in range(BANDS):
        dims = rng.choice(d, min(d, BAND_DIMS), replace=False)
        offset = rng.uniform(0, CELL)
        key = cat_key.copy()
        with np.errstate(over="ignore", invalid="ignore"):
            for j in dims:
                cell = np.floor((numeric.column(j) + offset) / CELL).astype(np.int64)
                key = key * np.uint64(0x100000001B3) ^ cell.astype(np.uint64)
        q, t = _band_pairs(key, t_idx, queries)
        # only pairs within the threshold can make a near copy, or be reported as one
        kept, dist = numeric.within(q, t, threshold)
        q, t = q[kept], t[kept]
        if q.size == 0:
            continue
        order = np.lexsort((dist, q))
        q, t, dist = q[order], t[order], dist[order]
        first = np.r_[True, q[1:] != q[:-1]]
        better = dist[first] < best[q[first]]
        best[q[first][better]] = dist[first][better]
        partner[q[first][better]] = t[first][better]
    near[queries] = best[queries] <= threshold
    hits = np.flatnonzero(near)[:5]
    left, right = row_labels(table, partner[hits]), row_labels(table, hits)
    calib["pairs"] = [[a, b, float(best[i])] for a, b, i in zip(left, right, hits, strict=True)]
    calib["threshold"] = threshold
    calib["partner"] = partner  # the nearest training row per query (popped)
    calib["near_twin_distances"] = [float(v) for v in np.sort(best[near])[:50]]
    return near, calib


def _compact(values: np.ndarray, inverse: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """``values[inverse]`` as (the values still used, the inverse into them)."""
    used, inv = np.unique(inverse, return_inverse=True)
    return values[used], inv


def _band_pairs(
    key: np.ndarray, t_idx: np.ndarray, queries: np.ndarray
) -> tuple[np.ndarray, np.ndarray]:
    """(query, training row) pairs that share a band key; keys held by more than MAX_BUCKET
    training rows are dropped, since a crowded cell is no evidence of a copy."""
    tk = key[t_idx]
    order = np.argsort(tk, kind="stable")
    tk, tr = tk[order], t_idx[order]
    starts = np.r_[0, np.flatnonzero(tk[1:] != tk[:-1]) + 1]
    sizes = np.diff(np.r_[starts, tk.size])
    keep = np.repeat(sizes <= MAX_BUCKET, sizes)
    tk, tr = tk[keep], tr[keep]
    qk = key[queries]
    lo = np.searchsorted(tk, qk, side="left")
    hi = np.searchsorted(tk, qk, side="right")
    n = hi - lo
    total = int(n.sum())
    if total == 0:
        return np.zeros(0, np.int64), np.zeros(0, np.int64)
    q = np.repeat(queries, n)
    offsets = np.arange(total) - np.repeat(np.cumsum(n) - n, n)
    return q, tr[np.repeat(lo, n) + offsets]


def _calibrate(
    numeric: _Scaled, cat_key: np.ndarray, train: np.ndarray, rng: np.random.Generator
) -> tuple[float, dict]:
    """Threshold from training-to-training nearest-neighbour distances on a sample."""
    from sklearn.neighbors import NearestNeighbors

    t_idx = np.flatnonzero(train)
    sample = rng.choice(t_idx, min(t_idx.size, 3000), replace=False)
    xs = np.column_stack([numeric.column(j, sample) for j in range(len(numeric))])
    xs += (cat_key[sample] % np.uint64(9973)).astype(np.float64)[:, None] * 1e6
    nn = NearestNeighbors(n_neighbors=2).fit(xs)
    dist, _ = nn.kneighbors(xs)
    d = dist[:, 1] / np.sqrt(len(numeric))
    d = d[d < 1e5]
    positive = d[d > 0]
    median = float(np.median(positive)) if positive.size else 0.0
    threshold = NEAR_FRACTION * median
    return threshold, {
        "method": "banded hashing of robustly scaled numbers, categories exact",
        "sample_rows": int(sample.size),
        "train_nn_q01": _q(d, 0.01),
        "train_nn_q05": _q(d, 0.05),
        "train_nn_median": median,
        "train_nn_exact_share": float(np.mean(d == 0)) if d.size else 0.0,
    }


def _q(values: np.ndarray, q: float) -> float:
    return float(np.quantile(values, q)) if values.size else 0.0
