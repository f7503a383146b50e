"""The solo probe on real bundled data with planted leaks, and on hand-made edge cases."""

import numpy as np
import pandas as pd
import pytest

import featureaudit as fa


def _levels(result):
    return dict(zip(result.columns["column"], result.columns["level"], strict=True))


def _detail(result, column):
    row = result.columns.set_index("column").loc[column]
    return next(e for e in row["evidence"] if e["probe"] == "solo")["detail"]


HIGH = ("high", "critical")


@pytest.mark.parametrize("seed", [0, 1, 2])
def test_breast_cancer_noisy_copy_is_caught_and_honest_columns_are_not(
    breast_cancer, seed, noisy_copy
):
    # Real data: scikit-learn's bundled breast-cancer set; honest single-column AUC up to ~0.97.
    frame = breast_cancer.copy()
    frame["noisy_copy"] = noisy_copy(frame["malignant"].to_numpy(), 0.05, seed)
    result = fa.audit(frame, target="malignant", probes=["solo"], seed=seed)
    levels = _levels(result)
    assert levels["noisy_copy"] in HIGH
    assert result.columns["column"].iloc[0] == "noisy_copy"
    honest = [c for c in breast_cancer.columns if c != "malignant"]
    assert not [c for c in honest if levels[c] in HIGH]
    # the honest top column is stronger alone than the leak, yet explained by its peers
    assert _detail(result, "worst perimeter")["share_beyond_peers"] < 0.05
    assert _detail(result, "noisy_copy")["share_beyond_peers"] > 0.25


def test_breast_cancer_without_a_leak_has_no_suspect_column(breast_cancer):
    result = fa.audit(breast_cancer, target="malignant", probes=["solo"])
    assert result.suspects("high") == []


@pytest.mark.parametrize("seed", [0, 1])
def test_wine_multiclass(wine, seed, noisy_copy):
    # Real data: scikit-learn's bundled wine set (three cultivars).
    frame = wine.copy()
    frame["noisy_copy"] = noisy_copy(frame["cultivar"].to_numpy(), 0.05, seed, n_classes=3)
    result = fa.audit(frame, target="cultivar", probes=["solo"], seed=seed)
    levels = _levels(result)
    assert result.document["dataset"]["task"] == "multiclass"
    assert levels["noisy_copy"] in HIGH
    assert not [c for c in wine.columns if c != "cultivar" and levels[c] in HIGH]


def test_diabetes_numeric_target(diabetes):
    # Real data: scikit-learn's bundled diabetes set (numeric disease progression).
    rng = np.random.default_rng(0)
    frame = diabetes.copy()
    y = frame["progression"].to_numpy()
    frame["noisy_copy"] = y + rng.normal(0, 0.3 * y.std(), len(y))
    result = fa.audit(frame, target="progression", probes=["solo"])
    levels = _levels(result)
    assert result.document["dataset"]["task"] == "numeric"
    assert levels["noisy_copy"] in HIGH
    assert not [c for c in diabetes.columns if c != "progression" and levels[c] in HIGH]
    evidence = _detail(result, "noisy_copy")
    assert evidence["oof_value"] > 0.8 and evidence["spearman"] > 0.9


def test_sorted_by_target_with_sequential_id_raises_row_order(breast_cancer):
    frame = breast_cancer.sort_values("malignant", kind="stable").reset_index(drop=True)
    frame.insert(0, "record_id", np.arange(1, len(frame) + 1))
    result = fa.audit(frame, target="malignant", probes=["solo"])
    row = result.columns.set_index("column").loc["record_id"]
    assert row["level"] in HIGH and "row_order_tells_target" in row["kinds"]
    position = [
        f for f in result.document["dataset_findings"] if f["kind"] == "row_order_tells_target"
    ]
    assert position and position[0]["level"] in HIGH


def test_shuffled_rows_with_sequential_id_stay_clean(breast_cancer):
    frame = breast_cancer.sample(frac=1, random_state=0).reset_index(drop=True)
    frame.insert(0, "record_id", np.arange(1, len(frame) + 1))
    result = fa.audit(frame, target="malignant", probes=["solo"])
    assert _levels(result)["record_id"] in ("none", "low")
    position = [
        f for f in result.document["dataset_findings"] if f["kind"] == "row_order_tells_target"
    ]
    assert position[0]["level"] in ("none", "low")


def test_neutral_column_stays_none(small_binary):
    result = fa.audit(small_binary, target="y", probes=["solo"])
    levels = _levels(result)
    assert levels["noise"] == "none" and levels["noise2"] == "none"


def test_high_cardinality_text_cannot_leak_through_the_probe():
    rng = np.random.default_rng(4)
    n = 3000
    frame = pd.DataFrame(
        {
            "ticket": [f"T-{rng.integers(1e9):09d}-{i}" for i in range(n)],
            "x": rng.normal(size=n),
            "y": rng.integers(0, 2, n),
        }
    )
    result = fa.audit(frame, target="y", probes=["solo"])
    assert _detail(result, "ticket")["oof_value"] == pytest.approx(0.5, abs=0.02)


def test_missingness_that_tells_the_target_is_reported():
    rng = np.random.default_rng(6)
    n = 3000
    y = rng.integers(0, 2, n)
    frame = pd.DataFrame({f"f{i}": rng.normal(size=n) + 0.3 * y for i in range(4)})
    frame["closing_note_len"] = np.where(y == 1, rng.integers(5, 300, n), np.nan)
    frame.loc[rng.random(n) < 0.03, "closing_note_len"] = 42.0
    frame["y"] = y
    result = fa.audit(frame, target="y", probes=["solo"])
    detail = _detail(result, "closing_note_len")
    assert detail["missing"]["auc"] > 0.95
    assert _levels(result)["closing_note_len"] in HIGH


def test_datetime_and_category_columns_are_scored(small_binary):
    frame = small_binary.copy()
    frame["signal_day"] = pd.Timestamp("2025-01-01") + pd.to_timedelta(
        np.argsort(np.argsort(frame["signal"].to_numpy())), "D"
    )
    result = fa.audit(frame, target="y", probes=["solo"])
    detail = _detail(result, "signal_day")
    assert detail["oof_value"] > 0.7 and detail["bins"][1]["bin"].startswith("[2025")
    assert _detail(result, "colour")["bin_kind"] == "categories"


def test_evidence_carries_what_a_reviewer_needs(breast_cancer):
    result = fa.audit(breast_cancer, target="malignant", probes=["solo"])
    d = _detail(result, "worst perimeter")
    for key in (
        "oof_value",
        "ci95",
        "fold_values",
        "reference_power",
        "bins",
        "se",
        "share_beyond_peers",
        "determinism_given_target",
    ):
        assert key in d, key
    assert d["ci95"][0] < d["oof_value"] < d["ci95"][1]
    assert len(d["fold_values"]) == 5 and 0 < d["reference_power"] <= 1


# Pure decision functions: each case below is the rule in the probe's docstring applied by hand.
from featureaudit.levels import Level  # noqa: E402
from featureaudit.probes.solo import (  # noqa: E402
    THRESHOLDS,
    ProxyFigures,
    Solo,
    decide_order,
    decide_proxy,
)
from featureaudit.settings import Settings  # noqa: E402


def test_decide_proxy_share_rule_needs_an_effect_the_peers_can_tell():
    base = dict(
        power=0.6,
        determinism=0.1,
        share=0.45,
        typical_share=0.02,
        others_power=0.9,
        peers_beyond_target=0.05,
        expected_r2_if_effect=0.2,
        n_peers=10,
    )
    assert decide_proxy(ProxyFigures(**base)) == (Level.CRITICAL, "share")
    # the peers add much beyond the target: an honest feature, held at medium
    assert decide_proxy(ProxyFigures(**{**base, "peers_beyond_target": 0.5})) == (
        Level.MEDIUM,
        "share_untold",
    )
    # too few peers to compare with: the share rule does not apply
    assert decide_proxy(ProxyFigures(**{**base, "n_peers": 2}))[0] == Level.NONE
    # a small sample caps at medium too
    assert decide_proxy(ProxyFigures(**{**base, "small": True}))[0] == Level.MEDIUM


def test_decide_proxy_power_rules():
    explained = dict(
        share=0.0,
        typical_share=0.0,
        others_power=0.99,
        peers_beyond_target=0.6,
        expected_r2_if_effect=0.3,
        n_peers=10,
    )
    assert decide_proxy(ProxyFigures(0.85, 0.1, **explained)) == (Level.LOW, "strong")
    assert decide_proxy(ProxyFigures(0.99, 0.1, **explained)) == (Level.HIGH, "deterministic")
    assert decide_proxy(ProxyFigures(0.99, 0.1)) == (Level.CRITICAL, "deterministic")
    assert decide_proxy(ProxyFigures(0.85, 0.75, **explained)) == (Level.CRITICAL, "function")
    assert decide_proxy(ProxyFigures(0.1, 0.0, **explained)) == (Level.NONE, "explained")


def test_decide_order_follows_z_and_power():
    th = THRESHOLDS
    assert decide_order(1.0, 0.9, False) == Level.NONE
    assert decide_order(th.order(th.order_z, Level.HIGH), 0.3, False) == Level.HIGH
    assert decide_order(10.0, 0.9, False) == Level.CRITICAL
    assert decide_order(10.0, 0.9, True) == Level.MEDIUM
    assert decide_order(3.5, 0.05, False) == Level.LOW


def test_thresholds_are_declared_and_described():
    assert Solo.thresholds is THRESHOLDS
    with pytest.raises(AttributeError):
        THRESHOLDS.deterministic = 0.5  # frozen
    text = Solo.describe(Settings(folds=7, reference_rows=5000))
    assert "7 folds" in text and "5000 rows" in text and f"{THRESHOLDS.deterministic:g}" in text


def test_same_rows_in_another_file_order_give_the_same_levels(breast_cancer, noisy_copy):
    # Real data: scikit-learn's bundled breast-cancer set with a planted 5 %-flipped copy.
    frame = breast_cancer.copy()
    frame["noisy_copy"] = noisy_copy(frame["malignant"].to_numpy(), 0.05, 0)
    shuffled = frame.sample(frac=1, random_state=11).reset_index(drop=True)
    first = _levels(fa.audit(frame, target="malignant", probes=["solo"]))
    second = _levels(fa.audit(shuffled, target="malignant", probes=["solo"]))
    assert first == second
