"""How much of the validation score is leakage: the score as given and corrected per finding.

Runs after the ranker on a seeded, stratified sample (``settings.reference_rows``): a small,
deterministic out-of-fold LightGBM (40 trees, 15 leaves, like solo's reference) scores the
table as given, without the suspects (columns at high or above) and once per finding with
that finding corrected. The held-out part is the user's held-out rows when they have
targets, else out of fold on the training rows. Each score has a 95 % interval from a
seeded bootstrap over the scored rows; a change's interval is paired (the same resampled
rows for both scores). It never changes what a probe measured.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

import numpy as np

from featureaudit.levels import Level
from featureaudit.models import lgbm_params
from featureaudit.settings import Settings
from featureaudit.table import AuditTable
from featureaudit.threads import limited_blas, model_threads

__all__ = [
    "measure_impact",
    "column_change",
    "largest_lift",
    "reused_lift",
    "shift_weights",
    "check_fail_at_impact",
]

MAX_COLUMNS = 8  # column findings corrected one by one, strongest first
BOOTSTRAP = 100  # resamples of the scored rows for each interval
MIN_SCORED = 20  # fewer scored rows than this: not measured
NEGLIGIBLE = 0.01  # a change below this is negligible (Roth 2026's bound for refits)
MAX_WEIGHT = 20.0  # cap of a re-weighted training row, in means (common practice, no source)


@dataclass
class _Scored:
    """Predictions on the scored rows (positions into the sample) and the rows kept."""

    pred: np.ndarray
    keep: np.ndarray  # bool over the scored rows


def _params(seed: int, rows: int, n_jobs: int) -> dict:
    return lgbm_params(seed, max(1, n_jobs))  # narrowed per fit by _fit_predict


def _fit_predict(
    x_tr, y_tr, x_te, task: str, n_classes: int, params: dict, weight=None
) -> np.ndarray:  # noqa: ANN001
    import lightgbm as lgb

    # threads by the rows this fit sees, not the sample's size (see featureaudit.threads)
    params = {**params, "n_jobs": model_threads(params["n_jobs"], len(x_tr))}
    if task == "numeric":
        model = lgb.LGBMRegressor(**params).fit(x_tr, y_tr, sample_weight=weight)
        return np.asarray(model.predict(x_te))
    model = lgb.LGBMClassifier(**params).fit(x_tr, y_tr, sample_weight=weight)
    out = np.zeros((len(x_te), n_classes))
    out[:, model.classes_] = model.predict_proba(x_te)
    return out


def _metric(task: str, n_classes: int, y: np.ndarray, p: np.ndarray) -> float:
    from sklearn.metrics import r2_score, roc_auc_score

    if task == "numeric":
        return float(r2_score(y, p))
    present = np.unique(y)
    if present.size < 2:
        return float("nan")
    if n_classes == 2:
        return float(roc_auc_score(y, p[:, 1]))
    prob = p[:, present] / np.maximum(p[:, present].sum(1, keepdims=True), 1e-12)
    if present.size == 2:
        return float(roc_auc_score(y == present[1], prob[:, 1]))
    return float(roc_auc_score(y, prob, multi_class="ovr", average="macro", labels=present))


class _Bench:
    """The sample, its split into fitted and scored rows, and the reference model."""

    def __init__(self, table: AuditTable, settings: Settings, columns: list[str]) -> None:
        from featureaudit.matrix import feature_matrix

        self.table = table
        self.task = table.task or "binary"
        self.k = max(len(table.classes), 2)
        self.seed = settings.seed
        rng = np.random.default_rng(settings.seed + 12)
        lab = table.labelled
        assert table.y is not None  # impact is measured only with a target
        held = table.heldout if table.heldout is not None else np.zeros(table.n_rows, bool)
        strata = held.astype(np.int64) * (self.k + 1) + (
            np.zeros(table.n_rows, np.int64)
            if self.task == "numeric"
            else np.maximum(table.y, 0).astype(np.int64)
        )
        self.rows = _stratified(np.flatnonzero(lab), strata, settings.reference_rows, rng)
        self.x = feature_matrix(table.frame, columns, self.rows)
        self.columns = columns
        self.y = table.y[self.rows] if self.task == "numeric" else table.y[self.rows].astype(int)
        h = held[self.rows]
        self.heldout_mode = h.sum() >= MIN_SCORED and (
            self.task == "numeric" or np.unique(self.y[h]).size >= 2
        )
        self.fit_rows = np.flatnonzero(~h) if self.heldout_mode else np.flatnonzero(~h)
        self.scored = np.flatnonzero(h) if self.heldout_mode else self.fit_rows
        self.how = (
            "trained on the training rows, scored on the user's held-out rows"
            if self.heldout_mode
            else "out of fold (3 folds) on the training rows"
        )
        self.params = _params(settings.seed, len(self.rows), settings.n_jobs)
        self.boot = np.random.default_rng(settings.seed + 13).integers(
            0, len(self.scored), (BOOTSTRAP, len(self.scored))
        )
        self._cache: dict[frozenset[str], np.ndarray] = {}

    def score(
        self,
        x: np.ndarray | None = None,
        groups: np.ndarray | None = None,
        weight: np.ndarray | None = None,
    ) -> np.ndarray:
        """Predictions on the scored rows: held-out, or out of fold (optionally grouped)."""
        x = self.x if x is None else x
        if self.heldout_mode and groups is None:
            w = None if weight is None else weight[self.fit_rows]
            return _fit_predict(
                x[self.fit_rows],
                self.y[self.fit_rows],
                x[self.scored],
                self.task,
                self.k,
                self.params,
                w,
            )
        from sklearn.model_selection import GroupKFold, KFold

        idx = self.scored
        if groups is not None:
            folds = GroupKFold(3).split(idx, groups=groups[idx])
        else:
            folds = KFold(3, shuffle=True, random_state=self.seed).split(idx)
        out = np.zeros(len(idx)) if self.task == "numeric" else np.zeros((len(idx), self.k))
        for tr, te in folds:
            out[te] = _fit_predict(
                x[idx[tr]], self.y[idx[tr]], x[idx[te]], self.task, self.k, self.params
            )
        return out

    def value(self, s: _Scored) -> float:
        return _metric(self.task, self.k, self.y[self.scored][s.keep], s.pred[s.keep])

    def interval(self, s: _Scored, base: _Scored | None = None) -> list[float]:
        """95 % bootstrap interval of a score, or of ``base - s`` (paired) when given."""
        y = self.y[self.scored]
        vals = self.values(y, s, self.boot)
        if base is not None:
            vals = self.values(y, base, self.boot) - vals
        return _quantiles(vals)

    def values(self, y: np.ndarray, s: _Scored, boot: np.ndarray) -> np.ndarray:
        """The score on each bootstrap resample ``boot`` (rows of positions into ``y``)."""
        if self.task == "binary":
            return _binary_aucs(y, s, boot)
        vals = []
        for b in boot:
            keep = b[s.keep[b]]
            vals.append(_metric(self.task, self.k, y[keep], s.pred[keep]))
        return np.asarray(vals, dtype=float)

    def elsewhere(self, y: np.ndarray, s: _Scored, base: _Scored) -> tuple[list, list]:
        """Intervals of a corrected score scored on other rows than the base (grouped folds,
        a later period): its own bootstrap, and the change against independent resamples of
        the base (unpaired, so wider than a paired interval)."""
        boot = np.random.default_rng(self.seed + 14).integers(0, len(y), (BOOTSTRAP, len(y)))
        vals = self.values(y, s, boot)
        change = self.values(self.y[self.scored], base, self.boot) - vals
        return _quantiles(vals), _quantiles(change)

    def without(self, removed: tuple[str, ...]) -> np.ndarray:
        """Predictions with these columns removed; each set is fitted once per audit (the
        suspects and a single column removed are often the same set)."""
        key = frozenset(removed)
        if key not in self._cache:
            x = np.delete(self.x, [self.columns.index(c) for c in removed], axis=1)
            self._cache[key] = self.score(x) if x.shape[1] else _constant(self)
        return self._cache[key]


def _quantiles(vals: np.ndarray) -> list[float]:
    vals = vals[np.isfinite(vals)]
    if vals.size == 0:
        return [float("nan"), float("nan")]
    return [float(np.quantile(vals, 0.025)), float(np.quantile(vals, 0.975))]


def _binary_aucs(y: np.ndarray, s: _Scored, boot: np.ndarray) -> np.ndarray:
    """A binary AUC per resample in O(rows) from resample counts (the Mann–Whitney count with
    ties as halves, weighted by how often a row is drawn)."""
    counts = np.stack([np.bincount(b, minlength=len(y)) for b in boot]).astype(float)
    _, inv = np.unique(s.pred[:, 1], return_inverse=True)
    w = counts * s.keep
    g = inv.max() + 1
    neg = np.stack([np.bincount(inv, wr * (y == 0), g) for wr in w])
    pos = np.stack([np.bincount(inv, wr * (y == 1), g) for wr in w])
    below = np.cumsum(neg, axis=1) - neg
    with np.errstate(invalid="ignore", divide="ignore"):
        return (pos * (below + 0.5 * neg)).sum(1) / (pos.sum(1) * neg.sum(1))


def _stratified(rows: np.ndarray, strata: np.ndarray, size: int, rng) -> np.ndarray:  # noqa: ANN001
    if rows.size <= size:
        return rows
    parts = []
    for s in np.unique(strata[rows]):
        idx = rows[strata[rows] == s]
        take = max(1, round(size * idx.size / rows.size))
        parts.append(rng.choice(idx, min(take, idx.size), replace=False))
    return np.sort(np.concatenate(parts))


def column_change(
    bench: _Bench, base: _Scored, column: str, how: str, verdict: dict | None = None
) -> tuple[_Scored, dict]:
    """One column corrected (removed, or refitted on the training rows as
    :func:`featureaudit.remedied.refit_column` does): the corrected predictions and the
    column's ``impact`` entry. Kept in one function so that a measurement made elsewhere can
    replace it."""
    j = bench.columns.index(column)
    if how == "refit":
        from featureaudit.remedied import refit_column

        x = bench.x.copy()
        new, text = refit_column(bench.table, x[:, j], verdict or {"column": column})
        text = text.removeprefix(f"{column}: ")
        if new is not None:
            x[:, j] = new
        s = _Scored(bench.score(x), base.keep)
    else:
        text = "the column removed"
        s = _Scored(bench.without((column,)), base.keep)
    change = bench.value(base) - bench.value(s)
    return s, {"change": round(change, 4), "ci95": _r(bench.interval(s, base)), "how": text}


def reused_lift(column: dict[str, Any], metric: str) -> dict | None:
    """The column's ``impact`` from a unique-lift measurement its evidence already carries
    (``detail["unique_lift"]``: value, low, high, statistic, folds), so the same figure is
    not fitted twice; ``None`` when there is none, it was measured in another metric, or with
    other suspects left out (``without``), which measures more than removing it alone."""
    for e in column.get("evidence", []):
        lift = (e.get("detail") or {}).get("unique_lift")
        if not isinstance(lift, dict) or not _finite(lift.get("value")):
            continue
        if lift.get("without"):
            continue  # measured with other suspects left out: not the change of removing it alone
        stat = str(lift.get("statistic") or "")
        if stat and ("r2" in stat.lower()) != (metric == "r2"):
            continue  # an AUC lift cannot stand for an R² change, nor the reverse
        before, after = lift.get("error_without"), lift.get("error_with")
        if not (_finite(before) and _finite(after)):
            continue  # a relative lift alone is not a score change
        # the errors are 1 − score, so the score change is their difference; the relative
        # lift's spread over folds, scaled by the error without the column, is its spread
        change = _num(before) - _num(after)
        lo, hi = (_num(lift.get(k)) * _num(before) for k in ("low", "high"))
        folds = f", {lift['folds']} folds" if lift.get("folds") else ""
        return {
            "change": round(change, 4),
            "ci95": _r([lo, hi]),
            "how": f"the column removed (the unique lift {e.get('probe', 'a probe')} measured"
            f"{folds}{', ' + stat if stat else ''}; not refitted here)",
        }
    return None


def _num(v: Any) -> float:
    return float(v) if _finite(v) else float("nan")


def _finite(v: object) -> bool:
    return isinstance(v, (int, float)) and not isinstance(v, bool) and bool(np.isfinite(v))


def _r(ci: list[float]) -> list[float | None]:
    return [None if not np.isfinite(v) else round(v, 4) for v in ci]


def measure_impact(
    table: AuditTable,
    settings: Settings,
    columns: list[dict[str, Any]],
    dataset_findings: list[dict[str, Any]],
) -> tuple[dict[str, Any] | None, dict[str, dict]]:
    """The top-level ``impact`` block and ``{column: impact}`` for the corrected columns."""
    if table.target is None or table.y is None or table.target_problem:
        return None, {}
    feats = [c for c in table.id_columns + table.features if table.frame[c].notna().any()]
    if not feats or table.labelled.sum() < 2 * MIN_SCORED:
        return None, {}
    with limited_blas():
        return _measure(table, settings, columns, dataset_findings, feats)


def _measure(table, settings, columns, dataset_findings, feats):  # noqa: ANN001, ANN202
    bench = _Bench(table, settings, feats)
    if len(bench.scored) < MIN_SCORED:
        return None, {}
    keep_all = np.ones(len(bench.scored), bool)
    base = _Scored(bench.score(), keep_all)
    as_given = bench.value(base)
    metric = {"binary": "auc", "multiclass": "macro_auc", "numeric": "r2"}[bench.task]
    suspects = [
        c["column"]
        for c in columns
        if Level.parse(c["level"]) >= Level.HIGH and c["column"] in feats
    ]
    without = _Scored(bench.without(tuple(suspects)), keep_all) if suspects else base
    by: list[dict] = []
    per_column: dict[str, dict] = {}
    picks = [
        c for c in columns if Level.parse(c["level"]) >= Level.MEDIUM and c["column"] in feats
    ][:MAX_COLUMNS]
    for c in picks:
        how = "refit" if c.get("remedy") == "refit_on_training_rows" else "remove"
        if how == "remove" and len(feats) == 1:
            continue
        entry = reused_lift(c, metric) if how == "remove" else None
        if entry is not None:
            corrected = as_given - entry["change"]
        else:
            s, entry = column_change(bench, base, c["column"], how, c)
            corrected = bench.value(s)
        shared = (
            _beyond_other_suspects(bench, without, suspects, c["column"], entry)
            if how == "remove"
            else None
        )  # a refit's effect is not a removal's: measured only for removed columns
        if shared is not None:
            entry = {**entry, **shared}
        per_column[c["column"]] = entry
        by.append(
            _entry(
                c["column"],
                c["kinds"][0] if c["kinds"] else "target_proxy",
                as_given,
                corrected,
                entry["how"],
                entry,
            )
        )
    for f in dataset_findings:
        if Level.parse(f["level"]) < Level.LOW:
            continue
        found = _dataset_correction(table, bench, base, f)
        if found is not None:
            by.append(_entry(None, f["kind"], as_given, *found))
    by.sort(
        key=lambda e: -(e["as_given"] - e["corrected"]) if e["corrected"] is not None else 1.0
    )  # largest effect first; findings not corrected last
    block = {
        "metric": metric,
        "as_given": round(as_given, 4),
        "as_given_ci95": _r(bench.interval(base)),
        "without_suspects": round(bench.value(without), 4),
        "ci95": _r(bench.interval(without)),
        "suspects_removed": suspects,
        "rows": int(len(bench.rows)),
        "scored_rows": int(len(bench.scored)),
        "how": bench.how,
        "interval": f"95 % seeded bootstrap ({BOOTSTRAP} resamples) "
        "over the scored rows; a change's interval is paired",
        "by_finding": by,
        "negligible_below": NEGLIGIBLE,
    }
    from featureaudit.remedied import measure_remedied

    block["remedied"] = measure_remedied(table, bench, columns, dataset_findings)
    return block, per_column


def _beyond_other_suspects(
    bench: _Bench, without: _Scored, suspects: list[str], column: str, entry: dict
) -> dict | None:
    """A suspect whose removal alone changes little, while other suspects stay, may carry the
    same signal as they do: its change with the other suspects removed too (the score with
    only it kept among the suspects, minus the score without any), so that "negligible" is
    never said of a leak that another leak merely hides."""
    if column not in suspects or len(suspects) < 2:
        return None
    if abs(float(entry["change"])) >= NEGLIGIBLE:
        return None
    others = tuple(c for c in suspects if c != column)
    kept = _Scored(bench.without(others), without.keep)
    change = bench.value(kept) - bench.value(without)
    return {
        "change_beyond_other_suspects": round(change, 4),
        "ci95_beyond_other_suspects": _r(bench.interval(without, kept)),
    }


def _constant(bench: _Bench) -> np.ndarray:
    n = len(bench.scored)
    if bench.task == "numeric":
        return np.full(n, float(np.mean(bench.y[bench.fit_rows])))
    prior = np.bincount(bench.y[bench.fit_rows], minlength=bench.k) / len(bench.fit_rows)
    return np.tile(prior, (n, 1))


def _entry(column, kind, as_given, corrected, how, change) -> dict:  # noqa: ANN001
    out = {
        "column": column,
        "kind": kind,
        "as_given": round(as_given, 4),
        "corrected": None if corrected is None else round(corrected, 4),
        "how": how,
        "change": change["change"],
        "ci95": change["ci95"],
    }
    if "corrected_ci95" in change:
        out["corrected_ci95"] = change["corrected_ci95"]
    return out


def _dataset_correction(table: AuditTable, bench: _Bench, base: _Scored, f: dict):  # noqa: ANN202
    kind = f["kind"]
    if kind == "duplicate_rows_across_split":
        from featureaudit.hashing import member, row_hashes

        h = row_hashes(table.frame.iloc[bench.rows], bench.columns)
        if bench.heldout_mode:
            twin = member(h[bench.scored], h[bench.fit_rows])
        else:
            import pandas as pd

            twin = pd.Series(h[bench.scored]).duplicated(keep=False).to_numpy()
        keep = ~twin
        if keep.sum() < MIN_SCORED:
            return None
        s = _Scored(base.pred, keep)
        how = (
            "held-out rows with a training twin removed"
            if bench.heldout_mode
            else "scored rows with an exact copy in the sample removed"
        )
    elif kind == "shared_entities_across_split" and table.entity is not None:
        import pandas as pd

        codes, _ = pd.factorize(table.frame[table.entity].iloc[bench.rows])
        groups = np.where(codes < 0, -np.arange(1, len(codes) + 1), codes)
        saved = bench.scored
        bench.scored = np.arange(len(bench.rows))  # every labelled sample row, grouped
        try:
            grouped = _Scored(bench.score(groups=groups), np.ones(len(bench.rows), bool))
            corrected = bench.value(grouped)
        finally:
            bench.scored = saved
        return _elsewhere(
            bench,
            base,
            bench.y,
            grouped,
            corrected,
            "folds grouped by the entity (all labelled sample rows)",
        )
    elif kind == "time_overlap_across_split":
        times = table.cutoff_time if table.cutoff_time is not None else table.label_time
        if times is None:
            return None
        t = times.iloc[bench.rows].to_numpy(dtype="datetime64[us]").astype("int64")
        order = np.argsort(t, kind="stable")
        cut = int(0.8 * len(order))
        early, late = order[:cut], order[cut:]
        if len(late) < MIN_SCORED:
            return None
        p = _fit_predict(
            bench.x[early], bench.y[early], bench.x[late], bench.task, bench.k, bench.params
        )
        s_late = _Scored(p, np.ones(len(late), bool))
        corrected = _metric(bench.task, bench.k, bench.y[late], p)
        return _elsewhere(
            bench,
            base,
            bench.y[late],
            s_late,
            corrected,
            "trained on the earliest 80 % of labelled sample rows, scored on the latest 20 %",
        )
    elif kind == "split_shift":
        if not bench.heldout_mode:
            return (
                None,
                "not corrected: re-weighting toward the held-out rows needs held-out rows "
                "with targets to score",
                {"change": None, "ci95": [None, None]},
            )
        s = _Scored(bench.score(weight=shift_weights(bench)), base.keep)
        how = (
            "training rows re-weighted toward the held-out rows by the odds of an "
            f"adversarial model (cross-fitted, weights capped at {MAX_WEIGHT:g}× the mean)"
        )
    else:
        return None
    change = bench.value(base) - bench.value(s)
    return (
        bench.value(s),
        how,
        {
            "change": round(change, 4),
            "ci95": _r(bench.interval(s, base)),
            "corrected_ci95": _r(bench.interval(s)),
        },
    )


def _elsewhere(bench, base, y, s, corrected, how):  # noqa: ANN001, ANN202
    """A correction scored on other rows than the as-given score, with both intervals."""
    own, change = bench.elsewhere(y, s, base)
    entry = {
        "change": round(bench.value(base) - corrected, 4),
        "ci95": _r(change),
        "corrected_ci95": _r(own),
    }
    return corrected, how, entry


def shift_weights(bench: _Bench) -> np.ndarray:
    """Weights over the sample rows that make the training rows look like the held-out rows:
    the odds p / (1 - p) of an adversarial model (held out vs training), the importance
    weight of covariate-shift correction (Shimodaira 2000). Each training row's p comes from
    a model fitted without it (two halves), so a row is not weighted by its own memory;
    weights are scaled to mean 1 and capped (common practice, no source)."""
    fit, held = bench.fit_rows, bench.scored
    half = np.random.default_rng(bench.seed + 15).permutation(len(fit)) % 2
    p = np.zeros(len(fit))
    for h in (0, 1):
        tr = fit[half != h]
        xa = np.vstack([bench.x[tr], bench.x[held]])
        ya = np.r_[np.zeros(len(tr), int), np.ones(len(held), int)]
        p[half == h] = _fit_predict(xa, ya, bench.x[fit[half == h]], "binary", 2, bench.params)[
            :, 1
        ]
    p = np.clip(p, 1e-3, 1 - 1e-3)
    w = p / (1 - p)
    w = w / w.mean()
    for _ in range(100):  # cap and rescale until the cap holds at mean 1 (a few rounds)
        if w.max() <= MAX_WEIGHT * (1 + 1e-9):
            break
        w = np.minimum(w, MAX_WEIGHT)
        w = w / w.mean()
    out = np.ones(len(bench.rows))
    out[fit] = w
    return out


def largest_lift(doc: dict[str, Any]) -> tuple[float, str] | None:
    """How far the as-given score exceeds a corrected one (``--fail-at-impact``), and which:
    the score with the remedies applied, or a single finding's correction; without the
    remedied score (a schema 2 file), the score without the suspects counts too."""
    block = doc.get("impact")
    if not block:
        return None
    rem = block.get("remedied") or {}
    named: list[tuple[float | None, str]] = [
        (rem.get("value"), "the score with the remedies applied")
    ]
    if not rem:
        named.append((block.get("without_suspects"), "the score without the suspects"))
    for e in block.get("by_finding", []):
        what = f"column {e['column']!r}" if e.get("column") else f"split finding {e.get('kind')}"
        named.append((e.get("corrected"), f"{what} corrected ({e.get('how')})"))
    found = [(float(block["as_given"]) - v, w) for v, w in named if v is not None]
    if not found:
        return None
    lift, which = max(found, key=lambda t: t[0])
    return max(0.0, lift), which


def check_fail_at_impact(value: object) -> float:
    """``--fail-at-impact``: a score difference, 0 or more (e.g. 0.02 AUC)."""
    from featureaudit.errors import SettingError

    try:
        x = float(value)  # type: ignore[arg-type]
    except (TypeError, ValueError):
        x = float("nan")
    if not np.isfinite(x) or x < 0:
        raise SettingError(
            f"--fail-at-impact must be a score difference of 0 or more, e.g. 0.02; got {value!r}."
        )
    return x
