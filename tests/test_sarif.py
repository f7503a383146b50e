"""findings.sarif: SARIF 2.1.0, each finding at its column's dictionary row or at the table."""

from __future__ import annotations

import csv
import json

import numpy as np

import featureaudit as fa
from featureaudit.render.sarif import sarif_document

# the SARIF 2.1.0 result levels (OASIS SARIF 2.1.0, section 3.27.10)
SARIF_LEVELS = {"none", "note", "warning", "error"}


def test_scan_writes_sarif_located_at_dictionary_rows_and_the_table(
    breast_cancer, noisy_copy, tmp_path
):
    # scikit-learn's bundled breast-cancer rows; a planted noisy copy of the target
    frame = breast_cancer.copy()
    frame["closed_code"] = noisy_copy(frame.malignant.to_numpy(), 0.03, 0)
    rng = np.random.default_rng(0)
    frame["split"] = np.where(rng.random(len(frame)) < 0.3, "test", "train")
    table = tmp_path / "cancer.csv"
    frame.to_csv(table, index=False)
    dictionary = tmp_path / "dictionary.csv"
    rows = [["column", "role", "description"], ["malignant", "target", "diagnosis"]]
    rows += [["mean radius", "feature", "size"], ["closed_code", "feature", "case code"]]
    with open(dictionary, "w", newline="") as fh:
        csv.writer(fh).writerows(rows)
    result = fa.audit(str(table), split_column="split", dictionary=str(dictionary))
    result.write(tmp_path / "report")
    log = json.loads((tmp_path / "report" / "findings.sarif").read_text())
    assert log["version"] == "2.1.0" and log["$schema"].endswith("sarif-2.1.0.json")
    run = log["runs"][0]
    rules = run["tool"]["driver"]["rules"]
    assert run["tool"]["driver"]["name"] == "featureaudit"
    # reference: the line of each dictionary row, as Python's csv reader counts it
    with open(dictionary, newline="") as fh:
        reader = csv.reader(fh)
        line_of = {row[0]: reader.line_num for row in reader}
    located = {}
    for r in run["results"]:
        assert r["level"] in SARIF_LEVELS and r["message"]["text"]
        assert rules[r["ruleIndex"]]["id"] == r["ruleId"]
        where = r["locations"][0]["physicalLocation"]
        located[r["properties"].get("column")] = where
    leak = located["closed_code"]
    assert leak["artifactLocation"]["uri"] == dictionary.as_posix()
    assert leak["region"]["startLine"] == line_of["closed_code"] == 4
    # a column the dictionary does not name, and split findings, sit at the table file
    others = [w for c, w in located.items() if c not in line_of]
    assert all(w["artifactLocation"]["uri"] == table.as_posix() for w in others)
    levels = {c["column"]: c["level"] for c in result.document["columns"]}
    shown = [c for c, lv in levels.items() if lv != "none"]
    assert sorted(c for c in located if c is not None) == sorted(shown)


def test_accepted_findings_are_suppressed_and_code_findings_sit_at_their_line():
    doc = {
        "dataset": {"source": "t.csv"},
        "columns": [
            {
                "column": "a",
                "level": "high",
                "kinds": ["target_proxy"],
                "summary": "s",
                "accepted": {"reason": "intended"},
            },
            {"column": "b", "level": "none", "kinds": [], "summary": ""},
        ],
        "dataset_findings": [],
        "code_findings": [
            {
                "file": "train.py",
                "line": 7,
                "kind": "fit_before_split",
                "level": "medium",
                "summary": "scaler fitted before the split",
            }
        ],
    }
    results = sarif_document(doc)["runs"][0]["results"]
    assert [r["ruleId"] for r in results] == ["target_proxy", "fit_before_split"]
    assert results[0]["suppressions"][0]["justification"] == "intended"
    loc = results[1]["locations"][0]["physicalLocation"]
    assert loc == {"artifactLocation": {"uri": "train.py"}, "region": {"startLine": 7}}
    assert results[1]["level"] == "warning" and results[0]["level"] == "error"
