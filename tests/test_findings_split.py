"""``FindingsSplit``: scikit-learn's splitter conventions, and folds that follow the findings,
checked against scikit-learn's own GroupKFold on a real panel statsmodels ships."""

from __future__ import annotations

import json

import lightgbm as lgb
import numpy as np
import pandas as pd
import pytest
from sklearn.model_selection import GridSearchCV, GroupKFold, cross_val_score

import featureaudit as fa
from featureaudit.sklearn import FindingsSplit

sm = pytest.importorskip("statsmodels.api")


@pytest.fixture(scope="module")
def panel(tmp_path_factory):
    """statsmodels' bundled modechoice panel (Greene): 210 travellers x 4 modes; a random row
    split puts every traveller on both sides, which the audit reports."""
    df = sm.datasets.modechoice.load_pandas().data.copy()
    rng = np.random.default_rng(0)
    df["split"] = np.where(rng.random(len(df)) < 0.3, "test", "train")
    result = fa.audit(df, target="choice", split_column="split", entity="individual", seed=0)
    path = tmp_path_factory.mktemp("fs") / "findings.json"
    result.write(path.parent)
    return df, path


def _model():
    return lgb.LGBMClassifier(n_estimators=60, num_leaves=7, verbose=-1, n_jobs=1)


def test_follows_splitter_conventions_and_groups_by_the_entity(panel):
    df, path = panel
    cv = FindingsSplit(path, n_splits=5, frame=df)
    x = df[["mode", "ttme", "invc", "invt", "gc", "hinc", "psize"]]
    assert cv.get_n_splits() == 5 == cv.get_n_splits(x, df.choice)
    folds = list(cv.split(x, df.choice))
    assert len(folds) == 5
    seen = np.zeros(len(df), int)
    for train, test in folds:
        assert np.intersect1d(train, test).size == 0  # disjoint
        assert set(df.individual.iloc[train]).isdisjoint(df.individual.iloc[test])
        seen[test] += 1
    assert (seen == 1).all()  # every row tested once
    assert "grouped by 'individual'" in repr(cv) and "shared entities" in cv.describe()


def test_cv_score_within_0_02_of_group_kfold_and_grid_search_runs(panel):
    df, path = panel
    x = df[["mode", "ttme", "invc", "invt", "gc", "hinc", "psize"]]
    y = df.choice.astype(int)
    ours = cross_val_score(_model(), x, y, cv=FindingsSplit(path, 5, frame=df), scoring="roc_auc")
    # reference: sklearn.model_selection.GroupKFold by traveller
    ref = cross_val_score(_model(), x, y, cv=GroupKFold(5), groups=df.individual, scoring="roc_auc")
    assert abs(ours.mean() - ref.mean()) <= 0.02, (ours.mean(), ref.mean())
    grid = GridSearchCV(_model(), {"num_leaves": [3, 7]}, cv=FindingsSplit(path, 3, frame=df))
    grid.fit(x, y)
    assert grid.best_params_["num_leaves"] in (3, 7) and len(grid.cv_results_["params"]) == 2


def _doc(tmp_path, kinds, **dataset):
    doc = {
        "schema": "featureaudit.findings/3",
        "dataset": dataset,
        "columns": [],
        "dataset_findings": [
            {"probe": "p", "kind": k, "statistic": "s", "level": "high"} for k in kinds
        ],
    }
    path = tmp_path / "f.json"
    path.write_text(json.dumps(doc))
    return path


def test_time_overlap_gives_forward_chaining_folds(tmp_path):
    # statsmodels' bundled Grunfeld panel: 11 firms x 20 years
    df = sm.datasets.grunfeld.load_pandas().data
    path = _doc(tmp_path, ["time_overlap_across_split"], label_time="year", cutoff="label time")
    cv = FindingsSplit(path, n_splits=4)
    for train, test in cv.split(df):
        assert df.year.iloc[train].max() < df.year.iloc[test].min()
    assert "ordered by 'year'" in cv.describe()


def test_copies_stay_with_their_originals_and_no_finding_means_shuffled_folds(tmp_path):
    rng = np.random.default_rng(0)
    x = pd.DataFrame(rng.normal(size=(200, 3)))
    x = pd.concat([x, x.iloc[:40]], ignore_index=True)  # 40 exact copies
    cv = FindingsSplit(_doc(tmp_path, ["duplicate_rows_across_split"]), n_splits=4)
    for train, test in cv.split(x):
        key = pd.util.hash_pandas_object(x, index=False)
        assert set(key.iloc[train]).isdisjoint(key.iloc[test])
    plain = FindingsSplit(_doc(tmp_path, []), n_splits=4)
    assert "no split finding" in plain.describe() and len(list(plain.split(x))) == 4


def test_bad_arguments_say_what_to_do(tmp_path):
    with pytest.raises(ValueError, match="'n_splits' parameter of FindingsSplit"):
        list(FindingsSplit(_doc(tmp_path, []), n_splits=1).split(np.zeros((10, 1))))
    entity = _doc(tmp_path, ["shared_entities_across_split"], entity="customer")
    with pytest.raises(ValueError, match="column 'customer', which is not in X"):
        list(FindingsSplit(entity).split(np.zeros((10, 1))))
    with pytest.raises(fa.errors.FeatureAuditError, match="does not exist"):
        list(FindingsSplit(tmp_path / "nope.json").split(np.zeros((10, 1))))
