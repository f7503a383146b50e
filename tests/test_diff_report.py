"""`diff` and `history` tell "cannot tell" from a level, report columns new and gone, the
dictionary's coverage, the headline score's change, and each run's table."""

from __future__ import annotations

import json

from typer.testing import CliRunner

from featureaudit.cli import app
from featureaudit.diff_format import diff_context, format_diff
from featureaudit.findings import Findings, diff_findings

runner = CliRunner()


def _fit(level: str, fitted_on: str | None = None) -> dict:
    detail = {"fitted_on": fitted_on} if fitted_on else {"all_rows": {"mean": 0, "sd": 1}}
    return {
        "probe": "fitscope",
        "kind": "fit_on_all_rows",
        "level": level,
        "detail": detail,
        "summary": "cannot tell" if fitted_on else "standardised on all rows",
    }


def _doc(columns, *, remedied=None, as_given=0.9, source="drop1.csv", missing=()):
    return {
        "schema": "featureaudit.findings/3",
        "dataset": {
            "source": source,
            "rows": 100,
            "dictionary": {"source": "dict.csv", "lines": {}, "audited_not_covered": list(missing)},
        },
        "columns": columns,
        "dataset_findings": [],
        "impact": {
            "metric": "auc",
            "as_given": as_given,
            "remedied": {"value": remedied} if remedied is not None else None,
        },
    }


def _col(name, level, evidence=()):
    return {
        "column": name,
        "level": level,
        "score": 0.5,
        "summary": "s",
        "evidence": list(evidence),
    }


OLD = _doc(
    [
        _col("scaled", "high", [_fit("high")]),
        _col("gone_col", "medium"),
        _col("plain", "high", [_fit("high")]),
    ],
    remedied=0.80,
    as_given=0.97,
)
NEW = _doc(
    [
        _col("scaled", "none", [_fit("none", "cannot tell")]),
        _col("fresh", "none"),
        _col("plain", "none", [_fit("none")]),
    ],
    remedied=0.84,
    as_given=0.95,
    source="drop2.csv",
    missing=["fresh"],
)


def test_cannot_tell_is_not_a_lowered_level_and_columns_new_and_gone_are_listed():
    lines = {(d.change, d.name): d for d in diff_findings(Findings(OLD), Findings(NEW))}
    assert set(lines) == {
        ("cannot tell", "scaled"),
        ("gone", "gone_col"),
        ("added", "fresh"),
        ("lowered", "plain"),
    }
    assert lines[("cannot tell", "scaled")].levels == "high -> cannot tell"
    assert "lowered" not in lines[("cannot tell", "scaled")].text()


def test_context_carries_tables_score_change_and_dictionary_coverage():
    ctx = diff_context(Findings(OLD), Findings(NEW))
    assert ctx["tables"] == {"old": "drop1.csv", "new": "drop2.csv"}
    assert ctx["score"]["remedied"] == {"old": 0.80, "new": 0.84, "change": 0.04}
    assert ctx["score"]["as_given"]["change"] == -0.02
    assert ctx["dictionary"]["newly_not_covered"] == ["fresh"]
    lines = diff_findings(Findings(OLD), Findings(NEW))
    text = format_diff(lines, "text", ctx)
    assert "validation auc with the remedies applied: 0.800 -> 0.840 (+0.040)" in text
    assert "tables: drop1.csv -> drop2.csv" in text and "1 audited columns" in text
    as_json = json.loads(format_diff(lines, "json", ctx))
    assert as_json["score"] == ctx["score"] and len(as_json["changes"]) == 4
    md = format_diff(lines, "markdown", ctx)
    assert "| cannot tell | column | `scaled` | high -&gt; cannot tell |" not in md
    assert "| cannot tell | column | `scaled` | high -\\> cannot tell |" in md


def test_diff_and_history_commands_show_them(tmp_path):
    from featureaudit.history import history_lines, store_run

    (tmp_path / "old.json").write_text(json.dumps(OLD))
    (tmp_path / "new.json").write_text(json.dumps(NEW))
    out = runner.invoke(
        app, ["diff", str(tmp_path / "old.json"), str(tmp_path / "new.json"), "--fail-at", "high"]
    )
    assert out.exit_code == 0, out.stdout  # cannot tell, gone and added never fail
    row = next(x for x in out.stdout.splitlines() if x.startswith("cannot tell"))
    assert row.split() == [
        "cannot",
        "tell",
        "column",
        "scaled",
        "high",
        "->",
        "cannot",
        "tell",
        "(s)",
    ]
    runs = tmp_path / "runs"
    runs.mkdir()
    for i, doc in enumerate((OLD, NEW)):
        store_run(runs, Findings({**doc, "created": f"2026-12-0{i + 1}T00:00:00Z"}))
    from featureaudit.history import load_runs

    text = "\n".join(history_lines(load_runs(runs)))
    assert "drop1.csv  100 rows" in text and "drop2.csv  100 rows" in text
    row = next(x for x in text.splitlines() if x.startswith("scaled"))
    assert "cannot tell" in row
    plain = next(x for x in text.splitlines() if x.startswith("plain"))
    assert "cannot tell" not in plain
