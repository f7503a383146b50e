"""What the other columns say about a column: a conditional-dependence test and a reference model.

An outcome-caused column depends on the other columns only through the target, so adding
the target to a linear model of the column on its peers explains much of what the peers
leave unexplained; an honest feature is explained by its peers and gains little. The share
is ``1 - resid_var(col | peers, target) / resid_var(col | peers)``, the squared partial
correlation for one target column, computed on a seeded sample from one correlation matrix.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

import numpy as np
from scipy.special import ndtri

from featureaudit.models import lgbm_params
from featureaudit.threads import limited_blas, model_threads

__all__ = [
    "PeerInput",
    "RefFit",
    "dependence_shares",
    "reference_fit",
    "reference_power",
    "normal_scores",
    "unique_lift",
]

RIDGE = 1e-3  # on correlations; keeps near-collinear peers invertible
COPY_CORR = 0.995  # a peer this correlated is a copy of the column, not evidence about it
MAX_PEERS = 200  # the most powerful columns serve as peers beyond this many


@dataclass(frozen=True)
class PeerInput:
    """The sample's representation: one standardised variable per column, and the target."""

    names: list[str]
    z: np.ndarray  # [rows, columns], standardised, missing at 0
    z_tree: np.ndarray  # the same with NaN where missing (for the tree model)
    y_block: np.ndarray  # [rows, 1] or [rows, K-1]
    y_codes: np.ndarray  # target of the sample rows (codes or floats)
    power: np.ndarray  # single-column power per column, to choose peers
    y_main: int = 0  # the first y_main columns of y_block are the target itself (0: all);
    # the rest are basis terms that let a linear fit follow a curved relation to it


def normal_scores(values: np.ndarray) -> np.ndarray:
    """Rank-based normal scores (average ranks), NaN kept as NaN."""
    out = np.full(values.shape, np.nan)
    ok = np.isfinite(values)
    if ok.sum() > 1:
        from scipy.stats import rankdata

        r = rankdata(values[ok])
        out[ok] = ndtri((r - 0.5) / ok.sum())
    return out


def _r2(corr: np.ndarray, j: int, idx: np.ndarray) -> float:
    """Linear R² of variable ``j`` on the variables ``idx``, from the correlation matrix."""
    if idx.size == 0:
        return 0.0
    sub = corr[np.ix_(idx, idx)] + RIDGE * np.eye(idx.size)
    cj = corr[idx, j]
    return float(min(1.0, max(0.0, cj @ np.linalg.solve(sub, cj))))


def _figures(
    corr: np.ndarray, j: int, peers: np.ndarray, ys: np.ndarray, main: np.ndarray
) -> dict[str, float]:
    """The column's linear R² on its peers (a), the target (b), both (c), and the target's own
    R² on the peers; from them the two shares the probe weighs.

    ``share`` = (c - a) / (1 - a): what the target adds beyond the peers.
    ``peers_beyond_target`` = (c - b) / (1 - b): what the peers add beyond the target, near 0
    for a column that depends on the others only through the target.
    """
    a = _r2(corr, j, peers)
    b = _r2(corr, j, ys)
    c = max(_r2(corr, j, np.r_[peers, ys]), a, b)
    target_on_peers = float(np.mean([_r2(corr, int(y), peers) for y in main])) if main.size else 0.0
    return {
        "share": (c - a) / (1 - a) if a < 1 else 0.0,
        "r2_peers": a,
        "r2_target": b,
        "r2_peers_target": c,
        "peers_beyond_target": (c - b) / (1 - b) if b < 1 else 0.0,
        "target_r2_on_peers": target_on_peers,
    }


def typical_share(
    shares: dict[str, dict], power: dict[str, float], exclude: str, min_power: float
) -> float:
    """Median share of the other columns with some power: what this table's honest columns show.

    Flagged columns stay in the median (a few leaks barely move it), so removing them from
    the peers cannot lower the bar step by step.

    Where the target genuinely causes the features (a plant's cultivar its chemistry), every
    column has a large share; a leak is the column that stands out above that level.
    """
    others = [
        v["share"]
        for c, v in shares.items()
        if c != exclude and v["share"] is not None and power.get(c, 0.0) >= min_power
    ]
    return float(np.median(others)) if len(others) >= 3 else 0.0


def dependence_shares(
    inp: PeerInput,
    *,
    flag_share: float,
    flag_power: float,
    min_power: float,
    flag_beyond: float,
    rounds: int = 5,
) -> dict[str, dict]:
    """Share per column; columns flagged in one round are removed from the peers of the next.

    A column is flagged when its share exceeds the typical share of the other columns by
    ``flag_share``, its power reaches ``flag_power`` and the peers add at most ``flag_beyond``
    beyond the target. Removing flagged columns stops two
    outcome-caused columns from hiding one another.
    """
    p = len(inp.names)
    full = np.c_[inp.z, inp.y_block]
    usable = full.std(axis=0) > 1e-12
    with np.errstate(invalid="ignore", divide="ignore"):
        corr = np.nan_to_num(np.corrcoef(full, rowvar=False))
    ys = np.flatnonzero(usable[p:]) + p
    main = ys[ys < p + inp.y_main] if inp.y_main else ys
    order = np.argsort(-inp.power)
    power = dict(zip(inp.names, inp.power.tolist(), strict=True))
    flagged: dict[int, int] = {}
    out: dict[str, dict] = {}
    for round_no in range(1, rounds + 1):
        for j in range(p):
            out[inp.names[j]] = _column_figures(corr, j, order, usable, flagged, ys, main)
        new = _newly_flagged(
            inp, out, flagged, power, min_power, flag_share, flag_power, flag_beyond
        )
        if not new:
            break
        for j in new:
            flagged[j] = round_no
            out[inp.names[j]]["flag_round"] = round_no
    return out


def _column_figures(
    corr: np.ndarray,
    j: int,
    order: np.ndarray,
    usable: np.ndarray,
    flagged: dict[int, int],
    ys: np.ndarray,
    main: np.ndarray,
) -> dict:
    """Column ``j``'s figures against its peers: the strongest usable columns, not flagged,
    not copies of it, at most ``MAX_PEERS``."""
    if not usable[j]:
        return {"share": None, "flag_round": None, "peers": 0, "typical_share": None}
    peers = np.array(
        [
            k
            for k in order
            if k != j and usable[k] and k not in flagged and abs(corr[j, k]) < COPY_CORR
        ][:MAX_PEERS],
        dtype=np.int64,
    )
    figs = _figures(corr, j, peers, ys, main)
    return {**figs, "flag_round": flagged.get(j), "peers": int(peers.size)}


def _newly_flagged(
    inp: PeerInput,
    out: dict[str, dict],
    flagged: dict[int, int],
    power: dict[str, float],
    min_power: float,
    flag_share: float,
    flag_power: float,
    flag_beyond: float,
) -> list[int]:
    """The columns this round flags (and each column's typical share, set on ``out``)."""
    new = []
    for j, name in enumerate(inp.names):
        typical = typical_share(out, power, name, min_power)
        out[name]["typical_share"] = typical
        share = out[name]["share"]
        if (
            j not in flagged
            and share is not None
            and inp.power[j] >= flag_power
            and share >= typical + flag_share
            and out[name]["peers_beyond_target"] <= flag_beyond
        ):
            new.append(j)
    return new


@dataclass(frozen=True)
class RefFit:
    """An out-of-fold reference fit: its power, and its error overall and per fold.

    The error is 1 − AUC (macro one-vs-rest for several classes) or 1 − R²; every fit on
    the same sample uses the same seeded folds, so fold errors of two fits pair up.
    """

    power: float
    error: float
    fold_errors: tuple[float, ...]


def reference_power(
    inp: PeerInput,
    columns: np.ndarray,
    task: str,
    n_classes: int,
    seed: int,
    folds: int = 3,
    n_jobs: int = 1,
) -> float:
    """Out-of-fold LightGBM on the given columns of the sample: Gini of its AUC, or its R²."""
    return reference_fit(inp, columns, task, n_classes, seed, folds, n_jobs).power


def reference_fit(
    inp: PeerInput,
    columns: np.ndarray,
    task: str,
    n_classes: int,
    seed: int,
    folds: int = 3,
    n_jobs: int = 1,
) -> RefFit:
    """Out-of-fold LightGBM on the given columns of the sample, seeded and deterministic."""
    if columns.size == 0:
        return RefFit(
            0.0,
            1.0 if task == "numeric" else 0.5,
            tuple([1.0 if task == "numeric" else 0.5] * folds),
        )
    x = inp.z_tree[:, columns]
    y = inp.y_codes
    params = lgbm_params(seed, model_threads(n_jobs, len(inp.y_codes)))
    with limited_blas():
        return _reference_fit(x, y, params, task, n_classes, seed, folds)


def unique_lift(
    without: RefFit, with_: RefFit, smallest_class: int | None = None
) -> dict[str, Any]:
    """What a column adds to the other columns: the relative reduction of the reference error.

    ``value`` = 1 − error_with / error_without on the pooled out-of-fold predictions; ``low``
    and ``high`` are the smallest and largest of the same ratio per fold (the spread over
    folds), over the folds that left an error to reduce (a fold already without error says
    nothing); an error that was already 0 overall leaves nothing to reduce (lift 0).
    ``error_rows`` = error_without × the smallest class's rows: 1 − AUC is the share of
    that class's rows wholly misranked it amounts to, so under a few rows nothing is left
    to measure a reduction on (``None`` for a numeric target).
    """

    def lift(a: float, b: float) -> float:
        return 1.0 - b / a if a > 1e-12 else 0.0

    pairs = zip(without.fold_errors, with_.fold_errors, strict=True)
    per_fold = [lift(a, b) for a, b in pairs if a > 1e-12]
    per_fold = per_fold or [0.0]  # no fold left an error to reduce: nothing measured, no lift
    return {
        "error_rows": None if smallest_class is None else without.error * smallest_class,
        "value": lift(without.error, with_.error),
        "low": float(min(per_fold)),
        "high": float(max(per_fold)),
        "folds": len(per_fold),
        "error_without": without.error,
        "error_with": with_.error,
    }


def _errors(y: np.ndarray, pred: np.ndarray, task: str, n_classes: int) -> float:
    from sklearn.metrics import r2_score, roc_auc_score

    if task == "numeric":
        return 1.0 - max(0.0, float(r2_score(y, pred)))
    if len(np.unique(y)) < 2:
        return 0.5
    if n_classes == 2:
        return 1.0 - max(0.5, float(roc_auc_score(y, pred[:, 1])))
    prob = pred / np.maximum(pred.sum(1, keepdims=True), 1e-12)
    present = np.unique(y)
    if present.size < n_classes:  # a fold without some class: score the classes it holds
        prob = prob[:, present] / np.maximum(prob[:, present].sum(1, keepdims=True), 1e-12)
        y = np.searchsorted(present, y)
        if present.size == 2:
            return 1.0 - max(0.5, float(roc_auc_score(y, prob[:, 1])))
    auc = roc_auc_score(y, prob, multi_class="ovr", average="macro", labels=range(prob.shape[1]))
    return 1.0 - max(0.5, float(auc))


def _reference_fit(
    x: np.ndarray, y: np.ndarray, params: dict, task: str, n_classes: int, seed: int, folds: int
) -> RefFit:
    import lightgbm as lgb
    from sklearn.model_selection import KFold, StratifiedKFold

    if task != "numeric":
        # stratified folds need every class in every fold: fewer folds for rare classes, and
        # no reference at all when a class has a single row (nothing to learn it from)
        counts = np.bincount(y.astype(np.int64))
        folds = min(folds, int(counts[counts > 0].min()))
    if folds < 2 or len(y) < folds:  # nothing to fit: no power, the error of a guess
        return RefFit(0.0, 1.0 if task == "numeric" else 0.5, ())
    if task == "numeric":
        split = list(KFold(folds, shuffle=True, random_state=seed).split(x))
        pred = np.zeros(len(y))
        for tr, te in split:
            pred[te] = lgb.LGBMRegressor(**params).fit(x[tr], y[tr]).predict(x[te])
        error = _errors(y, pred, task, n_classes)
        fold_errors = tuple(_errors(y[te], pred[te], task, n_classes) for _, te in split)
        return RefFit(1.0 - error, error, fold_errors)
    split = list(StratifiedKFold(folds, shuffle=True, random_state=seed).split(x, y))
    prob = np.zeros((len(y), n_classes))
    for tr, te in split:
        model = lgb.LGBMClassifier(**params).fit(x[tr], y[tr])
        prob[np.ix_(te, model.classes_)] = model.predict_proba(x[te])
    error = _errors(y, prob, task, n_classes)
    fold_errors = tuple(_errors(y[te], prob[te], task, n_classes) for _, te in split)
    return RefFit(max(0.0, 1.0 - 2 * error), error, fold_errors)


def beyond_target(inp: PeerInput, j: int, peers: np.ndarray) -> float:
    """What the ``peers`` explain of column ``j`` beyond the target: (R²(j | peers, target) −
    R²(j | target)) / (1 − R²(j | target)), linear, on the sample's standardised columns."""
    if peers.size == 0:
        return 0.0
    full = np.c_[inp.z[:, [j, *peers.tolist()]], inp.y_block]
    with np.errstate(invalid="ignore", divide="ignore"):
        corr = np.nan_to_num(np.corrcoef(full, rowvar=False))
    ys = np.arange(1 + peers.size, full.shape[1])
    b = _r2(corr, 0, ys)
    c = max(_r2(corr, 0, np.r_[np.arange(1, 1 + peers.size), ys]), b)
    return (c - b) / (1 - b) if b < 1 else 0.0
