"""Decorrelation fitted on all rows (PCA, whitening, any rotation of centred columns): a group
of columns with mean 0 and pairwise correlation 0 over all rows, not over the training rows.

PCA subtracts the fitted rows' mean and rotates onto the eigenvectors of their covariance, so
over those rows every output has mean 0 and every pair covariance 0, exact but for rounding;
over other rows both drift by sampling. The training rows' cross-products cancel the held-out
rows', so a training-row correlation has SD about sqrt(h) / t for h held-out and t training
rows. The group is found without being told: the columns whose mean is 0 to precision over all
rows (or over the training rows), then, in table order, the sets whose pairwise correlations
are all 0 to precision.

Thresholds: "exact" is within 5 SDs of the rounding of the products (each value's storage
error from ``_precision``) or within ``FLOOR`` (1e-9) of the columns' SDs: the float64
arithmetic of the rotation itself, whose error follows the scale of inputs the table no longer
holds (measured up to 2.3e-13 in correlation on scikit-learn's whitened PCA of the
breast-cancer data, so 1e-9 leaves room for inputs 4,000 times wider); a training-row
correlation spreads by 0.67 / sqrt(n) for a quarter held out, above 3e-9 up to 1e16 rows. The
two fits are told apart when that sampling SD exceeds 3 times the tolerance and at least
``min_side`` rows are held out (the other fingerprints' rule).
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from featureaudit.load.io import numeric_view
from featureaudit.load.table import AuditTable
from featureaudit.probes.fitscope._fingerprint import verdict as _verdict
from featureaudit.probes.fitscope._precision import (
    largest_value_error,
    mean_tolerance,
    value_error,
)
from featureaudit.probes.fitscope._thresholds import THRESHOLDS
from featureaudit.vocab.evidence import Evidence

__all__ = ["decorrelated"]

FLOOR = 1e-9  # arithmetic of the fit, in SDs (mean) and in correlation
MAX_CANDIDATES = 500  # cost bound: the correlation matrix of the centred columns
EPS = float(np.finfo(np.float64).eps)


def _centred_candidates(
    table: AuditTable, train: np.ndarray
) -> tuple[list[str], np.ndarray, np.ndarray]:
    """Columns whose mean over all rows or over the training rows is 0 to precision, with
    their values and per-value errors (columns with gaps or fewer than 3 values are left)."""
    names, cols, errs = [], [], []
    weights = train.astype(np.float64)  # a dot product gives the training rows' sum, no copy
    n, n_train = train.size, max(int(train.sum()), 1)
    for name in table.features:
        s = table.frame[name]
        if pd.api.types.is_bool_dtype(s.dtype) or pd.api.types.is_datetime64_any_dtype(s.dtype):
            continue
        v = numeric_view(s)
        if v is None or not np.all(np.isfinite(v)):
            continue
        v = np.asarray(v, dtype=np.float64)
        # the cheap gate, in three passes and no copy: far from centred on either set of
        # rows. Where |mean| <= 1e-3 SD, the one-pass variance E[v^2] - mean^2 loses at most
        # 1e-6 of itself to cancellation; elsewhere the gate fails whatever the SD's error
        mean, mean_train = float(v.sum()) / n, float(v @ weights) / n_train
        sd = float(np.sqrt(max(float(v @ v) / n - mean * mean, 0.0)))
        if sd == 0 or min(abs(mean), abs(mean_train)) > 1e-3 * sd:
            continue
        # the mean tolerances below are at most 5 e_max / sqrt(3 n) + 16 eps max|v|, with
        # e_max the largest storage error: a mean past that bound on both sets of rows rules
        # the column out before an error per value is worked out
        e_max, top = largest_value_error(s, v), float(np.max(np.abs(v)))
        slack = 1 + 1e-6  # these means and np.mean's may differ in their last bits
        if all(
            abs(m) > slack * max(5 * e_max / np.sqrt(3 * k) + 16 * EPS * top, FLOOR * sd)
            for m, k in ((mean, n), (mean_train, n_train))
        ):
            continue
        e = value_error(s, v)
        floor = FLOOR * sd
        if abs(float(np.mean(v))) <= max(mean_tolerance(v, e), floor) or abs(
            float(np.mean(v[train]))
        ) <= max(mean_tolerance(v[train], e[train]), floor):
            names.append(name)
            cols.append(v)
            errs.append(e)
        if len(names) == MAX_CANDIDATES:
            break
    if not names:
        return [], np.empty((0, 0)), np.empty((0, 0))
    return names, np.column_stack(cols), np.column_stack(errs)


def _exact(x: np.ndarray, e: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """Per column: |mean| and its tolerance; per pair: |correlation| and its tolerance."""
    n = x.shape[0]
    mean = x.mean(axis=0)
    z = x - mean
    sd = np.sqrt(np.mean(z**2, axis=0))
    mean_tol = np.array([mean_tolerance(x[:, j], e[:, j]) for j in range(x.shape[1])])
    mean_tol = np.maximum(mean_tol, FLOOR * sd)
    corr = (z.T @ z) / n / np.outer(sd, sd)
    # SD of the rounding in a sum of cross-products: sqrt(sum(x_i^2 e_j^2 + x_j^2 e_i^2) / 3)
    spread = np.sqrt(((z**2).T @ (e**2) + (e**2).T @ (z**2)) / 3.0) / n
    corr_tol = np.maximum(5 * spread / np.outer(sd, sd), FLOOR)
    return np.abs(mean), mean_tol, np.abs(corr), corr_tol


def _groups(mean: np.ndarray, mean_tol: np.ndarray, corr: np.ndarray, tol: np.ndarray) -> list:
    """Sets of centred columns, in table order, whose pairwise correlations are all 0."""
    groups: list[list[int]] = []
    for j in np.flatnonzero(mean <= mean_tol):
        for g in groups:
            if all(corr[j, i] <= tol[j, i] for i in g):
                g.append(int(j))
                break
        else:
            groups.append([int(j)])
    return [g for g in groups if len(g) >= 2]


def _holds(g: list[int], stats: tuple) -> tuple[bool, float, float]:
    """Whether the group is centred and decorrelated over these rows; largest |corr|, tol."""
    mean, mean_tol, corr, tol = stats
    sub, sub_tol = corr[np.ix_(g, g)], tol[np.ix_(g, g)]
    off = ~np.eye(len(g), dtype=bool)
    ok = bool(np.all(mean[g] <= mean_tol[g]) and np.all(sub[off] <= sub_tol[off]))
    return ok, float(sub[off].max()), float(sub_tol[off].max())


def decorrelated(table: AuditTable, train: np.ndarray, split: bool) -> list[Evidence]:
    """Evidence for each member of a group decorrelated over all rows or the training rows."""
    names, x, e = _centred_candidates(table, train)
    if len(names) < 2 or int(train.sum()) < THRESHOLDS.min_side:
        return []
    on_all, on_train = _exact(x, e), _exact(x[train], e[train])
    held, t = int((~train).sum()), int(train.sum())
    spread = float(np.sqrt(held) / t)  # SD of a training-row correlation under an all-rows fit
    out: list[Evidence] = []
    seen: set[int] = set()
    for g in _groups(*on_all) + _groups(*on_train):
        if seen.intersection(g):
            continue
        seen.update(g)
        all_exact, corr_all, tol_all = _holds(g, on_all)
        train_exact, corr_tr, tol_tr = _holds(g, on_train)
        members = [names[i] for i in g]
        detail = {
            "group": members,
            "all_rows": {
                "max_abs_correlation": corr_all,
                "max_abs_mean": float(on_all[0][g].max()),
            },
            "training_rows": {
                "max_abs_correlation": corr_tr,
                "max_abs_mean": float(on_train[0][g].max()),
            },
            "tolerance_correlation": max(tol_all, tol_tr),
            "sampling_sd_of_training_correlation": spread,
        }
        what = (
            f"decorrelated as by PCA, whitening or a rotation, with {len(g) - 1} other "
            f"column{'s' if len(g) > 2 else ''} ({', '.join(members[:6])}"
            f"{', …' if len(members) > 6 else ''}: mean 0, correlation 0)"
        )
        for i in g:
            found = _verdict(
                names[i],
                what,
                all_exact,
                train_exact,
                held >= THRESHOLDS.min_side and spread > 3 * max(tol_all, tol_tr),
                split,
                detail,
                "training_rows_max_abs_correlation",
                corr_tr,
            )
            if found is not None:
                out.append(found)
    return out
