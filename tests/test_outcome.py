"""What `scan` prints: the scores as given and with the remedies applied, why it exits 1,
code findings counted with the rest, drop and refit lists."""

from __future__ import annotations

import json

import numpy as np
import pytest
from typer.testing import CliRunner

from featureaudit.cli import app

runner = CliRunner()


def run(*args):
    return runner.invoke(app, [str(a) for a in args], prog_name="featureaudit")


@pytest.fixture(scope="module")
def table(tmp_path_factory):
    # statsmodels' bundled Fair (1978) affairs survey; a planted column that follows the target
    sm = pytest.importorskip("statsmodels.api")
    frame = sm.datasets.fair.load_pandas().data.copy()
    rng = np.random.default_rng(0)
    frame["had_affair"] = (frame.pop("affairs") > 0).astype(int)
    y = frame["had_affair"].to_numpy()
    frame["closed_code"] = np.where(y == 1, rng.poisson(3, len(y)), rng.poisson(0.2, len(y)))
    frame["split"] = np.where(rng.random(len(frame)) < 0.3, "test", "train")
    folder = tmp_path_factory.mktemp("outcome")
    path = folder / "affairs.csv"
    frame.to_csv(path, index=False)
    script = folder / "train.py"
    script.write_text(
        "import pandas as pd\n"
        "from sklearn.feature_selection import SelectKBest\n"
        "from sklearn.model_selection import train_test_split\n"
        "df = pd.read_csv('affairs.csv')\n"
        "X = df.drop(columns=['had_affair'])\n"
        "X = SelectKBest(k=5).fit_transform(X, df['had_affair'])\n"
        "X_tr, X_te, y_tr, y_te = train_test_split(X, df['had_affair'])\n"
    )
    return path, script


def test_scan_prints_the_scores_as_given_and_remedied_and_the_lists(table, tmp_path):
    path, _ = table
    result = run(
        "scan", path, "--target", "had_affair", "--split-column", "split", "--out", tmp_path
    )
    assert result.exit_code == 0, result.stderr
    doc = json.loads((tmp_path / "findings.json").read_text())
    rem = doc["impact"]["remedied"]
    line = [x for x in result.stdout.splitlines() if x.startswith("validation AUC")][0]
    assert f"{doc['impact']['as_given']:.2f} as given → {rem['value']:.2f}" in line
    assert "drop: closed_code" in result.stdout


def test_fail_at_says_which_gate_and_which_finding(table, tmp_path):
    path, _ = table
    result = run(
        "scan",
        path,
        "--target",
        "had_affair",
        "--split-column",
        "split",
        "--out",
        tmp_path,
        "--fail-at",
        "high",
    )
    assert result.exit_code == 1
    assert "featureaudit: exit 1: --fail-at high reached by" in result.stderr
    assert "closed_code (critical)" in result.stderr or "closed_code (high)" in result.stderr


def test_fail_at_impact_says_what_it_compared(table, tmp_path):
    path, _ = table
    result = run(
        "scan",
        path,
        "--target",
        "had_affair",
        "--split-column",
        "split",
        "--out",
        tmp_path,
        "--fail-at-impact",
        "0.001",
    )
    doc = json.loads((tmp_path / "findings.json").read_text())
    lift = doc["impact"]["as_given"] - doc["impact"]["remedied"]["value"]
    assert lift > 0.1  # the planted column lifts the held-out AUC from about 0.74 to 0.97
    assert result.exit_code == 1
    assert "exit 1: --fail-at-impact 0.001: the as-given validation score exceeds" in (
        result.stderr
    )


def test_code_findings_are_counted_printed_and_gate(table, tmp_path):
    path, script = table
    result = run(
        "scan",
        path,
        "--target",
        "had_affair",
        "--split-column",
        "split",
        "--code",
        script,
        "--out",
        tmp_path,
        "--fail-at",
        "high",
    )
    doc = json.loads((tmp_path / "findings.json").read_text())
    high = [f for f in doc["code_findings"] if f["level"] in ("high", "critical")]
    assert high, doc["code_findings"]
    assert f"{len(high)} of them in the training code" in result.stdout
    assert "code  selection_on_all_rows at" in result.stdout
    assert "code selection_on_all_rows at" in result.stderr and result.exit_code == 1


def test_gate_reason_is_none_below_the_gate():
    from featureaudit.outcome import gate_reason

    doc = {"columns": [{"column": "a", "level": "medium"}], "dataset_findings": []}
    assert gate_reason(doc, "high", None) is None
    assert "a (medium)" in gate_reason(doc, "medium", None)
    accepted = {
        "columns": [{"column": "a", "level": "high", "accepted": {"reason": "ok"}}],
        "dataset_findings": [],
    }
    assert gate_reason(accepted, "high", None) is None
