"""Issue 24's failure classes 1, 3, 4 and 8 for solo, each a family of cases on real tables
from three source packages (scikit-learn's breast-cancer data, statsmodels' "fair" survey,
palmerpenguins); the expectation of every case was written before the tool ran on it."""

import numpy as np
import pandas as pd
import pytest

import featureaudit as fa

HIGH = ("high", "critical")


def _breast_cancer():
    # Real data: scikit-learn's bundled breast-cancer set (Wolberg et al.); y = malignant.
    from sklearn.datasets import load_breast_cancer

    frame = load_breast_cancer(as_frame=True).frame
    frame["y"] = 1 - frame.pop("target")
    return frame, "mean area"


def _fair():
    # Real data: statsmodels' bundled "fair" survey (1974); y = any affair reported.
    sm = pytest.importorskip("statsmodels.api")
    frame = sm.datasets.fair.load_pandas().data.copy()
    frame["y"] = (frame.pop("affairs") > 0).astype(int)
    return frame, "yrs_married"


def _penguins():
    # Real data: palmerpenguins (Gorman, Williams & Fraser 2014); y = male.
    palmerpenguins = pytest.importorskip("palmerpenguins")
    frame = palmerpenguins.load_penguins().dropna().reset_index(drop=True)
    frame["y"] = (frame.pop("sex") == "male").astype(int)
    return frame, "body_mass_g"


SOURCES = {"sklearn": _breast_cancer, "statsmodels": _fair, "palmerpenguins": _penguins}


def _audit(frame, **kw):
    result = fa.audit(frame, target="y", probes=["solo"], **kw)
    return result, result.columns.set_index("column")


def _solo(cols, column):
    return next(e for e in cols.loc[column, "evidence"] if e["probe"] == "solo")


@pytest.mark.parametrize("source", list(SOURCES))
def test_class1_two_near_perfect_leaks_that_explain_each_other_stay_high(source):
    # an amount that exists only where the outcome happened (3 % of positives spent
    # nothing: AUC about 0.97-0.985 alone) and its ratio to an honest positive column, plus
    # a fee on every row so the ratio has no pile of zeros; each explains the other
    frame, income = SOURCES[source]()
    rng = np.random.default_rng(0)
    pos = (frame["y"].to_numpy() == 1) & (rng.random(len(frame)) > 0.03)
    spend = np.where(pos, rng.lognormal(6, 0.8, len(frame)).round(2), 0.0)
    base = frame[income].abs().to_numpy() + 1
    fee = 5 * base.mean() / base * rng.uniform(0.5, 1.5, len(frame))
    honest = [c for c in frame.columns if c != "y"]
    frame["spend"], frame["spend_ratio"] = spend, (spend + fee) / base
    _, cols = _audit(frame)
    assert cols.loc["spend", "level"] in HIGH
    assert cols.loc["spend_ratio", "level"] in HIGH
    assert _solo(cols, "spend_ratio")["detail"]["decided_by"] == "fellow_of_leak"
    assert "spend_ratio" in _solo(cols, "spend")["detail"]["unique_lift"]["without"]
    assert not [c for c in honest if cols.loc[c, "level"] in HIGH]


@pytest.mark.parametrize("source", list(SOURCES))
def test_class3_the_one_strong_cause_among_independent_columns_is_medium(source):
    # the real column most correlated with the outcome keeps its rows; every other column
    # is permuted (one permutation for all, so they still explain one another): a cause
    # and an effect of the outcome then look alike, and the level says so
    frame, _ = SOURCES[source]()
    numeric = [c for c in frame.columns if c != "y" and pd.api.types.is_numeric_dtype(frame[c])]
    corr = {c: abs(np.corrcoef(frame[c].rank(), frame["y"])[0, 1]) for c in numeric}
    cause = max(corr, key=lambda c: corr[c])
    order = np.random.default_rng(0).permutation(len(frame))
    for c in frame.columns:
        if c not in ("y", cause):
            frame[c] = frame[c].to_numpy()[order]
    _, cols = _audit(frame)
    assert cols.loc[cause, "level"] == "medium"
    assert _solo(cols, cause)["detail"]["decided_by"] in ("share_untellable", "share_medium")


@pytest.mark.parametrize("source", list(SOURCES))
def test_class4_a_finer_code_that_determines_the_class_is_medium(source):
    # six model names per class, each name in one class only: the class is a function of
    # the name (a hierarchy of categories), which says nothing about when it was recorded
    frame, _ = SOURCES[source]()
    rng = np.random.default_rng(0)
    draws = rng.integers(0, 6, len(frame))
    frame["model_name"] = [f"M{k}_{j}" for k, j in zip(frame["y"], draws, strict=True)]
    _, cols = _audit(frame)
    assert cols.loc["model_name", "level"] == "medium"
    ev = _solo(cols, "model_name")
    assert ev["detail"]["decided_by"] == "target_function_of_column"
    assert "the target is a function of this column" in ev["summary"]
    # the same names with 5 % reassigned across classes are a leak again (no longer a lookup)
    swap = rng.random(len(frame)) < 0.05
    names = frame["model_name"].to_numpy()
    frame["model_name"] = np.where(swap, rng.permutation(names), names)
    _, cols = _audit(frame)
    assert cols.loc["model_name", "level"] in HIGH


@pytest.mark.parametrize("source", list(SOURCES))
def test_class8_row_position_agrees_with_the_id_that_carries_the_shipped_order(source):
    # rows shipped sorted by the outcome, numbered in that order, split at random
    frame, _ = SOURCES[source]()
    frame = frame.sort_values("y", kind="stable").reset_index(drop=True)
    frame.insert(0, "record_id", np.arange(1, len(frame) + 1))
    frame["split"] = np.where(np.random.default_rng(0).random(len(frame)) < 0.25, "test", "train")
    result, cols = _audit(frame, split_column="split")
    position = [
        f for f in result.document["dataset_findings"] if f["kind"] == "row_order_tells_target"
    ][0]
    assert cols.loc["record_id", "level"] in HIGH
    assert position["level"] == cols.loc["record_id", "level"]
    assert position["detail"]["carried_by"] == "record_id"
    # ids issued in another order than the file's: the position keeps its own cap
    frame["record_id"] = np.random.default_rng(1).permutation(len(frame))
    result, _ = _audit(frame, split_column="split")
    position = [
        f for f in result.document["dataset_findings"] if f["kind"] == "row_order_tells_target"
    ][0]
    assert position["level"] == "low"


def test_class4_values_pure_by_chance_are_no_lookup():
    # palmerpenguins' sex: a code whose values are pure only because they are small (ten
    # pairs of same-sex rows, the rest single rows) is pure with probability 0.5 per pair
    # (0.5^10, beyond z 4 it is not); six codes per class of ~28 rows each are a lookup
    from featureaudit.kit.oof import make_target, score_bins
    from featureaudit.probes.solo import _lookup

    frame, _ = _penguins()
    y = frame["y"].to_numpy()
    t = make_target(y, np.ones(len(y), bool), "binary", 2, 5, 0)
    males, females = np.flatnonzero(y == 1), np.flatnonzero(y == 0)
    codes = np.arange(1, len(y) + 1)  # every row its own value
    for j in range(5):  # ten pairs, each of one sex
        codes[males[2 * j + 1]] = codes[males[2 * j]]
        codes[females[2 * j + 1]] = codes[females[2 * j]]
    codes = np.unique(codes, return_inverse=True)[1] + 1
    small = score_bins(codes, int(codes.max()) + 1, t)
    assert not _lookup(small, "categories", t)
    lookup = 1 + y * 6 + np.random.default_rng(0).integers(0, 6, len(y))
    assert _lookup(score_bins(lookup, 13, t), "categories", t)
    assert not _lookup(score_bins(lookup, 13, t), "quantile", t)  # numbers in quantile bins
