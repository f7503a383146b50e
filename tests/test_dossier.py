"""The dossier, the review summary and the notebook view, rendered from findings fixtures."""

import copy
import json
import re

import numpy as np
import pandas as pd
import pytest
from markupsafe import escape

import featureaudit as fa
from featureaudit.findings import Findings
from featureaudit.kinds import KINDS
from featureaudit.levels import LEVEL_NAMES
from featureaudit.report import CAUTION, render_all, render_dossier, render_summary

LEVELS = list(LEVEL_NAMES)


def _doc(columns=(), dataset=(), skipped=(), warnings=()):
    return Findings(
        {
            "schema": "featureaudit.findings/1",
            "tool_version": "0.1.0",
            "created": "2026-12-01T12:00:00Z",
            "dataset": {
                "source": "t.csv",
                "rows": 10,
                "train_rows": 8,
                "heldout_rows": 2,
                "columns": 3,
                "target": "y",
                "task": "binary",
                "split": "column:split",
            },
            "settings": {"seed": 0},
            "columns": list(columns),
            "dataset_findings": list(dataset),
            "skipped": list(skipped),
            "warnings": list(warnings),
        }
    )


def _column(name, level, kind="target_proxy", probe="solo", detail=None):
    return {
        "column": name,
        "score": LEVELS.index(level) / 5,
        "level": level,
        "kinds": [kind],
        "summary": f"{name} summary",
        "role": "feature",
        "description": "",
        "evidence": [
            {
                "probe": probe,
                "kind": kind,
                "statistic": "s",
                "value": 0.5,
                "threshold": 0.4,
                "level": level,
                "summary": "e",
                "detail": detail or {},
            }
        ],
    }


@pytest.mark.parametrize("kind", KINDS)
@pytest.mark.parametrize("level", LEVELS)
def test_every_kind_and_level_renders(kind, level):
    doc = _doc(
        [_column("c1", level, kind)],
        [
            {
                "probe": "twins",
                "kind": kind,
                "statistic": "s",
                "value": 0.2,
                "threshold": 0.1,
                "level": level,
                "summary": "split summary",
                "detail": {},
            }
        ],
    )
    page = render_dossier(doc)
    assert "split summary" in page and str(escape(CAUTION)) in page
    if level != "none":
        assert 'class="l-' + level in page and "c1 summary" in page


def test_empty_findings_and_every_probe_skipped():
    doc = _doc(
        skipped=[
            {"probe": p, "column": None, "reason": f"{p} had nothing"}
            for p in ("solo", "timing", "fitscope", "twins", "separability")
        ]
    )
    page = render_dossier(doc)
    assert "No column reached level low" in page and "No finding about the split" in page
    assert page.count("had nothing") == 5
    summary = render_summary(doc)
    assert "None at level medium or above" in summary and "no column to drop" in summary


def test_hostile_names_values_and_descriptions_are_escaped():
    rng = np.random.default_rng(0)
    n = 400
    y = rng.integers(0, 2, n)
    evil = '<script>alert("x")</script>&"\'\x07\x1b'
    frame = pd.DataFrame(
        {
            evil: np.where(rng.random(n) < 0.97, y, 1 - y) + 0.0,
            "note": np.where((y == 1) ^ (rng.random(n) < 0.05), "<b>bold</b>", 'a&b"q"'),
            "x": rng.normal(size=n),
            "w": rng.normal(size=n),
            "v": rng.normal(size=n),
            "y": y,
        }
    )
    import csv
    import io

    buf = io.StringIO()
    csv.writer(buf).writerows(
        [
            ["column", "role", "description"],
            [evil, "feature", "<img src=x onerror=alert(1)>"],
            ["note", "feature", "</td></tr><script>x()</script>"],
        ]
    )
    from featureaudit.dictionary import parse_dictionary

    result = fa.audit(
        frame, target="y", dictionary=parse_dictionary(buf.getvalue()), source="<t>&.csv"
    )
    files = render_all(result.findings)
    page = files["dossier.html"]
    assert "<script>alert" not in page and "<img src=x" not in page and "<b>bold" not in page
    assert "&lt;b&gt;bold&lt;/b&gt;" in page and "<script>x()" not in page
    assert "&lt;script&gt;" in page and "&lt;img src=x" in page
    assert "\x07" not in page and "\x1b" not in page and "\\x07" in page
    assert "<t>&.csv" not in page and "&lt;t&gt;&amp;.csv" in page
    scripts = re.findall(r"<script>(.*?)</script>", page, re.S)
    assert len(scripts) == 1 and "alert" not in scripts[0]
    assert "\x07" not in files["summary.md"]
    json.loads(files["findings.json"])
    assert "<script>" not in result._repr_html_()


def test_dossier_is_self_contained():
    result = fa.audit(pd.DataFrame({"a": np.arange(50.0), "y": [0, 1] * 25}), target="y")
    page = render_dossier(result.findings)
    urls = set(re.findall(r"(?:src|href)\s*=\s*\"([^\"]*)\"", page))
    assert all(u.startswith("#") for u in urls), urls
    assert "@import" not in page and "url(" not in page


def test_a_thousand_column_dossier_stays_small():
    detail = {
        "bins": [{"bin": f"[{i}, {i + 1})", "rows": 50, "stat": 0.1 + i / 100} for i in range(20)],
        "prior": 0.2,
        "bin_stat": "target rate",
        "oof_value": 0.7,
        "ci95": [0.6, 0.8],
        "fold_values": [0.7] * 5,
    }
    cols = [
        _column(f"col_{i:04d}", LEVELS[i % 5], detail=copy.deepcopy(detail)) for i in range(1000)
    ]
    page = render_dossier(_doc(cols))
    assert len(page.encode()) < 5_000_000
    assert page.count("<svg") <= 60 + 5


def test_summary_markdown_lists_suspects_and_droplist(tmp_path):
    doc = _doc(
        [_column("late_fee", "critical"), _column("amount", "none")],
        [
            {
                "probe": "twins",
                "kind": "duplicate_rows_across_split",
                "statistic": "s",
                "value": 0.2,
                "threshold": 0.1,
                "level": "high",
                "summary": "copies|here",
                "detail": {},
            }
        ],
    )
    md = render_summary(doc)
    assert "| critical |" in md and "`late_fee`" in md and "copies\\|here" in md
    assert "- `late_fee`" in md and CAUTION in md


def test_methods_and_thresholds_come_from_the_probes_and_the_settings_in_force():
    # The methods section is each probe's describe() of the run's own settings, and
    # findings.json records the thresholds in force (issue 9: a 3-day tolerance was misdescribed).
    from featureaudit.registry import registered
    from featureaudit.settings import Settings

    rng = np.random.default_rng(0)
    n = 300
    frame = pd.DataFrame(
        {
            "x": rng.normal(size=n),
            "y": rng.integers(0, 2, n),
            "split": np.where(rng.random(n) < 0.8, "train", "test"),
        }
    )
    settings = Settings(time_tolerance="3d")
    result = fa.audit(frame, target="y", split_column="split", settings=settings)
    recorded = result.document["settings"]
    assert set(recorded["thresholds"]) == set(recorded["methods"]) == set(registered())
    for name, cls in registered().items():
        assert recorded["methods"][name] == cls.describe(settings)
        json.dumps(recorded["thresholds"][name], allow_nan=False)
    assert "3" in recorded["methods"]["timing"] and "1 day" not in recorded["methods"]["timing"]
    html = render_dossier(Findings(result.document))
    for name in registered():
        assert str(escape(recorded["methods"][name])) in html


def test_headline_counts_only_high_and_above_in_its_parentheses():
    doc = {
        "schema": "featureaudit.findings/1",
        "dataset": {},
        "settings": {},
        "columns": [
            {"column": c, "level": lv}
            for c, lv in [("a", "critical"), ("b", "high"), ("c", "high"), ("d", "medium")]
        ],
        "dataset_findings": [],
        "skipped": [],
        "warnings": [],
    }
    from featureaudit.report import verdict_line

    line = verdict_line(Findings(doc))
    assert line.startswith(
        "3 findings at level high or above (1 critical, 2 high); 1 more at medium."
    )


# ---- the dossier for a reviewer ----------------------------------------------------------


def _reviewer_doc():
    cols = [_column(f"m{i}", lv) for i, lv in enumerate(["critical", "high", "medium"])]
    cols += [_column(f"low{i}", "low") for i in range(3)] + [_column("quiet", "none")]
    for c in cols:
        c["evidence"][0]["summary"] = c["summary"]  # the top evidence is the column's summary
        c["evidence"][0]["statistic"] = "oof_auc"
    return _doc(cols)


def test_cards_only_from_medium_up_and_lows_in_one_table():
    page = render_dossier(_reviewer_doc())
    cards = re.findall(r'<section class="card l-(\w+)" id="card-', page)
    assert cards == ["critical", "high", "medium"]
    lows = re.search(r'<table class="lows">(.*?)</table>', page, re.S).group(1)
    assert all(f"low{i}" in lows for i in range(3)) and "m0" not in lows


def test_each_summary_appears_once():
    page = render_dossier(_reviewer_doc())
    for name in ("m0", "m1", "m2", "low0"):
        assert page.count(f"{name} summary") == 1, name


def test_statistics_in_words_with_the_machine_name_small():
    page = render_dossier(_reviewer_doc())
    assert "out-of-fold AUC of the column alone" in page
    assert '<small class="mach" title="name in findings.json">oof_auc</small>' in page


def test_first_page_holds_verdict_suspects_splits_lists_and_caution():
    page = render_dossier(_reviewer_doc())
    front = page[page.index('<section class="front">') : page.index('<section class="evidence')]
    for part in ("findings at level high", 'id="ranked"', "Split findings", 'id="drops"'):
        assert part in front, part
    assert str(escape(CAUTION)) in front


def test_headline_counts_add_up_and_accepted_ones_apart():
    from featureaudit.report import verdict_line

    doc = _reviewer_doc().document
    doc["columns"][1]["accepted"] = {"reason": "r", "reviewed_by": "me", "until": None}
    line = verdict_line(Findings(doc))
    # critical m0 counts; high m1 is accepted; medium m2 counts as medium
    assert line.startswith("1 finding at level high or above (1 critical); 1 more at medium.")
    assert "1 more was accepted after review and not counted." in line


class _Table:
    """The little of an audit table the ranker reads."""

    id_columns: list = []
    features = ["c"]
    dictionary = None
    roles: dict = {}


def test_also_names_only_other_kinds_at_medium_or_above():
    from featureaudit.evidence import Evidence
    from featureaudit.ranker import rank

    def ev(kind, level, summary):
        return Evidence("p", kind, "s", 0.5, 0.4, level, column="c", summary=summary)

    low_proxy = [ev("recorded_after_cutoff", "high", "late"), ev("target_proxy", "low", "weak")]
    verdicts, _ = rank(_Table(), low_proxy)
    assert verdicts[0].summary == "late" and "target_proxy" in verdicts[0].kinds
    medium_proxy = [ev("recorded_after_cutoff", "high", "late"), ev("target_proxy", "medium", "x")]
    verdicts, _ = rank(_Table(), medium_proxy)
    assert verdicts[0].summary == "late; also target proxy"


def test_timing_not_documented_is_listed(small_binary, tmp_path):
    dictionary = tmp_path / "dict.csv"
    dictionary.write_text("column,role,known_at\nsignal,feature,-1d\ny,target,\n")
    frame = small_binary.assign(decided_at=small_binary["seen_at"] + pd.Timedelta("40D"))
    result = fa.audit(
        frame, target="y", dictionary=dictionary, label_time="decided_at", probes=["timing"]
    )
    warning = next(w for w in result.document["warnings"] if w.startswith("timing not documented"))
    for name in ("noise", "noise2", "colour"):
        assert name in warning
    assert "signal" not in warning.split(";")[0]
    page = render_dossier(result.findings)
    assert "<b>timing not documented</b>" in page and "<code>noise2</code>" in page


def test_impact_words_keep_the_sign_of_value_and_interval_together():
    from featureaudit.report import impact_words

    # removing the column lowers the score by 0.426 (its lift), interval lowered alike
    assert impact_words({"change": 0.426, "ci95": [0.36, 0.48]}) == "-0.426 (-0.480 to -0.360)"
    assert impact_words({"change": 0.001, "ci95": [-0.002, 0.004]}) == "negligible"
    assert impact_words(None) == "not measured"
