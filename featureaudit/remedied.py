"""The validation score with every finding's remedy applied (``impact.remedied``).

The headline of a report: ``drop`` columns removed; ``refit_on_training_rows`` columns refitted
on the training rows where the fit can be inverted (an affine scaling exactly, an imputed pile
re-filled with the training statistic) and kept as they are otherwise; held-out rows with a
training twin removed; the folds grouped by the entity or the rows ordered by time where the
split findings say so. Split remedies are applied from level ``medium`` up (a low finding's
remedy is optional). Measured on impact's bench (its sample, model and bootstrap), so the
figure sits beside ``as_given`` and ``without_suspects`` on the same rows.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import TYPE_CHECKING, Any

import numpy as np

from featureaudit.levels import Level

if TYPE_CHECKING:
    from featureaudit.impact import _Bench
    from featureaudit.table import AuditTable

__all__ = ["refit_column", "measure_remedied", "SPLIT_FLOOR"]

SPLIT_FLOOR = Level.MEDIUM  # split remedies applied from this level up
_EARLY = 0.8  # ordered by time: fitted on the earliest 80 % of the sample, scored on the rest


def _training_values(table: AuditTable, column: str) -> np.ndarray:
    """The column's finite values over every training row of the table (not the sample), so
    that an affine refit is the one a user would get."""
    from featureaudit.matrix import order_free_codes

    v = order_free_codes(table.frame[column])
    train = np.ones(len(v), bool) if table.heldout is None else ~table.heldout
    v = v[train]
    return v[np.isfinite(v)]


def _fit_detail(column: dict[str, Any]) -> dict[str, Any] | None:
    """The detail of the column's strongest fitscope evidence (the fit to undo), if any."""
    found = [
        e
        for e in column.get("evidence", [])
        if e.get("probe") == "fitscope" and Level.parse(e.get("level", "none")) > Level.NONE
    ]
    found.sort(key=lambda e: -int(Level.parse(e.get("level", "none"))))
    return (found[0].get("detail") or {}) if found else None


def _affine(d: dict[str, Any], v: np.ndarray) -> tuple[float, float, str] | None:
    """(shift, scale, words) of the same scaling refitted on training values ``v``; the
    scaling is read from the shape of the fingerprint's all-rows figures."""
    keys = set((d.get("all_rows") or {}).keys())
    if {"mean", "sd"} <= keys:
        sd = float(np.std(v, ddof=int(d.get("ddof") or 0)))
        return float(np.mean(v)), sd, "re-standardised on the training rows"
    if {"min", "max"} <= keys:
        lo = float(v.min())
        return lo, float(v.max()) - lo, "min-max scaled again on the training rows"
    if {"median", "iqr"} <= keys:
        q1, med, q3 = np.quantile(v, [0.25, 0.5, 0.75])
        return float(med), float(q3 - q1), "robust-scaled again on the training rows"
    if {"max_abs"} <= keys:
        return 0.0, float(np.max(np.abs(v))), "max-abs scaled again on the training rows"
    return None


def refit_column(
    table: AuditTable, values: np.ndarray, column: dict[str, Any]
) -> tuple[np.ndarray | None, str]:
    """The column's values (``values``: its sampled rows) refitted on the training rows, and
    what was done in words; ``None`` with the reason when the fit cannot be inverted.

    An affine scaling fitted on all rows, refitted on the training rows, is an affine map of
    the stored values (the scaling of a scaling is a scaling), so it is exact. An imputed
    pile is re-filled with the statistic of the training rows' other values.
    """
    d = _fit_detail(column)
    name = column["column"]
    if d is None:
        return None, f"{name}: kept as it is (no fingerprint of the fit to undo)"
    if "spike_value" in d and isinstance(d.get("training_rows_fit_would_give"), int | float):
        fill, stat = float(d["spike_value"]), str(d.get("statistic") or "statistic")
        out = np.where(values == fill, float(d["training_rows_fit_would_give"]), values)
        return out, f"{name}: its {stat} fill re-imputed with the training rows' {stat}"
    v = _training_values(table, name)
    fit = _affine(d, v) if v.size >= 2 else None
    if fit is None:
        what = d.get("fingerprint") or "this fit"
        return None, f"{name}: kept as it is ({what} cannot be inverted from the stored values)"
    shift, scale, words = fit
    scale = scale if np.isfinite(scale) and scale > 0 else 1.0
    return (values - shift) / scale, f"{name}: {words}"


@dataclass
class _Plan:
    """What the remedies do to the bench: columns and rows kept, how rows are split."""

    drop: list[str] = field(default_factory=list)
    refitted: list[str] = field(default_factory=list)
    notes: list[str] = field(default_factory=list)
    kept: list[str] = field(default_factory=list)
    regroup: bool = False
    by_time: bool = False
    dedup: bool = False


def _plan(table: AuditTable, bench: _Bench, columns: list[dict], found: list[dict]) -> tuple:
    plan = _Plan()
    x = bench.x.copy()
    for c in columns:
        name = c["column"]
        if name not in bench.columns:
            continue
        if c.get("remedy") == "drop":
            plan.drop.append(name)
        elif c.get("remedy") == "refit_on_training_rows":
            j = bench.columns.index(name)
            new, words = refit_column(table, x[:, j], c)
            if new is None:
                plan.kept.append(name)
            else:
                x[:, j] = new
                plan.refitted.append(name)
            plan.notes.append(words)
    for f in found:
        if Level.parse(f.get("level", "none")) < SPLIT_FLOOR:
            continue
        kind = f.get("kind")
        plan.regroup |= kind == "shared_entities_across_split" and table.entity is not None
        plan.by_time |= kind == "time_overlap_across_split" and _times(table) is not None
        plan.dedup |= kind == "duplicate_rows_across_split"
    if plan.drop:
        x = np.delete(x, [bench.columns.index(c) for c in plan.drop], axis=1)
    return plan, x


def _times(table: AuditTable) -> Any:
    return table.cutoff_time if table.cutoff_time is not None else table.label_time


def _entity_codes(table: AuditTable, rows: np.ndarray) -> np.ndarray:
    import pandas as pd

    codes, _ = pd.factorize(table.frame[table.entity].iloc[rows])
    return np.where(codes < 0, -np.arange(1, len(codes) + 1), codes)  # missing: own group


def _predict(bench: _Bench, x: np.ndarray, fit: np.ndarray, scored: np.ndarray) -> np.ndarray:
    from featureaudit.impact import _fit_predict

    if x.shape[1] == 0:  # every column dropped: the training rows' prior
        if bench.task == "numeric":
            return np.full(len(scored), float(np.mean(bench.y[fit])))
        prior = np.bincount(bench.y[fit], minlength=bench.k) / max(len(fit), 1)
        return np.tile(prior, (len(scored), 1))
    return _fit_predict(x[fit], bench.y[fit], x[scored], bench.task, bench.k, bench.params)


def _grouped_oof(bench: _Bench, x: np.ndarray, rows: np.ndarray, groups: np.ndarray):  # noqa: ANN202
    from sklearn.model_selection import GroupKFold

    out = np.zeros(len(rows)) if bench.task == "numeric" else np.zeros((len(rows), bench.k))
    for tr, te in GroupKFold(3).split(rows, groups=groups[rows]):
        out[te] = _predict(bench, x, rows[tr], rows[te])
    return out


def _scheme(table: AuditTable, bench: _Bench, x: np.ndarray, plan: _Plan):  # noqa: ANN202
    """(scored rows, their predictions, the words) under the split remedies."""
    every = np.arange(len(bench.rows))
    if plan.by_time:
        t = _times(table).iloc[bench.rows].to_numpy(dtype="datetime64[us]").astype("int64")
        order = np.argsort(t, kind="stable")
        cut = int(_EARLY * len(order))
        fit, scored = np.sort(order[:cut]), np.sort(order[cut:])
        words = "ordered by time: fitted on the earliest 80 % of the sample, scored on the rest"
        if plan.regroup:
            g = _entity_codes(table, bench.rows)
            new = scored[~np.isin(g[scored], g[fit])]
            if len(new) >= 20:
                scored = new
                words += ", entities seen in fitting left out of the scored rows"
            else:
                words += " (too few rows of entities unseen in fitting to also group by entity)"
        return scored, _predict(bench, x, fit, scored), words
    if plan.regroup:
        g = _entity_codes(table, bench.rows)
        return every, _grouped_oof(bench, x, every, g), "folds grouped by the entity (3 folds)"
    if bench.heldout_mode or x.shape[1] == 0:
        return bench.scored, _predict(bench, x, bench.fit_rows, bench.scored), bench.how
    return bench.scored, bench.score(x), bench.how  # out of fold on the training rows


def _twins(table: AuditTable, bench: _Bench, scored: np.ndarray) -> np.ndarray:
    """Scored rows with an exact copy (over the audited columns) among the other sample rows."""
    import pandas as pd

    from featureaudit.hashing import member, row_hashes

    h = row_hashes(table.frame.iloc[bench.rows], bench.columns)
    others = np.setdiff1d(np.arange(len(bench.rows)), scored)
    if len(others):
        return member(h[scored], h[others])
    return pd.Series(h[scored]).duplicated(keep=False).to_numpy()


def measure_remedied(
    table: AuditTable, bench: _Bench, columns: list[dict], found: list[dict]
) -> dict[str, Any] | None:
    """``impact.remedied``: the score with every remedy applied, its 95 % interval, and in
    words what was changed; ``None`` when too few rows are left to score."""
    from featureaudit.impact import BOOTSTRAP, MIN_SCORED, _metric, _quantiles, _r, _Scored

    plan, x = _plan(table, bench, columns, found)
    scored, pred, scheme = _scheme(table, bench, x, plan)
    keep = np.ones(len(scored), bool)
    removed = 0
    if plan.dedup:
        twin = _twins(table, bench, scored)
        if (~twin).sum() >= MIN_SCORED:
            keep, removed = ~twin, int(twin.sum())
    y = bench.y[scored]
    if keep.sum() < MIN_SCORED:
        return None
    value = _metric(bench.task, bench.k, y[keep], pred[keep])
    boot = np.random.default_rng(bench.seed + 16).integers(0, len(y), (BOOTSTRAP, len(y)))
    ci = _quantiles(bench.values(y, _Scored(pred, keep), boot))
    return {
        "value": round(value, 4),
        "ci95": _r(ci),
        "how": _words(plan, scheme, removed, len(scored)),
        "dropped": plan.drop,
        "refitted": plan.refitted,
        "kept_as_is": plan.kept,
        "scored_rows": int(keep.sum()),
    }


def _words(plan: _Plan, scheme: str, removed: int, scored: int) -> str:
    parts = [scheme]
    if plan.drop:
        parts.append(f"{len(plan.drop)} column{'s' * (len(plan.drop) != 1)} dropped")
    else:
        parts.append("no column to drop")
    parts += plan.notes
    if plan.dedup:
        parts.append(
            f"{removed} of {scored} scored rows with an exact copy among the fitted rows removed"
        )
    return "; ".join(parts)
