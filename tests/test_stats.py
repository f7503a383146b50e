"""The cell statistics against reference libraries and a published worked example."""

import numpy as np
import pytest
from scipy.stats import spearmanr
from sklearn.metrics import mutual_info_score, r2_score, roc_auc_score

from featureaudit.kit.oof import make_target, score_bins
from featureaudit.kit.stats import (
    auc_from_cells,
    bin_codes,
    edges_at_or_below,
    hanley_mcneil_se,
    null_auc_se,
    uncertainty_coefficient,
)

# Hanley & McNeil 1982, CT ratings on a 5-point scale. Counts from memory (see
# references.md §3); the AUC 0.8932 and SE 0.0325 were computed with scikit-learn.
NORMAL = np.array([33, 6, 6, 11, 2])
DISEASED = np.array([3, 2, 2, 11, 33])


def test_auc_from_cells_matches_sklearn_on_the_ct_ratings():
    rating = np.arange(1, 6, dtype=float)
    scores = np.r_[np.repeat(rating, NORMAL), np.repeat(rating, DISEASED)]
    labels = np.r_[np.zeros(NORMAL.sum()), np.ones(DISEASED.sum())]
    reference = roc_auc_score(labels, scores)  # reference: sklearn.metrics.roc_auc_score
    assert auc_from_cells(rating, DISEASED, NORMAL) == pytest.approx(reference, abs=1e-12)
    assert reference == pytest.approx(0.8932, abs=1e-4)


def test_hanley_mcneil_se_reproduces_the_worked_example():
    # reference: Hanley & McNeil 1982 (paper reports 0.032; 0.0325 computed, references.md §3)
    auc = auc_from_cells(np.arange(5.0), DISEASED, NORMAL)
    assert hanley_mcneil_se(auc, DISEASED.sum(), NORMAL.sum()) == pytest.approx(0.0325, abs=5e-4)


def test_null_se_matches_a_permutation_distribution():
    # reference: the spread of sklearn roc_auc_score over random labellings
    rng = np.random.default_rng(0)
    n1, n0 = 40, 60
    scores = rng.normal(size=n1 + n0)
    labels = np.r_[np.ones(n1), np.zeros(n0)]
    aucs = [roc_auc_score(rng.permutation(labels), scores) for _ in range(2000)]
    assert null_auc_se(n1, n0) == pytest.approx(np.std(aucs), rel=0.08)


def test_uncertainty_coefficient_matches_sklearn_mutual_information():
    rng = np.random.default_rng(1)
    x = rng.integers(0, 6, 5000)
    y = (x + rng.integers(0, 3, 5000)) % 4
    counts = np.zeros((6, 4))
    np.add.at(counts, (x, y), 1)
    hx = -np.sum((np.bincount(x) / 5000) * np.log(np.bincount(x) / 5000))
    corrected = (mutual_info_score(x, y) - 5 * 3 / (2 * 5000)) / hx  # reference: sklearn MI
    assert uncertainty_coefficient(counts) == pytest.approx(corrected, abs=1e-9)
    assert uncertainty_coefficient(np.ones((3, 2))) == 0.0


def _oof(frame, column, target, task, n_classes):
    y = frame[target].to_numpy()
    t = make_target(y, np.ones(len(y), bool), task, n_classes, 5, 0)
    b = bin_codes(frame[column], 20)
    return t, b, score_bins(b.codes, b.n_bins, t)


def test_binary_oof_auc_equals_roc_auc_score(breast_cancer):
    t, b, score = _oof(breast_cancer, "worst perimeter", "malignant", "binary", 2)
    pred = score.row_scores(t, b.codes)[:, 1]
    # reference: sklearn.metrics.roc_auc_score on the same out-of-fold predictions
    assert score.value == pytest.approx(roc_auc_score(t.y, pred), abs=1e-12)
    folds = [roc_auc_score(t.y[t.fold == f], pred[t.fold == f]) for f in range(5)]
    assert np.allclose(score.fold_values, folds)


def test_multiclass_oof_auc_equals_macro_ovr(wine):
    t, b, score = _oof(wine, "proline", "cultivar", "multiclass", 3)
    pred = score.row_scores(t, b.codes)
    # reference: sklearn roc_auc_score(multi_class="ovr", average="macro")
    assert score.value == pytest.approx(
        roc_auc_score(t.y, pred, multi_class="ovr", average="macro"), abs=1e-12
    )


def test_numeric_oof_r2_and_spearman(diabetes):
    t, b, score = _oof(diabetes, "bmi", "progression", "numeric", 1)
    pred = score.row_scores(t, b.codes)
    assert score.value == pytest.approx(r2_score(t.y, pred), abs=1e-10)  # reference: sklearn
    assert score.spearman == pytest.approx(spearmanr(t.y, pred)[0], abs=1e-10)  # reference: scipy


def test_unique_values_cannot_be_memorised():
    # Every row in its own bin: out of fold, nothing is learned, so the AUC sits at chance.
    rng = np.random.default_rng(5)
    import pandas as pd

    frame = pd.DataFrame({"code": [f"k{i}" for i in range(2000)], "y": rng.integers(0, 2, 2000)})
    t, b, score = _oof(frame, "code", "y", "binary", 2)
    assert score.value == pytest.approx(0.5, abs=1e-9)


def test_quantile_bins_put_missing_values_in_bin_zero():
    import pandas as pd

    s = pd.Series([np.nan, 1.0, 2.0, 3.0, np.nan] * 20 + list(range(100)))
    b = bin_codes(s, 5)
    assert (b.codes[s.isna().to_numpy()] == 0).all()
    assert (b.codes[s.notna().to_numpy()] > 0).all()
    assert b.labels[0] == "(missing)"


@pytest.mark.parametrize("n_edges", [1, 19, 64, 65, 255])
def test_edge_counts_equal_numpy_searchsorted(diabetes, n_edges):
    # numpy's searchsorted(side="right") is the reference, on scikit-learn's diabetes data
    # (ties at the edges included: the edges are values of the column itself)
    values = diabetes.drop(columns="progression").to_numpy(dtype=float)[:, :4].ravel()
    distinct = np.unique(values)
    edges = distinct[np.linspace(1, distinct.size - 2, n_edges).round().astype(int)]
    assert np.unique(edges).size == n_edges  # both sides of COMPARE_EDGES are reached
    got = edges_at_or_below(edges, values)
    np.testing.assert_array_equal(got, np.searchsorted(edges, values, side="right"))
    assert got.dtype == np.int64
