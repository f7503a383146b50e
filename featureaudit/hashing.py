"""Row hashes and robust scaling for copy detection: vectorised, mergeable across chunks.

A row's hash combines its columns' 64-bit patterns; equal rows (NaN equal to NaN) hash
equal, which is what ``pandas.DataFrame.duplicated`` treats as a copy.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from featureaudit.io import numeric_view

__all__ = ["row_hashes", "column_codes", "robust_params"]

_MULT = np.uint64(0x9E3779B97F4A7C15)
_NAN = np.uint64(0x7FF8DEADBEEF0001)


def column_codes(s: pd.Series) -> np.ndarray:
    """A uint64 pattern per value: float bits for numbers and times, a stable hash otherwise."""
    values = numeric_view(s)
    if values is not None:
        v = values.copy()
        v[v == 0] = 0.0                        # -0.0 and 0.0 are the same value
        bits = v.view(np.uint64).copy()
        bits[np.isnan(values)] = _NAN
        return bits
    if isinstance(s.dtype, pd.CategoricalDtype):
        cats = pd.util.hash_array(np.asarray(s.cat.categories.astype(str), dtype=object))
        table = np.r_[cats, np.uint64(_NAN)].astype(np.uint64)
        return table[s.cat.codes.to_numpy()]          # code -1 (missing) takes the last entry
    return pd.util.hash_pandas_object(s.astype(str).where(s.notna(), "\x00NA"),
                                      index=False).to_numpy().astype(np.uint64)


def _mix(h: np.ndarray, c: np.ndarray) -> np.ndarray:
    h ^= c + np.uint64(0x9E3779B97F4A7C15) + (h << np.uint64(6)) + (h >> np.uint64(2))
    h *= _MULT
    return h


def row_hashes(frame: pd.DataFrame, columns: list[str]) -> np.ndarray:
    """One uint64 per row over ``columns``; rows equal in every column get equal hashes."""
    from concurrent.futures import ThreadPoolExecutor
    h = np.full(len(frame), np.uint64(0xCBF29CE484222325), dtype=np.uint64)
    with ThreadPoolExecutor(max_workers=2) as pool, np.errstate(over="ignore"):
        for codes in pool.map(lambda name: column_codes(frame[name]), columns):
            h = _mix(h, codes)
    return h


def robust_params(values: np.ndarray, train: np.ndarray, sample: int = 50_000
                  ) -> tuple[float, float]:
    """Median and IQR of the training rows (MAD or SD when the IQR is zero), estimated on an
    evenly spaced sample of at most ``sample`` training values."""
    ref = values[train & np.isfinite(values)]
    if ref.size == 0:
        return 0.0, 1.0
    ref = ref[:: max(1, ref.size // sample)]
    med = float(np.median(ref))
    q25, q75 = np.percentile(ref, [25, 75])
    scale = float(q75 - q25) or float(np.median(np.abs(ref - med))) * 1.4826 or float(ref.std())
    return med, (scale or 1.0)
