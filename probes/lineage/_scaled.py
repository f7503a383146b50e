"""Per-entity standardisation over every period: mean 0 and SD 1 within each entity.

A value standardised within its entity over all the entity's periods used the later periods
(and, with a split, the held-out ones) to scale the earlier rows. The fingerprint is exact
over the rows the statistics came from: mean 0 and SD 1 (population or sample SD) within
every entity, within the rounding the column is stored with. Standardised on each entity's
training periods, the fingerprint holds over the training rows instead, and that is clean.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pandas as pd

__all__ = ["ScaleFigures", "scale_figures"]

COARSE = 1e-3  # common practice, no source: standardised values keep more than 3 decimals


@dataclass(frozen=True)
class ScaleFigures:
    """Shares of entities whose rows hold the fingerprint, over all rows and training rows."""

    holds_all: float
    holds_train: float
    entities: int
    split: bool
    shift: float  # mean |change| of training rows' values re-standardised on training rows


def _grid(x: np.ndarray) -> float:
    """The rounding step a column is written with (10**-d), or float64's for full precision."""
    finite = x[np.isfinite(x)]
    scale = max(float(np.abs(finite).max()), 1.0) if finite.size else 1.0
    for d in range(0, 10):
        q = 10.0**-d
        if np.all(np.abs(finite / q - np.round(finite / q)) < 1e-6):
            return q
    return scale * 2.0**-52


def _holds(codes: np.ndarray, x: np.ndarray, keep: np.ndarray, min_rows: int) -> tuple[float, int]:
    """Share of entities (with ``min_rows`` rows among ``keep``) at mean 0 and SD 1."""
    frame = pd.DataFrame({"g": codes[keep], "x": x[keep]})
    stats = frame.groupby("g")["x"].agg(["mean", "count", "std"])
    stats = stats[stats["count"] >= min_rows]
    if stats.empty:
        return 0.0, 0
    n = stats["count"].to_numpy(dtype="float64")
    q = _grid(x[keep])
    tol = 5.0 * q / np.sqrt(12.0) + 1e-9
    sd1 = stats["std"].to_numpy()
    sd0 = sd1 * np.sqrt((n - 1) / n)
    ok = (np.abs(stats["mean"].to_numpy()) <= tol) & (
        (np.abs(sd1 - 1) <= 2 * tol) | (np.abs(sd0 - 1) <= 2 * tol)
    )
    return float(ok.mean()), len(stats)


def scale_figures(
    codes: np.ndarray, x: np.ndarray, train: np.ndarray | None, min_rows: int
) -> ScaleFigures | None:
    """The fingerprint over all rows and over the training rows (``train`` None: no split)."""
    present = np.isfinite(x) & (codes >= 0)
    if not present.any() or _grid(x[present]) > COARSE:
        return None  # whole numbers or one decimal: no standardised column is written so
    holds_all, entities = _holds(codes, x, present, min_rows)
    if entities == 0:
        return None
    if train is None:
        return ScaleFigures(holds_all, 0.0, entities, False, 0.0)
    holds_train, _ = _holds(codes, x, present & train, min_rows)
    rows = present & train
    frame = pd.DataFrame({"g": codes[rows], "x": x[rows]})
    grouped = frame.groupby("g")["x"]
    again = (frame["x"] - grouped.transform("mean")) / grouped.transform("std")
    moved = np.abs(again.to_numpy() - frame["x"].to_numpy())
    shift = float(np.nanmean(moved)) if np.isfinite(moved).any() else 0.0
    return ScaleFigures(holds_all, holds_train, entities, True, shift)
