"""Impact and remedies, checked against direct scikit-learn / LightGBM figures on real data."""

from __future__ import annotations

import json

import lightgbm as lgb
import numpy as np
import pandas as pd
import pytest
from sklearn.metrics import roc_auc_score
from sklearn.model_selection import KFold

import featureaudit as fa
from featureaudit.findings import droplist
from featureaudit.impact import _params
from featureaudit.kinds import REMEDIES
from featureaudit.remedy import column_remedy, dataset_remedy


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


def _oof_auc(x: np.ndarray, y: np.ndarray) -> float:
    pred = np.zeros(len(y))
    for tr, te in KFold(3, shuffle=True, random_state=0).split(x):
        model = lgb.LGBMClassifier(**_params(0, len(y), 1)).fit(x[tr], y[tr])
        pred[te] = model.predict_proba(x[te])[:, 1]
    return float(roc_auc_score(y, pred))


def test_two_leaks_with_one_signal_are_not_called_negligible(breast_cancer, noisy_copy):
    from featureaudit.report import impact_words

    weak = ["mean fractal dimension", "texture error", "smoothness error", "symmetry error"]
    frame = breast_cancer[[*weak, "malignant"]].copy()  # honest columns with a modest AUC
    leak = noisy_copy(frame.malignant.to_numpy(), 0.05, 0)
    frame["leak_a"] = leak
    frame["leak_b"] = 3 * leak + 1  # the same signal, coded otherwise
    result = fa.audit(frame, target="malignant", probes=["solo"])
    cols = {c["column"]: c for c in result.document["columns"]}
    assert {"leak_a", "leak_b"} <= set(result.document["impact"]["suspects_removed"])
    # reference: out-of-fold LightGBM (3 seeded folds) scored with sklearn.metrics.roc_auc_score,
    # the original columns with and without one copy of the leak
    x = breast_cancer[weak].to_numpy()
    y = breast_cancer.malignant.to_numpy()
    direct = _oof_auc(np.column_stack([x, leak]), y) - _oof_auc(x, y)
    for name in ("leak_a", "leak_b"):
        imp = cols[name]["impact"]
        assert abs(imp["change"]) < 0.01  # removed alone, the other copy stands in for it
        assert abs(imp["change_beyond_other_suspects"] - direct) < 0.01
        lo, hi = imp["ci95_beyond_other_suspects"]
        assert lo <= imp["change_beyond_other_suspects"] <= hi
        assert impact_words(imp).startswith("≈0 alone; -")


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
    def col(level, *found):
        evidence = [{"probe": p, "kind": k, "level": level} for p, k in found]
        return {"level": level, "evidence": evidence}

    fit = ("fitscope", "fit_on_all_rows")
    assert column_remedy(col("high", fit)) == "refit_on_training_rows"
    # fitscope declares that its in-sample target encodings are refitted, not dropped
    assert column_remedy(col("critical", ("fitscope", "target_proxy"))) == "refit_on_training_rows"
    assert column_remedy(col("high", ("code", "fit_on_all_rows"), fit)) == "refit_on_training_rows"
    assert column_remedy(col("critical", ("solo", "target_proxy"))) == "drop"
    assert column_remedy(col("high", ("timing", "recorded_after_cutoff"), fit)) == "drop"
    assert column_remedy(col("medium", ("solo", "target_proxy"))) == "review"
    assert column_remedy(col("none", ("solo", "target_proxy"))) is None
    # the kinds table's remedy for a feature built from later rows keeps the column
    later = ("lineage", "computed_from_later_rows")
    assert column_remedy(col("high", later)) == "recompute_before_cutoff"
    assert set(REMEDIES) >= {"drop", "refit_on_training_rows", "review"}


# ---- --fail-at-impact on the command line (exit codes as the contract's) --------------------
def test_fail_at_impact_exit_codes(tmp_path, breast_cancer, noisy_copy):
    from typer.testing import CliRunner

    from featureaudit.cli import app

    frame = breast_cancer.copy()
    frame["leak"] = noisy_copy(frame.malignant.to_numpy(), 0.05, 0)
    table = tmp_path / "cancer.csv"
    frame.to_csv(table, index=False)
    run = CliRunner().invoke
    base = ["scan", str(table), "--target", "malignant"]
    gated = run(app, [*base, "--out", str(tmp_path / "a"), "--fail-at-impact", "0.001"])
    assert gated.exit_code == 1, gated.output  # the noisy copy lifts AUC far above 0.001
    doc = json.loads((tmp_path / "a" / "findings.json").read_text())
    assert doc["impact"]["as_given"] - doc["impact"]["without_suspects"] > 0.001
    passed = run(app, [*base, "--out", str(tmp_path / "b"), "--fail-at-impact", "0.99"])
    assert passed.exit_code == 0, passed.output
    for bad in ("-0.1", "nan", "much"):
        res = run(app, [*base, "--out", str(tmp_path / "c"), "--fail-at-impact", bad])
        lines = [ln for ln in res.stderr.splitlines() if ln.strip()]
        assert res.exit_code == 2 and len(lines) == 1 and "--fail-at-impact" in lines[0]
    assert not (tmp_path / "c").exists()  # nothing written on a bad flag
    cfg = tmp_path / "gate.toml"
    cfg.write_text('fail_at_impact = "lots"\n')
    res = run(app, [*base, "--out", str(tmp_path / "c"), "--config", str(cfg)])
    assert res.exit_code == 2 and "--fail-at-impact" in res.stderr


# ---- reuse of a unique-lift measurement carried by the evidence ------------------------------
def _leaky(breast_cancer, noisy_copy):
    frame = breast_cancer.copy()
    frame["leak"] = noisy_copy(frame.malignant.to_numpy(), 0.05, 0)
    return frame


def _column(lift=None):
    detail = {} if lift is None else {"unique_lift": lift}
    ev = {"probe": "solo", "kind": "target_proxy", "level": "critical", "detail": detail}
    return {"column": "leak", "level": "critical", "kinds": ["target_proxy"], "evidence": [ev]}


def test_a_unique_lift_in_the_evidence_is_reused_not_refitted(
    breast_cancer, noisy_copy, monkeypatch
):
    from featureaudit import impact
    from featureaudit.settings import Settings
    from featureaudit.table import build_table

    # solo's field: the relative reduction of 1 − AUC, its per-fold range and both errors
    lift = {
        "value": 0.775,
        "low": 0.5,
        "high": 0.9,
        "statistic": "1 - AUC",
        "folds": 5,
        "error_without": 0.04,
        "error_with": 0.009,
    }
    table = build_table(_leaky(breast_cancer, noisy_copy), target="malignant")
    settings = Settings(seed=0, n_jobs=1)

    def no_refit(*a, **k):
        raise AssertionError("the column was refitted although its lift was measured")

    monkeypatch.setattr(impact, "column_change", no_refit)
    block, per_column = impact.measure_impact(table, settings, [_column(lift)], [])
    # the score change is the difference of the errors: 0.04 − 0.009; the spread scales with 0.04
    assert per_column["leak"]["change"] == 0.031 and per_column["leak"]["ci95"] == [0.02, 0.036]
    entry = [e for e in block["by_finding"] if e["column"] == "leak"][0]
    assert entry["corrected"] == round(block["as_given"] - 0.031, 4)
    assert "unique lift" in entry["how"]
    monkeypatch.undo()
    _, measured = impact.measure_impact(table, settings, [_column()], [])
    assert measured["leak"]["how"] == "the column removed" and measured["leak"]["change"] > 0
    # an AUC lift does not stand for an R² change; a lift without a value is ignored
    assert impact.reused_lift(_column(lift), "r2") is None
    assert impact.reused_lift(_column({**lift, "value": None}), "auc") is None
    # a relative lift without the errors it came from is not a score change
    assert impact.reused_lift(_column({"value": 0.01}), "auc") is None
    no_ci = impact.reused_lift(_column({"error_without": 0.02, "error_with": 0.01}), "auc")
    assert no_ci is None  # no value: ignored as well
    # measured with another suspect left out: not the change of removing this one alone
    assert impact.reused_lift(_column({**lift, "without": ["other"]}), "auc") is None
    assert impact.reused_lift(_column({**lift, "without": []}), "auc") is not None
    partial = {"value": 0.5, "error_without": 0.02, "error_with": 0.01}
    got = impact.reused_lift(_column(partial), "auc")
    assert got == {"change": 0.01, "ci95": [None, None], "how": got["how"]}


# ---- split shift: training rows re-weighted by the adversarial odds --------------------------
def _shifted(n=3000, seed=0):
    rng = np.random.default_rng(seed)
    held = rng.random(n) < 0.3
    x = rng.normal(size=n) + held  # held-out rows: N(1, 1); training rows: N(0, 1)
    z = rng.normal(size=n)
    y = (x + 0.5 * z + rng.normal(size=n) > 0.5).astype(int)
    return pd.DataFrame({"x": x, "z": z, "y": y, "split": np.where(held, "test", "train")})


def test_shift_weights_follow_the_density_ratio_of_the_two_sides():
    from scipy.stats import spearmanr

    from featureaudit.impact import _Bench, shift_weights
    from featureaudit.settings import Settings
    from featureaudit.table import build_table

    table = build_table(_shifted(), target="y", split_column="split")
    bench = _Bench(table, Settings(seed=0, n_jobs=1), ["x", "z"])
    w = shift_weights(bench)[bench.fit_rows]
    # reference: the density ratio N(x; 1, 1) / N(x; 0, 1) = exp(x - 1/2) (closed form), so the
    # ideal log-weight rises one for one with x; scipy.stats.spearmanr measures the agreement
    x = bench.x[bench.fit_rows, 0]
    assert spearmanr(np.log(w), x - 0.5).statistic > 0.8
    assert spearmanr(np.log(w), bench.x[bench.fit_rows, 1]).statistic < 0.2  # z is not shifted
    assert abs(w.mean() - 1) < 1e-9 and w.max() <= 20.0 * (1 + 1e-6)


def test_split_shift_finding_gets_a_reweighted_correction():
    from featureaudit.impact import measure_impact
    from featureaudit.settings import Settings
    from featureaudit.table import build_table

    table = build_table(_shifted(), target="y", split_column="split")
    finding = {"kind": "split_shift", "level": "high"}
    block, _ = measure_impact(table, Settings(seed=0, n_jobs=1), [], [finding])
    e = [e for e in block["by_finding"] if e["kind"] == "split_shift"][0]
    assert e["corrected"] is not None and "re-weighted" in e["how"]
    lo, hi = e["corrected_ci95"]
    assert lo <= e["corrected"] <= hi
    # without held-out targets there is nothing to score the re-weighted model on
    pooled = build_table(_shifted().drop(columns="split"), target="y")
    block, _ = measure_impact(pooled, Settings(seed=0, n_jobs=1), [], [finding])
    e = [e for e in block["by_finding"] if e["kind"] == "split_shift"][0]
    assert e["corrected"] is None and e["how"].startswith("not corrected")


# ---- entity-grouped and time-respecting corrections, with intervals --------------------------
def test_grouped_and_time_corrections_match_direct_scores_within_their_intervals(breast_cancer):
    from sklearn.model_selection import GroupKFold

    from featureaudit.impact import measure_impact
    from featureaudit.settings import Settings
    from featureaudit.table import build_table

    frame = breast_cancer.copy()
    rng = np.random.default_rng(3)
    frame["patient"] = rng.integers(0, 150, len(frame))
    frame["decided_at"] = pd.Timestamp("2024-01-01") + pd.to_timedelta(
        rng.permutation(len(frame)), unit="D"
    )
    table = build_table(frame, target="malignant", entity="patient", label_time="decided_at")
    found = [
        {"kind": "shared_entities_across_split", "level": "high"},
        {"kind": "time_overlap_across_split", "level": "high"},
    ]
    block, _ = measure_impact(table, Settings(seed=0, n_jobs=1), [], found)
    by = {e["kind"]: e for e in block["by_finding"]}
    feats = [c for c in breast_cancer.columns if c != "malignant"]
    x, y = frame[feats].to_numpy(), frame.malignant.to_numpy()
    # reference: sklearn GroupKFold(3) by patient, LightGBM, sklearn.metrics.roc_auc_score
    pred = np.zeros(len(y))
    for tr, te in GroupKFold(3).split(x, groups=frame.patient):
        pred[te] = (
            lgb.LGBMClassifier(**_params(0, len(y), 1)).fit(x[tr], y[tr]).predict_proba(x[te])[:, 1]
        )
    grouped = by["shared_entities_across_split"]
    lo, hi = grouped["corrected_ci95"]
    assert lo <= roc_auc_score(y, pred) <= hi
    assert abs(grouped["corrected"] - roc_auc_score(y, pred)) < 0.01
    assert grouped["ci95"][0] <= grouped["change"] <= grouped["ci95"][1]
    # reference: trained on the earliest 80 % by decision time, AUC on the latest 20 %
    order = np.argsort(frame.decided_at.to_numpy(), kind="stable")
    early, late = order[: int(0.8 * len(y))], order[int(0.8 * len(y)) :]
    model = lgb.LGBMClassifier(**_params(0, len(y), 1)).fit(x[early], y[early])
    direct = roc_auc_score(y[late], model.predict_proba(x[late])[:, 1])
    timed = by["time_overlap_across_split"]
    lo, hi = timed["corrected_ci95"]
    assert lo <= direct <= hi and abs(timed["corrected"] - direct) < 0.02
    assert timed["ci95"][0] <= timed["change"] <= timed["ci95"][1]


# ---- a numeric target: R² --------------------------------------------------------------------
def test_numeric_target_copy_removed_gives_the_original_columns_r2():
    from sklearn.datasets import load_diabetes
    from sklearn.metrics import r2_score

    data = load_diabetes(as_frame=True)  # scikit-learn's bundled diabetes data (real)
    frame = data.data.copy()
    frame["progression"] = data.target.to_numpy()
    rng = np.random.default_rng(0)
    frame["leak"] = frame.progression + rng.normal(0, 0.1 * frame.progression.std(), len(frame))
    result = fa.audit(frame, target="progression", probes=["solo"])
    imp = result.document["impact"]
    assert imp["metric"] == "r2" and imp["as_given"] > 0.9
    leak = [e for e in imp["by_finding"] if e["column"] == "leak"][0]
    # reference: out-of-fold LightGBM regressor on the original columns, sklearn r2_score
    x, y = data.data.to_numpy(), data.target.to_numpy()
    pred = np.zeros(len(y))
    for tr, te in KFold(3, shuffle=True, random_state=0).split(x):
        pred[te] = lgb.LGBMRegressor(**_params(0, len(y), 1)).fit(x[tr], y[tr]).predict(x[te])
    assert abs(leak["corrected"] - r2_score(y, pred)) < 0.03
    assert imp["as_given"] - leak["corrected"] > 0.3
    lo, hi = leak["ci95"]
    assert lo <= leak["change"] <= hi
