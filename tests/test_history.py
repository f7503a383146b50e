"""Run history: three scans kept under time + content-hash names, never overwritten; the
`history` table; the dossier's trend charts and new/raised marks; diff formats and order."""

import hashlib
import json

import numpy as np
import pandas as pd
import pytest
from typer.testing import CliRunner

from featureaudit.cli import app
from featureaudit.findings import Findings, diff_findings
from featureaudit.history import load_runs, marks, store_run, trend_svg

runner = CliRunner()


def run(*args):
    return runner.invoke(app, [str(a) for a in args], prog_name="featureaudit")


def _table(path, leak_share):
    """`closed_code` equals the target except on `leak_share` of rows (changed at random)."""
    rng = np.random.default_rng(2)
    n = 1000
    y = rng.integers(0, 2, n)
    frame = pd.DataFrame({"a": rng.normal(size=n), "b": rng.normal(size=n)})
    frame["closed_code"] = np.where(rng.random(n) < leak_share, 1 - y, y)
    frame["split"] = np.where(rng.random(n) < 0.8, "train", "test")
    frame["y"] = y
    frame.to_csv(path, index=False)
    return path


@pytest.fixture(scope="module")
def three_runs(tmp_path_factory):
    """Drops 1 to 3 of a table whose `closed_code` grows from noise into a copy of the target."""
    base = tmp_path_factory.mktemp("hist")
    history = base / "history"
    outs = []
    for i, share in enumerate((0.5, 0.3, 0.02)):
        table = _table(base / f"drop{i}.csv", share)
        out = base / f"report{i}"
        args = ["scan", table, "--target", "y", "--split-column", "split", "--out", out]
        result = run(*args, "--history", history)
        assert result.exit_code == 0, result.stderr
        outs.append(out)
    return history, outs


def test_every_run_is_kept_under_time_and_content_hash(three_runs):
    history, outs = three_runs
    files = sorted(p.name for p in history.iterdir())
    assert len(files) == 3
    for out in outs:
        text = (out / "findings.json").read_text()
        digest = hashlib.sha256(text.encode()).hexdigest()[:12]
        stamp = json.loads(text)["created"].replace("-", "").replace(":", "")
        assert f"{stamp}-{digest}.json" in files
        assert (history / f"{stamp}-{digest}.json").read_text() == text


def test_storing_never_overwrites(three_runs, tmp_path):
    history, _ = three_runs
    first = load_runs(history)[0]
    path = history / first.name
    before = path.read_text()
    assert store_run(history, first.findings) == path  # same content: same name, kept as is
    assert path.read_text() == before and len(list(history.iterdir())) == 3


def test_history_command_prints_levels_per_run_and_raises(three_runs):
    history, _ = three_runs
    result = run("history", history, "--column", "closed_code")
    assert result.exit_code == 0, result.stderr
    lines = result.stdout.splitlines()
    row = next(line for line in lines if line.startswith("closed_code"))
    levels = [w for w in row.split() if w in ("none", "low", "medium", "high", "critical")]
    assert len(levels) == 3 and levels[-1] == "critical" and levels[0] in ("none", "low")
    assert row.split()[-1] != "-"  # some run raised it
    assert sum(1 for line in lines if line.strip()[:1].isdigit()) == 3  # the runs, numbered


def test_history_command_errors(three_runs, tmp_path):
    history, _ = three_runs
    missing = run("history", tmp_path / "nope")
    assert missing.exit_code == 2 and "nope" in missing.stderr
    wrong = run("history", history, "--column", "no_such")
    assert wrong.exit_code == 2 and "no_such" in wrong.stderr
    empty = tmp_path / "empty"
    empty.mkdir()
    assert "no runs" in run("history", empty).stdout
    afile = tmp_path / "file.txt"
    afile.write_text("x")
    args = ["scan", tmp_path / "any.csv", "--target", "y", "--history", afile]
    assert run(*args).exit_code == 2


def test_dossier_shows_trend_and_marks_the_raised_column(three_runs):
    _, outs = three_runs
    page = (outs[-1] / "dossier.html").read_text()
    assert page.count('<svg class="trend"') >= 1
    assert "score over 3 runs" in page
    assert '<span class="mark">new</span>' in page or '<span class="mark">raised</span>' in page
    first = (outs[0] / "dossier.html").read_text()
    assert '<svg class="trend"' not in first  # one run: nothing to draw


def test_marks_and_trend_by_hand():
    def doc(level, score):
        return Findings(
            {"columns": [{"column": "c", "level": level, "score": score}], "dataset_findings": []}
        )

    assert marks(doc("low", 0.3), doc("high", 0.7)) == {"c": "raised"}
    assert marks(doc("none", 0.1), doc("medium", 0.5)) == {"c": "new"}
    assert marks(doc("high", 0.7), doc("medium", 0.5)) == {}
    assert marks(None, doc("high", 0.7)) == {}
    svg = trend_svg([("low", 0.3), None, ("high", 0.7)])
    assert svg.count("<polyline") == 2 and svg.count("<circle") == 2  # a gap where absent
    assert trend_svg([("low", 0.3)]) == ""


def _finding(kind, level, statistic="s"):
    return {"probe": "p", "kind": kind, "statistic": statistic, "level": level, "summary": "x"}


def test_diff_formats_order_and_words(tmp_path):
    old = {
        "schema": "featureaudit.findings/2",
        "columns": [{"column": "a", "level": "low"}, {"column": "b", "level": "high"}],
        "dataset_findings": [_finding("split_shift", "low")],
    }
    new = {
        "schema": "featureaudit.findings/2",
        "columns": [
            {"column": "a", "level": "medium"},
            {"column": "b", "level": "low"},
            {"column": "c", "level": "critical"},
        ],
        "dataset_findings": [_finding("split_shift", "high")],
    }
    (tmp_path / "old.json").write_text(json.dumps(old))
    (tmp_path / "new.json").write_text(json.dumps(new))
    lines = diff_findings(Findings(old), Findings(new))
    assert [(d.name, d.new_level) for d in lines] == [
        ("c", "critical"),
        ("split_shift", "high"),
        ("a", "medium"),
        ("b", "low"),
    ]
    text = run("diff", tmp_path / "old.json", tmp_path / "new.json")
    assert text.exit_code == 0
    assert "split " in text.stdout and "dataset" not in text.stdout
    as_json = json.loads(
        run("diff", tmp_path / "old.json", tmp_path / "new.json", "--format", "json").stdout
    )
    assert as_json["tables"] == {"old": None, "new": None}
    assert as_json["changes"][1] == {
        "change": "raised",
        "scope": "split",
        "name": "split_shift",
        "old_level": "low",
        "new_level": "high",
        "summary": "x",
        "accepted": None,
    }
    md = run("diff", tmp_path / "old.json", tmp_path / "new.json", "--format", "markdown").stdout
    table = [x for x in md.splitlines() if x.startswith("|")]
    assert table[0].startswith("| change | scope | name |") and len(table) == 6
    bad = run("diff", tmp_path / "old.json", tmp_path / "new.json", "--format", "html")
    assert bad.exit_code == 2 and "--format" in bad.stderr
    failing = run("diff", tmp_path / "old.json", tmp_path / "new.json", "--fail-at", "critical")
    assert failing.exit_code == 1
