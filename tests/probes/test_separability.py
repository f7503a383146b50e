"""Adversarial validation on real bundled data: random splits, a split by a feature, and KS."""

import numpy as np
import pandas as pd
import pytest
from scipy.stats import ks_2samp

import featureaudit as fa


def _finding(result):
    found = [f for f in result.document["dataset_findings"] if f["kind"] == "split_shift"]
    return found


def _shift(frame, target, **kwargs):
    """The split_shift finding of a separability audit of ``frame`` split by its column "split"."""
    result = fa.audit(frame, target=target, split_column="split", probes=["separability"], **kwargs)
    return _finding(result)[0]


def test_random_split_of_breast_cancer_is_near_chance(breast_cancer):
    # Real data: scikit-learn's breast-cancer set, split at random.
    rng = np.random.default_rng(0)
    frame = breast_cancer.assign(
        split=np.where(rng.random(len(breast_cancer)) < 0.3, "test", "train")
    )
    found = _shift(frame, "malignant")
    assert 0.4 <= found["value"] <= 0.6
    assert found["level"] in ("none", "low")


def test_split_by_a_feature_quantile_is_separable_and_named(breast_cancer):
    cut = breast_cancer["mean texture"].quantile(0.7)
    frame = breast_cancer.assign(
        split=np.where(breast_cancer["mean texture"] > cut, "test", "train")
    )
    found = _shift(frame, "malignant")
    assert found["value"] > 0.9 and found["level"] in ("high", "critical")
    top = found["detail"]["drivers"][0]["column"]
    assert top == "mean texture"
    assert found["detail"]["auc_without_top"] < found["value"]
    # reference: scipy.stats.ks_2samp — the top driver differs most between the sides
    train, test = frame[frame.split == "train"], frame[frame.split == "test"]
    ks = {
        c: ks_2samp(train[c], test[c]).statistic for c in breast_cancer.columns if c != "malignant"
    }
    assert max(ks, key=ks.get) == top


def test_identifier_that_separates_is_named(breast_cancer):
    frame = breast_cancer.copy()
    frame.insert(0, "record_id", np.arange(len(frame)))
    frame["split"] = np.where(frame["record_id"] >= 450, "test", "train")
    found = _finding(fa.audit(frame, split_column="split", probes=["separability"]))[0]
    assert "record_id is an identifier" in found["summary"]


def test_without_a_split_the_random_and_time_splits_are_simulated(breast_cancer):
    frame = breast_cancer.copy()
    frame["decided"] = np.datetime64("2024-01-01") + np.argsort(
        np.argsort(frame["mean radius"].to_numpy())
    ).astype("timedelta64[D]")
    found = _finding(
        fa.audit(frame, target="malignant", label_time="decided", probes=["separability"])
    )
    kinds = {f["detail"]["simulated_split"]: f for f in found}
    assert set(kinds) == {"random", "time"}
    assert 0.4 <= kinds["random"]["value"] <= 0.6 and kinds["random"]["level"] == "none"
    assert kinds["time"]["value"] > 0.8 and kinds["time"]["level"] in ("none", "low")


@pytest.mark.parametrize("seed", [0, 1])
def test_sample_size_setting_is_honoured_and_reported(breast_cancer, seed):
    from featureaudit.load.settings import Settings

    rng = np.random.default_rng(seed)
    frame = breast_cancer.assign(
        split=np.where(rng.random(len(breast_cancer)) < 0.3, "test", "train")
    )
    result = fa.audit(
        frame,
        split_column="split",
        probes=["separability"],
        settings=Settings(seed=seed, reference_rows=300),
    )
    assert _finding(result)[0]["detail"]["sample_rows"] == pytest.approx(300, abs=2)


def test_verdict_does_not_depend_on_row_order_or_on_test_files(breast_cancer):
    # Real data: scikit-learn's breast-cancer set with a text record id and a random split.
    # The same rows and split given with --split-column, as a --test frame (held-out rows
    # last), and sorted by a date: one level, below medium (the split is random).
    rng = np.random.default_rng(4)
    frame = breast_cancer.copy()
    frame.insert(0, "record_id", [f"r{i:05d}" for i in range(len(frame))])
    frame["seen"] = np.datetime64("2024-01-01") + rng.permutation(len(frame)).astype(
        "timedelta64[D]"
    )
    split = np.where(rng.random(len(frame)) < 0.3, "test", "train")
    by_column = _shift(frame.assign(split=split), "malignant")
    as_files = _finding(
        fa.audit(
            frame[split == "train"],
            test=frame[split == "test"],
            target="malignant",
            probes=["separability"],
        )
    )[0]
    by_date = frame.assign(split=split).sort_values("seen")
    by_date = _shift(by_date, "malignant")
    levels = {by_column["level"], as_files["level"], by_date["level"]}
    assert len(levels) == 1 and levels <= {"none", "low"}, levels
    assert all(
        "record_id" not in [d["column"] for d in f["detail"]["drivers"]]
        for f in (by_column, as_files, by_date)
    )


def test_level_functions_are_pure():
    from featureaudit.probes.separability import identifier_level, simulated_level, split_level
    from featureaudit.vocab.levels import Level

    # floors: common practice, no source (declared in SeparabilityThresholds)
    assert split_level(0.90, 10.0) == Level.CRITICAL
    assert split_level(0.75, 10.0) == Level.HIGH
    assert split_level(0.75, 3.5) == Level.MEDIUM  # not 4 null SEs from 0.5
    assert split_level(0.55, 2.5) == Level.LOW
    assert split_level(0.51, 0.5) == Level.NONE
    assert identifier_level(1.0, 20.0) == Level.LOW
    assert simulated_level(Level.CRITICAL, "time") == Level.LOW
    assert simulated_level(Level.CRITICAL, "random") == Level.NONE


def _grunfeld():
    import statsmodels.api as sm

    d = sm.datasets.grunfeld.load_pandas().data.copy()
    d["firm"] = d["firm"].astype(str)
    d["at"] = pd.to_datetime(d.pop("year").astype(int).astype(str) + "-12-31")
    return d


def test_a_split_by_time_or_by_entity_shows_drift_but_not_at_high():
    # statsmodels' grunfeld panel (10 US firms, 1935-1954): investment grows over the years
    # and firms differ in size, so a split by year or by firm separates honestly (AUC > 0.8)
    d = _grunfeld()
    late = np.where(d["at"] > d["at"].quantile(0.75), "test", "train")
    by_time = _shift(d.assign(split=late), "invest", label_time="at")
    firms = np.where(d["firm"].isin(["General Motors", "US Steel"]), "test", "train")
    by_firm = _shift(d.assign(split=firms), "invest", entity="firm")
    for f, design in ((by_time, "time"), (by_firm, "entity")):
        assert f["value"] > 0.8 and f["level"] == "medium"
        assert f["detail"]["split_design"] == design
        assert f["detail"]["level_before_cap"] in ("high", "critical")
    # the same split by firm, told neither the entity nor a time: a shift at high
    plain = _shift(d.drop(columns=["at"]).assign(split=firms), "invest")
    assert plain["level"] in ("high", "critical")


def test_a_split_along_an_undeclared_group_key_is_by_entity_and_a_threshold_is_not():
    # statsmodels' modechoice: 210 travellers, 4 rows each (one per mode). Holding out a
    # fifth of the travellers, without saying that "individual" is the entity, lets the
    # adversarial model memorise each traveller's side: the split's design, not a shift
    import statsmodels.api as sm

    d = sm.datasets.modechoice.load_pandas().data.copy()
    d["chosen"] = d.pop("choice").astype(int)
    rng = np.random.default_rng(0)
    held = set(rng.choice(d["individual"].unique(), 42, replace=False))
    by_group = d.assign(split=np.where(d["individual"].isin(held), "test", "train"))
    f = _shift(by_group, "chosen")
    assert f["detail"]["split_design"] == "groups of individual"
    assert f["level"] == "medium" and f["detail"]["level_before_cap"] in ("high", "critical")
    # a cut at a threshold of a column with repeated values (palmerpenguins' body mass, in
    # 25 g steps) keeps each value on one side too, but it is a shift along that column
    penguins = pytest.importorskip("palmerpenguins").load_penguins().dropna()
    cut = penguins["body_mass_g"].rank(method="first") > 0.8 * len(penguins)
    shifted = penguins.assign(split=np.where(cut, "test", "train"))
    g = _shift(shifted, "species")
    assert g["detail"]["split_design"] is None and g["level"] in ("high", "critical")
