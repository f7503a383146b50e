"""How much of a column a candidate statistic leaves unexplained (1 − r² of a straight line)."""

from __future__ import annotations

import numpy as np

__all__ = ["unexplained"]


def unexplained(x: np.ndarray, s: np.ndarray, min_rows: int) -> tuple[float, int]:
    """1 − r² of ``x`` on ``s`` over the rows where both are finite, and those rows.

    1.0 (nothing explained) when fewer than ``min_rows`` rows remain or either is constant
    there. reference: numpy.corrcoef (Pearson's r).
    """
    both = np.isfinite(x) & np.isfinite(s)
    n = int(both.sum())
    if n < min_rows:
        return 1.0, n
    a, b = x[both], s[both]
    a = a - a.mean()
    b = b - b.mean()
    saa, sbb = float(a @ a), float(b @ b)
    scale = max(float(np.abs(x[both]).max()), 1e-300) ** 2 * n
    if saa <= 1e-24 * scale or sbb <= 1e-300:
        return 1.0, n
    r2 = float(a @ b) ** 2 / (saa * sbb)
    return max(0.0, 1.0 - min(r2, 1.0)), n


def unexplained_within(
    x: np.ndarray, s: np.ndarray, group: np.ndarray, min_rows: int, min_group_rows: int
) -> tuple[float, int]:
    """1 − r² of ``x`` on ``s`` with a straight line per group (a statistic rescaled within
    each entity, e.g. standardised per entity); groups with fewer than ``min_group_rows``
    rows where both are finite are left out, since a short group fits any line."""
    both = np.isfinite(x) & np.isfinite(s)
    g = group[both]
    counts = np.bincount(g, minlength=int(group.max()) + 1 if group.size else 0)
    keep = counts[g] >= min_group_rows
    n = int(keep.sum())
    if n < min_rows:
        return 1.0, n
    g, a, b = g[keep], x[both][keep], s[both][keep]
    k = counts.size
    m = counts.astype("float64")
    ma = np.bincount(g, weights=a, minlength=k) / np.maximum(m, 1)
    mb = np.bincount(g, weights=b, minlength=k) / np.maximum(m, 1)
    a, b = a - ma[g], b - mb[g]
    saa = np.bincount(g, weights=a * a, minlength=k)
    sbb = np.bincount(g, weights=b * b, minlength=k)
    sab = np.bincount(g, weights=a * b, minlength=k)
    total = float(saa.sum())
    if total <= 1e-24 * max(float(np.abs(x[both]).max()), 1e-300) ** 2 * n:
        return 1.0, n
    fitted = np.divide(sab * sab, sbb, out=np.zeros(k), where=sbb > 1e-300)
    return max(0.0, 1.0 - min(float(fitted.sum()) / total, 1.0)), n
