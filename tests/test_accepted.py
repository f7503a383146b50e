"""Reviewed suspects (--accepted): match, expiry, unmatched rows, split findings, bad files,
and that accepted ones count toward neither --fail-at, the drop list nor diff's --fail-at."""

import json

import numpy as np
import pandas as pd
import pytest
from typer.testing import CliRunner

from featureaudit.cli import app
from featureaudit.review.accepted import apply_accepted, read_accepted

runner = CliRunner()
HEADER = "column,kind,reason,reviewed_by,until\n"


def run(*args):
    return runner.invoke(app, [str(a) for a in args], prog_name="featureaudit")


@pytest.fixture(scope="module")
def table(tmp_path_factory):
    """A near copy of the target (closed_code) and 60 training rows copied into the test part."""
    rng = np.random.default_rng(1)
    n = 1200
    y = rng.integers(0, 2, n)
    frame = pd.DataFrame({"a": rng.normal(size=n), "b": rng.normal(size=n)})
    frame["closed_code"] = np.where(rng.random(n) < 0.97, y, 1 - y)
    frame["split"] = np.where(rng.random(n) < 0.8, "train", "test")
    frame["y"] = y
    dup = frame[frame.split == "train"].head(60).copy()
    dup["split"] = "test"
    path = tmp_path_factory.mktemp("data") / "t.csv"
    pd.concat([frame, dup], ignore_index=True).to_csv(path, index=False)
    return path


def scan(table, out, accepted_text, tmp_path, *extra):
    accepted = tmp_path / "accepted.csv"
    accepted.write_text(accepted_text)
    args = ["scan", table, "--target", "y", "--split-column", "split", "--out", out]
    return run(*args, "--accepted", accepted, "--fail-at", "high", *extra)


def test_match_expired_unmatched_and_split_in_one_run(table, tmp_path):
    out = tmp_path / "report"
    rows = (
        HEADER + "closed_code,target_proxy,a status code set on purpose,R. Ionescu,2999-01-01\n"
        "*split*,duplicate_rows_across_split,resubmitted invoices,R. Ionescu,\n"
        "no_such_column,target_proxy,old row,R. Ionescu,\n"
    )
    result = scan(table, out, rows, tmp_path)
    doc = json.loads((out / "findings.json").read_text())
    closed = next(c for c in doc["columns"] if c["column"] == "closed_code")
    assert closed["level"] == "critical"  # stays in the report at its level
    assert closed["accepted"] == {
        "reason": "a status code set on purpose",
        "reviewed_by": "R. Ionescu",
        "until": "2999-01-01",
    }
    dup = next(f for f in doc["dataset_findings"] if f["kind"] == "duplicate_rows_across_split")
    assert dup["level"] != "none" and dup["accepted"]["reason"] == "resubmitted invoices"
    assert dup["accepted"]["until"] is None
    # every suspect at high+ is accepted, so --fail-at high does not fire
    assert result.exit_code == 0, result.stdout + result.stderr
    assert "closed_code" not in (out / "droplist.txt").read_text().split()
    assert any("no_such_column" in w and "matches no finding" in w for w in doc["warnings"])
    assert "no_such_column" in result.stderr
    dossier = (out / "dossier.html").read_text()
    assert "a status code set on purpose" in dossier and "R. Ionescu" in dossier


def test_expired_acceptance_counts_again_and_says_so(table, tmp_path):
    out = tmp_path / "report"
    rows = HEADER + "closed_code,target_proxy,intended,R. Ionescu,2020-01-31\n"
    result = scan(table, out, rows, tmp_path)
    assert result.exit_code == 1
    doc = json.loads((out / "findings.json").read_text())
    closed = next(c for c in doc["columns"] if c["column"] == "closed_code")
    assert closed["accepted"] is None
    assert "closed_code" in (out / "droplist.txt").read_text().split()
    assert any("expired on 2020-01-31" in w and "counts again" in w for w in doc["warnings"])
    assert "expired on 2020-01-31" in result.stderr


def test_diff_honours_acceptance(table, tmp_path):
    out = tmp_path / "report"
    scan(table, out, HEADER + "closed_code,target_proxy,intended,R. Ionescu,\n", tmp_path)
    doc = json.loads((out / "findings.json").read_text())
    old = json.loads(json.dumps(doc))
    old["columns"] = [c for c in old["columns"] if c["column"] != "closed_code"]
    old["dataset_findings"] = []
    (tmp_path / "old.json").write_text(json.dumps(old))
    new = tmp_path / "new.json"
    (new).write_text(json.dumps(doc))
    # the new split finding is not accepted here, so it alone makes diff fail
    assert run("diff", tmp_path / "old.json", new, "--fail-at", "high").exit_code == 1
    doc["dataset_findings"] = [f for f in doc["dataset_findings"] if f["level"] == "none"]
    old["dataset_findings"] = doc["dataset_findings"]
    (tmp_path / "old.json").write_text(json.dumps(old))
    new.write_text(json.dumps(doc))
    result = run("diff", tmp_path / "old.json", new, "--fail-at", "high")
    assert result.exit_code == 0, result.stdout
    line = next(x for x in result.stdout.splitlines() if "closed_code" in x)
    assert line.startswith("new") and "[accepted: intended]" in line


def test_a_column_accepted_for_one_kind_still_counts_for_another():
    doc = {
        "columns": [
            {
                "column": "paid_at",
                "level": "critical",
                "kinds": ["target_proxy", "recorded_after_cutoff"],
                "evidence": [
                    {"kind": "target_proxy", "level": "high"},
                    {"kind": "recorded_after_cutoff", "level": "high"},
                ],
            }
        ],
        "dataset_findings": [],
        "warnings": [],
    }
    apply_accepted(doc, read_accepted_text(HEADER + "paid_at,target_proxy,honest feature,Ana,\n"))
    assert doc["columns"][0].get("accepted") is None
    assert "recorded_after_cutoff" in doc["warnings"][0]


def read_accepted_text(text):
    import tempfile
    from pathlib import Path

    with tempfile.TemporaryDirectory() as d:
        p = Path(d) / "a.csv"
        p.write_text(text)
        return read_accepted(p)


@pytest.mark.parametrize(
    ("text", "words"),
    [
        ("column,kind,reason\nx,target_proxy,r\n", "lacks the column(s) reviewed_by, until"),
        (HEADER + "x,proxy,r,me,\n", "line 2: kind 'proxy' is not one of"),
        (HEADER + "x,target_proxy,r,me,31/01/2027\n", "line 2: until '31/01/2027' is not an ISO"),
        (HEADER + ",target_proxy,r,me,\n", "line 2: `column` is blank"),
    ],
)
def test_bad_accepted_file_is_one_line_exit_2_and_keeps_the_report(table, tmp_path, text, words):
    out = tmp_path / "report"
    out.mkdir()
    (out / "findings.json").write_text("earlier")
    result = scan(table, out, text, tmp_path)
    assert result.exit_code == 2
    assert words in result.stderr and "accepted.csv" in result.stderr
    assert len(result.stderr.strip().splitlines()) == 1
    assert (out / "findings.json").read_text() == "earlier"


def test_missing_accepted_file(table, tmp_path):
    args = ["scan", table, "--target", "y", "--out", tmp_path / "r"]
    result = run(*args, "--accepted", tmp_path / "nope.csv")
    assert (
        result.exit_code == 2 and "nope.csv" in result.stderr and "does not exist" in result.stderr
    )


def test_config_file_gives_accepted_and_history(table, tmp_path):
    (tmp_path / "accepted.csv").write_text(HEADER + "closed_code,target_proxy,intended,Ana,\n")
    config = tmp_path / "audit.toml"
    config.write_text(
        f'accepted = "{tmp_path / "accepted.csv"}"\nhistory = "{tmp_path / "hist"}"\n'
        'target = "y"\nsplit_column = "split"\n'
    )
    result = run("scan", table, "--config", config, "--out", tmp_path / "r")
    assert result.exit_code == 0, result.stderr
    doc = json.loads((tmp_path / "r" / "findings.json").read_text())
    assert next(c for c in doc["columns"] if c["column"] == "closed_code")["accepted"]
    assert len(list((tmp_path / "hist").iterdir())) == 1
    assert "accepted after review: intended" in (tmp_path / "r" / "summary.md").read_text()
