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


# === inputs that used to lie, and text encodings (issue 11 items 4 and 5) ==================
def _frame(n=300, seed=0):
    rng = np.random.default_rng(seed)
    return pd.DataFrame(
        {"a": rng.normal(size=n), "b": rng.integers(0, 5, n), "y": rng.integers(0, 2, n)}
    )


def test_non_finite_target_rows_are_unlabelled_and_counted():
    frame = _frame().astype({"y": float})
    frame.loc[:4, "y"] = np.inf
    frame.loc[5, "y"] = -np.inf
    for task in (None, "numeric"):
        t = fa.table.build_table(frame, target="y", task=task)
        assert t.labelled.sum() == len(frame) - 6  # inf no longer a third class
        assert any("6 rows without a finite value" in w for w in t.warnings), t.warnings
    assert fa.table.build_table(frame, target="y").classes == ["0.0", "1.0"]


def test_label_variants_warn_and_merge_only_when_told():
    frame = _frame()
    labels = np.array(["yes", " yes", "YES ", "no", "no", "No"])
    frame["y"] = labels[np.arange(len(frame)) % 6]
    kept = fa.table.build_table(frame, target="y")
    assert len(kept.classes) == 5 and any("--normalise-labels" in w for w in kept.warnings)
    with pytest.raises(TargetError, match="--normalise-labels"):
        fa.table.build_table(frame, target="y", task="binary")
    merged = fa.table.build_table(frame, target="y", task="binary", normalise_labels=True)
    # the most frequent spelling names the class (ties: sorted order, trimmed); counts, not
    # row order, decide
    assert merged.classes == ["no", "yes"] and np.bincount(merged.y).tolist() == [150, 150]
    shuffled = frame.sample(frac=1, random_state=1)
    again = fa.table.build_table(shuffled, target="y", task="binary", normalise_labels=True)
    assert again.classes == merged.classes


def test_datetime_target_points_to_label_time(tmp_path):
    frame = _frame()
    frame["y"] = pd.date_range("2025-01-01", periods=len(frame)).strftime("%Y-%m-%d")
    frame.to_csv(tmp_path / "t.csv", index=False)
    result = cli("scan", tmp_path / "t.csv", "--target", "y", "--out", tmp_path / "r")
    assert_one_line_exit_2(result, "a datetime cannot be a target", "did you mean --label-time?")


def test_heldout_target_coded_differently(tmp_path):
    _frame().to_csv(tmp_path / "train.csv", index=False)
    test = _frame(100, seed=1)
    test["y"] = np.where(test["y"] == 1, "pos", "neg")
    test.to_csv(tmp_path / "test.csv", index=False)
    args = ["scan", tmp_path / "train.csv", "--test", tmp_path / "test.csv", "--target", "y"]
    result = cli(*args, "--out", tmp_path / "r")
    assert_one_line_exit_2(result, "coded differently", "(0, 1)", "(neg, pos)")
    # a numeric target with continuous values is not a coding: no false alarm
    train, held = _frame().assign(y=lambda f: f["a"] * 2), _frame(50, 1).assign(y=0.5)
    assert fa.table.build_table(train, test=held, target="y").heldout_rows == 50


def test_one_bad_date_among_thousands_is_counted_not_dropped(tmp_path):
    rng = np.random.default_rng(0)
    n = 3000
    decided = pd.Timestamp("2025-01-01") + pd.to_timedelta(rng.integers(0, 300, n), unit="D")
    frame = pd.DataFrame(
        {
            "a": rng.normal(size=n),
            "decided": decided.strftime("%Y-%m-%d"),
            "paid": (decided + pd.Timedelta(days=5)).strftime("%Y-%m-%d"),
            "y": rng.integers(0, 2, n),
        }
    )
    frame.loc[17, "paid"] = "not a date"
    frame.to_csv(tmp_path / "t.csv", index=False)
    result = fa.audit(str(tmp_path / "t.csv"), target="y", label_time="decided", probes=["timing"])
    paid = next(c for c in result.document["columns"] if c["column"] == "paid")
    assert paid["level"] == "critical"  # recorded 5 days after the label time
    detail = paid["evidence"][0]["detail"]
    assert detail["values_not_dates"] == 1 and detail["example_not_date"] == "not a date"
    assert any("1 value is not a date" in w for w in result.document["warnings"])


@pytest.mark.parametrize("year", [1600, 2300])
def test_years_outside_the_nanosecond_range(tmp_path, year):
    frame = _frame()
    frame["when"] = [f"{year}-01-{1 + i % 28:02d}" for i in range(len(frame))]
    frame["decided"] = pd.date_range("2025-01-01", periods=len(frame)).strftime("%Y-%m-%d")
    frame.to_csv(tmp_path / "t.csv", index=False)
    for label in ("decided", "when"):  # as a feature, then as the label time itself
        result = cli(
            "scan", tmp_path / "t.csv", "--target", "y", "--label-time", label,
            "--out", tmp_path / label,
        )  # fmt: skip
        assert result.exit_code == 0, result.stderr
    doc = fa.findings.load_findings(tmp_path / "decided" / "findings.json").document
    when = next(c for c in doc["columns"] if c["column"] == "when")
    expected = "critical" if year == 2300 else "none"  # 2300 is long after every label time
    assert when["level"] == expected, when


def test_label_time_in_several_formats():
    frame = _frame().assign(decided=["2025-01-05", "05/01/2025", "Jan 5 2025"] * 100)
    with pytest.raises(SettingError, match="several date formats"):
        fa.table.build_table(frame, target="y", label_time="decided")
    zoned = _frame().assign(decided=["2025-01-05", "2025-01-05T10:00:00+01:00", "05/01/2025"] * 100)
    with pytest.raises(SettingError, match="several date formats"):
        fa.table.build_table(zoned, target="y", label_time="decided")


def test_horizon_longer_than_a_timedelta(good_csv, tmp_path):
    for horizon in ("999999999d", "P999999999D"):
        result = cli(
            "scan", good_csv, "--target", "y", "--label-time", "when", "--horizon", horizon,
            "--out", tmp_path / "r",
        )  # fmt: skip
        assert_one_line_exit_2(result, "--horizon", horizon)
    # 290 years still fits: the cutoff lands in 1735, which microsecond times hold
    t = fa.table.build_table(good_csv, target="y", label_time="when", horizon="106000d")
    assert t.cutoff_time.min().year == 1734


def test_newline_in_a_column_name_is_quoted(tmp_path):
    frame = _frame()
    frame["leak\nx"] = frame["y"] + np.random.default_rng(1).normal(0, 0.01, len(frame))
    frame.to_parquet(tmp_path / "t.parquet")
    result = cli("scan", tmp_path / "t.parquet", "--target", "y", "--out", tmp_path / "r")
    assert result.exit_code == 0, result.stderr
    assert (tmp_path / "r" / "droplist.txt").read_text() == '"leak\\nx"\n'
    assert '  "leak\\nx": ' in result.stdout
    again = cli("droplist", tmp_path / "r" / "findings.json")
    assert again.stdout == '"leak\\nx"\n'


def test_pyarrow_index_column_is_audited():
    import pyarrow as pa

    frame = _frame().assign(key=[f"k{i % 40}" for i in range(300)]).set_index("key")
    result = fa.audit(pa.Table.from_pandas(frame), target="y")
    assert "key" in list(result.columns["column"])
    unnamed = fa.audit(frame.reset_index(drop=True).iloc[10:], target="y")  # row positions only
    assert "index" not in list(unnamed.columns["column"])


def test_columns_one_and_text_one_clash():
    frame = pd.DataFrame({1: [1, 2, 3] * 20, "1": [4, 5, 6] * 20, "y": [0, 1] * 30})
    with pytest.raises(InputFileError, match="columns 1 and '1'"):
        fa.audit(frame, target="y")


def test_drafted_dictionary_reads_back_unchanged(tmp_path):
    names = ["", " leak ", "a,b", 'q"t', '"quoted"', "two\nlines", "y"]
    frame = pd.DataFrame({n: [1.5, 2.5] * 30 for n in names}).assign(y=[0, 1] * 30)
    frame.to_parquet(tmp_path / "t.parquet")
    drafted = cli("dictionary", tmp_path / "t.parquet", "--target", "y")
    assert drafted.exit_code == 0, drafted.stderr
    (tmp_path / "d.csv").write_text(drafted.stdout)
    back = fa.dictionary.read_dictionary(tmp_path / "d.csv")
    assert list(back.entries) == names and back.entries["y"].role == "target"
    table = fa.table.build_table(tmp_path / "t.parquet", dictionary=tmp_path / "d.csv")
    assert table.target == "y" and not table.warnings


ACCENTED = pd.DataFrame({"café": ["Zürich", "Genève", "Köln"] * 40, "y": [0, 1] * 60})


@pytest.mark.parametrize("encoding", ["utf-8", "utf-8-sig", "utf-16", "utf-16-be"])
def test_text_with_a_bom_or_in_utf8_is_read(tmp_path, encoding):
    path = tmp_path / "t.csv"
    text = ACCENTED.to_csv(index=False)
    bom = "\ufeff" if encoding == "utf-16-be" else ""  # utf-16 writes its own BOM
    path.write_bytes((bom + text).encode(encoding))
    got = fa.io.read_table(path)
    assert list(got.columns) == ["café", "y"] and got["café"].astype(str).iloc[1] == "Genève"
    drafted = cli("dictionary", path)
    assert drafted.exit_code == 0 and drafted.stdout.splitlines()[1].startswith("café,")
    d = tmp_path / "d.csv"
    d.write_bytes((bom + "column,role\ny,target\n").encode(encoding))
    assert fa.dictionary.read_dictionary(d).entries["y"].role == "target"


def test_latin1_needs_the_encoding_flag(tmp_path):
    path = tmp_path / "t.csv"
    ACCENTED.to_csv(path, index=False, encoding="latin-1")
    for args in (["scan", path, "--target", "y", "--out", tmp_path / "r"], ["dictionary", path]):
        assert_one_line_exit_2(cli(*args), "not UTF-8", "--encoding")
        ok = cli(*args, "--encoding", "latin-1")
        assert ok.exit_code == 0, ok.stderr
    assert ok.stdout.splitlines()[1].startswith("café,")  # the drafted dictionary
    columns = fa.findings.load_findings(tmp_path / "r" / "findings.json").document["columns"]
    assert "café" in [c["column"] for c in columns]
    assert_one_line_exit_2(cli("dictionary", path, "--encoding", "klingon"), "--encoding")
    d = tmp_path / "d.csv"
    d.write_bytes("column,role\ncafé,feature\ny,target\n".encode("latin-1"))
    ACCENTED.to_csv(tmp_path / "u.csv", index=False)  # UTF-8 table, Latin-1 dictionary
    bad = cli("scan", tmp_path / "u.csv", "--dictionary", d, "--out", tmp_path / "q")
    assert_one_line_exit_2(bad, "d.csv", "not UTF-8", "--encoding")
    good = fa.table.build_table(path, dictionary=d, encoding="latin-1")
    assert good.target == "y" and good.roles["café"] == "feature"


def test_a_folder_where_a_file_is_expected(good_csv, tmp_path):
    folder = tmp_path / "folder"
    folder.mkdir()
    for flag in ("--dictionary", "--config"):
        result = cli("scan", good_csv, "--target", "y", flag, folder, "--out", tmp_path / "r")
        assert_one_line_exit_2(result, "is a folder, not a file", flag)
    assert_one_line_exit_2(cli("droplist", folder), "is a folder, not a file")
    assert_one_line_exit_2(cli("scan", folder), "folder", "holds no .parquet files")
