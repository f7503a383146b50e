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
