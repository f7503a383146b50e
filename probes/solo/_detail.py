"""What a reviewer sees of a ``solo`` score: its interval and folds, the bins that carry the
signal, and what the column's missing values alone say."""

from __future__ import annotations

import numpy as np

from featureaudit.kit.oof import CellScore, Target
from featureaudit.kit.stats import Bins, auc_from_cells


def _bin_detail(score: CellScore, b: Bins, t: Target) -> dict:
    prior = float(np.mean(t.raw) if t.raw is not None else t.prior[-1] if t.n_classes == 2 else 0)
    rows = score.bin_rows
    stat = np.nan_to_num(score.bin_stat, nan=prior)
    weight = rows * (stat - prior) ** 2 if t.n_classes <= 2 else rows * stat
    chosen = np.flatnonzero(rows > 0)
    if b.kind == "categories" and chosen.size > 15:
        chosen = chosen[np.argsort(-weight[chosen], kind="stable")[:15]]
    out = []
    for i in chosen:
        item = {"bin": b.labels[i], "rows": int(rows[i]), "stat": float(stat[i])}
        if score.bin_class is not None:
            item["class"] = int(score.bin_class[i])
        out.append(item)
    return {
        "bins": out,
        "bin_kind": b.kind,
        "bin_stat": {
            "numeric": "target mean",
            "binary": "target rate",
            "multiclass": "rate of the bin's most over-represented class",
        }[t.task],
        "prior": prior,
    }


def _missing_detail(score: CellScore, t: Target) -> dict | None:
    rows = score.bin_rows
    n_missing, n = float(rows[0]), float(rows.sum())
    if n_missing == 0 or n_missing == n:
        return None
    out = {"share": n_missing / n, "stat_missing": float(score.bin_stat[0])}
    present = rows[1:] > 0
    out["stat_present"] = float(np.average(score.bin_stat[1:][present], weights=rows[1:][present]))
    if t.n_classes == 2:
        pos_m = score.bin_stat[0] * n_missing
        pos_p = out["stat_present"] * (n - n_missing)
        auc = auc_from_cells(
            np.array([1.0, 0.0]),
            np.array([pos_m, pos_p]),
            np.array([n_missing - pos_m, n - n_missing - pos_p]),
        )
        out["auc"] = max(auc, 1 - auc)
    return out


def common_detail(score: CellScore, b: Bins, t: Target) -> dict:
    detail = {
        "oof_value": score.value,
        "se": score.se,
        "ci95": [score.value - 1.96 * score.se, score.value + 1.96 * score.se],
        "fold_values": [float(v) for v in score.fold_values],
        "power": score.power,
        "determinism_given_target": score.determinism,
        "labelled_rows": len(t.rows),
        **_bin_detail(score, b, t),
    }
    if score.spearman is not None:
        detail["spearman"] = score.spearman
    missing = _missing_detail(score, t)
    if missing:
        detail["missing"] = missing
    return detail
