"""Copies that natural ties cannot explain: a null the leak itself does not inflate.

The training-part baseline (random parts of the training rows queried against the rest)
measures natural copies, but a leak that copies rows before the split (oversampling,
appending a table twice) copies rows inside the training part too, and the baseline rises
with it. A copy's own content says whether ties could have made it: under independent
columns, another record holds the same content with probability the product of its values'
frequencies. The frequencies are counted over the table's *distinct* rows, so copies do not
inflate their own values; the expected number of natural partners among the training rows
is that product times their number. Few-valued columns (survey answers, hourly readings on
a grid) give copies many expected partners; a row with a value of a continuous column that
no other distinct row holds has almost none. Independence understates the ties of
correlated columns (statsmodels' ``fair``: 13 % expected against 38 % seen), so a copy counts
as unexplained only below ``unexplained_partners`` expected partners, many orders of
magnitude below one.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from featureaudit.hashing import column_codes

__all__ = ["expected_partners"]


def expected_partners(
    frame: pd.DataFrame, cols: list[str], h: np.ndarray, rows: np.ndarray, partners: int
) -> np.ndarray:
    """log10 of the natural partners expected for each of ``rows`` among ``partners`` rows,
    from its values' frequencies over the table's distinct rows (``h``: row hashes)."""
    distinct = np.flatnonzero(~pd.Series(h).duplicated().to_numpy())
    log_p = np.zeros(rows.size)
    for c in cols:
        codes = column_codes(frame[c])
        counts = pd.Series(codes[distinct]).value_counts()
        freq = counts.reindex(codes[rows]).to_numpy(dtype=float) / distinct.size
        log_p += np.log10(np.where(np.isfinite(freq) & (freq > 0), freq, 1.0 / distinct.size))
    return log_p + np.log10(max(partners, 1))


_ODD = np.uint64(0x9E3779B97F4A7C15)
_M1 = np.uint64(0xBF58476D1CE4E5B9)


def _term(codes: np.ndarray, position: int) -> np.ndarray:
    """A column's share of an additive row key: its codes scrambled with its position, so a
    row's key less one column's term is the key of the row without that column."""
    c = codes ^ np.uint64((position + 1) * 0x632BE59BD9B4E019 % 2**64)
    c = c ^ (c >> np.uint64(31))
    c = c * _M1
    return c ^ (c >> np.uint64(29))


def one_column_apart(
    frame: pd.DataFrame, cols: list[str], h: np.ndarray, rows: np.ndarray
) -> np.ndarray:
    """For each of ``rows``: does another distinct row of the table match it on every column
    but one? Natural repeats come with such neighbours (a panel's person-level columns, hourly
    readings on a grid); rows copied by a pipeline step from a table whose rows do not repeat
    have none."""
    distinct = np.flatnonzero(~pd.Series(h).duplicated().to_numpy())
    found = np.zeros(rows.size, dtype=bool)
    if rows.size == 0 or len(cols) < 2:
        return found
    with np.errstate(over="ignore"):
        terms = [_term(column_codes(frame[c]), i) for i, c in enumerate(cols)]
        total = np.zeros(len(frame), dtype=np.uint64)
        for t in terms:
            total += t
        for t in terms:
            keys = total - t
            pool = np.sort(keys[distinct])
            lo = np.searchsorted(pool, keys[rows], side="left")
            hi = np.searchsorted(pool, keys[rows], side="right")
            found |= (hi - lo) >= 2  # itself and another distinct row
    return found
