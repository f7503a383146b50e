"""DropSuspects: scikit-learn's own estimator checks, a Pipeline on the bundled breast-cancer
data (real) with a planted copy of the target, pickling, set_output and bad findings files."""

import json
import pickle

import numpy as np
import pandas as pd
import pytest
from sklearn.linear_model import LogisticRegression
from sklearn.model_selection import train_test_split
from sklearn.pipeline import make_pipeline
from sklearn.preprocessing import StandardScaler
from sklearn.utils.estimator_checks import check_estimator

import featureaudit as fa
from featureaudit.errors import InputFileError
from featureaudit.sklearn import DropSuspects


@pytest.fixture(scope="module")
def leaky(breast_cancer):
    """breast_cancer plus `review_code`, the target with 2% of labels changed (a planted leak)."""
    rng = np.random.default_rng(0)
    frame = breast_cancer.copy()
    y = frame["malignant"].to_numpy()
    frame["review_code"] = np.where(rng.random(len(y)) < 0.02, 1 - y, y)
    return frame


@pytest.fixture(scope="module")
def findings_file(leaky, tmp_path_factory):
    out = tmp_path_factory.mktemp("report")
    fa.audit(leaky, target="malignant", probes=["solo"]).write(out)
    return out / "findings.json"


def test_sklearn_estimator_checks(findings_file):
    # scikit-learn's own conventions (sklearn.utils.estimator_checks): cloning, fitted
    # attributes, n_features_in_, feature names, pickling, NaN and sparse input.
    check_estimator(DropSuspects(str(findings_file)))


def test_pipeline_on_breast_cancer_drops_the_planted_leak(leaky, findings_file, tmp_path):
    X, y = leaky.drop(columns="malignant"), leaky["malignant"]
    X_tr, X_te, y_tr, y_te = train_test_split(X, y, test_size=0.3, random_state=0, stratify=y)
    pipe = make_pipeline(
        DropSuspects(findings_file, at_least="high"),
        StandardScaler(),
        LogisticRegression(max_iter=2000),
    )
    pipe.fit(X_tr, y_tr)
    drop = pipe[0]
    assert drop.columns_dropped_ == ["review_code"]
    assert list(drop.get_feature_names_out()) == [c for c in X.columns if c != "review_code"]
    # reloaded from a pickle, without the findings file, it predicts the same
    saved = tmp_path / "pipe.pkl"
    saved.write_bytes(pickle.dumps(pipe))
    findings_file.rename(tmp_path / "moved.json")
    try:
        again = pickle.loads(saved.read_bytes())
        np.testing.assert_array_equal(again.predict(X_te), pipe.predict(X_te))
    finally:
        (tmp_path / "moved.json").rename(findings_file)
    # scaled breast-cancer features with logistic regression score well without the leak;
    # common practice, no source: about 0.97-0.99 accuracy on a 30% hold-out
    assert again.score(X_te, y_te) > 0.93


def test_set_output_pandas_keeps_names_and_dtypes(leaky, findings_file):
    X = leaky.drop(columns="malignant").assign(
        site=pd.Categorical(["a", "b"] * (len(leaky) // 2) + ["a"] * (len(leaky) % 2))
    )
    out = DropSuspects(findings_file).set_output(transform="pandas").fit_transform(X)
    assert isinstance(out, pd.DataFrame) and "review_code" not in out
    assert out.shape[1] == X.shape[1] - 1 and out["site"].dtype == "category"
    arr = DropSuspects(findings_file).fit_transform(X.drop(columns="site").to_numpy())
    assert arr.shape[1] == X.shape[1] - 1  # no names in a bare array: nothing matched


def test_accepted_columns_are_kept(leaky, findings_file, tmp_path):
    doc = json.loads(findings_file.read_text())
    for c in doc["columns"]:
        if c["column"] == "review_code":
            c["accepted"] = {"reason": "r", "reviewed_by": "me", "until": None}
    path = tmp_path / "f.json"
    path.write_text(json.dumps(doc))
    assert DropSuspects(path).fit(leaky).columns_dropped_ == []


def test_missing_or_foreign_file_names_the_file(tmp_path, leaky):
    with pytest.raises(InputFileError, match="nope.json"):
        DropSuspects(tmp_path / "nope.json").fit(leaky)
    (tmp_path / "other.json").write_text('{"schema": "something/else"}')
    with pytest.raises(InputFileError, match="other.json"):
        DropSuspects(tmp_path / "other.json").fit(leaky)
    with pytest.raises(ValueError, match="needs `findings`"):
        DropSuspects().fit(leaky)
    with pytest.raises(ValueError, match="at_least"):
        DropSuspects(tmp_path / "other.json", at_least="severe").fit(leaky)
