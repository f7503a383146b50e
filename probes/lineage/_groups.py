"""Group means of the target: a column that is its group's target mean, in sample.

A number constant within the groups of another column (or of the entity) that equals the
group's mean target computed with the row's own outcome (or with held-out rows) is a target
encoding fitted in sample: every row carries a share of its own label. The half-sample check
tells an encoding from an honest group attribute: the encoding matches the mean over all the
group's rows and not the mean over a content-chosen half of them; an attribute matches both
alike. Leave-one-out means vary within a group exactly against the row's own outcome;
cross-fitted means vary within groups without that tie, and are clean.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pandas as pd

from featureaudit.probes.lineage._fit import unexplained
from featureaudit.probes.lineage._thresholds import LineageThresholds

__all__ = ["GroupFigures", "group_figures", "grouping_codes"]

SHRINK = (0.0, 1.0, 10.0, 20.0)  # m-estimate weights of the global mean (common choices)
MAX_FOLDS = 10  # common practice, no source: cross-fitting uses at most 10 folds
TRACKS = 0.8  # r² of group-averaged values on group means that reads as an encoding
# common practice, no source: a column whose straight line on the in-sample group means
# leaves half of it unexplained is none of the variants (a one-pass numpy screen)
SCREEN = 0.5


@dataclass(frozen=True)
class GroupFigures:
    """How a column matches its group's target mean: which variant, how exactly."""

    variant: str  # in_sample, leave_one_out, varies
    u_fit: float
    u_half: float
    groups: int
    scope: str  # "all labelled rows" or "training rows"
    shrink: float
    means: dict[str, float]  # a few groups' target means, for the sentence


def grouping_codes(s: pd.Series, n_rows: int, th: LineageThresholds) -> np.ndarray | None:
    """Sorted-value codes of a column that groups rows (5 groups up to one per 2 rows)."""
    if pd.api.types.is_float_dtype(s.dtype) or pd.api.types.is_datetime64_any_dtype(s.dtype):
        return None
    codes, uniques = pd.factorize(s, sort=True, use_na_sentinel=True)
    if not th.min_groups <= len(uniques) <= th.max_groups_share * n_rows:
        return None
    return codes


def _encoding(codes: np.ndarray, y: np.ndarray, rows: np.ndarray, m: float, k: int) -> np.ndarray:
    """Each row's group mean of ``y`` over ``rows`` shrunk toward the mean by weight ``m``;
    rows whose group is missing (code -1) take part in no mean."""
    idx = np.flatnonzero(rows) if rows.dtype == bool else np.asarray(rows)
    idx = idx[codes[idx] >= 0]
    if idx.size == 0:
        return np.full(len(codes), np.nan)
    sums = np.bincount(codes[idx], weights=y[idx], minlength=k)
    counts = np.bincount(codes[idx], minlength=k).astype("float64")
    overall = float(y[idx].mean())
    with np.errstate(invalid="ignore", divide="ignore"):
        enc = (sums + m * overall) / (counts + m)
    enc[counts == 0] = np.nan
    out = np.full(len(codes), np.nan)
    ok = codes >= 0
    out[ok] = enc[codes[ok]]
    return out


def _constant_within(codes: np.ndarray, x: np.ndarray, ok: np.ndarray) -> bool:
    grouped = pd.Series(x[ok]).groupby(codes[ok])
    spread = (grouped.max() - grouped.min()).to_numpy()
    scale = max(float(np.nanstd(x[ok])), 1e-12)
    return bool((spread <= 1e-9 * scale + 1e-12).all())


def group_figures(
    codes: np.ndarray,
    x: np.ndarray,
    y: np.ndarray,
    scopes: dict[str, np.ndarray],
    half: np.ndarray,
    th: LineageThresholds,
) -> GroupFigures | None:
    """The best in-sample, leave-one-out or cross-fitted match of ``x`` to group means.

    ``scopes`` names sets of labelled rows the means may come from (all labelled rows, the
    training rows); ``half`` marks a content-chosen half of the rows.
    """
    k = int(codes.max()) + 1 if codes.size and codes.max() >= 0 else 0
    ok = (codes >= 0) & np.isfinite(x)
    groups = int(np.unique(codes[ok]).size)
    if k == 0 or groups < th.min_groups or ok.sum() < th.min_rows:
        return None
    # screen (one pass of numpy): every variant tracks the in-sample group means closely
    first = next(iter(scopes.values()))
    u_screen, _ = unexplained(x, _encoding(codes, y, first, 0.0, k), th.min_rows)
    if u_screen > SCREEN:
        return None
    if _constant_within(codes, x, ok):
        return _in_sample(codes, x, y, scopes, half, k, groups, th)
    return _varying(codes, x, y, scopes, k, groups, th)


def _in_sample(codes, x, y, scopes, half, k, groups, th) -> GroupFigures | None:  # noqa: ANN001
    best: tuple[float, str, float] | None = None
    for scope, rows in scopes.items():
        for m in SHRINK:
            u, _ = unexplained(x, _encoding(codes, y, rows, m, k), th.min_rows)
            if best is None or u < best[0]:
                best = (u, scope, m)
    if best is None or best[0] > th.close:
        return None
    u, scope, m = best
    rows = scopes[scope]
    u_half, _ = unexplained(x, _encoding(codes, y, rows & half, m, k), th.min_rows)
    enc = _encoding(codes, y, rows, 0.0, k)
    return GroupFigures("in_sample", u, u_half, groups, scope, m, _few_means(codes, enc))


def _varying(codes, x, y, scopes, k, groups, th) -> GroupFigures | None:  # noqa: ANN001
    scope, rows = next(iter(scopes.items()))
    grouped = rows & (codes >= 0)  # a row whose group is missing joins no group's mean
    sums = np.bincount(codes[grouped], weights=y[grouped], minlength=k)
    counts = np.bincount(codes[grouped], minlength=k).astype("float64")
    loo = np.full(len(x), np.nan)
    fit = rows & (counts[np.maximum(codes, 0)] >= 2) & (codes >= 0)
    loo[fit] = (sums[codes[fit]] - y[fit]) / (counts[codes[fit]] - 1)
    # within each group: a leave-one-out mean moves exactly against the row's own outcome
    u_loo, n = unexplained(_within(codes, x, fit), _within(codes, loo, fit), th.min_rows)
    enc = _encoding(codes, y, rows, 0.0, k)
    if n >= th.min_rows and u_loo <= th.close:
        return GroupFigures("leave_one_out", u_loo, 1.0, groups, scope, 0.0, _few_means(codes, enc))
    ok = (codes >= 0) & np.isfinite(x)
    distinct = pd.Series(x[ok]).groupby(codes[ok]).nunique()
    if distinct.median() > MAX_FOLDS:
        return None  # a cross-fitted mean takes one value per fold within a group
    mean_x = pd.Series(x[ok]).groupby(codes[ok]).mean()
    mean_y = pd.Series(enc[ok]).groupby(codes[ok]).first()
    u_track, _ = unexplained(mean_x.to_numpy(), mean_y.to_numpy(), th.min_groups)
    if 1.0 - u_track < TRACKS:
        return None
    return GroupFigures("varies", u_track, 1.0, groups, scope, 0.0, _few_means(codes, enc))


def _within(codes: np.ndarray, v: np.ndarray, rows: np.ndarray) -> np.ndarray:
    """``v`` minus its group's mean over ``rows`` (NaN elsewhere)."""
    out = np.full(len(v), np.nan)
    ok = rows & np.isfinite(v)
    out[ok] = v[ok] - pd.Series(v[ok]).groupby(codes[ok]).transform("mean").to_numpy()
    return out


def _few_means(codes: np.ndarray, enc: np.ndarray) -> dict[str, float]:
    """The target mean of the three largest groups (by code, ties by code order)."""
    ok = codes >= 0
    counts = np.bincount(codes[ok])
    top = np.argsort(-counts, kind="stable")[:3]
    first = {int(c): float(enc[np.flatnonzero(codes == c)[0]]) for c in top}
    return {str(c): round(v, 4) for c, v in first.items()}
