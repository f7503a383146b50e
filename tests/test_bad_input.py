"""Bad input, grouped by what is wrong: one clear line, exit code 2, nothing written or lost."""

import numpy as np
import pandas as pd
import pytest
from typer.testing import CliRunner

import featureaudit as fa
from featureaudit.cli import app
from featureaudit.errors import (
    ColumnNotFound,
    DictionaryError,
    DurationError,
    FeatureAuditError,
    InputFileError,
    SettingError,
    TargetError,
)

runner = CliRunner()


def cli(*args):
    result = runner.invoke(app, [str(a) for a in args], prog_name="featureaudit")
    return result


def assert_one_line_exit_2(result, *fragments):
    assert result.exit_code == 2, (result.exit_code, result.stdout, result.stderr)
    assert result.stderr.count("\n") == 1 and "Traceback" not in result.stderr, result.stderr
    for fragment in fragments:
        assert fragment in result.stderr, (fragment, result.stderr)


@pytest.fixture()
def good_csv(tmp_path):
    rng = np.random.default_rng(0)
    frame = pd.DataFrame(
        {
            "a": rng.normal(size=200),
            "b": rng.integers(0, 5, 200),
            "when": pd.date_range("2025-01-01", periods=200, freq="D"),
            "y": rng.integers(0, 2, 200),
        }
    )
    path = tmp_path / "good.csv"
    frame.to_csv(path, index=False)
    return path


# --- files that cannot be read ------------------------------------------------------------
def test_missing_file(tmp_path):
    assert_one_line_exit_2(
        cli("scan", tmp_path / "none.csv", "--target", "y"), "none.csv", "does not exist"
    )


def test_unknown_suffix(tmp_path):
    (tmp_path / "t.xlsx").write_text("x")
    assert_one_line_exit_2(cli("scan", tmp_path / "t.xlsx"), "t.xlsx", ".parquet")


def test_corrupt_parquet(tmp_path):
    (tmp_path / "t.parquet").write_bytes(b"not parquet at all")
    assert_one_line_exit_2(cli("scan", tmp_path / "t.parquet"), "t.parquet", "cannot read")


def test_empty_file_and_header_only(tmp_path):
    (tmp_path / "empty.csv").write_text("")
    assert_one_line_exit_2(cli("scan", tmp_path / "empty.csv"), "empty.csv", "empty")
    (tmp_path / "header.csv").write_text("a,b,y\n")
    assert_one_line_exit_2(
        cli("scan", tmp_path / "header.csv", "--target", "y"), "header.csv", "no rows"
    )


def test_duplicate_column_names(tmp_path):
    (tmp_path / "dup.csv").write_text("a,a,y\n1,2,0\n3,4,1\n")
    assert_one_line_exit_2(cli("scan", tmp_path / "dup.csv"), "duplicate column names", "'a'")
    frame = pd.DataFrame([[1, 2]], columns=["a", "a"])
    with pytest.raises(InputFileError, match="duplicate"):
        fa.audit(frame)


def test_api_rejects_other_objects():
    with pytest.raises(InputFileError, match="DataFrame"):
        fa.audit([1, 2, 3])


# --- columns, flags and settings --------------------------------------------------------
def test_unknown_target_lists_the_columns(good_csv):
    assert_one_line_exit_2(
        cli("scan", good_csv, "--target", "late"), "'late'", "columns are", "--target"
    )


@pytest.mark.parametrize("flag", ["--split-column", "--label-time", "--entity", "--cutoff-time"])
def test_unknown_column_flags(good_csv, flag):
    assert_one_line_exit_2(cli("scan", good_csv, "--target", "y", flag, "nope"), flag, "'nope'")


def test_conflicting_flags(good_csv, tmp_path):
    assert_one_line_exit_2(
        cli("scan", good_csv, "--test", good_csv, "--split-column", "b"), "--test", "--split-column"
    )
    assert_one_line_exit_2(
        cli("scan", good_csv, "--label-time", "when", "--cutoff-time", "when", "--horizon", "3d"),
        "--horizon",
    )


def test_train_value_not_found(good_csv):
    assert_one_line_exit_2(
        cli("scan", good_csv, "--target", "y", "--split-column", "b", "--train-value", "train"),
        "--train-value",
        "'b'",
    )


@pytest.mark.parametrize(
    "args, fragment",
    [
        (["--task", "regression"], "--task"),
        (["--fail-at", "severe"], "--fail-at"),
        (["--seed", "abc"], "--seed"),
    ],
)
def test_bad_setting_values(good_csv, args, fragment):
    assert_one_line_exit_2(cli("scan", good_csv, "--target", "y", *args), fragment)


def test_bad_horizon_and_horizon_without_label_time(good_csv):
    assert_one_line_exit_2(
        cli("scan", good_csv, "--label-time", "when", "--horizon", "a month"),
        "--horizon",
        "'a month'",
    )
    assert_one_line_exit_2(cli("scan", good_csv, "--horizon", "30d"), "--horizon", "--label-time")
    with pytest.raises(DurationError):
        fa.audit(pd.read_csv(good_csv), label_time="when", horizon="soon")


# --- the target ----------------------------------------------------------------------
def test_all_missing_target(tmp_path):
    (tmp_path / "t.csv").write_text("a,y\n1,\n2,\n3,\n")
    assert_one_line_exit_2(cli("scan", tmp_path / "t.csv", "--target", "y"), "'y'", "no values")


def test_one_class_target_is_reported_not_crashed():
    frame = pd.DataFrame({"a": np.arange(50.0), "y": 1})
    result = fa.audit(frame, target="y")
    assert any("single value" in w for w in result.document["warnings"])
    assert any(s["probe"] == "solo" for s in result.document["skipped"])


def test_task_that_does_not_fit_the_target():
    frame = pd.DataFrame({"a": np.arange(30.0), "y": ["a", "b", "c"] * 10})
    with pytest.raises(TargetError, match="numeric"):
        fa.audit(frame, target="y", task="numeric")
    with pytest.raises(TargetError, match="multiclass"):
        fa.audit(frame, target="y", task="binary")


# --- the dictionary ------------------------------------------------------------------
def test_malformed_role_names_file_line_and_value(good_csv, tmp_path):
    d = tmp_path / "dict.csv"
    d.write_text("column,role\na,feature\nb,predictor\n")
    assert_one_line_exit_2(
        cli("scan", good_csv, "--dictionary", d), "dict.csv", "line 3", "'predictor'"
    )


def test_malformed_known_at(tmp_path):
    from featureaudit.dictionary import parse_dictionary

    with pytest.raises(DictionaryError, match="line 2.*'-30 fortnights'"):
        parse_dictionary("column,known_at\na,-30 fortnights\n", source="d.csv")


def test_dictionary_without_column_header_and_duplicate_rows():
    from featureaudit.dictionary import parse_dictionary

    with pytest.raises(DictionaryError, match="'column' header"):
        parse_dictionary("name,role\na,feature\n")
    with pytest.raises(DictionaryError, match="line 3.*already"):
        parse_dictionary("column\na\na\n")


def test_missing_dictionary_file(good_csv, tmp_path):
    assert_one_line_exit_2(cli("scan", good_csv, "--dictionary", tmp_path / "d.csv"), "d.csv")


# --- times -----------------------------------------------------------------------------
def test_unparseable_label_time(tmp_path):
    (tmp_path / "t.csv").write_text("a,at,y\n1,2025-01-01,0\n2,someday,1\n3,2025-01-03,0\n")
    assert_one_line_exit_2(
        cli("scan", tmp_path / "t.csv", "--target", "y", "--label-time", "at"), "'at'", "someday"
    )


def test_mixed_zones_in_label_time():
    frame = pd.DataFrame(
        {
            "a": [1, 2, 3],
            "at": ["2025-01-01T10:00:00+02:00", "2025-01-02T10:00:00", "2025-01-03T10:00:00"],
            "y": [0, 1, 0],
        }
    )
    with pytest.raises(SettingError, match="'at' mixes times with a time zone"):
        fa.audit(frame, target="y", label_time="at")


def test_epoch_label_time_is_understood():
    frame = pd.DataFrame(
        {"a": np.arange(40.0), "at": 1.7e9 + np.arange(40) * 86400, "y": [0, 1] * 20}
    )
    result = fa.audit(frame, target="y", label_time="at")
    assert result.document["dataset"]["label_time"] == "at"


# --- odd columns that must not crash ---------------------------------------------------
def test_mixed_types_constant_and_awkward_names():
    rng = np.random.default_rng(2)
    n = 300
    frame = pd.DataFrame(
        {
            "mixed": [1, "two", 3.0, None] * (n // 4),
            "constant": 7,
            "<script>alert(1)</script>": rng.normal(size=n),
            "tab\tand\x07bell": rng.normal(size=n),
            "y": rng.integers(0, 2, n),
        }
    )
    result = fa.audit(frame, target="y")
    assert set(result.columns["column"]) >= {"mixed", "constant", "<script>alert(1)</script>"}


def test_heldout_table_with_other_columns(tmp_path):
    rng = np.random.default_rng(3)
    train = pd.DataFrame(
        {"a": rng.normal(size=100), "b": rng.normal(size=100), "y": rng.integers(0, 2, 100)}
    )
    extra = train.drop(columns="y").assign(c=1.0)
    result = fa.audit(train, test=extra, target="y")
    assert any("'c'" in w for w in result.document["warnings"])
    with pytest.raises(ColumnNotFound, match="lacks columns \\['b'\\]"):
        fa.audit(train, test=train.drop(columns="b"), target="y")


def test_findings_file_of_another_kind(tmp_path):
    (tmp_path / "f.json").write_text('{"schema": "something/2", "columns": []}')
    assert_one_line_exit_2(cli("droplist", tmp_path / "f.json"), "f.json", "schema")
    (tmp_path / "g.json").write_text("{not json")
    assert_one_line_exit_2(cli("diff", tmp_path / "g.json", tmp_path / "f.json"), "g.json")


def test_unwritable_output_folder(good_csv, tmp_path):
    blocker = tmp_path / "file"
    blocker.write_text("x")
    assert_one_line_exit_2(
        cli("scan", good_csv, "--target", "y", "--out", blocker / "sub"), "--out"
    )


def test_every_error_is_a_featureaudit_error_and_a_builtin():
    for cls, builtin in [
        (ColumnNotFound, KeyError),
        (DictionaryError, ValueError),
        (InputFileError, OSError),
        (SettingError, ValueError),
    ]:
        assert issubclass(cls, FeatureAuditError) and issubclass(cls, builtin)
    assert str(ColumnNotFound("column 'x' missing")) == "column 'x' missing"
