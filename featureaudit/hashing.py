"""Row hashes and robust scaling for copy detection: vectorised, mergeable across chunks.

A row's hash combines its columns' 64-bit patterns; equal rows (NaN equal to NaN) hash
equal, which is what ``pandas.DataFrame.duplicated`` treats as a copy.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from featureaudit.io import numeric_view
from featureaudit.sample import NAN_BITS, number_bits

__all__ = ["row_hashes", "column_codes", "robust_params", "member"]

_MULT = np.uint64(0x9E3779B97F4A7C15)
_M1 = np.uint64(0xBF58476D1CE4E5B9)


def column_codes(s: pd.Series) -> np.ndarray:
    """A uint64 pattern per value: float bits for numbers and times, a stable hash otherwise."""
    values = numeric_view(s)
    if values is not None:
        return number_bits(values)
    if isinstance(s.dtype, pd.CategoricalDtype):
        cats = pd.util.hash_array(np.asarray(s.cat.categories.astype(str), dtype=object))
        table = np.r_[cats, np.uint64(NAN_BITS)].astype(np.uint64)
        return table[s.cat.codes.to_numpy()]  # code -1 (missing) takes the last entry
    return (
        pd.util.hash_pandas_object(s.astype(str).where(s.notna(), "\x00NA"), index=False)
        .to_numpy()
        .astype(np.uint64)
    )


def _mix(h: np.ndarray, c: np.ndarray) -> np.ndarray:
    """h = h * odd constant xor scramble(c), in place. The scramble (an xor-shift and an odd
    multiplier, both one-to-one) folds the high bits of c, where float patterns differ, into
    the low bits, so the next multiplication cannot push them out. ``c`` is overwritten."""
    np.bitwise_xor(c, c >> np.uint64(32), out=c)
    np.multiply(c, _M1, out=c)
    np.multiply(h, _MULT, out=h)
    np.bitwise_xor(h, c, out=h)
    return h


def row_hashes(frame: pd.DataFrame, columns: list[str], n_jobs: int = 1) -> np.ndarray:
    """One uint64 per row over ``columns``; rows equal in every column get equal hashes."""
    from featureaudit.threads import column_imap

    h = np.full(len(frame), np.uint64(0xCBF29CE484222325), dtype=np.uint64)
    with np.errstate(over="ignore"):
        for codes in column_imap(lambda name: column_codes(frame[name]), columns, n_jobs):
            h = _mix(h, codes)
    return h


def robust_params(values: np.ndarray, rows: np.ndarray) -> tuple[float, float]:
    """Median and IQR over ``rows`` (a sample of training rows; MAD or SD when the IQR is
    zero)."""
    ref = values[rows]
    ref = ref[np.isfinite(ref)]
    if ref.size == 0:
        return 0.0, 1.0
    med = float(np.median(ref))
    q25, q75 = np.percentile(ref, [25, 75])
    scale = float(q75 - q25) or float(np.median(np.abs(ref - med))) * 1.4826 or float(ref.std())
    return med, (scale or 1.0)


def member(keys: np.ndarray, pool: np.ndarray) -> np.ndarray:
    """``np.isin(keys, pool)`` for uint64 hashes by sorting and binary search."""
    ref = np.sort(pool)
    if ref.size == 0:
        return np.zeros(keys.shape, dtype=bool)
    pos = np.minimum(np.searchsorted(ref, keys), ref.size - 1)
    return ref[pos] == keys
