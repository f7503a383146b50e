"""The lineage probe on real bundled panels and series (statsmodels' grunfeld, macrodata and
fair; scikit-learn's breast cancer), with features built the way pipelines build them:
pandas' rolling, shift and groupby transforms, and scikit-learn's TargetEncoder and
CountVectorizer. Each leak has a clean twin that must stay below medium."""

from types import SimpleNamespace

import numpy as np
import pandas as pd
import pytest
import statsmodels.api as sm
from sklearn.datasets import load_breast_cancer
from sklearn.preprocessing import TargetEncoder

import featureaudit as fa
from featureaudit.judge.findings import droplist
from featureaudit.judge.remedy import column_remedy
from featureaudit.probes.lineage._rules import (
    AGGREGATE_RULES,
    GROUP_RULES,
    SCALE_RULES,
    TEXT_RULES,
    WINDOW_RULES,
    decide,
)
from featureaudit.probes.lineage._thresholds import THRESHOLDS
from featureaudit.vocab.levels import Level

LATER = "computed_from_later_rows"


def _grunfeld() -> pd.DataFrame:
    # Real data: statsmodels' grunfeld panel (firms x years 1935-1954); features built with
    # pandas within each firm, the way a pipeline builds them (reference: pandas rolling/shift)
    g = sm.datasets.grunfeld.load_pandas().data.copy()
    g["year"] = g["year"].astype(int)
    g = g.sort_values(["firm", "year"]).reset_index(drop=True)
    invest = g.groupby("firm")["invest"]
    g["roll_with_label"] = invest.transform(lambda s: s.rolling(3).mean())
    g["roll_before"] = invest.transform(lambda s: s.shift(1).rolling(3).mean())
    g["lead_as_lag"] = invest.shift(-1)
    g["lag"] = invest.shift(1)
    g["count_with_outcome"] = invest.transform(lambda s: s.expanding().sum())
    g["split"] = np.where(g["year"] <= 1949, "train", "test")
    train = g["split"] == "train"
    value = g.groupby("firm")["value"]
    g["value_z_all"] = value.transform(lambda s: (s - s.mean()) / s.std())
    fit = g[train].groupby("firm")["value"].agg(["mean", "std"])
    g["value_z_train"] = (g["value"] - g["firm"].map(fit["mean"])) / g["firm"].map(fit["std"])
    g["capital_max_all"] = g.groupby("firm")["capital"].transform("max")  # whole history
    g["capital_max_train"] = g["firm"].map(g[train].groupby("firm")["capital"].max())
    # shuffled: a verdict must not depend on the order of rows in the file
    return g.sample(frac=1.0, random_state=3).reset_index(drop=True)


def _by_column(result: fa.AuditResult) -> dict[str, dict]:
    return {c["column"]: c for c in result.document["columns"]}


def _lineage(column: dict) -> list[dict]:
    return [e for e in column["evidence"] if e["probe"] == "lineage"]


def _level(column: dict) -> Level:
    return Level.parse(column["level"])


@pytest.fixture(scope="module")
def grunfeld_result() -> fa.AuditResult:
    return fa.audit(
        _grunfeld(), target="invest", split_column="split", entity="firm", order="year",
        probes=["lineage"],
    )  # fmt: skip


def test_window_with_the_label_and_a_lead_are_high_and_named(grunfeld_result):
    cols = _by_column(grunfeld_result)
    for name in ("roll_with_label", "lead_as_lag", "count_with_outcome"):
        assert _level(cols[name]) >= Level.HIGH, name
        assert LATER in cols[name]["kinds"], name
    roll = _lineage(cols["roll_with_label"])[0]
    assert roll["detail"]["window"] == {"end_offset": 0, "width": 3, "sum": False}
    assert "t-2..t" in roll["summary"] and "includes the row's own label" in roll["summary"]
    # the window holds the row's own outcome: also a target proxy
    assert "target_proxy" in cols["roll_with_label"]["kinds"]
    lead = _lineage(cols["lead_as_lag"])[0]
    assert lead["detail"]["window"]["end_offset"] == 1 and "lead posing as a lag" in lead["summary"]
    count = _lineage(cols["count_with_outcome"])[0]
    assert count["detail"]["window"] == {"end_offset": 0, "width": "expanding", "sum": True}


def test_honest_trailing_window_and_correct_lag_stay_below_medium(grunfeld_result):
    cols = _by_column(grunfeld_result)
    for name in ("roll_before", "lag", "capital", "value"):
        assert _level(cols[name]) < Level.MEDIUM, name
    # the honest window is recognised as one that ends before the label
    honest = _lineage(cols["roll_before"])
    assert honest and honest[0]["detail"]["earlier_window"] == {
        "end_offset": -1, "width": 3, "sum": False,
    }  # fmt: skip
    assert "ends before the row's label" in honest[0]["summary"]


def test_per_entity_standardisation_over_heldout_periods(grunfeld_result):
    cols = _by_column(grunfeld_result)
    leak = cols["value_z_all"]
    assert _level(leak) >= Level.HIGH
    assert LATER in leak["kinds"] and "fit_on_all_rows" in leak["kinds"]
    assert "held-out periods included" in leak["summary"]
    # fitted on each firm's training years: the clean twin
    assert _level(cols["value_z_train"]) < Level.MEDIUM


def test_whole_history_aggregate_of_another_column(grunfeld_result):
    cols = _by_column(grunfeld_result)
    leak = cols["capital_max_all"]
    assert _level(leak) >= Level.HIGH and {LATER, "fit_on_all_rows"} <= set(leak["kinds"])
    ev = _lineage(leak)[0]
    assert ev["detail"]["source"] == "capital" and ev["detail"]["statistic"] == "max"
    assert "'firm''s max of 'capital'" in ev["summary"]
    assert _level(cols["capital_max_train"]) < Level.MEDIUM


def test_group_mean_over_all_rows_is_high_and_names_the_group(grunfeld_result):
    g = _grunfeld()
    g["firm_invest_mean"] = g.groupby("firm")["invest"].transform("mean")
    cols = _by_column(
        fa.audit(g, target="invest", split_column="split", entity="firm", probes=["lineage"])
    )
    leak = cols["firm_invest_mean"]
    assert _level(leak) >= Level.HIGH
    assert {LATER, "fit_on_all_rows"} <= set(leak["kinds"])
    ev = next(e for e in _lineage(leak) if "group" in e["detail"])
    assert ev["detail"]["group"] == "firm" and ev["detail"]["variant"] == "in_sample"
    assert "held-out rows included" in ev["summary"]
    assert column_remedy(leak) == "recompute_before_cutoff"


def _fair() -> pd.DataFrame:
    # Real data: statsmodels' fair survey (6,366 rows); target: any affair
    f = sm.datasets.fair.load_pandas().data.copy()
    f["had_affair"] = (f.pop("affairs") > 0).astype(int)
    f["occupation"] = f["occupation"].astype(int)
    return f


def _cross_fitted(x: pd.DataFrame, y: pd.Series) -> np.ndarray:
    """scikit-learn's TargetEncoder.fit_transform, seeded: its folds are a splitter from 1.9
    (``random_state`` is deprecated there) and a seed before."""
    from sklearn.model_selection import StratifiedKFold

    try:
        enc = TargetEncoder(
            target_type="binary", cv=StratifiedKFold(5, shuffle=True, random_state=0)
        )
        return enc.fit_transform(x, y)[:, 0]
    except (TypeError, ValueError):  # scikit-learn < 1.9 takes a fold count
        enc = TargetEncoder(target_type="binary", shuffle=True, random_state=0)
        return enc.fit_transform(x, y)[:, 0]


def test_group_means_in_sample_leave_one_out_and_cross_fitted_told_apart():
    f = _fair()
    by = f.groupby("occupation")["had_affair"]
    f["occ_rate"] = by.transform("mean")  # in sample: each row's own outcome inside
    f["occ_rate_loo"] = (by.transform("sum") - f["had_affair"]) / (by.transform("count") - 1)
    # reference: sklearn.preprocessing.TargetEncoder, whose fit_transform cross-fits (5 folds)
    f["occ_rate_crossfit"] = _cross_fitted(f[["occupation"]], f["had_affair"])
    f = f.sample(frac=1.0, random_state=5).reset_index(drop=True)
    cols = _by_column(fa.audit(f, target="had_affair", probes=["lineage"]))
    in_sample = _lineage(cols["occ_rate"])[0]
    assert Level.parse(in_sample["level"]) >= Level.HIGH
    assert {LATER, "target_proxy"} <= set(cols["occ_rate"]["kinds"])
    assert in_sample["detail"]["variant"] == "in_sample"
    loo = _lineage(cols["occ_rate_loo"])[0]
    assert loo["detail"]["variant"] == "leave_one_out" and loo["kind"] == "target_proxy"
    assert Level.parse(loo["level"]) >= Level.HIGH
    cross = cols["occ_rate_crossfit"]
    assert _level(cross) < Level.MEDIUM
    assert [e["detail"]["variant"] for e in _lineage(cross)] in ([], ["varies"])


def _macrodata() -> pd.DataFrame:
    # Real data: statsmodels' macrodata, one quarterly US series 1959-2009 (no entity)
    m = sm.datasets.macrodata.load_pandas().data.copy()
    m["period"] = (m["year"].astype(int) * 4 + m["quarter"].astype(int)).astype(str)
    m = m.drop(columns=["year", "quarter"])
    m["infl_ma4_with_label"] = m["infl"].rolling(4).mean()
    m["infl_ma4_before"] = m["infl"].shift(1).rolling(4).mean()
    m["infl_next"] = m["infl"].shift(-1)
    m["infl_prev"] = m["infl"].shift(1)
    return m.sample(frac=1.0, random_state=11).reset_index(drop=True)


def test_series_without_entity_ordered_by_text_periods():
    cols = _by_column(fa.audit(_macrodata(), target="infl", order="period", probes=["lineage"]))
    for name in ("infl_ma4_with_label", "infl_next"):
        assert _level(cols[name]) >= Level.HIGH and LATER in cols[name]["kinds"], name
    assert "one series" in _lineage(cols["infl_next"])[0]["detail"]["order"]
    for name in ("infl_ma4_before", "infl_prev", "realint", "cpi", "tbilrate"):
        assert _level(cols[name]) < Level.MEDIUM, name


def test_verdicts_do_not_depend_on_row_order():
    frame = _macrodata()
    runs = [
        fa.audit(frame.iloc[rows], target="infl", order="period", probes=["lineage"])
        for rows in (np.arange(len(frame)), np.random.default_rng(1).permutation(len(frame)))
    ]
    a, b = ({c["column"]: (c["level"], c["summary"]) for c in r.document["columns"]} for r in runs)
    assert a == b


def test_no_order_is_skipped_with_a_reason():
    result = fa.audit(_macrodata(), target="infl", probes=["lineage"])
    reasons = [s["reason"] for s in result.document["skipped"] if s["probe"] == "lineage"]
    assert any("--order" in r for r in reasons)


def test_tied_moments_within_an_entity_are_not_judged():
    g = _grunfeld()
    g["year"] = g["year"] // 2  # two rows per firm and moment
    result = fa.audit(g, target="invest", entity="firm", order="year", probes=["lineage"])
    reasons = [s["reason"] for s in result.document["skipped"] if s["probe"] == "lineage"]
    assert any("share their entity's moment" in r for r in reasons)


def _notes() -> pd.DataFrame:
    # Real data: scikit-learn's breast-cancer set; notes built from each row's own values
    # (honest), and the same notes with an outcome phrase added on 60 % of rows (the leak)
    data = load_breast_cancer(as_frame=True)
    d = data.data[["mean radius", "mean texture", "mean area"]].copy()
    d["benign"] = data.target.to_numpy()
    rng = np.random.default_rng(0)
    words = np.array(["routine", "scan", "follow", "up", "left", "right", "clinic", "noted"])
    base = [
        f"{' '.join(rng.choice(words, 4))} radius {r:.1f} texture {t:.1f}"
        for r, t in zip(d["mean radius"], d["mean texture"], strict=True)
    ]
    after = np.where(
        d["benign"] == 1,
        rng.choice(["benign confirmed after biopsy", "no further action"], len(d)),
        rng.choice(["declined: malignant finding", "referred to oncology"], len(d)),
    )
    shown = rng.random(len(d)) < 0.6
    d["honest_note"] = base
    d["note"] = [b + (f"; {o}" if s else "") for b, o, s in zip(base, after, shown, strict=True)]
    d["case_ref"] = [f"CASE-{i:05d}" for i in rng.permutation(len(d))]
    return d


def test_free_text_written_from_the_outcome_names_its_phrases():
    cols = _by_column(fa.audit(_notes(), target="benign", probes=["lineage"]))
    note = cols["note"]
    assert _level(note) >= Level.HIGH and {LATER, "target_proxy"} <= set(note["kinds"])
    ev = _lineage(note)[0]
    phrases = {p for p, _, _ in ev["detail"]["phrases"]}
    assert phrases & {"no further action", "benign confirmed after", "referred to oncology"}
    assert "only '1'" in ev["summary"] or "only '0'" in ev["summary"]
    # honest descriptions and identifiers stay clean; an identifier is not read as text
    assert _level(cols["honest_note"]) < Level.MEDIUM
    assert not _lineage(cols.get("case_ref", {"evidence": []}))


def test_free_text_is_not_guessed_an_identifier():
    from featureaudit.load.dictionary import guess_role

    d = _notes()
    assert guess_role(d["note"], "note") == "feature"
    assert guess_role(d["case_ref"], "case_ref") == "id"


# --- each rule alone ---------------------------------------------------------------------
TH = THRESHOLDS


def _w(u_later: float, u_earlier: float, rows: int = 100) -> SimpleNamespace:
    return SimpleNamespace(u_later=u_later, u_earlier=u_earlier, rows=rows)


@pytest.mark.parametrize(
    ("figures", "rule"),
    [
        (_w(0.0, 0.1), "window_with_later_rows_exact"),
        (_w(0.01, 0.1), "window_with_later_rows_close"),
        (_w(0.0, 0.0), "earlier_rows_explain"),  # an honest lag of a smooth series
        (_w(0.0, 0.1, rows=10), "earlier_rows_explain"),  # too few rows
        (_w(0.3, 0.5), "earlier_rows_explain"),
    ],
)
def test_window_rules(figures, rule):
    assert decide(WINDOW_RULES, figures, TH).name == rule


def _s(split: bool, holds_all: float, holds_train: float) -> SimpleNamespace:
    return SimpleNamespace(split=split, holds_all=holds_all, holds_train=holds_train)


@pytest.mark.parametrize(
    ("figures", "rule"),
    [
        (_s(True, 1.0, 0.0), "scaled_over_heldout_periods"),
        (_s(True, 0.0, 1.0), "scaled_over_training_periods"),
        (_s(False, 1.0, 0.0), "scaled_over_whole_history"),
        (_s(False, 0.5, 0.0), "not_scaled_per_entity"),
    ],
)
def test_scale_rules(figures, rule):
    assert decide(SCALE_RULES, figures, TH).name == rule


@pytest.mark.parametrize(
    ("figures", "rule"),
    [
        (SimpleNamespace(split=True, u_all=0.0, u_train=0.2), "aggregate_over_heldout_periods"),
        (SimpleNamespace(split=True, u_all=0.3, u_train=0.0), "aggregate_over_training_periods"),
        (SimpleNamespace(split=False, u_all=0.0, u_train=1.0), "aggregate_over_whole_history"),
        (SimpleNamespace(split=False, u_all=0.1, u_train=1.0), "no_aggregate"),
    ],
)
def test_aggregate_rules(figures, rule):
    assert decide(AGGREGATE_RULES, figures, TH).name == rule


def _g(variant: str, u_fit: float = 0.0, u_half: float = 0.1, groups: int = 10):
    return SimpleNamespace(variant=variant, u_fit=u_fit, u_half=u_half, groups=groups)


@pytest.mark.parametrize(
    ("figures", "rule"),
    [
        (_g("in_sample"), "in_sample_group_mean"),
        (_g("in_sample", u_half=0.0), "no_group_mean"),  # an attribute every half matches
        (_g("in_sample", groups=3), "no_group_mean"),  # too few groups to tell
        (_g("leave_one_out"), "leave_one_out_group_mean"),
        (_g("varies", u_fit=0.1), "cross_fitted_group_mean"),
    ],
)
def test_group_rules(figures, rule):
    assert decide(GROUP_RULES, figures, TH).name == rule


def _t(power: float, gain: float, coverage: float, phrases: int, numeric: bool = False):
    return SimpleNamespace(
        power=power, gain=gain, coverage=coverage, phrases=phrases, numeric=numeric
    )


@pytest.mark.parametrize(
    ("figures", "rule"),
    [
        (_t(0.99, 0.6, 0.4, 12), "text_carries_outcome"),
        (_t(0.8, 0.3, 0.05, 2), "text_predicts"),
        (_t(0.93, -1.0, 0.3, 8), "honest_text"),  # the other columns say it already
        (_t(0.6, 0.1, 0.01, 1), "text_phrases_only"),
        (_t(0.7, 0.6, 0.3, 4, numeric=True), "text_carries_outcome"),
        (_t(0.5, 0.0, 0.0, 0), "honest_text"),
    ],
)
def test_text_rules(figures, rule):
    assert decide(TEXT_RULES, figures, TH).name == rule


def test_every_rule_table_ends_with_a_rule_that_always_holds():
    for table in (WINDOW_RULES, SCALE_RULES, AGGREGATE_RULES, GROUP_RULES, TEXT_RULES):
        assert table[-1].condition(SimpleNamespace(), TH) is True
        assert len({r.name for r in table}) == len(table)


def test_dossier_explains_the_window_the_group_and_the_phrases_with_the_remedy(tmp_path):
    g = _grunfeld()
    g["firm_invest_mean"] = g.groupby("firm")["invest"].transform("mean")
    result = fa.audit(g, target="invest", split_column="split", entity="firm", order="year")
    result.write(tmp_path)
    html = (tmp_path / "dossier.html").read_text()
    cols = _by_column(result)
    for name in ("roll_with_label", "firm_invest_mean", "value_z_all"):
        assert cols[name]["remedy"] == "recompute_before_cutoff", name
        assert name in droplist(result.findings)  # not refitted: recomputed or dropped
    assert "mean over the 3 periods t-2..t" in html
    assert "its group in &#39;firm&#39;" in html or "its group in 'firm'" in html
    assert "recompute it from the rows known at the moment of prediction" in html
    notes = fa.audit(_notes(), target="benign")
    notes.write(tmp_path / "notes")
    text = (tmp_path / "notes" / "dossier.html").read_text()
    assert "phrases that occur with one outcome only" in text


def test_a_grouping_column_with_missing_values_is_read_not_crashed():
    """Rows whose group is missing take part in no group mean (the probe failed with a
    negative index in numpy's bincount on 23 corpus tables before)."""
    f = _fair()
    f["occupation_noted"] = f["occupation"].astype("Int64")
    f.loc[f.index % 7 == 0, "occupation_noted"] = pd.NA  # a seventh of the rows lack it
    f["occ_rate"] = f.groupby("occupation_noted")["had_affair"].transform("mean")
    cols = _by_column(fa.audit(f, target="had_affair", probes=["lineage"]))
    assert Level.parse(_lineage(cols["occ_rate"])[0]["level"]) >= Level.HIGH


def test_missing_groups_in_a_varying_column_and_an_empty_column_beside_text():
    """A leave-one-out mean over groups with missing values, and free text read beside a
    column with no values (the text reference's model failed on it: scikit-learn's binning
    needs two distinct values), are judged, not crashed."""
    f = _fair()
    f["occupation_noted"] = f["occupation"].astype("Int64")
    f.loc[f.index % 7 == 0, "occupation_noted"] = pd.NA
    by = f.groupby("occupation_noted")["had_affair"]
    f["occ_rate_loo"] = (by.transform("sum") - f["had_affair"]) / (by.transform("count") - 1)
    f["blank"] = np.nan
    words = ["calm", "busy", "long", "short", "quiet", "loud", "early", "late"]
    f["note"] = [
        f"{words[i % 8]} week {words[(i * 3) % 8]} visit {words[(i * 5) % 8]} day {i}"
        for i in range(len(f))
    ]
    result = fa.audit(f, target="had_affair", probes=["lineage"])
    assert not [s for s in result.document["skipped"] if "failed" in s["reason"]]
    assert "occ_rate_loo" in _by_column(result)
