"""The static code audit: each rule on leaky and clean twins, notebooks, outputs, bad input."""

from __future__ import annotations

import json
import runpy
import sys
from pathlib import Path
from typing import Any

import pytest
from typer.testing import CliRunner

from featureaudit.cli import app
from featureaudit.code import audit_code
from featureaudit.code.audit import audit_file
from featureaudit.code.output import sarif
from featureaudit.vocab.levels import Level

ROOT = Path(__file__).resolve().parents[1]
CASES = ROOT / "tests" / "code_cases"
sys.path.insert(0, str(ROOT / "benchmarks"))
from code_corpus import expected, score  # noqa: E402

CASE_FILES = sorted(p for p in CASES.iterdir() if p.suffix in (".py", ".ipynb"))


@pytest.mark.parametrize("path", CASE_FILES, ids=lambda p: p.name)
def test_each_case_gives_the_kinds_it_declares(path: Path) -> None:
    # expectations are written in each case before the code (first line / notebook metadata)
    assert {f.kind for f in audit_file(path)[0]} == expected(path)


def test_corpus_precision_and_recall() -> None:
    s = score()
    assert len(CASE_FILES) >= 40
    assert s["precision"] >= 0.95 and s["recall"] >= 0.95  # the target
    assert s["clean_hits"] == 0


def test_notebook_finding_names_its_cell_and_cell_line() -> None:
    found = audit_file(CASES / "nb_later_split_leaky.ipynb")[0]
    assert [(f.cell, f.line, f.kind) for f in found] == [(3, 1, "fit_before_split")]
    assert "train_test_split" in found[0].flow and "cell 4" in found[0].flow


def test_finding_carries_columns_code_and_remedy() -> None:
    f = audit_file(CASES / "mask_leaky.py")[0][0]
    d = f.to_dict()
    assert d["evidence"]["columns"] == ["income", "age"]
    assert d["evidence"]["code"].startswith("imp = SimpleImputer().fit(")
    # the imputer's output never reaches a model in this case: looked at, so low
    assert "Pipeline" in d["evidence"]["remedy"] and d["level"] == "low"


# The SARIF 2.1.0 fields the OASIS standard marks required (sarifLog: version, runs; run: tool;
# tool: driver; toolComponent: name; result: message; message: text here; reportingDescriptor:
# id; region.startLine >= 1). Written from memory of the standard, not downloaded.
SARIF_REQUIRED = {
    "type": "object",
    "required": ["version", "runs"],
    "properties": {
        "version": {"const": "2.1.0"},
        "runs": {
            "type": "array",
            "items": {
                "type": "object",
                "required": ["tool"],
                "properties": {
                    "tool": {
                        "type": "object",
                        "required": ["driver"],
                        "properties": {
                            "driver": {
                                "type": "object",
                                "required": ["name"],
                                "properties": {
                                    "name": {"type": "string"},
                                    "rules": {
                                        "type": "array",
                                        "items": {"type": "object", "required": ["id"]},
                                    },
                                },
                            }
                        },
                    },
                    "results": {
                        "type": "array",
                        "items": {
                            "type": "object",
                            "required": ["message"],
                            "properties": {
                                "message": {"type": "object", "required": ["text"]},
                                "level": {"enum": ["none", "note", "warning", "error"]},
                                "ruleIndex": {"type": "integer", "minimum": 0},
                                "locations": {
                                    "type": "array",
                                    "items": {
                                        "type": "object",
                                        "properties": {
                                            "physicalLocation": {
                                                "type": "object",
                                                "properties": {
                                                    "artifactLocation": {
                                                        "type": "object",
                                                        "required": ["uri"],
                                                    },
                                                    "region": {
                                                        "type": "object",
                                                        "properties": {
                                                            "startLine": {
                                                                "type": "integer",
                                                                "minimum": 1,
                                                            }
                                                        },
                                                    },
                                                },
                                            }
                                        },
                                    },
                                },
                            },
                        },
                    },
                },
            },
        },
    },
}


def test_sarif_has_the_fields_the_standard_requires() -> None:
    jsonschema = pytest.importorskip("jsonschema")
    doc = sarif(audit_code([CASES]))
    jsonschema.validate(doc, SARIF_REQUIRED)
    run = doc["runs"][0]
    assert run["results"], "the corpus has leaky cases"
    for r in run["results"]:
        assert run["tool"]["driver"]["rules"][r["ruleIndex"]]["id"] == r["ruleId"]


def test_sarif_of_the_development_corpus_has_the_required_fields() -> None:
    jsonschema = pytest.importorskip("jsonschema")
    doc = sarif(audit_code([ROOT / "benchmarks" / "code_corpus"]))
    jsonschema.validate(doc, SARIF_REQUIRED)
    levels = {r["level"] for r in doc["runs"][0]["results"]}
    assert {"error", "warning"} <= levels


def test_cli_writes_json_and_sarif_and_fails_at(tmp_path: Path) -> None:
    res = CliRunner().invoke(
        app,
        [
            "code",
            str(CASES / "smote_leaky.py"),
            "--out",
            str(tmp_path),
            "--format",
            "sarif",
            "--fail-at",
            "high",
        ],
    )
    assert res.exit_code == 1, res.output
    doc = json.loads((tmp_path / "code-findings.json").read_text())
    assert doc["schema"] == "featureaudit.code/1"
    assert [f["kind"] for f in doc["findings"]] == ["oversampled_before_split"]
    assert {"file", "line", "cell", "kind", "level", "summary", "evidence"} <= set(
        doc["findings"][0]
    )
    assert json.loads((tmp_path / "code-findings.sarif").read_text())["version"] == "2.1.0"
    clean = CliRunner().invoke(
        app, ["code", str(CASES / "smote_clean.py"), "--out", str(tmp_path), "--fail-at", "low"]
    )
    assert clean.exit_code == 0 and "0 finding(s)" in clean.output


@pytest.mark.parametrize(
    "name,content",
    [
        ("broken.py", b"def f(:\n    pass\n"),
        ("broken.ipynb", b'{"cells": [oops'),
        ("blob.py", bytes(range(256)) * 4),
    ],
)
def test_unreadable_file_is_one_line_and_others_still_audited(
    tmp_path: Path, name: str, content: bytes
) -> None:
    bad = tmp_path / name
    bad.write_bytes(content)
    res = CliRunner().invoke(
        app, ["code", str(bad), str(CASES / "scaler_leaky.py"), "--out", str(tmp_path)]
    )
    assert res.exit_code == 2
    errors = [ln for ln in res.stderr.splitlines() if ln.strip()]
    assert len(errors) == 1 and name in errors[0] and "Traceback" not in res.output
    doc = json.loads((tmp_path / "code-findings.json").read_text())
    assert [f["kind"] for f in doc["findings"]] == ["fit_before_split"]


LEAKY_SELECTION = """
import numpy as np
from sklearn.feature_selection import SelectKBest, f_classif
from sklearn.linear_model import LogisticRegression
from sklearn.model_selection import train_test_split
rng = np.random.RandomState(1)
X = rng.standard_normal((200, 5000))
y = rng.randint(0, 2, 200)
X_sel = SelectKBest(f_classif, k=25).fit_transform(X, y)
X_train, X_test, y_train, y_test = train_test_split(X_sel, y, random_state=42)
score = LogisticRegression().fit(X_train, y_train).score(X_test, y_test)
"""
CORRECT_SELECTION = """
import numpy as np
from sklearn.feature_selection import SelectKBest, f_classif
from sklearn.linear_model import LogisticRegression
from sklearn.model_selection import train_test_split
from sklearn.pipeline import make_pipeline
rng = np.random.RandomState(1)
X = rng.standard_normal((200, 5000))
y = rng.randint(0, 2, 200)
X_train, X_test, y_train, y_test = train_test_split(X, y, random_state=42)
pipe = make_pipeline(SelectKBest(f_classif, k=25), LogisticRegression())
score = pipe.fit(X_train, y_train).score(X_test, y_test)
"""


def test_selection_pitfall_scores_higher_when_leaky_and_is_flagged(tmp_path: Path) -> None:
    # reference: scikit-learn user guide "Common pitfalls and recommended practices", feature
    # selection on pure noise (leaky 0.76 vs correct 0.46 accuracy there); our own scripts
    leaky, correct = tmp_path / "leaky.py", tmp_path / "correct.py"
    leaky.write_text(LEAKY_SELECTION)
    correct.write_text(CORRECT_SELECTION)
    leaky_score = runpy.run_path(str(leaky))["score"]
    correct_score = runpy.run_path(str(correct))["score"]
    assert leaky_score > 0.65 and correct_score < 0.62 and leaky_score > correct_score + 0.1
    assert [f.kind for f in audit_file(leaky)[0]] == ["selection_on_all_rows"]
    assert audit_file(correct)[0] == []


SCALED_BEFORE_SPLIT = """
import pandas as pd
from sklearn.linear_model import LogisticRegression
from sklearn.model_selection import train_test_split
from sklearn.preprocessing import StandardScaler

df = pd.read_csv("cancer.csv")
df[["mean radius", "mean texture"]] = StandardScaler().fit_transform(
    df[["mean radius", "mean texture"]]
)
train, test = train_test_split(df, test_size=0.3, random_state=0)
model = LogisticRegression().fit(train.drop(columns="malignant"), train["malignant"])
"""


def _code_evidence(column: dict[str, Any]) -> list[dict[str, Any]]:
    return [e for e in column["evidence"] if e["probe"] == "code"]


def _assert_scaled_on_all_rows(column: dict[str, Any]) -> None:
    # the scaled columns train the model: a fit on all rows that reaches it is high
    ev = _code_evidence(column)
    assert [e["kind"] for e in ev] == ["fit_on_all_rows"]
    assert ev[0]["level"] == "high" and ev[0]["detail"]["line"] == 8
    assert "fit_on_all_rows" in column["kinds"]


def test_scan_code_joins_the_column_evidence_and_refits(tmp_path: Path, breast_cancer) -> None:
    import featureaudit as fa

    script = tmp_path / "train.py"
    script.write_text(SCALED_BEFORE_SPLIT)
    result = fa.audit(breast_cancer, target="malignant", probes=["solo"], code=[script])
    doc = result.document
    assert [f["kind"] for f in doc["code_findings"]] == ["fit_before_split"]
    assert doc["code_findings"][0]["line"] == 8
    cols = {c["column"]: c for c in doc["columns"]}
    _assert_scaled_on_all_rows(cols["mean radius"])
    _assert_scaled_on_all_rows(cols["mean texture"])
    # solo finds nothing strong on "mean texture", so the code evidence sets its level and its
    # remedy: refit, not drop
    assert cols["mean texture"]["level"] == "high"
    assert cols["mean texture"]["remedy"] == "refit_on_training_rows"
    assert not _code_evidence(cols["worst area"])
    html = result.write(tmp_path / "report")
    dossier = (tmp_path / "report" / "dossier.html").read_text()
    assert html and "<h2>Training code</h2>" in dossier and "StandardScaler" in dossier
    plain = fa.audit(breast_cancer, target="malignant", probes=["solo"]).document
    assert plain["code_findings"] == []


def test_scan_code_without_findings_says_so(tmp_path: Path, breast_cancer) -> None:
    import featureaudit as fa

    result = fa.audit(
        breast_cancer, target="malignant", probes=["solo"], code=[CASES / "scaler_clean.py"]
    )
    assert result.document["code_findings"] == []
    result.write(tmp_path)
    dossier = (tmp_path / "dossier.html").read_text()
    assert "<h2>Training code</h2>" in dossier and "shows none of the patterns" in dossier


def test_scan_with_an_unreadable_code_file_is_one_line_and_writes_nothing(
    tmp_path: Path, breast_cancer
) -> None:
    table = tmp_path / "cancer.csv"
    breast_cancer.to_csv(table, index=False)
    bad = tmp_path / "broken.py"
    bad.write_bytes(b"def f(:\n")
    out = tmp_path / "report"
    args = ["scan", str(table), "--target", "malignant", "--out", str(out), "--code", str(bad)]
    res = CliRunner().invoke(app, args)
    assert res.exit_code == 2
    errors = [ln for ln in res.stderr.splitlines() if ln.strip()]
    assert len(errors) == 1 and "broken.py" in errors[0] and "--code" in errors[0]
    assert not out.exists()


def test_scan_cli_takes_code_repeatedly(tmp_path: Path, breast_cancer) -> None:
    table = tmp_path / "cancer.csv"
    breast_cancer.to_csv(table, index=False)
    script = tmp_path / "train.py"
    script.write_text(SCALED_BEFORE_SPLIT)
    out = tmp_path / "report"
    args = ["scan", str(table), "--target", "malignant", "--out", str(out)]
    res = CliRunner().invoke(
        app, [*args, "--code", str(script), "--code", str(CASES / "smote_leaky.py")]
    )
    assert res.exit_code == 0, res.output
    doc = json.loads((out / "findings.json").read_text())
    assert sorted(f["kind"] for f in doc["code_findings"]) == [
        "fit_before_split",
        "oversampled_before_split",
    ]
    assert len(doc["settings"]["code_files"]) == 2


# ---- the development corpus (benchmarks/code_corpus, labels written with the files) ----------
def test_corpus_check_half_meets_the_bar() -> None:
    # the bar, on the half not used to tune: precision and recall >= 0.9 per kind at
    # medium or above, and the fits on all rows that reach the model found at high
    from code_corpus import findings_of, labels, table

    from featureaudit.vocab.levels import Level

    rows = labels()
    assert len({r["file"] for r in rows}) >= 150
    found, skipped = findings_of()
    assert skipped == []  # no valid script or notebook is skipped
    t = table(rows, found, "check")
    for kind in (
        "fit_before_split",
        "fit_on_heldout",
        "oversampled_before_split",
        "test_reused",
        "selection_on_all_rows",
    ):
        hit, right, n_got, n_want = t[(kind, Level.MEDIUM)]
        assert n_want >= 5 and right / n_got >= 0.9 and hit / n_want >= 0.9, kind
    hit, _, _, n_want = t[("fit_before_split", Level.HIGH)]
    assert hit == n_want


def test_corpus_halves_are_split_by_family() -> None:
    from code_corpus import labels

    halves: dict[str, set[str]] = {}
    for r in labels():
        halves.setdefault(r["family"], set()).add(r["half"])
    assert all(len(h) == 1 for h in halves.values())
    assert {h for hs in halves.values() for h in hs} == {"tune", "check"}


# ---- one leaky and one clean snippet per rule of the rule table ------------------------------
LOAD = (
    "import pandas as pd\n"
    "from sklearn.model_selection import train_test_split\n"
    "df = pd.read_csv('loans.csv')\n"
    "X = df.drop(columns=['late'])\n"
    "y = df['late']\n"
)
FIT = (
    "X_train, X_test, y_train, y_test = train_test_split(X, y)\n"
    "model = LogisticRegression().fit(X_train, y_train)\n"
    "print(model.score(X_test, y_test))\n"
)
RULE_CASES = {
    "rule_sampler": (
        "X, y = SMOTE().fit_resample(X, y)\n" + FIT,
        FIT + "X_r, y_r = SMOTE().fit_resample(X_train, y_train)\n",
    ),
    "rule_resample": (
        "X = resample(X, replace=True, n_samples=900)\n" + FIT,
        "X = resample(X, replace=False, n_samples=900)\n" + FIT,
    ),
    "rule_selector": (
        "X = SelectKBest(k=5).fit_transform(X, y)\n" + FIT,
        FIT + "sel = SelectKBest(k=5).fit(X_train, y_train)\n",
    ),
    "rule_search": (
        "g = GridSearchCV(SVC(), {'C': [1, 10]}).fit(X, y)\n" + FIT.replace("model = ", "m = "),
        "X_train, X_test, y_train, y_test = train_test_split(X, y)\n"
        "g = GridSearchCV(SVC(), {'C': [1, 10]}).fit(X_train, y_train)\n"
        "print(g.score(X_test, y_test))\n",
    ),
    "rule_transformer": (
        "X = StandardScaler().fit_transform(X)\n" + FIT,
        "X = StandardScaler().fit_transform(X)\nmodel = LogisticRegression().fit(X, y)\n",
    ),
    "rule_statistic": (
        "X = X.fillna(X.median())\n" + FIT,
        FIT + "X_train = X_train.fillna(X_train.median())\n",
    ),
    "rule_fit_heldout": (
        FIT + "X_test = StandardScaler().fit_transform(X_test)\n",
        FIT + "X_test = StandardScaler().fit(X_train).transform(X_test)\n",
    ),
    "rule_statistic_heldout": (
        FIT + "X_test = X_test - X_test.mean()\n",
        FIT + "X_test = X_test - X_train.mean()\n",
    ),
    "rule_correlation": (
        "c = df.corr()['late'].abs()\nX = X[c[c > 0.1].index.drop('late')]\n" + FIT,
        "import seaborn as sns\nsns.heatmap(df.corr())\n" + FIT,
    ),
    "rule_score_function": (
        "F, p = f_classif(X, y)\n" + FIT,
        FIT + "F, p = f_classif(X_train, y_train)\n",
    ),
    "rule_early_stop": (
        FIT + "m = XGBClassifier(early_stopping_rounds=9)\n"
        "m.fit(X_train, y_train, eval_set=[(X_test, y_test)])\n",
        FIT + "m = XGBClassifier()\nm.fit(X_train, y_train, eval_set=[(X_test, y_test)])\n",
    ),
    "rule_test_choice": (
        FIT + "best = max([1, 5, 9], key=lambda k: KNeighborsClassifier(k)"
        ".fit(X_train, y_train).score(X_test, y_test))\n",
        FIT + "for k in [1, 5, 9]:\n"
        "    print(k, KNeighborsClassifier(k).fit(X_train, y_train).score(X_test, y_test))\n",
    ),
}


def test_every_rule_has_a_case() -> None:
    from featureaudit.code.audit import RULES

    assert {r.__name__ for r in RULES} == set(RULE_CASES)


@pytest.mark.parametrize("rule", sorted(RULE_CASES))
def test_each_rule_fires_on_its_leak_and_not_on_the_clean_form(tmp_path: Path, rule: str) -> None:
    # our own snippets; the expectation of each is the rule's docstring, written before the rule
    from featureaudit.code import audit as audit_module
    from featureaudit.code.flow import analyse
    from featureaudit.code.parse import read_units

    fn = getattr(audit_module, rule)
    leaky, clean = RULE_CASES[rule]
    for text, want in ((leaky, True), (clean, False)):
        path = tmp_path / f"{rule}_{want}.py"
        path.write_text(LOAD + text)
        flow = analyse(read_units(path))
        ctx = audit_module.Context(flow)
        fired = [f for i, ev in enumerate(flow.events) if (f := fn(ctx, i, ev)) is not None]
        strong = [f for f in fired if f.level >= Level.MEDIUM]
        assert bool(strong) is want, (rule, want, [f.summary for f in fired])


def test_fit_on_all_rows_is_high_when_it_reaches_the_model_and_low_when_only_shown(
    tmp_path: Path,
) -> None:
    reach = tmp_path / "reach.py"
    reach.write_text(LOAD + "X = MinMaxScaler().fit_transform(X)\n" + FIT)
    shown = tmp_path / "shown.py"
    shown.write_text(LOAD + "print(OneHotEncoder().fit_transform(df[['city']]))\n" + FIT)
    assert [(f.kind, f.level) for f in audit_file(reach)[0]] == [("fit_before_split", Level.HIGH)]
    assert [f.level for f in audit_file(shown)[0]] == [Level.LOW]


def test_positional_sides_are_read_from_use_not_position(tmp_path: Path) -> None:
    # the first slice is the validation side here: a model is fitted on the second
    text = (
        "import pandas as pd\ndf = pd.read_csv('t.csv')\n"
        "valid = df.iloc[1:2000]\ntrain = df.iloc[2001:]\n"
        "sc = StandardScaler()\na = sc.fit_transform(train[['x']])\n"
        "model = Ridge().fit(a, train['y'])\n"
        "b = {}\n"
    )
    path = tmp_path / "pos.py"
    path.write_text(text.replace("b = {}", "b = sc.transform(valid[['x']])"))
    assert audit_file(path)[0] == []
    path.write_text(text.replace("b = {}", "b = StandardScaler().fit_transform(valid[['x']])"))
    assert [(f.kind, f.line) for f in audit_file(path)[0]] == [("fit_on_heldout", 8)]


# ---- notebooks as written, and inputs the parser cannot take ---------------------------------
def _notebook(path: Path, sources: list[object]) -> Path:
    cells = [{"cell_type": "code", "metadata": {}, "outputs": [], "source": s} for s in sources]
    path.write_text(
        json.dumps({"nbformat": 4, "nbformat_minor": 5, "metadata": {}, "cells": cells})
    )
    return path


def test_notebook_percent_continuation_question_mark_and_number_cells_are_audited(
    tmp_path: Path,
) -> None:
    nb = _notebook(
        tmp_path / "nb.ipynb",
        [
            ["%matplotlib inline\n", LOAD, "X.describe?\n"],
            ["print('rows: %d'\n", "      % len(X))\n", "q = '''is it high?\n", "no'''\n"],
            3,
            None,
            ["%%bash\n", "ls -la | head\n"],
            ["%%time\n", "X = StandardScaler().fit_transform(X)\n", FIT],
        ],
    )
    found, units = audit_file(nb)
    assert units == 6
    assert [(f.cell, f.line, f.kind) for f in found] == [(6, 2, "fit_before_split")]


@pytest.mark.parametrize(
    "text",
    ["x = " + "+".join(["1"] * 100_000) + "\n", "x = a" + ".b" * 50_000 + "\n"],
    ids=["100k-terms", "50k-attributes"],
)
def test_expression_too_deep_is_one_line_exit_2(tmp_path: Path, text: str) -> None:
    deep = tmp_path / "deep.py"
    deep.write_text(text)
    res = CliRunner().invoke(app, ["code", str(deep), "--out", str(tmp_path / "o")])
    assert res.exit_code == 2, res.output
    errors = [ln for ln in res.stderr.splitlines() if ln.strip()]
    assert len(errors) == 1 and "deep.py" in errors[0] and "nested too deeply" in errors[0]


def test_expression_deep_for_the_walk_is_still_audited(tmp_path: Path) -> None:
    # parses, but is deeper than the walk's recursion: that statement is left out, the rest read
    script = tmp_path / "wide.py"
    script.write_text(
        LOAD + "z = " + "+".join(["X"] * 2500) + "\nX = StandardScaler().fit_transform(X)\n" + FIT
    )
    assert [f.kind for f in audit_file(script)[0]] == ["fit_before_split"]


@pytest.mark.parametrize("where", ["file", "under-a-file"])
def test_out_that_is_not_a_writable_folder_is_one_line_exit_2(tmp_path: Path, where: str) -> None:
    blocker = tmp_path / "taken"
    blocker.write_text("keep me\n")
    out = blocker if where == "file" else blocker / "sub"
    res = CliRunner().invoke(app, ["code", str(CASES / "scaler_leaky.py"), "--out", str(out)])
    assert res.exit_code == 2
    errors = [ln for ln in res.stderr.splitlines() if ln.strip()]
    assert len(errors) == 1 and "--out" in errors[0] and "Traceback" not in res.output
    assert blocker.read_text() == "keep me\n"


def test_frames_of_two_sources_joined_then_sliced_apart_are_one_table(tmp_path: Path) -> None:
    # train.csv and test.csv concatenated, filled with the joined medians, sliced apart again:
    # the statistic saw the rows the slice later holds out
    script = tmp_path / "joined.py"
    script.write_text(
        "import pandas as pd\ntrain = pd.read_csv('train.csv')\ntest = pd.read_csv('test.csv')\n"
        "y = train['Survived']\nfull = pd.concat([train.drop(columns=['Survived']), test])\n"
        "full = full.fillna(full.median())\nX = full[: len(train)]\nX_sub = full[len(train) :]\n"
        "model = RandomForestClassifier().fit(X, y)\npred = model.predict(X_sub)\n"
    )
    assert [(f.kind, f.line, f.level) for f in audit_file(script)[0]] == [
        ("fit_before_split", 6, Level.HIGH)
    ]


def test_a_lone_time_mask_filters_and_two_split_with_sides_read_from_use(tmp_path: Path) -> None:
    # df[df.year > 2000] alone keeps recent rows (no held-out part); with its complement it
    # is a split by time, and the side the model is fitted on is the training side
    head = "import pandas as pd\ndf = pd.read_csv('sales.csv')\n"
    lone = tmp_path / "lone.py"
    lone.write_text(
        head + "recent = df[df.year > 2000]\nsc = StandardScaler().fit(recent[['x']])\n"
        "m = Ridge().fit(sc.transform(recent[['x']]), recent['y'])\n"
    )
    assert audit_file(lone)[0] == []
    two = "old = df[df.year <= 2000]\nrecent = df[df.year > 2000]\n"
    for model_on, refit_on in (("old", "recent"), ("recent", "old")):
        path = tmp_path / f"{model_on}.py"
        path.write_text(
            head + two + f"m = Ridge().fit({model_on}[['x']], {model_on}['y'])\n"
            f"z = StandardScaler().fit_transform({refit_on}[['x']])\n"
        )
        assert [(f.kind, f.line) for f in audit_file(path)[0]] == [("fit_on_heldout", 6)]


def test_a_loop_over_frames_visits_each_frame(tmp_path: Path) -> None:
    # the fit on the test frame happens on the loop's last pass, with or without names
    for head in (
        "for frame in [X_train, X_test]:\n",
        "for name, frame in [('a', X_train), ('b', X_test)]:\n",
    ):
        path = tmp_path / "frames.py"
        path.write_text(LOAD + FIT + head + "    frame = StandardScaler().fit_transform(frame)\n")
        assert [(f.kind, f.line) for f in audit_file(path)[0]] == [("fit_on_heldout", 10)]
