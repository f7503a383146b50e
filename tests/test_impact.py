"""Impact and remedies, checked against direct scikit-learn / LightGBM figures on real data."""

from __future__ import annotations

import lightgbm as lgb
import numpy as np
import pandas as pd
import pytest
from sklearn.metrics import roc_auc_score
from sklearn.model_selection import KFold

import featureaudit as fa
from featureaudit.findings import droplist
from featureaudit.impact import _params
from featureaudit.remedy import REMEDIES, column_remedy, dataset_remedy


def _split(frame, seed=0, share=0.3):
    rng = np.random.default_rng(seed)
    out = frame.copy()
    out["split"] = np.where(rng.random(len(out)) < share, "test", "train")
    return out


def test_planted_duplicates_raise_the_score_and_deduplication_matches_a_direct_auc(breast_cancer):
    frame = _split(breast_cancer)
    train = frame[frame.split == "train"]
    copies = train.sample(120, random_state=1).assign(split="test")
    planted = pd.concat([frame, copies], ignore_index=True)
    result = fa.audit(planted, target="malignant", split_column="split", probes=["twins"])
    imp = result.document["impact"]
    dup = [e for e in imp["by_finding"] if e["kind"] == "duplicate_rows_across_split"][0]
    assert dup["corrected"] < dup["as_given"]  # the copies lifted the held-out score
    # reference: sklearn.metrics.roc_auc_score of the same LightGBM on held-out rows without twins
    feats = [c for c in breast_cancer.columns if c != "malignant"]
    tr = planted[planted.split == "train"]
    te = planted[planted.split == "test"]
    keys = set(map(tuple, tr[feats].to_numpy()))
    clean = te[[tuple(r) not in keys for r in te[feats].to_numpy()]]
    model = lgb.LGBMClassifier(**_params(0, len(planted), 1)).fit(
        tr[feats].to_numpy(), tr.malignant.to_numpy()
    )
    direct = roc_auc_score(clean.malignant, model.predict_proba(clean[feats].to_numpy())[:, 1])
    lo, hi = dup["as_given"] - dup["ci95"][1], dup["as_given"] - dup["ci95"][0]
    assert lo - 1e-9 <= direct <= hi + 1e-9
    assert abs(direct - dup["corrected"]) < 0.005


def test_noisy_target_copy_removed_gives_the_original_columns_score(breast_cancer, noisy_copy):
    frame = breast_cancer.copy()
    frame["leak"] = noisy_copy(frame.malignant.to_numpy(), 0.05, 0)
    result = fa.audit(frame, target="malignant", probes=["solo"])
    imp = result.document["impact"]
    leak = [e for e in imp["by_finding"] if e["column"] == "leak"][0]
    # reference: out-of-fold LightGBM on the original columns, sklearn.metrics.roc_auc_score
    x = breast_cancer.drop(columns="malignant").to_numpy()
    y = breast_cancer.malignant.to_numpy()
    pred = np.zeros(len(y))
    for tr, te in KFold(3, shuffle=True, random_state=0).split(x):
        model = lgb.LGBMClassifier(**_params(0, len(y), 1)).fit(x[tr], y[tr])
        pred[te] = model.predict_proba(x[te])[:, 1]
    assert abs(leak["corrected"] - roc_auc_score(y, pred)) < 0.01
    assert leak["as_given"] > leak["corrected"]
    col = [c for c in result.document["columns"] if c["column"] == "leak"][0]
    assert col["impact"]["change"] == leak["change"]  # one computation for both
    assert col["remedy"] == "drop"


def test_scaler_fitted_on_all_rows_has_a_negligible_impact(breast_cancer):
    frame = _split(breast_cancer, share=0.4)
    v = frame["mean radius"]
    frame["mean radius"] = (v - v.mean()) / v.std(ddof=0)
    result = fa.audit(frame, target="malignant", split_column="split", probes=["fitscope"])
    col = [c for c in result.document["columns"] if c["column"] == "mean radius"][0]
    assert col["remedy"] == "refit_on_training_rows"
    # reference: Roth 2026 (arXiv 2604.04199) — refits move AUC by at most about 0.005
    assert abs(col["impact"]["change"]) <= 0.01
    assert "mean radius" not in droplist(result.findings, "high")


@pytest.mark.parametrize(
    "kind, remedy",
    [
        ("duplicate_rows_across_split", "deduplicate"),
        ("shared_entities_across_split", "regroup_split"),
        ("time_overlap_across_split", "split_by_time"),
        ("split_shift", "review"),
    ],
)
def test_dataset_remedy_per_kind(kind, remedy):
    assert dataset_remedy({"kind": kind, "level": "high"}) == remedy
    assert dataset_remedy({"kind": kind, "level": "none"}) is None


def test_column_remedy_per_kind():
    def col(level, *probes):
        return {"level": level, "evidence": [{"probe": p, "level": level} for p in probes]}

    assert column_remedy(col("high", "fitscope")) == "refit_on_training_rows"
    assert column_remedy(col("critical", "solo")) == "drop"
    assert column_remedy(col("high", "timing", "fitscope")) == "drop"
    assert column_remedy(col("medium", "solo")) == "review"
    assert column_remedy(col("none", "solo")) is None
    assert set(REMEDIES) >= {"drop", "refit_on_training_rows", "review"}
