"""``impact.remedied``: the score with every remedy applied, against a direct LightGBM that
applies the same remedies by hand, on real data that statsmodels ships."""

from __future__ import annotations

import lightgbm as lgb
import numpy as np
import pandas as pd
import pytest
from sklearn.metrics import roc_auc_score
from sklearn.model_selection import GroupKFold

import featureaudit as fa

sm = pytest.importorskip("statsmodels.api")


def _direct_params() -> dict:
    # a user's own LightGBM, not the audit's bench settings
    return dict(n_estimators=200, learning_rate=0.05, num_leaves=15, verbose=-1, n_jobs=1)


@pytest.fixture(scope="module")
def fair() -> pd.DataFrame:
    """statsmodels' bundled Fair (1978) affairs survey: 6,366 real answers; three planted
    columns: a target proxy (drop), a column standardised on all rows and one filled with the
    all-rows mean (both honest: refit)."""
    df = sm.datasets.fair.load_pandas().data.copy()
    rng = np.random.default_rng(0)
    df["had_affair"] = (df.pop("affairs") > 0).astype(int)
    y = df["had_affair"].to_numpy()
    df["split"] = np.where(rng.random(len(df)) < 0.3, "test", "train")
    df["counselling"] = np.where(y == 1, rng.poisson(3, len(df)), rng.poisson(0.2, len(df)))
    a = df.pop("yrs_married")
    df["yrs_married_std"] = (a - a.mean()) / a.std(ddof=0)
    age = df["age"].astype(float).copy()
    age[rng.random(len(df)) < 0.15] = np.nan
    df["age"] = age.fillna(age.mean())  # the all-rows mean, a float off the ages' grid
    return df


def test_remedied_score_matches_a_direct_lightgbm_that_drops_only_the_drop_list(fair):
    result = fa.audit(fair, target="had_affair", split_column="split", seed=0)
    imp = result.impact
    rem = imp["remedied"]
    assert result.droplist() == ["counselling"] == rem["dropped"]
    assert "yrs_married_std" in result.refit_list() and "yrs_married_std" in rem["refitted"]
    # reference: lightgbm.LGBMClassifier trained on the training rows without the drop list,
    # scored with sklearn.metrics.roc_auc_score on the held-out rows
    tr = (fair.split == "train").to_numpy()
    x = fair.drop(columns=["had_affair", "split", *result.droplist()])
    y = fair.had_affair.to_numpy()
    model = lgb.LGBMClassifier(**_direct_params()).fit(x[tr], y[tr])
    direct = roc_auc_score(y[~tr], model.predict_proba(x[~tr])[:, 1])
    lo, hi = rem["ci95"]
    assert lo <= direct <= hi, (direct, rem)
    # the suspects' score drops the refit columns too; the remedied one keeps them
    assert imp["as_given"] - rem["value"] > 0.1
    assert "re-standardised on the training rows" in rem["how"]


def test_a_median_fill_is_re_imputed_with_the_training_median_not_rescaled(breast_cancer):
    from sklearn.impute import SimpleImputer

    from featureaudit.remedied import refit_column
    from featureaudit.table import build_table

    frame = breast_cancer.copy()
    rng = np.random.default_rng(2)
    frame["split"] = np.where(rng.random(len(frame)) < 0.3, "test", "train")
    raw = frame["mean texture"].to_numpy().copy()
    gone = rng.random(len(raw)) < 0.15
    tr = (frame.split == "train").to_numpy()
    fill = float(np.median(raw[~gone]))  # the all-rows median: the leak
    frame["mean texture"] = np.where(gone, fill, raw)
    # reference: sklearn.impute.SimpleImputer(strategy="median") fitted on the training rows
    masked = np.where(gone, np.nan, raw)[:, None]
    want = SimpleImputer(strategy="median").fit(masked[tr]).transform(masked)[:, 0]
    detail = {  # the shape fitscope writes for an imputation pile
        "spike_value": fill,
        "statistic": "median",
        "training_rows_fit_would_give": float(np.median(raw[~gone & tr])),
    }
    verdict = {
        "column": "mean texture",
        "evidence": [{"probe": "fitscope", "level": "high", "detail": detail}],
    }
    table = build_table(frame, target="malignant", split_column="split")
    out, words = refit_column(table, frame["mean texture"].to_numpy(), verdict)
    # a genuine value equal to the fill cannot be told from a filled one (it is re-filled too)
    told = gone | (raw != fill)
    assert np.allclose(out[told], want[told]) and (~told).sum() <= 2
    assert "median fill re-imputed with the training rows' median" in words
    assert "standardis" not in words and "scal" not in words


def test_remedied_groups_folds_by_entity_on_a_panel_as_group_kfold_does():
    # statsmodels' bundled modechoice panel: 210 travellers x 4 modes (Greene); a random row
    # split shares every traveller across it; a planted booking record copies the choice
    df = sm.datasets.modechoice.load_pandas().data.copy()
    rng = np.random.default_rng(0)
    df["split"] = np.where(rng.random(len(df)) < 0.3, "test", "train")
    y = df["choice"].to_numpy().astype(int)
    df["booked"] = np.where(rng.random(len(df)) < 0.9, y, 1 - y)
    result = fa.audit(df, target="choice", split_column="split", entity="individual", seed=0)
    rem = result.impact["remedied"]
    assert "grouped by the entity" in rem["how"] and rem["dropped"] == ["booked"]
    # reference: sklearn.model_selection.GroupKFold by traveller, LightGBM without the drop list
    x = df.drop(columns=["choice", "split", *result.droplist()]).to_numpy()
    pred = np.zeros(len(y))
    for tr, te in GroupKFold(3).split(x, y, groups=df.individual):
        model = lgb.LGBMClassifier(**_direct_params()).fit(x[tr], y[tr])
        pred[te] = model.predict_proba(x[te])[:, 1]
    direct = roc_auc_score(y, pred)
    lo, hi = rem["ci95"]
    assert lo - 0.005 <= direct <= hi + 0.005, (direct, rem)


def test_refit_column_inverts_each_affine_scaling_exactly(breast_cancer):
    from featureaudit.remedied import refit_column
    from featureaudit.table import build_table

    frame = breast_cancer.copy()
    rng = np.random.default_rng(1)
    frame["split"] = np.where(rng.random(len(frame)) < 0.3, "test", "train")
    raw = frame["mean radius"].to_numpy()
    tr = (frame.split == "train").to_numpy()
    scaled = {
        "sd": ((raw - raw.mean()) / raw.std(), {"mean": 0.0, "sd": 1.0}),
        "minmax": ((raw - raw.min()) / np.ptp(raw), {"min": 0.0, "max": 1.0}),
    }
    for name, (values, all_rows) in scaled.items():
        frame[name] = values
        table = build_table(frame, target="malignant", split_column="split")
        verdict = {
            "column": name,
            "evidence": [{"probe": "fitscope", "level": "high", "detail": {"all_rows": all_rows}}],
        }
        out, words = refit_column(table, values, verdict)
        # reference: sklearn.preprocessing scalers fitted on the training rows' raw values
        from sklearn.preprocessing import MinMaxScaler, StandardScaler

        scaler = StandardScaler() if name == "sd" else MinMaxScaler()
        want = scaler.fit(raw[tr, None]).transform(raw[:, None])[:, 0]
        assert out is not None and np.allclose(out, want, atol=1e-9), words
    cap = {
        "column": "sd",
        "evidence": [
            {"probe": "fitscope", "level": "high", "detail": {"fingerprint": "capped at quantiles"}}
        ],
    }
    out, words = refit_column(table, frame["sd"].to_numpy(), cap)
    assert out is None and "kept as it is" in words
