"""The ``separability`` probe: adversarial validation of the split.

Training rows are labelled 0 and held-out rows 1; an out-of-fold LightGBM on a seeded,
stratified sample tries to tell them apart. Under a fair random split it cannot, and its
AUC stays near 0.5 with a null spread of about sqrt((n0+n1+1)/(12 n0 n1)) (the
Mann–Whitney null; a classifier two-sample test, Lopez-Paz & Oquab 2017). The columns that
drive it are named by gain and by the AUC lost when the top three are left out.

Levels: high when the AUC reaches 0.70 and lies 4 null SEs above 0.5, critical from 0.85,
medium from 0.60 at 3 SEs, low at 2 SEs. Measured on random splits of scikit-learn's
breast-cancer, wine and diabetes data and of the demo (``benchmarks/detection.py``), no
random split reached medium. Without a split, the split the user is about to make is
simulated: a random 80/20 split (expect about 0.5) and, when a time is known, a
time-ordered one (the last 20 %), reported as information.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from featureaudit.evidence import Evidence, Skip
from featureaudit.io import numeric_view
from featureaudit.registry import Probe, ProbeOutput, register
from featureaudit.settings import Settings
from featureaudit.stats import hanley_mcneil_se, null_auc_se
from featureaudit.table import AuditTable
from featureaudit.threads import limited_blas, model_threads

LEVELS = (("critical", 0.85, 4.0), ("high", 0.70, 4.0), ("medium", 0.60, 3.0))
LOW_Z = 2.0
TOP_LEFT_OUT = 3


def _matrix(table: AuditTable, columns: list[str], rows: np.ndarray) -> np.ndarray:
    """The sampled rows as floats: numbers and times as they are, categories as codes."""
    out = []
    for name in columns:
        s = table.frame[name]
        v = numeric_view(s)
        if v is None:
            codes, _ = pd.factorize(s, use_na_sentinel=True)
            v = np.where(codes < 0, np.nan, codes).astype(np.float64)
        out.append(v[rows])
    return np.column_stack(out) if out else np.zeros((rows.size, 0))


def adversarial_auc(x: np.ndarray, side: np.ndarray, seed: int, folds: int = 3,
                    n_jobs: int = 1) -> tuple[float, np.ndarray]:
    """Out-of-fold AUC of LightGBM telling side 1 from side 0, and total gain per column."""
    import lightgbm as lgb
    from sklearn.metrics import roc_auc_score
    from sklearn.model_selection import StratifiedKFold

    pred = np.zeros(len(side))
    gain = np.zeros(x.shape[1])
    params = dict(n_estimators=50, learning_rate=0.12, num_leaves=15, min_child_samples=20,
                  subsample=0.8, subsample_freq=1, colsample_bytree=0.8, random_state=seed,
                  n_jobs=model_threads(n_jobs, len(side)), verbose=-1, deterministic=True,
                  force_row_wise=True, max_bin=63,
                  importance_type="gain")
    with limited_blas():
        for tr, te in StratifiedKFold(folds, shuffle=True, random_state=seed).split(x, side):
            model = lgb.LGBMClassifier(**params).fit(x[tr], side[tr])
            pred[te] = model.predict_proba(x[te])[:, 1]
            gain += model.feature_importances_
    return float(roc_auc_score(side, pred)), gain


@register
class Separability(Probe):
    """Adversarial validation: can a model tell held-out rows from training rows, and which
    columns let it. Thresholds: see the module docstring."""

    name = "separability"
    scope = "table"
    kinds = ("split_shift",)

    def run(self, table: AuditTable, settings: Settings) -> ProbeOutput:
        columns = [c for c in table.id_columns + table.features if table.frame[c].notna().any()]
        if not columns:
            return [], [Skip(self.name, "no column with values to compare the sides on")]
        rng = np.random.default_rng(settings.seed)
        if table.heldout is not None:
            return [self._measure(table, columns, table.heldout, rng, settings, None)], []
        evidence = [self._measure(table, columns, rng.random(table.n_rows) < 0.2, rng,
                                  settings, "random")]
        base = table.cutoff_time if table.cutoff_time is not None else table.label_time
        if base is not None:
            order = base.rank(method="first").to_numpy()
            late = order > np.nanquantile(order, 0.8)
            evidence.append(self._measure(table, columns, late, rng, settings, "time"))
        return evidence, []

    def _measure(self, table: AuditTable, columns: list[str], heldout: np.ndarray,
                 rng: np.random.Generator, settings: Settings, simulated: str | None
                 ) -> Evidence:
        rows = _sample(heldout, settings.reference_rows, rng)
        xs, side = _matrix(table, columns, rows), heldout[rows].astype(int)
        if min(side.sum(), (1 - side).sum()) < 10:
            return Evidence(self.name, "split_shift", "adversarial_auc", None, LEVELS[1][1],
                            "none", summary="too few rows on one side to compare",
                            detail={"sample_rows": int(rows.size)})
        auc, gain = adversarial_auc(xs, side, settings.seed, n_jobs=settings.n_jobs)
        n1, n0 = int(side.sum()), int((1 - side).sum())
        null = null_auc_se(n1, n0)
        z = (auc - 0.5) / null
        top = np.argsort(-gain)[:TOP_LEFT_OUT]
        keep = np.setdiff1d(np.arange(len(columns)), top)
        auc_without = adversarial_auc(xs[:, keep], side, settings.seed,
                                      n_jobs=settings.n_jobs)[0] \
            if keep.size and auc >= 0.6 else None   # only worth a fit when there is a shift
        total = float(gain.sum()) or 1.0
        drivers = [{"column": columns[i], "gain_share": float(gain[i] / total),
                    "role": _role(table, columns[i])} for i in np.argsort(-gain)[:8]
                   if gain[i] > 0]
        level = "none"
        for name, floor, zmin in LEVELS:
            if auc >= floor and z >= zmin:
                level = name
                break
        else:
            level = "low" if z >= LOW_Z else "none"
        if simulated:
            level = "low" if level != "none" and simulated == "time" else "none"
        named = [d for d in drivers[:TOP_LEFT_OUT] if d["role"] != "feature"]
        what = {"random": "a random 80/20 split", "time": "a split on the last 20 % in time",
                None: "the split"}[simulated]
        summary = (f"a model tells held-out rows from training rows under {what} with AUC "
                   f"{auc:.3f}" + (f", driven by {drivers[0]['column']}" if drivers and
                                    auc >= 0.6 else ""))
        if named and auc >= 0.6:
            summary += f" ({', '.join(d['column'] + ' is ' + d['role'] for d in named)})"
        detail = {"auc": auc, "se": hanley_mcneil_se(auc, n1, n0), "null_se": null, "z": z,
                  "ci95": [auc - 1.96 * hanley_mcneil_se(auc, n1, n0),
                           auc + 1.96 * hanley_mcneil_se(auc, n1, n0)],
                  "auc_without_top": auc_without, "left_out": [columns[i] for i in top],
                  "drivers": drivers, "sample_rows": int(rows.size), "heldout_in_sample": n1,
                  "simulated_split": simulated}
        return Evidence(self.name, "split_shift", "adversarial_auc", auc, LEVELS[1][1], level,
                        summary=summary, severity=min(1.0, max(0.0, 2 * auc - 1)),
                        detail=detail)


def _sample(heldout: np.ndarray, size: int, rng: np.random.Generator) -> np.ndarray:
    """Seeded sample that keeps the sides' proportions."""
    if heldout.size <= size:
        return np.arange(heldout.size)
    parts = []
    for side in (False, True):
        idx = np.flatnonzero(heldout == side)
        take = max(1, round(size * idx.size / heldout.size))
        parts.append(rng.choice(idx, min(take, idx.size), replace=False))
    return np.sort(np.concatenate(parts))


def _role(table: AuditTable, column: str) -> str:
    if column in table.id_columns:
        return "an identifier"
    s = table.frame[column]
    if pd.api.types.is_datetime64_any_dtype(s.dtype):
        return "a time"
    return "feature"
