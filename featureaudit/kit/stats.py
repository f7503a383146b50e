"""Exact statistics from counts: binning, AUC from (score, positives, negatives) cells, SEs.

Everything here works on per-cell sums, which merge by addition across chunks or machines.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from featureaudit.load.io import numeric_view

__all__ = [
    "bin_codes",
    "edges_at_or_below",
    "auc_from_cells",
    "hanley_mcneil_se",
    "null_auc_se",
    "Bins",
]


class Bins:
    """Integer codes per row (0 = missing) and a label for every code."""

    def __init__(self, codes: np.ndarray, labels: list[str], kind: str) -> None:
        self.codes = codes
        self.labels = labels
        self.kind = kind  # "quantile", "values", "categories", "order"

    @property
    def n_bins(self) -> int:
        return len(self.labels)


def _fmt(x: float) -> str:
    return f"{x:.4g}"


def bin_codes(
    s: pd.Series,
    n_bins: int,
    *,
    order: bool = False,
    sample: int = 50_000,
    seed: int = 0,
    pool: np.ndarray | None = None,
) -> Bins:
    """Code a column into at most ``n_bins`` quantile bins (numbers, datetimes) or its categories.

    ``order=True`` bins text by its sorted order (for identifiers whose order may carry the
    target). Quantile edges come from a seeded sample of at most ``sample`` values, or from
    the rows ``pool`` when given (rows chosen by content, so the edges do not follow the
    file's order).
    """
    values = numeric_view(s)
    if values is None and order:
        text = s.astype(object)
        present = text.notna().to_numpy()
        ranks = np.full(len(s), np.nan)
        if present.any():
            ranks[present] = pd.Series(text[present].astype(str)).rank(method="min").to_numpy()
        values = ranks
    if values is not None:
        return _numeric_bins(
            values,
            n_bins,
            sample=sample,
            seed=seed,
            datetime=pd.api.types.is_datetime64_any_dtype(s.dtype),
            pool=pool,
        )
    if isinstance(s.dtype, pd.CategoricalDtype):
        codes = s.cat.codes.to_numpy().astype(np.int64) + 1
        labels = ["(missing)"] + [str(c) for c in s.cat.categories]
    else:
        codes_, uniques = pd.factorize(s, use_na_sentinel=True)
        codes = codes_.astype(np.int64) + 1
        labels = ["(missing)"] + [str(u) for u in uniques]
    return Bins(codes, labels, "categories")


def _numeric_bins(
    values: np.ndarray,
    n_bins: int,
    *,
    sample: int,
    seed: int,
    datetime: bool,
    pool: np.ndarray | None = None,
) -> Bins:
    finite = np.isfinite(values)
    codes = np.zeros(len(values), dtype=np.int64)
    present = values[finite]
    if present.size == 0:
        return Bins(codes, ["(missing)"], "values")
    chosen = values[pool] if pool is not None and present.size > sample else None
    if chosen is not None and np.isfinite(chosen).sum() >= min(sample, present.size) // 10:
        pool = chosen[np.isfinite(chosen)]
    elif present.size <= sample:
        pool = present
    else:
        rng = np.random.default_rng(seed)
        pool = present[rng.integers(0, present.size, sample)]
    label = _date_label if datetime else _fmt
    few = np.unique(pool[:5000])
    if few.size <= n_bins:
        uniq = np.unique(present)
        if uniq.size <= n_bins:
            codes[finite] = np.searchsorted(uniq, present) + 1
            return Bins(codes, ["(missing)"] + [label(u) for u in uniq], "values")
    edges = np.unique(np.quantile(pool, np.linspace(0, 1, n_bins + 1)))
    inner = edges[1:-1]
    if present.size == values.size:
        codes = edges_at_or_below(inner, values) + 1
    else:
        codes[finite] = edges_at_or_below(inner, present) + 1
    bounds = np.r_[-np.inf, inner, np.inf]
    labels = ["(missing)"] + [
        f"[{label(lo)}, {label(hi)})"
        if np.isfinite(lo) and np.isfinite(hi)
        else (f"< {label(hi)}" if np.isfinite(hi) else f">= {label(lo)}")
        for lo, hi in zip(bounds[:-1], bounds[1:], strict=True)
    ]
    return Bins(codes, labels, "quantile")


COMPARE_EDGES = 64  # up to this many edges, one comparison per edge beats a binary search


def edges_at_or_below(edges: np.ndarray, values: np.ndarray) -> np.ndarray:
    """``np.searchsorted(edges, values, side="right")`` for finite ``values``: how many of
    the sorted ``edges`` are at or below each value. With few edges, a count of comparisons
    (one vectorised pass per edge into a byte counter) runs 4-5x faster than numpy's binary
    search on unsorted values (1,000,000 values, 19 edges: 5 ms against 23 ms, measured)."""
    if edges.size > COMPARE_EDGES:
        return np.searchsorted(edges, values, side="right")
    count = np.zeros(values.shape, dtype=np.uint8)
    hit = np.empty(values.shape, dtype=bool)
    for edge in edges:
        np.greater_equal(values, edge, out=hit)
        count += hit
    return count.astype(np.int64)


def _date_label(seconds: float) -> str:
    return str(pd.Timestamp(seconds, unit="s").date()) if np.isfinite(seconds) else "?"


def auc_from_cells(score: np.ndarray, pos: np.ndarray, neg: np.ndarray) -> float:
    """AUC = P(s1 > s0) + ½ P(s1 = s0) over cells that share a score (Mann–Whitney, with ties).

    Cells with equal scores are pooled first, so the result equals
    ``sklearn.metrics.roc_auc_score`` on the per-row scores.
    """
    pos = np.asarray(pos, dtype=np.float64)
    neg = np.asarray(neg, dtype=np.float64)
    n_pos, n_neg = pos.sum(), neg.sum()
    if n_pos == 0 or n_neg == 0:
        return float("nan")
    uniq, inverse = np.unique(np.asarray(score, dtype=np.float64), return_inverse=True)
    p = np.bincount(inverse, weights=pos, minlength=uniq.size)
    n = np.bincount(inverse, weights=neg, minlength=uniq.size)
    neg_below = np.cumsum(n) - n
    return float(np.sum(p * (neg_below + 0.5 * n)) / (n_pos * n_neg))


def hanley_mcneil_se(auc: float, n_pos: int, n_neg: int) -> float:
    """Standard error of an AUC (Hanley & McNeil 1982, Radiology 143:29–36)."""
    if n_pos < 1 or n_neg < 1 or not np.isfinite(auc):
        return float("nan")
    q1 = auc / (2 - auc)
    q2 = 2 * auc * auc / (1 + auc)
    var = (auc * (1 - auc) + (n_pos - 1) * (q1 - auc * auc) + (n_neg - 1) * (q2 - auc * auc)) / (
        n_pos * n_neg
    )
    return float(np.sqrt(max(var, 0.0)))


def null_auc_se(n_pos: int, n_neg: int) -> float:
    """SE of the AUC when the score carries no signal: Mann–Whitney U's null variance / (n1 n0)²."""
    if n_pos < 1 or n_neg < 1:
        return float("nan")
    return float(np.sqrt((n_pos + n_neg + 1) / (12.0 * n_pos * n_neg)))


def uncertainty_coefficient(counts: np.ndarray) -> float:
    """Theil's U(X|Y) = I(X;Y) / H(X) from a [x-bins, y-classes] count table, in [0, 1].

    The share of the column's own entropy that the target accounts for: near 1 when the
    column is almost a function of the target. The mutual information gets the
    Miller–Madow bias correction, (B-1)(K-1) / 2n nats, so small samples do not inflate it.
    """
    c = np.asarray(counts, dtype=np.float64)
    c = c[c.sum(1) > 0][:, c.sum(0) > 0]
    n = c.sum()
    if n == 0 or c.shape[0] < 2 or c.shape[1] < 2:
        return 0.0

    def entropy(p: np.ndarray) -> float:
        p = p[p > 0] / n
        return float(-np.sum(p * np.log(p)))

    hx = entropy(c.sum(1))
    mi = hx + entropy(c.sum(0)) - entropy(c.ravel())
    mi -= (c.shape[0] - 1) * (c.shape[1] - 1) / (2 * n)
    return float(min(1.0, max(0.0, mi / hx))) if hx > 0 else 0.0
