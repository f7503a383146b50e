"""Target encodings among the columns: a number constant within each category of another column
that equals the category's target statistic.

Each candidate pair is compared with scikit-learn's ``TargetEncoder`` at common smoothing
settings (and plain category means), fitted on all labelled rows versus on the training
rows. A match with all rows means held-out targets went into training features
(``fit_on_all_rows``, critical). A match with the training rows fitted in sample means each
training row's value includes its own target (``target_proxy``, high): scikit-learn warns
that ``fit(X, y).transform(X)`` on training data leaks, and cross fitting avoids it.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from featureaudit.load.io import numeric_view
from featureaudit.load.table import AuditTable
from featureaudit.vocab.evidence import Evidence

SMOOTHING = ("auto", 0.0, 1.0, 10.0, 20.0)
MAX_LEVELS = 5000
MAX_PAIRS = 50


def _codes(s: pd.Series) -> tuple[np.ndarray, int] | None:
    if pd.api.types.is_float_dtype(s.dtype) or pd.api.types.is_datetime64_any_dtype(s.dtype):
        return None
    codes, uniques = pd.factorize(s, use_na_sentinel=True)
    if not 2 <= len(uniques) <= MAX_LEVELS:
        return None
    return codes.astype(np.int64), len(uniques)


def _constant_within(x: np.ndarray, codes: np.ndarray, k: int) -> np.ndarray | None:
    """Per-category value of x if x is constant within every category, else None."""
    ok = (codes >= 0) & np.isfinite(x)
    if ok.sum() < 2:
        return None
    lo = np.full(k, np.inf)
    hi = np.full(k, -np.inf)
    np.minimum.at(lo, codes[ok], x[ok])
    np.maximum.at(hi, codes[ok], x[ok])
    seen = np.isfinite(lo)
    if not np.all(lo[seen] == hi[seen]) or np.unique(lo[seen]).size < 2:
        return None
    return np.where(seen, lo, np.nan)


def _candidates(
    table: AuditTable, codes: np.ndarray, k: int, rows: np.ndarray
) -> list[tuple[str, np.ndarray]]:
    """Per-category encodings an encoder would produce when fitted on ``rows``."""
    from sklearn.preprocessing import TargetEncoder

    assert table.y is not None  # encodings are checked only with a target
    y = table.y[rows]
    cats = codes[rows][:, None]
    target_type = {"numeric": "continuous", "binary": "binary"}.get(table.task or "", "multiclass")
    out = []
    grid = np.arange(k)[:, None]
    for smooth in SMOOTHING:
        enc = TargetEncoder(smooth=smooth, target_type=target_type)  # fit, not fit_transform
        enc.fit(cats, y)
        values = enc.transform(grid)
        for j in range(values.shape[1]):
            out.append(
                (
                    f"TargetEncoder(smooth={smooth!r})"
                    + (f", class {j}" if values.shape[1] > 1 else ""),
                    values[:, j],
                )
            )
    return out


def encoding_evidence(table: AuditTable, train: np.ndarray) -> list[Evidence]:
    labelled = table.labelled
    cat_cols = []
    for name in table.features + table.id_columns:
        got = _codes(table.frame[name])
        if got is not None:
            cat_cols.append((name, *got))
    evidence: list[Evidence] = []
    if not cat_cols:
        return evidence
    most_levels = max(k for _, _, k in cat_cols)
    pairs = 0
    for name in table.features:
        x = numeric_view(table.frame[name])
        if x is None or not pd.api.types.is_float_dtype(table.frame[name].dtype):
            continue
        head = x[:20_000]
        if np.unique(head[np.isfinite(head)]).size > most_levels:
            continue  # more distinct values than any category column has levels
        n_unique = np.unique(x[np.isfinite(x)]).size
        for cat, codes, k in cat_cols:
            if cat == name or n_unique > k or pairs >= MAX_PAIRS:
                continue
            per_cat = _constant_within(x, codes, k)
            if per_cat is None:
                continue
            pairs += 1
            found = _match(table, name, cat, per_cat, codes, k, x, labelled, train)
            if found is not None:
                evidence.append(found)
                break
    return evidence


def _best_gap(
    table: AuditTable,
    codes: np.ndarray,
    k: int,
    rows: np.ndarray,
    per_cat: np.ndarray,
    seen: np.ndarray,
) -> tuple[float, str]:
    """The closest encoder fitted on ``rows``: its largest gap to the column, and its name."""
    if rows.sum() < 2:
        return np.inf, ""
    return min(
        (
            (float(np.max(np.abs(enc[seen] - per_cat[seen]))), label)
            for label, enc in _candidates(table, codes, k, rows)
        ),
        key=lambda g: g[0],
    )


def _match(
    table: AuditTable,
    name: str,
    cat: str,
    per_cat: np.ndarray,
    codes: np.ndarray,
    k: int,
    x: np.ndarray,
    labelled: np.ndarray,
    train: np.ndarray,
) -> Evidence | None:
    """Which fit the column equals: all labelled rows (held-out targets used) or the training
    rows in sample. When both fit, or no held-out row has a target, the held-out targets
    cannot be blamed and the in-sample reading is the one reported."""
    seen = np.isfinite(per_cat)
    scale = np.nanmax(np.abs(per_cat)) or 1.0
    tol = 1e-6 * scale + 1e-9 if table.frame[name].dtype != np.float32 else 1e-6 * scale
    fit_rows = labelled & train & (codes >= 0)
    gap_tr, label_tr = _best_gap(table, codes, k, fit_rows, per_cat, seen)
    held_labelled = bool((labelled & ~train & (codes >= 0)).any())
    gap_all, label_all = (
        _best_gap(table, codes, k, labelled & (codes >= 0), per_cat, seen)
        if held_labelled
        else (np.inf, "")
    )
    if gap_all <= tol and gap_tr > tol:
        detail = {
            "category_column": cat,
            "encoder": label_all,
            "fitted_on": "all rows",
            "categories": int(seen.sum()),
            "max_abs_gap": gap_all,
            "gap_to_training_fit": gap_tr,
        }
        return Evidence(
            "fitscope",
            "fit_on_all_rows",
            "max_abs_gap_to_all_rows_encoding",
            gap_all,
            tol,
            "critical",
            column=name,
            severity=0.9,
            detail=detail,
            summary=f"target encoding of {cat!r} fitted with held-out targets: "
            f"equals {label_all} on all labelled rows",
        )
    if gap_tr <= tol:
        detail = {
            "category_column": cat,
            "encoder": label_tr,
            "fitted_on": "training rows",
            "categories": int(seen.sum()),
            "max_abs_gap": gap_tr,
        }
        return Evidence(
            "fitscope",
            "target_proxy",
            "max_abs_gap_to_in_sample_encoding",
            gap_tr,
            tol,
            "high",
            column=name,
            severity=0.7,
            detail=detail,
            summary=f"target encoding of {cat!r} fitted in sample: each training "
            "row's value includes its own target; encode out of fold "
            "(cross fitting)",
        )
    return None
