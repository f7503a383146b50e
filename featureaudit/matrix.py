"""Columns as a float matrix that does not depend on the order of rows: what adversarial
validation and the impact models fit on."""

from __future__ import annotations

import numpy as np
import pandas as pd

from featureaudit.io import numeric_view

__all__ = ["feature_matrix", "order_free_codes"]


def order_free_codes(s: pd.Series) -> np.ndarray:
    """A column as floats that do not depend on row order: numbers and times as they are,
    categories as codes of their sorted values (missing stays missing)."""
    v = numeric_view(s)
    if v is not None:
        return v
    if isinstance(s.dtype, pd.CategoricalDtype):  # the categories' texts ranked once
        raw = s.cat.codes.to_numpy()
        names = np.asarray(s.cat.categories.astype("string").astype(object), dtype=object)
        used = np.zeros(len(names), dtype=bool)
        used[raw[raw >= 0]] = True
        _, rank = np.unique(names[used], return_inverse=True)  # Python's str order, NULs kept
        ranks = np.full(len(names) + 1, np.nan)  # the last entry serves code -1 (missing)
        ranks[np.flatnonzero(used)] = rank
        return ranks[raw]
    text = s.astype("string")
    codes, _ = pd.factorize(text, sort=True, use_na_sentinel=True)
    return np.where(codes < 0, np.nan, codes).astype(np.float64)


def feature_matrix(frame: pd.DataFrame, columns: list[str], rows: np.ndarray) -> np.ndarray:
    """The sampled rows as floats, coded independently of the order of rows."""
    out = [order_free_codes(frame[name])[rows] for name in columns]
    return np.column_stack(out) if out else np.zeros((rows.size, 0))
