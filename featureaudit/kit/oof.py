"""Out-of-fold binned encoding: a row is scored by its bin's target statistics in the other folds.

A numeric target is scored on its rank-based normal scores, so one extreme value cannot
decide a column's R²; the bins still show the target's own means.

All the work is one ``bincount`` per column into (fold, bin, class) cells; scores, AUCs,
R² and Spearman's rho then follow exactly from the cells, never from a per-row model.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy.special import ndtri
from scipy.stats import rankdata

from featureaudit.kit.stats import (
    auc_from_cells,
    hanley_mcneil_se,
    null_auc_se,
    uncertainty_coefficient,
)

__all__ = ["Target", "make_target", "CellScore", "score_bins", "SMOOTHING"]

SMOOTHING = 2.0  # prior weight m in (sum + m * prior) / (n + m); Micci-Barreca 2001 blend


@dataclass(frozen=True)
class Target:
    """The labelled rows' target, prepared once: folds, classes or ranks."""

    task: str
    y: np.ndarray  # class codes, or a numeric target's normal scores (labelled rows)
    rows: np.ndarray  # positions of the labelled rows in the table
    fold: np.ndarray  # fold id per labelled row
    n_folds: int
    n_classes: int
    prior: np.ndarray  # class shares, or [mean]
    ranks: np.ndarray | None  # average ranks of y (numeric task)
    y_bins: np.ndarray  # class codes, or decile codes of a numeric target
    n_y_bins: int
    raw: np.ndarray | None = None  # a numeric target as given, for the per-bin means shown


def make_target(
    y_all: np.ndarray,
    labelled: np.ndarray,
    task: str,
    n_classes: int,
    folds: int,
    seed: int,
    keys: np.ndarray | None = None,
) -> Target:
    """Stratified seeded folds (by class, or by target rank for a numeric target). With
    ``keys`` (one per row of the table, from its content) rows are dealt to folds in key
    order, so the same rows in another file order fall in the same folds."""
    rows = np.flatnonzero(labelled)
    y = y_all[rows]
    rng = np.random.default_rng(seed)
    shuffle = (lambda: keys[rows]) if keys is not None else (lambda: rng.random(len(rows)))
    fold = np.empty(len(rows), dtype=np.int64)
    if task == "numeric":
        order = np.lexsort((shuffle(), y))  # ties in y in key order
        blocks = np.arange(len(rows)) // folds
        perm = np.lexsort((shuffle()[order], blocks))  # shuffle within blocks of `folds`
        fold[order[perm]] = np.arange(len(rows)) % folds
        ranks = rankdata(y)
        scores = ndtri((ranks - 0.5) / len(rows))  # robust to heavy tails and outliers
        prior = np.array([float(np.mean(scores))])
        deciles = np.minimum((ranks - 1) * 10 // len(rows), 9).astype(np.int64)
        return Target(
            task, scores, rows, fold, folds, 1, prior, ranks, deciles, 10, raw=y.astype(np.float64)
        )
    for k in range(n_classes):
        idx = np.flatnonzero(y == k)
        dealt = (
            idx[np.argsort(keys[rows[idx]], kind="stable")]
            if keys is not None
            else rng.permutation(idx)
        )
        fold[dealt] = np.arange(idx.size) % folds
    prior = np.bincount(y, minlength=n_classes) / len(y)
    y = y.astype(np.int64)
    return Target(task, y, rows, fold, folds, n_classes, prior, None, y, n_classes)


@dataclass(frozen=True)
class CellScore:
    """A column's out-of-fold score, with its fold spread and the per-bin statistics."""

    statistic: str  # oof_auc, oof_macro_auc or oof_r2
    value: float
    power: float  # 0..1: Gini (2·AUC−1) or R², floored at 0
    fold_values: np.ndarray
    se: float  # SE of value (Hanley–McNeil for binary, fold spread otherwise)
    null_se: float  # SE of value if the column carried no signal
    spearman: float | None
    bin_rows: np.ndarray  # labelled rows per bin
    bin_stat: np.ndarray  # positive rate (binary), top-class rate (multiclass), mean (numeric)
    bin_class: np.ndarray | None
    cell_pred: np.ndarray  # [fold, bin] (or [fold, bin, class]) out-of-fold predictions
    determinism: float  # Theil's U(column | target) over the bins

    def row_scores(self, target: Target, codes: np.ndarray) -> np.ndarray:
        """Per labelled row: its out-of-fold prediction (for multiclass, a class-prob vector)."""
        return self.cell_pred[target.fold, codes[target.rows]]


def score_bins(codes_all: np.ndarray, n_bins: int, t: Target) -> CellScore:
    """Score one coded column out of fold against the target ``t``."""
    codes = codes_all[t.rows]
    F, B = t.n_folds, max(n_bins, 1)
    if t.task == "numeric":
        return _numeric(codes, F, B, t)
    K = t.n_classes
    counts = (
        np.bincount((t.fold * B + codes) * K + t.y, minlength=F * B * K)
        .reshape(F, B, K)
        .astype(np.float64)
    )
    total = counts.sum(axis=0)  # [B, K]
    other = total[None] - counts  # [F, B, K]
    pred = (other + SMOOTHING * t.prior) / (other.sum(-1, keepdims=True) + SMOOTHING)
    n_fb = counts.sum(-1)
    bin_rows = total.sum(-1)
    with np.errstate(invalid="ignore", divide="ignore"):
        rates = total / bin_rows[:, None]
    if K == 2:
        pos, neg = counts[..., 1], counts[..., 0]
        auc = auc_from_cells(pred[..., 1].ravel(), pos.ravel(), neg.ravel())
        folds = np.array([auc_from_cells(pred[f, :, 1], pos[f], neg[f]) for f in range(F)])
        n1, n0 = int(pos.sum()), int(neg.sum())
        return CellScore(
            "oof_auc",
            auc,
            max(0.0, 2 * auc - 1),
            folds,
            hanley_mcneil_se(auc, n1, n0),
            null_auc_se(n1, n0),
            None,
            bin_rows,
            rates[:, 1],
            None,
            pred,
            _determinism(total),
        )
    per_class, per_fold, null = [], np.zeros(F), []
    for k in range(K):
        pos = counts[..., k]
        neg = n_fb - pos
        per_class.append(auc_from_cells(pred[..., k].ravel(), pos.ravel(), neg.ravel()))
        per_fold += np.array([auc_from_cells(pred[f, :, k], pos[f], neg[f]) for f in range(F)])
        null.append(null_auc_se(int(pos.sum()), int(neg.sum())))
    auc = float(np.nanmean(per_class))
    folds = per_fold / K
    lift = rates / t.prior[None]
    top = np.nanargmax(np.where(np.isfinite(lift), lift, -1), axis=1)
    return CellScore(
        "oof_macro_auc",
        auc,
        max(0.0, 2 * auc - 1),
        folds,
        float(np.std(folds, ddof=1) / np.sqrt(F)),
        float(np.mean(null) / np.sqrt(K)),
        None,
        bin_rows,
        rates[np.arange(B), top],
        top,
        pred,
        _determinism(total),
    )


def _determinism(counts: np.ndarray) -> float:
    """Theil's U of the column given the target, or of its missing-value indicator if higher.

    Bin 0 holds the missing values; a column filled in only for one outcome is almost a
    function of the target through its missingness even when its values are spread out.
    """
    indicator = np.stack([counts[0], counts[1:].sum(axis=0)])
    return max(uncertainty_coefficient(counts), uncertainty_coefficient(indicator))


def _numeric(codes: np.ndarray, F: int, B: int, t: Target) -> CellScore:
    idx = t.fold * B + codes
    n = np.bincount(idx, minlength=F * B).reshape(F, B).astype(np.float64)
    s = np.bincount(idx, weights=t.y, minlength=F * B).reshape(F, B)
    s2 = np.bincount(idx, weights=t.y * t.y, minlength=F * B).reshape(F, B)
    other_n, other_s = n.sum(0)[None] - n, s.sum(0)[None] - s
    mean = float(t.prior[0])
    pred = (other_s + SMOOTHING * mean) / (other_n + SMOOTHING)
    sse = s2 - 2 * pred * s + pred * pred * n
    sst_f = s2.sum(1) - s.sum(1) ** 2 / np.maximum(n.sum(1), 1)
    sst = float(np.sum(t.y**2) - np.sum(t.y) ** 2 / len(t.y))
    r2 = 1 - float(sse.sum()) / sst if sst > 0 else float("nan")
    with np.errstate(invalid="ignore", divide="ignore"):
        folds = 1 - sse.sum(1) / sst_f
    rho = _spearman_cells(codes, pred, n, t, F, B)
    bin_rows = n.sum(0)
    raw = t.raw if t.raw is not None else t.y
    with np.errstate(invalid="ignore", divide="ignore"):
        bin_mean = np.bincount(codes, weights=raw, minlength=B) / bin_rows
    joint = np.bincount(codes * t.n_y_bins + t.y_bins, minlength=B * t.n_y_bins)
    return CellScore(
        "oof_r2",
        r2,
        max(0.0, r2),
        folds,
        float(np.nanstd(folds, ddof=1) / np.sqrt(F)),
        1.0 / np.sqrt(len(t.y)),
        rho,
        bin_rows,
        bin_mean,
        None,
        pred,
        _determinism(joint.reshape(B, t.n_y_bins)),
    )


def _spearman_cells(
    codes: np.ndarray, pred: np.ndarray, n: np.ndarray, t: Target, F: int, B: int
) -> float:
    """Spearman's rho between y and the out-of-fold prediction, from per-cell rank sums."""
    assert t.ranks is not None
    rank_sum = np.bincount(t.fold * B + codes, weights=t.ranks, minlength=F * B)
    flat_pred, flat_n = pred.ravel(), n.ravel()
    uniq, inv = np.unique(flat_pred, return_inverse=True)
    group_n = np.bincount(inv, weights=flat_n, minlength=uniq.size)
    start = np.cumsum(group_n) - group_n
    group_rank = start + (group_n + 1) / 2  # average rank of tied predictions
    cell_rank = group_rank[inv]
    total = len(t.y)
    mid = (total + 1) / 2
    cov = float(np.sum(cell_rank * rank_sum)) / total - mid * mid
    var_y = float(np.sum(t.ranks**2)) / total - mid * mid
    var_p = float(np.sum(flat_n * cell_rank**2)) / total - mid * mid
    if var_y <= 0 or var_p <= 1e-12:
        return 0.0
    return cov / np.sqrt(var_y * var_p)
