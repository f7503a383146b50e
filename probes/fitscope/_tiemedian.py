"""Median imputation in a column whose values tie naturally (measurements on a grid).

The imputed value is then a value the data holds anyway, so the pile mixes filled rows with
genuine copies and either median may explain it given enough genuine copies. A set of rows
explains the pile when the genuine copies its median needs (the fewest copies of the value
that make it the median of the other rows) are plausible under a Poisson law whose mean is
the median count of the value's neighbouring distinct values, scaled to the rows' share.
The evidence statistic is that Poisson tail for each set of rows.
"""

from __future__ import annotations

import numpy as np
from scipy.stats import poisson

from featureaudit.probes.fitscope._thresholds import THRESHOLDS

__all__ = ["copies_needed", "median_explains", "neighbour_rate"]


def neighbour_rate(v: np.ndarray, value: float, k: int = THRESHOLDS.neighbours) -> float:
    """The median count of the ``k`` nearest distinct values on each side of ``value``: its
    natural count had it not been imputed."""
    uniq, counts = np.unique(v, return_counts=True)
    i = int(np.searchsorted(uniq, value))
    j = i + 1 if i < uniq.size and uniq[i] == value else i
    near = np.r_[counts[max(0, i - k) : i], counts[j : j + k]]
    return float(np.median(near)) if near.size else 1.0


def copies_needed(x: np.ndarray, value: float, tol: float) -> int | None:
    """The fewest copies of ``value`` that, added to ``x``, make it the median (None if even
    that cannot, e.g. no rows)."""
    below, above = int((x < value).sum()), int((x > value).sum())
    for g in range(0, abs(below - above) + 3):
        n = below + above + g
        if n == 0:
            continue
        lo, hi = (n - 1) // 2, n // 2  # the middle positions of the merged sorted rows
        if below <= lo and hi <= below + g - 1:
            return g
        if g == 0:
            merged_median = float(np.median(x))
            if abs(merged_median - value) <= tol:
                return 0
    return None


def median_explains(
    x: np.ndarray, value: float, tol: float, rows_at_value: int, expected: float
) -> tuple[bool, dict]:
    """Does the median of ``x`` (the rows other than the pile) plus plausible genuine copies
    give ``value``? ``expected`` is the natural count of the value in these rows."""
    g = copies_needed(x, value, tol)
    if g is None or g > rows_at_value:
        return False, {"copies_needed": g, "poisson_tail": 0.0}
    tail = float(poisson.sf(g - 1, max(expected, 1e-9))) if g > 0 else 1.0
    return tail >= THRESHOLDS.median_alpha, {"copies_needed": g, "poisson_tail": tail}
