"""Robust scaling fitted on all rows: median 0 and interquartile range 1 over all rows.

scikit-learn's ``RobustScaler`` subtracts the median and divides by the 25-75 % range
(numpy's linear-interpolation percentiles), so over the rows it was fitted on the column has
median 0 and IQR 1 up to the storage rounding of the few values those percentiles
interpolate (``_precision``); over any other set of rows both drift by sampling.
"""

from __future__ import annotations

import numpy as np

from featureaudit.probes.fitscope._fingerprint import verdict as _verdict

__all__ = ["looks_robust", "robust_scaled"]


def _median_iqr(x: np.ndarray) -> tuple[float, float]:
    q1, med, q3 = np.percentile(x, [25, 50, 75])
    return float(med), float(q3 - q1)


def looks_robust(v: np.ndarray, v_tr: np.ndarray) -> bool:
    """The cheap gate: median near 0 and IQR near 1 over all rows or the training rows, in a
    column that is not whole numbers (integers can have median 0 and IQR 1 by themselves)."""
    if np.all(v == np.round(v)):
        return False
    return any(_centred_unit_iqr(x) for x in (v, v_tr))


def _centred_unit_iqr(x: np.ndarray) -> bool:
    if not _median_may_be_zero(x) or not _iqr_may_be_one(x):
        return False
    m, iqr = _median_iqr(x)
    return abs(m) <= 1e-3 and abs(iqr - 1) <= 1e-2


def _median_may_be_zero(x: np.ndarray, tol: float = 1e-3) -> bool:
    """A necessary condition of |median| <= ``tol`` by two counts (a median at most tol has
    half the values at most tol, and likewise below): no percentile on most columns."""
    half = x.size / 2
    return bool(x.size) and (x <= tol).sum() >= half and (x >= -tol).sum() >= half


def _iqr_may_be_one(x: np.ndarray, reach: float = 0.51) -> bool:
    """A necessary condition, by two counts, of an IQR of at most 1.01 around a median within
    1e-3 of 0: the quartiles' distances from the median sum to the IQR, so one of them is at
    most 0.505, and q25 >= -0.506 leaves at most k + 1 values below it (k = floor(0.25 (n-1)),
    numpy's linear interpolation), q75 <= 0.506 at least j + 1 values at or below it
    (j = floor(0.75 (n-1))); ``reach`` 0.51 keeps a margin over 0.506."""
    n = x.size
    if n < 2:
        return True
    below = int(np.count_nonzero(x < -reach))
    at_or_below = int(np.count_nonzero(x <= reach))
    return below <= (n - 1) // 4 + 1 or at_or_below >= (3 * (n - 1)) // 4 + 1


def robust_scaled(name, values, err, ok, train, split):
    v, v_tr = values[ok], values[ok & train]
    e = err[ok]
    tol = 4 * float(np.max(e[np.abs(v) <= 3])) if np.any(np.abs(v) <= 3) else np.inf
    med, iqr = _median_iqr(v)
    med_tr, iqr_tr = _median_iqr(v_tr)
    all_exact = abs(med) <= tol and abs(iqr - 1) <= 2 * tol
    train_exact = abs(med_tr) <= tol and abs(iqr_tr - 1) <= 2 * tol
    held = int(ok.sum() - (ok & train).sum())
    # the sampling SD of a median of the training rows, in IQR units (1.349 SD of a normal)
    spread = 1.2533 / 1.349 * np.sqrt(held / max(ok.sum() * (ok & train).sum(), 1))
    detail = {
        "all_rows": {"median": med, "iqr": iqr},
        "training_rows": {"median": med_tr, "iqr": iqr_tr},
        "tolerance": tol,
        "sampling_sd_of_training_median": float(spread),
    }
    return _verdict(
        name,
        "robust-scaled (median 0, IQR 1)",
        all_exact,
        train_exact,
        held >= 20 and spread > 3 * tol,
        split,
        detail,
        "training_rows_median",
        med_tr,
    )
