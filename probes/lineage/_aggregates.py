"""Whole-history aggregates: a column constant within each entity that equals the entity's
mean, sum, minimum, maximum or SD of another column over all its periods.

Over every period, the aggregate gives the entity's early rows its later values (and, with a
split, its held-out ones). Recomputed over the entity's training periods the statistic
differs; an aggregate taken over the training periods matches those instead, and is clean.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pandas as pd

from featureaudit.probes.lineage._fit import unexplained
from featureaudit.probes.lineage._thresholds import LineageThresholds

__all__ = ["AggregateFigures", "aggregate_figures", "constant_within"]

STATS = ("mean", "sum", "min", "max", "std")


@dataclass(frozen=True)
class AggregateFigures:
    """The best aggregate of another column over all rows and over the training rows."""

    source: str
    stat: str
    u_all: float
    u_train: float
    split: bool
    entities: int


def constant_within(codes: np.ndarray, x: np.ndarray) -> bool:
    """Constant within every entity (at least two rows somewhere), within float rounding."""
    ok = (codes >= 0) & np.isfinite(x)
    if not ok.any():
        return False
    frame = pd.DataFrame({"g": codes[ok], "x": x[ok]})
    grouped = frame.groupby("g")["x"]
    if int(grouped.size().max()) < 2:
        return False
    scale = max(float(np.abs(x[ok]).max()), 1e-12)
    return bool((grouped.max() - grouped.min() <= 1e-9 * scale).all())


def _per_entity(codes: np.ndarray, v: np.ndarray, rows: np.ndarray, stat: str) -> np.ndarray:
    ok = rows & np.isfinite(v) & (codes >= 0)
    values = pd.Series(v[ok]).groupby(codes[ok]).agg(stat)
    out = np.full(len(v), np.nan)
    has = (codes >= 0) & np.isin(codes, values.index.to_numpy())
    out[has] = values.reindex(codes[has]).to_numpy()
    return out


def aggregate_figures(
    codes: np.ndarray,
    x: np.ndarray,
    others: dict[str, np.ndarray],
    train: np.ndarray | None,
    th: LineageThresholds,
) -> AggregateFigures | None:
    """The aggregate of another (varying) column that ``x`` matches best, if any is close."""
    entities = int(np.unique(codes[codes >= 0]).size)
    if entities < th.min_groups:
        return None
    everywhere = np.ones(len(x), bool)
    best: tuple[float, str, str] | None = None
    for name, v in others.items():
        if constant_within(codes, v):
            continue  # an entity's attribute: its mean is itself
        for stat in STATS:
            u, n = unexplained(x, _per_entity(codes, v, everywhere, stat), th.min_rows)
            if n >= th.min_rows and (best is None or u < best[0]):
                best = (u, name, stat)
    if best is None or best[0] > th.exact:
        return None
    u_all, name, stat = best
    if train is None:
        return AggregateFigures(name, stat, u_all, 1.0, False, entities)
    u_train, _ = unexplained(x, _per_entity(codes, others[name], train, stat), th.min_rows)
    return AggregateFigures(name, stat, u_all, u_train, True, entities)
