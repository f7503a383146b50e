"""The ranker, findings.json, the drop list and diff, on hand-made evidence."""

import json

import numpy as np
import pandas as pd
import pytest

import featureaudit as fa
from featureaudit.evidence import Evidence
from featureaudit.findings import Findings, diff_findings, droplist
from featureaudit.ranker import rank
from featureaudit.table import build_table


@pytest.fixture()
def table():
    frame = pd.DataFrame({"a": np.arange(10.0), "b": 1.0, "c": 2.0, "y": [0, 1] * 5})
    return build_table(frame, target="y")


def ev(column, level, kind="target_proxy", severity=0.5, probe="solo"):
    return Evidence(
        probe,
        kind,
        "oof_auc",
        0.9,
        0.8,
        level,
        column=column,
        summary=f"{column} s",
        severity=severity,
    )


def test_rank_orders_by_level_then_severity(table):
    verdicts, dataset = rank(
        table,
        [
            ev("a", "high", severity=0.2),
            ev("b", "high", severity=0.9),
            ev("c", "low"),
            ev(None, "medium", "split_shift"),
        ],
    )
    assert [v.column for v in verdicts] == ["b", "a", "c"]
    assert 0.6 <= verdicts[1].score < verdicts[0].score < 0.8
    assert dataset[0].kind == "split_shift"


def test_two_kinds_at_high_corroborate_to_critical(table):
    verdicts, _ = rank(table, [ev("a", "high"), ev("a", "high", "recorded_after_cutoff")])
    top = verdicts[0]
    assert top.level == "critical" and set(top.kinds) == {"target_proxy", "recorded_after_cutoff"}
    assert "also recorded after cutoff" in top.summary


def test_columns_without_evidence_are_listed_as_none(table):
    verdicts, _ = rank(table, [])
    assert {v.column for v in verdicts} == {"a", "b", "c"}
    assert all(v.level == "none" and v.score == 0 for v in verdicts)


def test_evidence_rejects_kinds_outside_the_contract():
    with pytest.raises(ValueError, match="kind"):
        Evidence("solo", "made_up", "x", 1.0, 1.0, "high")
    with pytest.raises(ValueError, match="level"):
        Evidence("solo", "target_proxy", "x", 1.0, 1.0, "severe")


def test_findings_json_is_strict_json_in_contract_order(breast_cancer):
    result = fa.audit(breast_cancer.head(200), target="malignant")
    text = result.findings.to_json()
    doc = json.loads(text)
    assert list(doc)[:3] == ["schema", "tool_version", "created"]
    assert doc["created"].endswith("Z")
    column = doc["columns"][0]
    assert list(column)[:6] == ["column", "score", "level", "kinds", "summary", "role"]
    for e in column["evidence"]:
        assert {"probe", "kind", "statistic", "value", "threshold", "level", "detail"} <= set(e)
    assert "NaN" not in text and "Infinity" not in text


def _doc(columns, dataset=()):
    return Findings(
        {
            "schema": "featureaudit.findings/1",
            "columns": list(columns),
            "dataset_findings": list(dataset),
        }
    )


def test_droplist_levels_and_order():
    doc = _doc(
        [
            {"column": "x", "score": 0.7, "level": "high"},
            {"column": "z", "score": 0.9, "level": "critical"},
            {"column": "m", "score": 0.5, "level": "medium"},
        ]
    )
    assert droplist(doc, "high") == ["z", "x"]
    assert droplist(doc, "medium") == ["z", "x", "m"]


def test_diff_new_gone_raised_lowered():
    old = _doc(
        [
            {"column": "a", "level": "low"},
            {"column": "b", "level": "high"},
            {"column": "gone", "level": "medium"},
        ],
        [
            {
                "probe": "twins",
                "kind": "duplicate_rows_across_split",
                "statistic": "s",
                "level": "high",
            }
        ],
    )
    new = _doc(
        [
            {"column": "a", "level": "critical"},
            {"column": "b", "level": "low"},
            {"column": "fresh", "level": "high"},
            {"column": "quiet", "level": "none"},
        ]
    )
    changes = {(d.change, d.name) for d in diff_findings(old, new)}
    assert changes == {
        ("raised", "a"),
        ("lowered", "b"),
        ("gone", "gone"),
        ("new", "fresh"),
        ("gone", "duplicate_rows_across_split"),
        ("added", "quiet"),  # new to the table, no finding
    }


def test_result_object(breast_cancer):
    result = fa.audit(breast_cancer.head(300), target="malignant")
    assert list(result.columns.columns[:5]) == ["column", "score", "level", "kinds", "summary"]
    html = result._repr_html_()
    assert html.startswith("<div>") and "<table>" in html
    with pytest.raises(fa.FeatureAuditError):
        result.suspects("severe")


def test_schema_2_fields_are_written(tmp_path):
    # The contract's "Schema 2": partitions, folds, per-finding pairs, impact, per-column impact
    # and accepted, code_findings, and the engine with its sample size.
    rng = np.random.default_rng(0)
    n = 400
    frame = pd.DataFrame(
        {
            "x": rng.normal(size=n),
            "y": rng.integers(0, 2, n),
            "split": rng.choice(["train", "train", "train", "valid", "test"], n),
        }
    )
    frame.loc[frame.index[:40], "x2"] = 1.0
    doc = fa.audit(frame, target="y", split_column="split").document
    assert doc["schema"] == "featureaudit.findings/3"
    parts = doc["dataset"]["partitions"]
    assert parts["train"] == int((frame["split"] == "train").sum())
    assert parts["valid"] + parts["test"] == doc["dataset"]["heldout_rows"]
    assert doc["dataset"]["folds"] is None
    # training against each partition, and the held-out partitions against each other
    assert all(
        f["partitions"][0] == "train" or f["partitions"] == ["valid", "test"]
        for f in doc["dataset_findings"]
    )
    assert all("impact" in c and c["accepted"] is None for c in doc["columns"])
    assert doc["code_findings"] == []
    assert doc["settings"]["engine"] == "memory" and doc["settings"]["sample_rows"] == n
    assert "impact" in doc


def test_schema_1_files_are_still_read(tmp_path):
    old = {
        "schema": "featureaudit.findings/1",
        "columns": [{"column": "leak", "level": "high", "score": 0.7}],
        "dataset_findings": [],
    }
    path = tmp_path / "old.json"
    path.write_text(json.dumps(old))
    from featureaudit.findings import load_findings

    assert droplist(load_findings(path), "high") == ["leak"]
