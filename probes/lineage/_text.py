"""Free text read as words: out-of-fold power of its words and phrases, and the phrases that
occur with only one outcome.

Tokens and phrases (1 to 3 words) come from scikit-learn's ``CountVectorizer``, fitted on the
training folds only; a logistic regression (ridge for a numeric target) on them scores the
held-out fold. Folds are chosen by row content, never by position. The same folds score the
other columns together (a gradient-boosted model), so an honest description of the row's own
values, which says what the columns already say, is not mistaken for a note written after
the outcome.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pandas as pd
from scipy.stats import binom
from sklearn.ensemble import HistGradientBoostingClassifier, HistGradientBoostingRegressor
from sklearn.feature_extraction.text import CountVectorizer
from sklearn.linear_model import LogisticRegression, Ridge
from sklearn.metrics import r2_score, roc_auc_score

from featureaudit.kit.sample import content_keys
from featureaudit.load.io import numeric_view
from featureaudit.load.settings import Settings
from featureaudit.load.table import AuditTable
from featureaudit.probes.lineage._kit import LATER, make_evidence
from featureaudit.probes.lineage._rules import TEXT_RULES, decide
from featureaudit.probes.lineage._thresholds import THRESHOLDS, LineageThresholds
from featureaudit.vocab.evidence import Evidence
from featureaudit.vocab.levels import Level

__all__ = ["TextFigures", "text_figures", "is_free_text", "text_evidence"]

MAX_PHRASES = 5
# phrases are made of words (letters only): a number in a note is the row's own value, which
# the other columns already hold, not something written after the outcome
WORDS = r"(?u)\b[^\W\d_]{2,}\b"


@dataclass(frozen=True)
class TextFigures:
    """Out-of-fold power of the words, of the other columns, and the phrases of one outcome."""

    power: float
    reference: float
    gain: float  # share of the other columns' error (1 - AUC or 1 - R²) the words remove
    # when blended with them (both out-of-fold scores, blended out of fold)
    coverage: float  # share of labelled rows holding a phrase of one outcome
    phrases: int
    named: list[tuple[str, str, int]]  # (phrase, outcome, rows)
    numeric: bool
    statistic: str


def is_free_text(s: pd.Series, th: LineageThresholds) -> bool:
    """Prose (``featureaudit.load.prose``) whose values are at least half distinct."""
    from featureaudit.load.prose import looks_like_prose

    present = s.dropna()
    return (
        len(present) > 0
        and present.nunique() >= th.text_distinct * len(present)
        and looks_like_prose(s)
    )


def _power(y: np.ndarray, p: np.ndarray, numeric: bool) -> float:
    if numeric:
        return float(r2_score(y, p))
    if p.ndim == 1:
        return float(roc_auc_score(y, p))
    return float(roc_auc_score(y, p, multi_class="ovr", average="macro"))


def _oof_text(
    docs: np.ndarray, y: np.ndarray, folds: np.ndarray, numeric: bool, k: int
) -> np.ndarray:
    out = np.zeros(len(y)) if numeric or k == 2 else np.zeros((len(y), k))
    for f in np.unique(folds):
        fit, score = folds != f, folds == f
        vec = CountVectorizer(ngram_range=(1, 2), binary=True, min_df=2)
        try:
            train = vec.fit_transform(docs[fit])
        except ValueError:  # no word occurs twice in the training folds
            continue
        model = Ridge(alpha=1.0) if numeric else LogisticRegression(C=1.0, max_iter=1000)
        if not numeric and np.unique(y[fit]).size < k:
            continue
        model.fit(train, y[fit])
        rows = vec.transform(docs[score])
        if numeric:
            out[score] = model.predict(rows)
        else:
            prob = model.predict_proba(rows)
            out[score] = prob[:, 1] if k == 2 else prob
    return out


def _varied_columns(x: np.ndarray) -> np.ndarray:
    """Columns holding at least two distinct finite values."""
    return np.array(
        [np.unique(col[np.isfinite(col)]).size >= 2 for col in x.T], dtype=bool
    ).reshape(-1)


def _oof_reference(
    x: np.ndarray, y: np.ndarray, folds: np.ndarray, numeric: bool, k: int, seed: int
) -> np.ndarray:
    out = np.zeros(len(y)) if numeric or k == 2 else np.zeros((len(y), k))
    if x.shape[1] == 0:
        return out
    for f in np.unique(folds):
        fit, score = folds != f, folds == f
        # scikit-learn's binning needs two distinct values in a column (an all-missing or
        # constant column over the fitted rows fails there and tells nothing)
        cols = _varied_columns(x[fit])
        if not cols.any():
            continue
        xf, xs = x[fit][:, cols], x[score][:, cols]
        if numeric:
            model = HistGradientBoostingRegressor(max_iter=100, random_state=seed)
            out[score] = model.fit(xf, y[fit]).predict(xs)
            continue
        if np.unique(y[fit]).size < k:
            continue
        clf = HistGradientBoostingClassifier(max_iter=100, random_state=seed)
        prob = clf.fit(xf, y[fit]).predict_proba(xs)
        out[score] = prob[:, 1] if k == 2 else prob
    return out


def _logit(p: np.ndarray) -> np.ndarray:
    q = np.clip(p, 1e-4, 1 - 1e-4)
    return np.log(q / (1 - q))


def _blend(
    ref: np.ndarray, p: np.ndarray, y: np.ndarray, folds: np.ndarray, numeric: bool, k: int
) -> np.ndarray:
    """Out-of-fold blend of two out-of-fold scores (log-odds for classes), so the figure says
    what the words add to the other columns rather than what they say alone."""
    if numeric:
        x = np.column_stack([ref, p])
    else:
        x = np.column_stack([_logit(ref).reshape(len(y), -1), _logit(p).reshape(len(y), -1)])
    out = np.zeros(len(y)) if numeric or k == 2 else np.zeros((len(y), k))
    for f in np.unique(folds):
        fit, score = folds != f, folds == f
        if numeric:
            out[score] = Ridge(alpha=1.0).fit(x[fit], y[fit]).predict(x[score])
            continue
        if np.unique(y[fit]).size < k:
            continue
        prob = LogisticRegression(C=1.0, max_iter=1000).fit(x[fit], y[fit]).predict_proba(x[score])
        out[score] = prob[:, 1] if k == 2 else prob
    return out


def other_columns(frame: pd.DataFrame, names: list[str]) -> np.ndarray:
    """The other columns as numbers: numeric ones as they are, text as sorted-value codes."""
    cols = []
    for name in names:
        values = numeric_view(frame[name])
        if values is None:
            codes, _ = pd.factorize(frame[name], sort=True, use_na_sentinel=True)
            values = np.where(codes >= 0, codes, np.nan).astype("float64")
        cols.append(values)
    return np.column_stack(cols) if cols else np.zeros((len(frame), 0))


def _phrases(docs: np.ndarray, outcome: np.ndarray, names: list[str], th: LineageThresholds):  # noqa: ANN202
    """Phrases (1-3 words) in ``phrase_min_docs`` rows or more that occur with one outcome
    only, beyond chance (binomial tail, Bonferroni over the phrases)."""
    vec = CountVectorizer(
        ngram_range=(1, 3), binary=True, min_df=th.phrase_min_docs, token_pattern=WORDS
    )
    try:
        counts = vec.fit_transform(docs).tocsc()
    except ValueError:
        return [], 0.0, 0
    vocab = vec.get_feature_names_out()
    classes = np.unique(outcome)
    prior = {c: float(np.mean(outcome == c)) for c in classes}
    per_class = np.column_stack(
        [np.asarray(counts[outcome == c].sum(axis=0)).ravel() for c in classes]
    )
    total = per_class.sum(axis=1)
    found: list[tuple[str, str, int]] = []
    covered = np.zeros(len(docs), bool)
    limit = th.phrase_alpha / max(len(vocab), 1)
    for j in np.flatnonzero(per_class.max(axis=1) == total):
        c = classes[int(np.argmax(per_class[j]))]
        if binom.sf(total[j] - 1, total[j], prior[c]) < limit:  # P(all in c) = prior**n
            found.append((str(vocab[j]), names[int(c)], int(total[j])))
            covered[counts[:, j].nonzero()[0]] = True
    found.sort(key=lambda p: (-p[2], -p[0].count(" "), p[0]))  # longest phrase of a count first
    named: list[tuple[str, str, int]] = []
    for p in found:
        if not any(p[0] in q[0] and p[2] == q[2] for q in named) and len(named) < MAX_PHRASES:
            named.append(p)
    return named, float(covered.mean()), len(found)


def text_figures(
    docs: pd.Series,
    y: np.ndarray,
    others: np.ndarray,
    folds: np.ndarray,
    classes: list[str],
    numeric: bool,
    seed: int,
    th: LineageThresholds,
) -> TextFigures:
    """Figures of one text column over the labelled rows given (docs, y, others, folds)."""
    text = docs.fillna("").astype(str).to_numpy()
    k = 0 if numeric else len(classes)
    p = _oof_text(text, y, folds, numeric, k)
    ref = _oof_reference(others, y, folds, numeric, k, seed)
    if numeric:
        outcome = (y > np.median(y)).astype(int)
        names = ["at or below the median", "above the median"]
    else:
        outcome, names = y.astype(int), classes
    named, coverage, count = _phrases(text, outcome, names, th)
    power, reference = _power(y, p, numeric), _power(y, ref, numeric)
    # what the words add to the other columns: the two out-of-fold scores blended by a
    # linear model fitted out of fold on the same folds (stable on a few hundred rows)
    both = _blend(ref, p, y, folds, numeric, k)
    gain = 1.0 - (1.0 - _power(y, both, numeric)) / max(1.0 - reference, 1e-9)
    return TextFigures(
        power, reference, gain, coverage, count, named, numeric, "oof_r2" if numeric else "oof_auc"
    )


def _sentence(f: TextFigures) -> str:
    """The text reading in words: its power, what it adds, and the phrases of one outcome."""
    metric = "R²" if f.numeric else "AUC"
    phrases = "; ".join(f"{p!r} (only {o!r}, {n} rows)" for p, o, n in f.named)
    tail = (
        f"; phrases that occur with one outcome only: {phrases}, in {f.coverage:.0%} of rows"
        if f.named
        else ""
    )
    return (
        f"free text whose words alone predict the target out of fold ({metric} {f.power:.3f}) "
        f"and remove {max(f.gain, 0):.0%} of the error the other columns together leave "
        f"({metric} {f.reference:.3f}){tail}"
    )


def text_evidence(table: AuditTable, settings: Settings) -> list[Evidence]:
    th, out = THRESHOLDS, []
    rows = np.flatnonzero(table.labelled)
    assert table.y is not None
    numeric = table.task == "numeric"
    for name in table.features + table.id_columns:
        if not is_free_text(table.frame[name], th):
            continue
        others = [c for c in table.features if c != name and not is_free_text(table.frame[c], th)]
        keys = content_keys(table.frame, [name, str(table.target)], settings.seed + 15485863)
        folds = (keys % np.uint64(settings.folds)).astype(np.int64)
        frame = table.frame.iloc[rows]
        f = text_figures(
            frame[name], table.y[rows], other_columns(frame, others), folds[rows],
            table.classes, numeric, settings.seed, th,
        )  # fmt: skip
        rule = decide(TEXT_RULES, f, th)
        kinds = ["target_proxy", LATER] if rule.level >= Level.MEDIUM else ["target_proxy"]
        detail = {"phrases": [list(p) for p in f.named], "coverage": f.coverage,
                  "reference": f.reference, "distinct_phrases": f.phrases}  # fmt: skip
        threshold = th.r2_floor if numeric else th.auc_floor
        out += [
            make_evidence(name, k, rule, f.statistic, f.power, threshold, _sentence(f),
                      f.power, detail)
            for k in kinds
        ]  # fmt: skip
    return out
