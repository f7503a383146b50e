"""Partitions and CV folds: every pair of sides is audited and findings name their pair."""

from __future__ import annotations

import json

import numpy as np
import pandas as pd
import pytest
from sklearn.model_selection import KFold
from sklearn.preprocessing import StandardScaler

import featureaudit as fa
from featureaudit.errors import ColumnNotFound, SettingError
from featureaudit.levels import Level

SIDE_PROBES = ["twins", "timing", "separability", "fitscope"]


def _three_way(frame: pd.DataFrame, seed: int) -> pd.DataFrame:
    """A random 60/20/20 train/valid/test split of the rows, as a split column."""
    rng = np.random.default_rng(seed)
    u = rng.random(len(frame))
    out = frame.copy()
    out["split"] = np.where(u < 0.6, "train", np.where(u < 0.8, "valid", "test"))
    return out


def _scaled(frame: pd.DataFrame, fit_rows: np.ndarray, target: str) -> pd.DataFrame:
    """Every feature standardised with scikit-learn's StandardScaler fitted on ``fit_rows``."""
    features = [c for c in frame.columns if c not in (target, "split", "fold")]
    out = frame.copy()
    scaler = StandardScaler().fit(frame.loc[fit_rows, features])
    out[features] = scaler.transform(frame[features])
    return out


def _fit_findings(result: fa.AuditResult, at_least: Level) -> list[dict]:
    found = []
    for column in result.document["columns"]:
        for e in column["evidence"]:
            if e["kind"] == "fit_on_all_rows" and Level.parse(e["level"]) >= at_least:
                found.append({**e, "column": column["column"]})
    return found


def _pairs(found: list[dict]) -> set[tuple[str, ...]]:
    return {tuple(e["detail"].get("partitions", ("whole table",))) for e in found}


def test_partitions_and_rows_per_partition(breast_cancer):
    frame = _three_way(breast_cancer, 0)
    result = fa.audit(frame, target="malignant", split_column="split", probes=["fitscope"])
    parts = result.document["dataset"]["partitions"]
    assert parts == {
        "train": int((frame.split == "train").sum()),
        "test": int((frame.split == "test").sum()),
        "valid": int((frame.split == "valid").sum()),
    }
    assert result.document["dataset"]["folds"] is None


def test_scaler_fitted_on_train_and_valid_is_caught_and_named(breast_cancer):
    # scikit-learn's StandardScaler fitted on train + valid (real data, sklearn's
    # breast-cancer set): exact over train + valid, off over train alone. The test
    # partition's view (train+valid vs test) shows the test rows were not in the fit.
    frame = _three_way(breast_cancer, 1)
    leaky = _scaled(frame, frame.split.isin(["train", "valid"]).to_numpy(), "malignant")
    result = fa.audit(leaky, target="malignant", split_column="split", probes=["fitscope"])
    found = _fit_findings(result, Level.HIGH)
    assert len({e["column"] for e in found}) >= 25  # of 30 scaled features
    assert _pairs(found) == {("train", "valid")}
    assert all("train vs valid" in e.get("summary", "") for e in found if e["detail"])


def test_scaler_fitted_on_all_rows_is_caught_from_the_test_partition(breast_cancer):
    frame = _three_way(breast_cancer, 2)
    leaky = _scaled(frame, np.ones(len(frame), bool), "malignant")
    result = fa.audit(leaky, target="malignant", split_column="split", probes=["fitscope"])
    pairs = _pairs(_fit_findings(result, Level.HIGH))
    assert ("train+valid", "test") in pairs
    assert ("whole table",) in pairs  # the whole table's view: train vs valid+test


def test_correct_three_way_pipeline_is_clean(breast_cancer):
    frame = _three_way(breast_cancer, 3)
    clean = _scaled(frame, (frame.split == "train").to_numpy(), "malignant")
    result = fa.audit(clean, target="malignant", split_column="split", probes=["fitscope"])
    assert _fit_findings(result, Level.MEDIUM) == []


@pytest.mark.parametrize("seed", [0, 1, 2])
def test_random_three_way_split_of_real_data_is_clean(wine, seed):
    # scikit-learn's bundled wine data, randomly split three ways: no side-comparing
    # probe may find anything at medium or above, on any pair.
    frame = _three_way(wine, seed)
    result = fa.audit(frame, target="cultivar", split_column="split", probes=SIDE_PROBES)
    doc = result.document
    loud = [f for f in doc["dataset_findings"] if Level.parse(f["level"]) >= Level.MEDIUM]
    assert loud == []
    assert _fit_findings(result, Level.MEDIUM) == []
    pairs = {tuple(f["partitions"]) for f in doc["dataset_findings"]}
    assert {("train", "valid"), ("train", "test"), ("valid", "test")} <= pairs


def _with_folds(frame: pd.DataFrame, seed: int) -> pd.DataFrame:
    """80 % training rows cut into five scikit-learn KFold folds; the rest held out."""
    rng = np.random.default_rng(seed)
    out = frame.copy()
    out["split"] = np.where(rng.random(len(frame)) < 0.8, "train", "test")
    train = np.flatnonzero(out.split == "train")
    fold = np.full(len(frame), np.nan)
    for k, (_, part) in enumerate(KFold(5, shuffle=True, random_state=seed).split(train)):
        fold[train[part]] = k
    out["fold"] = fold
    return out


def test_scaler_on_all_training_rows_before_kfold_is_caught_per_fold(breast_cancer):
    frame = _with_folds(breast_cancer, 0)
    leaky = _scaled(frame, (frame.split == "train").to_numpy(), "malignant")
    result = fa.audit(
        leaky, target="malignant", split_column="split", fold_column="fold", probes=["fitscope"]
    )
    assert result.document["dataset"]["folds"] == 5
    found = _fit_findings(result, Level.HIGH)
    folds = {p for p in _pairs(found) if p[0].startswith("fold")}
    assert folds == {(f"fold {k}", "other folds") for k in range(5)}
    fold_found = [e for e in found if e["detail"].get("biases")]
    assert all("cross-validated score, not the test score" in e["summary"] for e in fold_found)
    assert "fold" not in {c["column"] for c in result.document["columns"]}


def test_unscaled_folds_are_clean(breast_cancer):
    # preprocessing fitted inside each fold leaves the stored columns as they were
    frame = _with_folds(breast_cancer, 1)
    result = fa.audit(
        frame, target="malignant", split_column="split", fold_column="fold", probes=SIDE_PROBES
    )
    assert _fit_findings(result, Level.MEDIUM) == []
    loud = [
        f for f in result.document["dataset_findings"] if Level.parse(f["level"]) >= Level.MEDIUM
    ]
    assert loud == []
    pairs = {tuple(f["partitions"]) for f in result.document["dataset_findings"]}
    assert ("fold 0", "other folds") in pairs


def test_fold_column_errors(breast_cancer):
    frame = _with_folds(breast_cancer, 2)
    with pytest.raises(ColumnNotFound, match="fold_column column 'nope' is not in"):
        fa.audit(frame, target="malignant", split_column="split", fold_column="nope")
    blank = frame.copy()
    blank.loc[blank.index[blank.split == "train"][:3], "fold"] = np.nan
    with pytest.raises(SettingError, match="blank on 3 training rows"):
        fa.audit(blank, target="malignant", split_column="split", fold_column="fold")
    one = frame.assign(fold=0)
    with pytest.raises(SettingError, match="at least two folds"):
        fa.audit(one, target="malignant", split_column="split", fold_column="fold")
    with pytest.raises(SettingError, match="role 'target'"):
        fa.audit(frame, target="malignant", split_column="split", fold_column="malignant")


def test_dossier_groups_split_findings_by_pair(wine, tmp_path):
    from featureaudit.report import render_dossier

    frame = _three_way(wine, 4)
    # copies planted across every pair, so that each pair has a split finding to show
    train = frame[frame.split == "train"].iloc[:12]
    valid = frame[frame.split == "valid"].iloc[:12]
    copies = [train.assign(split="valid"), train.assign(split="test"), valid.assign(split="test")]
    frame = pd.concat([frame, *copies], ignore_index=True)
    result = fa.audit(frame, target="cultivar", split_column="split", probes=["twins"])
    html = render_dossier(result.findings)
    heads = [h for h in html.split('<h3 class="pair">')[1:]]
    names = [h.split("</h3>")[0] for h in heads]
    assert {"train vs valid", "train vs test", "valid vs test"} <= set(names)
    assert len(names) == len(set(names))  # each pair once


def test_one_heldout_partition_has_no_pair_headings(wine):
    from featureaudit.report import render_dossier

    frame = wine.assign(split=np.where(np.arange(len(wine)) % 4 == 0, "test", "train"))
    result = fa.audit(frame, target="cultivar", split_column="split", probes=["twins"])
    assert '<h3 class="pair">' not in render_dossier(result.findings)
    assert {tuple(f["partitions"]) for f in result.document["dataset_findings"]} == {
        ("train", "test")
    }


def test_copies_between_valid_and_test_are_named_with_that_pair(breast_cancer):
    # real rows (sklearn's breast-cancer set); 20 validation rows copied into the test part
    frame = _three_way(breast_cancer, 5)
    copies = frame[frame.split == "valid"].iloc[:20].assign(split="test")
    planted = pd.concat([frame, copies], ignore_index=True)
    result = fa.audit(planted, target="malignant", split_column="split", probes=["twins"])
    levels = {
        tuple(f["partitions"]): f["level"]
        for f in result.document["dataset_findings"]
        if f["statistic"] == "heldout_share_with_twin"
    }
    assert levels[("valid", "test")] in ("high", "critical")
    assert levels[("train", "test")] == "none"
    assert levels[("train", "valid")] == "none"


def test_shared_entities_across_folds(breast_cancer):
    from sklearn.model_selection import GroupKFold

    # an invented grouping: three consecutive rows per entity
    frame = breast_cancer.assign(entity=np.arange(len(breast_cancer)) // 3)
    row_folds = _with_folds(frame, 6).fold
    grouped = np.zeros(len(frame))
    for k, (_, part) in enumerate(GroupKFold(5).split(frame, groups=frame.entity)):
        grouped[part] = k
    for folds, loud in ((row_folds, True), (grouped, False)):
        data = frame.assign(fold=folds, split=np.where(np.isnan(folds), "test", "train"))
        if not loud:
            data["split"] = "train"
        result = fa.audit(
            data,
            target="malignant",
            split_column="split" if loud else None,
            fold_column="fold",
            entity="entity",
            probes=["twins"],
        )
        fold_levels = [
            Level.parse(f["level"])
            for f in result.document["dataset_findings"]
            if f["kind"] == "shared_entities_across_split" and f["partitions"][0].startswith("fold")
        ]
        assert len(fold_levels) == 5
        assert (min(fold_levels) >= Level.HIGH) if loud else (max(fold_levels) == Level.NONE)


def test_fold_column_on_the_command_line(breast_cancer, tmp_path):
    from typer.testing import CliRunner

    from featureaudit.cli import app

    path = tmp_path / "cv.csv"
    _with_folds(breast_cancer, 7).to_csv(path, index=False)
    runner = CliRunner()
    base = ["scan", str(path), "--target", "malignant", "--split-column", "split"]
    bad = runner.invoke(app, [*base, "--fold-column", "nope", "--out", str(tmp_path / "bad")])
    assert bad.exit_code == 2
    assert "--fold-column" in bad.stderr and len(bad.stderr.strip().splitlines()) == 1
    assert not (tmp_path / "bad" / "findings.json").exists()
    out = tmp_path / "report"
    config = tmp_path / "settings.toml"
    config.write_text('fold_column = "fold"\n')
    good = runner.invoke(app, [*base, "--config", str(config), "--out", str(out)])
    assert good.exit_code == 0, good.stderr
    doc = json.loads((out / "findings.json").read_text())
    assert doc["dataset"]["folds"] == 5
