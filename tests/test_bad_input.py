"""Bad input, grouped by what is wrong: one clear line, exit code 2, nothing written or lost."""

import numpy as np
import pandas as pd
import pytest
from typer.testing import CliRunner

import featureaudit as fa
import featureaudit.judge.findings
import featureaudit.load.dictionary
import featureaudit.load.io
import featureaudit.load.table
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


@pytest.mark.parametrize(
    "flag", ["--split-column", "--label-time", "--entity", "--cutoff-time", "--order"]
)
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
    from featureaudit.load.dictionary import parse_dictionary

    with pytest.raises(DictionaryError, match="line 2.*'-30 fortnights'"):
        parse_dictionary("column,known_at\na,-30 fortnights\n", source="d.csv")


def test_dictionary_without_column_header_and_duplicate_rows():
    from featureaudit.load.dictionary import parse_dictionary

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


# --- settings checked at the edge, once (issue 11 item 1) --------------------------------
@pytest.mark.parametrize(
    "line, fragment",
    [
        ("seed = 1.7", "1.7"),
        ('seed = "abc"', "'abc'"),
        ("bins = 3.5", "3.5"),
        ('min_rows = "many"', "'many'"),
        ('folds = "five"', "'five'"),
        ('split_column = ["split"]', "['split']"),
        ('target = ["y"]', "--target"),
        ("fail_at_impact = true", "--fail-at-impact"),
    ],
)
def test_bad_config_values_stop_before_any_work(good_csv, tmp_path, line, fragment):
    cfg = tmp_path / "c.toml"
    cfg.write_text(line + "\n")
    out = tmp_path / "r"
    result = cli("scan", good_csv, "--config", cfg, "--out", out)
    key = line.split(" ")[0]
    assert_one_line_exit_2(result, fragment, f"config key {key}", "must be")
    assert not out.exists()


@pytest.mark.parametrize(
    "kwargs, fragment",
    [
        ({"folds": 2.5}, "folds"),
        ({"folds": "five"}, "folds"),
        ({"bins": 3.5}, "bins"),
        ({"min_rows": "many"}, "min_rows"),
        ({"seed": 1.7}, "seed"),
        ({"seed": "abc"}, "seed"),
        ({"seed": None}, "seed"),
        ({"n_jobs": True}, "n_jobs"),
        ({"share_tolerance": "0.1"}, "share_tolerance"),
        ({"time_tolerance": 3}, "time_tolerance"),
    ],
)
def test_settings_reject_wrong_types_as_value_and_type_errors(kwargs, fragment):
    from featureaudit.load.settings import Settings

    with pytest.raises(SettingError, match=fragment) as info:
        Settings(**kwargs)
    assert isinstance(info.value, ValueError) and isinstance(info.value, TypeError)


@pytest.mark.parametrize("seed", [-1, 2**32, 2**64 + 5, np.int64(7)])
def test_any_whole_seed_is_mapped_not_rejected(seed):
    from featureaudit.load.settings import SEED_SPAN, Settings

    mapped = Settings(seed=seed).seed
    assert type(mapped) is int and 0 <= mapped < SEED_SPAN
    np.random.default_rng(mapped)  # reference: numpy takes any non-negative int
    assert Settings(seed=seed).seed == mapped  # the same seed maps the same way


def test_cli_seeds_outside_32_bits_run(good_csv, tmp_path):
    for seed in ("-1", "4294967296"):
        result = cli("scan", good_csv, "--target", "y", "--seed", seed, "--out", tmp_path / seed)
        assert result.exit_code == 0, result.stderr


@pytest.mark.parametrize(
    "kwargs, fragment",
    [
        ({"target": ["t"]}, "target"),
        ({"split_column": ["split"]}, "split_column"),
        ({"settings": {"folds": 3}}, "Settings"),
        ({"task": "regression"}, "task"),
        ({"dictionary": 3}, "dictionary"),
        ({"probes": "solo"}, "probes"),
        ({"seed": 1.5}, "seed"),
    ],
)
def test_api_rejects_bad_arguments_before_reading(kwargs, fragment):
    frame = pd.DataFrame({"a": np.arange(40.0), "y": [0, 1] * 20})
    with pytest.raises(SettingError, match=fragment) as info:
        fa.audit(frame, **kwargs)
    assert isinstance(info.value, TypeError) and isinstance(info.value, ValueError)


def test_api_takes_a_dataframe_dictionary_like_its_csv(tmp_path):
    rng = np.random.default_rng(4)
    frame = pd.DataFrame({"a": rng.normal(size=120), "k": np.arange(120), "y": [0, 1] * 60})
    ddf = pd.DataFrame({"column": ["k", "y"], "role": ["ignore", "target"], "known_at": ""})
    ddf.to_csv(tmp_path / "d.csv", index=False)
    from_frame = fa.audit(frame, dictionary=ddf)
    from_csv = fa.audit(frame, dictionary=tmp_path / "d.csv")
    assert from_frame.document["dataset"]["target"] == "y"
    assert list(from_frame.columns["column"]) == list(from_csv.columns["column"])
    assert "k" not in set(from_frame.columns["column"])


# --- the report is one unit (issue 11 item 3) --------------------------------------------
REPORT = {
    "dossier.html": "<p>new</p>",
    "findings.json": "{}",
    "droplist.txt": "",
    "summary.md": "#",
}


def _earlier_report(out):
    out.mkdir()
    for name in REPORT:
        (out / name).write_text(f"earlier {name}")


def _assert_earlier_and_no_leftovers(out):
    assert {p.name: p.read_text() for p in out.iterdir()} == {
        name: f"earlier {name}" for name in REPORT
    }
    assert [p.name for p in out.parent.iterdir() if p.name.startswith(".")] == []


def test_write_replaces_the_whole_folder(tmp_path):
    from featureaudit.render.writer import write_files

    out = tmp_path / "r"
    _earlier_report(out)
    write_files(out, REPORT)
    assert {p.name: p.read_text() for p in out.iterdir()} == REPORT
    assert sorted(p.name for p in tmp_path.iterdir()) == ["r"]


def test_full_disk_leaves_the_earlier_report(tmp_path, monkeypatch):
    import builtins
    import errno

    from featureaudit.render import writer

    out = tmp_path / "r"
    _earlier_report(out)
    real_open, calls = builtins.open, []

    def open_until_full(path, *args, **kwargs):
        calls.append(path)
        if len(calls) == 3:
            raise OSError(errno.ENOSPC, "No space left on device")
        return real_open(path, *args, **kwargs)

    monkeypatch.setattr(writer, "open", open_until_full, raising=False)
    with pytest.raises(InputFileError, match="No space left.*earlier report is unchanged"):
        writer.write_files(out, REPORT)
    _assert_earlier_and_no_leftovers(out)


def test_a_folder_that_cannot_be_swapped_in_leaves_the_earlier_report(tmp_path, monkeypatch):
    import errno

    from featureaudit.render import writer

    out = tmp_path / "r"
    _earlier_report(out)
    real_rename = writer.os.rename

    def refuse_the_new_folder(src, dst):
        if ".new-" in str(src):
            raise OSError(errno.EBUSY, "Device or resource busy")
        return real_rename(src, dst)

    monkeypatch.setattr(writer.os, "rename", refuse_the_new_folder)
    with pytest.raises(InputFileError, match="busy"):
        writer.write_files(out, REPORT)
    _assert_earlier_and_no_leftovers(out)


def test_a_folder_with_other_files_keeps_them_and_is_all_or_nothing(tmp_path, monkeypatch):
    import errno

    from featureaudit.render import writer

    out = tmp_path / "r"
    _earlier_report(out)
    (out / "notes.txt").write_text("mine")
    real_replace, done = writer.os.replace, []

    def fail_third(src, dst):
        done.append(dst)
        if len(done) == 3:
            raise OSError(errno.EACCES, "Permission denied")
        return real_replace(src, dst)

    monkeypatch.setattr(writer.os, "replace", fail_third)
    with pytest.raises(InputFileError, match="Permission denied"):
        writer.write_files(out, REPORT)
    (out / "notes.txt").unlink()
    _assert_earlier_and_no_leftovers(out)
    (out / "notes.txt").write_text("mine")
    monkeypatch.setattr(writer.os, "replace", real_replace)
    writer.write_files(out, REPORT)
    assert (out / "notes.txt").read_text() == "mine" and (out / "summary.md").read_text() == "#"


def test_an_out_path_that_is_a_file_is_refused(tmp_path):
    from featureaudit.render.writer import write_files

    (tmp_path / "f").write_text("x")
    with pytest.raises(InputFileError, match="is a file"):
        write_files(tmp_path / "f", REPORT)
    assert (tmp_path / "f").read_text() == "x"


# --- findings files from elsewhere (issue 11 item 6) -------------------------------------
@pytest.mark.parametrize(
    "entry, fragment",
    [
        ({"score": 0.5, "level": "high"}, "no text 'column'"),
        ({"column": "a", "score": "high", "level": "high"}, "score 'high'"),
        ({"column": "a", "score": 0.5, "level": "severe"}, "level 'severe'"),
        ("a", "is a str"),
    ],
)
def test_findings_with_a_malformed_entry_exit_2_naming_it(tmp_path, entry, fragment):
    import json

    doc = {"schema": "featureaudit.findings/2", "columns": [entry], "dataset_findings": []}
    (tmp_path / "f.json").write_text(json.dumps(doc))
    good = {**doc, "columns": []}
    (tmp_path / "g.json").write_text(json.dumps(good))
    assert_one_line_exit_2(cli("droplist", tmp_path / "f.json"), "columns[0]", fragment)
    assert_one_line_exit_2(cli("diff", tmp_path / "g.json", tmp_path / "f.json"), "columns[0]")


def test_findings_with_a_malformed_dataset_finding(tmp_path):
    import json

    doc = {
        "schema": "featureaudit.findings/1",
        "columns": [],
        "dataset_findings": [{"kind": "duplicate_rows_across_split", "level": "huge"}],
    }
    (tmp_path / "f.json").write_text(json.dumps(doc))
    assert_one_line_exit_2(
        cli("diff", tmp_path / "f.json", tmp_path / "f.json"), "dataset_findings[0]"
    )


# --- small things users met (issue 11 item 8) --------------------------------------------
def test_fail_at_none_and_empty_out_are_refused(good_csv, tmp_path):
    assert_one_line_exit_2(
        cli("scan", good_csv, "--target", "y", "--fail-at", "none", "--out", tmp_path / "r"),
        "--fail-at",
        "'none'",
    )
    assert_one_line_exit_2(cli("scan", good_csv, "--target", "y", "--out", ""), "--out", "''")
    assert not (tmp_path / "r").exists()


@pytest.mark.parametrize("rows", [1, 2])
def test_one_and_two_row_tables_are_too_few(tmp_path, rows):
    path = tmp_path / "tiny.csv"
    pd.DataFrame({"a": [1.0, 2.0][:rows], "y": [0, 1][:rows]}).to_csv(path, index=False)
    assert_one_line_exit_2(cli("scan", path, "--target", "y"), "tiny.csv", "too few rows to audit")


def test_no_target_is_said_in_words(good_csv, tmp_path):
    result = cli("scan", good_csv, "--out", tmp_path / "r")
    assert result.exit_code == 0, result.stderr
    assert "target None" not in result.stdout and "no target" in result.stdout


def test_one_class_warning_shows_the_value_not_its_numpy_type():
    frame = pd.DataFrame({"a": np.arange(50.0), "y": np.ones(50, dtype=np.int64)})
    warning = " ".join(fa.audit(frame, target="y").document["warnings"])
    assert "np.int64" not in warning and "single value (1)" in warning


def test_missing_split_values_are_held_out_with_a_warning():
    frame = pd.DataFrame(
        {"a": np.arange(60.0), "y": [0, 1] * 30, "s": ["train"] * 40 + [None] * 8 + ["test"] * 12}
    )
    result = fa.audit(frame, target="y", split_column="s")
    assert any("8 rows of split column 's' have no value" in w for w in result.document["warnings"])
    assert result.document["dataset"]["partitions"]["(missing)"] == 8


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
        t = fa.load.table.build_table(frame, target="y", task=task)
        assert t.labelled.sum() == len(frame) - 6  # inf no longer a third class
        assert any("6 rows without a finite value" in w for w in t.warnings), t.warnings
    assert fa.load.table.build_table(frame, target="y").classes == ["0.0", "1.0"]


def test_label_variants_warn_and_merge_only_when_told():
    frame = _frame()
    labels = np.array(["yes", " yes", "YES ", "no", "no", "No"])
    frame["y"] = labels[np.arange(len(frame)) % 6]
    kept = fa.load.table.build_table(frame, target="y")
    assert len(kept.classes) == 5 and any("--normalise-labels" in w for w in kept.warnings)
    with pytest.raises(TargetError, match="--normalise-labels"):
        fa.load.table.build_table(frame, target="y", task="binary")
    merged = fa.load.table.build_table(frame, target="y", task="binary", normalise_labels=True)
    # the most frequent spelling names the class (ties: sorted order, trimmed); counts, not
    # row order, decide
    assert merged.classes == ["no", "yes"] and np.bincount(merged.y).tolist() == [150, 150]
    shuffled = frame.sample(frac=1, random_state=1)
    again = fa.load.table.build_table(shuffled, target="y", task="binary", normalise_labels=True)
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
    assert fa.load.table.build_table(train, test=held, target="y").heldout_rows == 50


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
    doc = fa.judge.findings.load_findings(tmp_path / "decided" / "findings.json").document
    when = next(c for c in doc["columns"] if c["column"] == "when")
    expected = "critical" if year == 2300 else "none"  # 2300 is long after every label time
    assert when["level"] == expected, when


def test_label_time_in_several_formats():
    frame = _frame().assign(decided=["2025-01-05", "05/01/2025", "Jan 5 2025"] * 100)
    with pytest.raises(SettingError, match="several date formats"):
        fa.load.table.build_table(frame, target="y", label_time="decided")
    zoned = _frame().assign(decided=["2025-01-05", "2025-01-05T10:00:00+01:00", "05/01/2025"] * 100)
    with pytest.raises(SettingError, match="several date formats"):
        fa.load.table.build_table(zoned, target="y", label_time="decided")


def test_horizon_longer_than_a_timedelta(good_csv, tmp_path):
    for horizon in ("999999999d", "P999999999D"):
        result = cli(
            "scan", good_csv, "--target", "y", "--label-time", "when", "--horizon", horizon,
            "--out", tmp_path / "r",
        )  # fmt: skip
        assert_one_line_exit_2(result, "--horizon", horizon)
    # 290 years still fits: the cutoff lands in 1735, which microsecond times hold
    t = fa.load.table.build_table(good_csv, target="y", label_time="when", horizon="106000d")
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
    back = fa.load.dictionary.read_dictionary(tmp_path / "d.csv")
    assert list(back.entries) == names and back.entries["y"].role == "target"
    table = fa.load.table.build_table(tmp_path / "t.parquet", dictionary=tmp_path / "d.csv")
    assert table.target == "y" and not table.warnings


ACCENTED = pd.DataFrame({"café": ["Zürich", "Genève", "Köln"] * 40, "y": [0, 1] * 60})


@pytest.mark.parametrize("encoding", ["utf-8", "utf-8-sig", "utf-16", "utf-16-be"])
def test_text_with_a_bom_or_in_utf8_is_read(tmp_path, encoding):
    path = tmp_path / "t.csv"
    text = ACCENTED.to_csv(index=False)
    bom = "\ufeff" if encoding == "utf-16-be" else ""  # utf-16 writes its own BOM
    path.write_bytes((bom + text).encode(encoding))
    got = fa.load.io.read_table(path)
    assert list(got.columns) == ["café", "y"] and got["café"].astype(str).iloc[1] == "Genève"
    drafted = cli("dictionary", path)
    assert drafted.exit_code == 0 and drafted.stdout.splitlines()[1].startswith("café,")
    d = tmp_path / "d.csv"
    d.write_bytes((bom + "column,role\ny,target\n").encode(encoding))
    assert fa.load.dictionary.read_dictionary(d).entries["y"].role == "target"


def test_latin1_needs_the_encoding_flag(tmp_path):
    path = tmp_path / "t.csv"
    ACCENTED.to_csv(path, index=False, encoding="latin-1")
    for args in (["scan", path, "--target", "y", "--out", tmp_path / "r"], ["dictionary", path]):
        assert_one_line_exit_2(cli(*args), "not UTF-8", "--encoding")
        ok = cli(*args, "--encoding", "latin-1")
        assert ok.exit_code == 0, ok.stderr
    assert ok.stdout.splitlines()[1].startswith("café,")  # the drafted dictionary
    columns = fa.judge.findings.load_findings(tmp_path / "r" / "findings.json").document["columns"]
    assert "café" in [c["column"] for c in columns]
    assert_one_line_exit_2(cli("dictionary", path, "--encoding", "klingon"), "--encoding")
    d = tmp_path / "d.csv"
    d.write_bytes("column,role\ncafé,feature\ny,target\n".encode("latin-1"))
    ACCENTED.to_csv(tmp_path / "u.csv", index=False)  # UTF-8 table, Latin-1 dictionary
    bad = cli("scan", tmp_path / "u.csv", "--dictionary", d, "--out", tmp_path / "q")
    assert_one_line_exit_2(bad, "d.csv", "not UTF-8", "--encoding")
    good = fa.load.table.build_table(path, dictionary=d, encoding="latin-1")
    assert good.target == "y" and good.roles["café"] == "feature"


def test_a_folder_where_a_file_is_expected(good_csv, tmp_path):
    folder = tmp_path / "folder"
    folder.mkdir()
    for flag in ("--dictionary", "--config"):
        result = cli("scan", good_csv, "--target", "y", flag, folder, "--out", tmp_path / "r")
        assert_one_line_exit_2(result, "is a folder, not a file", flag)
    assert_one_line_exit_2(cli("droplist", folder), "is a folder, not a file")
    assert_one_line_exit_2(cli("scan", folder), "folder", "holds no .parquet files")


def test_heldout_target_of_few_whole_numbers_points_to_task_numeric(tmp_path):
    # scikit-learn's linnerud data: 20 men's weights in whole pounds look like class codes;
    # a held-out file with other weights is a quantity, not another coding
    from sklearn.datasets import load_linnerud

    data = load_linnerud(as_frame=True)
    frame = data.data.assign(weight=data.target["Weight"].to_numpy())
    order = frame["weight"].rank(method="first")
    train, held = frame[order <= 12], frame[order > 12]
    train.to_csv(tmp_path / "train.csv", index=False)
    held.to_csv(tmp_path / "test.csv", index=False)
    args = ["scan", tmp_path / "train.csv", "--test", tmp_path / "test.csv", "--target", "weight"]
    result = cli(*args, "--out", tmp_path / "r")
    assert_one_line_exit_2(result, "coded differently", "--task numeric")
    table = fa.load.table.build_table(train, test=held, target="weight", task="numeric")
    assert table.heldout_rows == 8 and table.task == "numeric"


# === round three (issue 28): every door, every file read back ==============================
def _table300(n=300, seed=5):
    rng = np.random.default_rng(seed)
    return pd.DataFrame(
        {
            "a": rng.normal(size=n),
            "b": rng.integers(0, 5, n),
            "when": pd.date_range("2025-01-01", periods=n, freq="D"),
            "y": rng.integers(0, 2, n),
        }
    )


def _csv300(tmp_path, frame=None):
    path = tmp_path / "t300.csv"
    (_table300() if frame is None else frame).to_csv(path, index=False)
    return path


# --- one column in two roles, flags that contradict each other ------------------------------
def test_target_that_is_also_the_split_column_or_the_entity(tmp_path):
    path = _csv300(tmp_path)
    out = tmp_path / "r"
    result = cli("scan", path, "--target", "y", "--split-column", "y", "--out", out)
    assert_one_line_exit_2(result, "'y'", "--target", "--split-column")
    result = cli("scan", path, "--target", "y", "--entity", "y", "--out", out)
    assert_one_line_exit_2(result, "'y'", "--target", "--entity")
    assert not out.exists()
    with pytest.raises(SettingError, match="target.*entity"):
        fa.audit(_table300(), target="y", entity="y")
    d = tmp_path / "d.csv"
    d.write_text("column,role\ny,split\n")
    assert_one_line_exit_2(cli("scan", path, "--target", "y", "--dictionary", d), "'y'", "split")


def test_scheduler_without_the_dask_engine(tmp_path):
    path = _csv300(tmp_path)
    result = cli("scan", path, "--target", "y", "--scheduler", "tcp://127.0.0.1:1")
    assert_one_line_exit_2(result, "--scheduler", "--engine dask")
    with pytest.raises(SettingError, match="scheduler.*engine='dask'") as info:
        fa.audit(_table300(), target="y", scheduler="tcp://127.0.0.1:1")
    assert "--" not in str(info.value)


@pytest.mark.parametrize("flag, values", [("--target", ["y", "a"]), ("--seed", ["1", "2"])])
def test_a_flag_given_twice(tmp_path, flag, values):
    path = _csv300(tmp_path)
    result = cli("scan", path, flag, values[0], "--target", "y", f"{flag}={values[1]}")
    assert_one_line_exit_2(result, flag, "more than once")


def test_negative_horizon(tmp_path):
    path = _csv300(tmp_path)
    result = cli("scan", path, "--target", "y", "--label-time", "when", "--horizon", "-5d")
    assert_one_line_exit_2(result, "--horizon", "'-5d'", "negative")
    with pytest.raises(SettingError, match="horizon"):
        fa.audit(_table300(), target="y", label_time="when", horizon="-P5D")


def test_multiclass_asked_of_a_continuous_target(tmp_path):
    frame = _table300().assign(y=lambda f: f["a"] * 3.7 + 0.01)
    with pytest.raises(TargetError, match="--task numeric|task='numeric'"):
        fa.audit(frame, target="y", task="multiclass")
    path = _csv300(tmp_path, frame)
    result = cli("scan", path, "--target", "y", "--task", "multiclass", "--out", tmp_path / "r")
    assert_one_line_exit_2(result, "'y'", "--task numeric")


# --- counts beyond what the table holds (every count setting has an upper bound) --------------
def test_folds_beyond_the_rows_of_the_table(tmp_path):
    cfg = tmp_path / "c.toml"
    cfg.write_text("folds = 1000000000\n")
    result = cli(
        "scan", _csv300(tmp_path), "--target", "y", "--config", cfg, "--out", tmp_path / "r"
    )
    assert_one_line_exit_2(result, "folds", "1000000000", "300")
    assert not (tmp_path / "r").exists()
    from featureaudit.load.settings import Settings

    with pytest.raises(SettingError, match="folds.*300"):
        fa.audit(_table300(), target="y", settings=Settings(folds=301, n_jobs=1))


@pytest.mark.parametrize(
    "kwargs", [{"n_jobs": 10**6}, {"sample_rows": 10**12}, {"reference_rows": 10**12},
               {"min_rows": 10**12}, {"folds": 10**12}]
)  # fmt: skip
def test_count_settings_have_an_upper_bound(kwargs):
    from featureaudit.load.settings import Settings

    name = next(iter(kwargs))
    with pytest.raises(SettingError, match=f"{name}.*at most"):
        Settings(**kwargs)


# --- too few labelled rows -----------------------------------------------------------------
@pytest.mark.parametrize("labels", [[1, 1], [0, 1]])
def test_too_few_labelled_rows_is_its_own_message(tmp_path, labels):
    frame = _table300().astype({"y": float})
    frame["y"] = np.nan
    frame.loc[[10, 200], "y"] = labels
    with pytest.raises(TargetError, match="too few labelled rows"):
        fa.audit(frame, target="y")
    result = cli("scan", _csv300(tmp_path, frame), "--target", "y", "--out", tmp_path / "r")
    assert_one_line_exit_2(result, "'y'", "2 of 300 rows", "too few labelled rows")


# --- the dictionary and --accepted, read strictly ---------------------------------------------
@pytest.mark.parametrize(
    "known_at, fragment",
    [("b", "not a datetime"), ("soon", "not a column"), ("nan", "not a column")],
)
def test_known_at_naming_no_datetime_column_is_an_error(tmp_path, known_at, fragment):
    d = tmp_path / "d.csv"
    d.write_text(f"column,role,known_at\na,feature,\ny,target,\nb,feature,{known_at}\n")
    path = _csv300(tmp_path)
    with pytest.raises(DictionaryError, match=f"d.csv.*line 4.*'{known_at}'.*{fragment}"):
        fa.load.table.build_table(path, dictionary=d)
    result = cli("scan", path, "--dictionary", d, "--out", tmp_path / "r")
    assert_one_line_exit_2(result, "d.csv", "line 4", f"'{known_at}'")
    ok = tmp_path / "ok.csv"
    ok.write_text("column,role,known_at\ny,target,\nb,feature,when\n")
    assert fa.load.table.build_table(path, dictionary=ok).dictionary.entries["b"].known_at == "when"


def test_two_target_rows_in_the_dictionary():
    from featureaudit.load.dictionary import parse_dictionary

    with pytest.raises(DictionaryError, match="'d.csv' line 3.*target.*line 2"):
        parse_dictionary("column,role\ny,target\na,target\n", source="d.csv")


@pytest.mark.parametrize("row", ["a,feature,,first,extra", "a"])
def test_ragged_dictionary_row(row):
    from featureaudit.load.dictionary import parse_dictionary

    text = f"column,role,known_at,description\ny,target,,\n{row}\n"
    with pytest.raises(DictionaryError, match="'d.csv' line 3.*cells.*header has 4"):
        parse_dictionary(text, source="d.csv")


@pytest.mark.parametrize(
    "row", ["a,target_proxy,ok,me,,surplus", "a,target_proxy,ok"]
)  # fmt: skip
def test_ragged_accepted_row(tmp_path, row):
    from featureaudit.review.accepted import read_accepted

    f = tmp_path / "acc.csv"
    f.write_text(f"column,kind,reason,reviewed_by,until\n{row}\n")
    with pytest.raises(SettingError, match="acc.csv.*line 2.*cells.*header has 5"):
        read_accepted(f)
    path = _csv300(tmp_path)
    assert_one_line_exit_2(cli("scan", path, "--accepted", f), "acc.csv", "line 2")


def test_accepted_reason_with_a_quoted_line_break_reads_whole(tmp_path):
    from featureaudit.review.accepted import read_accepted

    f = tmp_path / "acc.csv"
    f.write_text('column,kind,reason,reviewed_by,until\na,target_proxy,"two\nlines",me,\n')
    (row,) = read_accepted(f)
    assert row.reason == "two\nlines" and row.reviewed_by == "me"


# --- findings and history files read back ----------------------------------------------------
def _findings_doc(score=0.5):
    return {
        "schema": "featureaudit.findings/2",
        "columns": [{"column": "a", "score": score, "level": "high", "kinds": ["target_proxy"]}],
        "dataset_findings": [],
    }


@pytest.mark.parametrize("score", [7, -0.5, 1.0000001])
def test_findings_score_outside_zero_one(tmp_path, score):
    import json

    (tmp_path / "f.json").write_text(json.dumps(_findings_doc(score)))
    (tmp_path / "g.json").write_text(json.dumps(_findings_doc()))
    assert_one_line_exit_2(cli("droplist", tmp_path / "f.json"), "columns[0]", "from 0 to 1")
    assert_one_line_exit_2(cli("diff", tmp_path / "g.json", tmp_path / "f.json"), "columns[0]")


def test_findings_nested_too_deep(tmp_path):
    deep = tmp_path / "deep.json"
    deep.write_text(
        '{"schema": "featureaudit.findings/2", "x": ' + "[" * 100_000 + "]" * 100_000 + "}"
    )
    assert_one_line_exit_2(cli("droplist", deep), "deep.json", "nested")
    assert_one_line_exit_2(cli("diff", deep, deep), "deep.json", "nested")


@pytest.mark.parametrize(
    "name, text",
    [
        ("20261201T000000Z-0123456789ab.json", "{corrupt"),
        ("notes.json", ""),
        ("other.json", '{"a": 1}'),
    ],
)
def test_history_folder_with_a_file_that_is_not_a_run(tmp_path, name, text):
    history = tmp_path / "h"
    history.mkdir()
    (history / name).write_text(text)
    assert_one_line_exit_2(cli("history", history), name)
    out = tmp_path / "r"
    result = cli("scan", _csv300(tmp_path), "--target", "y", "--history", history, "--out", out)
    assert_one_line_exit_2(result, name, "--history")
    assert not out.exists()


def test_history_folder_that_cannot_be_written(tmp_path, monkeypatch):
    import errno

    from featureaudit.review import history as history_module

    def refuse(*args, **kwargs):
        raise PermissionError(errno.EACCES, "Permission denied")

    monkeypatch.setattr(history_module.tempfile, "mkstemp", refuse)
    out = tmp_path / "r"
    result = cli("scan", _csv300(tmp_path), "--target", "y", "--history", tmp_path / "h",
                 "--out", out)  # fmt: skip
    assert_one_line_exit_2(result, "--history", "Permission denied")
    assert not out.exists()


# --- tables whose parts or columns come apart -------------------------------------------------
def _parts(tmp_path, second):
    folder = tmp_path / "parts"
    folder.mkdir()
    _table300().iloc[:150].to_parquet(folder / "part-0.parquet")
    second.to_parquet(folder / "part-1.parquet")
    return folder


@pytest.mark.parametrize("engine", ["memory", "stream"])
@pytest.mark.parametrize("change, fragment", [("lacks", "'b'"), ("extra", "'c'")])
def test_parquet_parts_with_other_columns(tmp_path, engine, change, fragment):
    rest = _table300().iloc[150:]
    rest = rest.drop(columns="b") if change == "lacks" else rest.assign(c=1.0)
    folder = _parts(tmp_path, rest)
    result = cli("scan", folder, "--target", "y", "--engine", engine, "--out", tmp_path / "r")
    assert_one_line_exit_2(result, "part-1.parquet", fragment)


@pytest.mark.parametrize("engine", ["memory", "stream"])
def test_parquet_parts_with_other_types_name_the_part_and_column(tmp_path, engine):
    rest = _table300().iloc[150:].assign(b=lambda f: "x" + f["b"].astype(str))
    folder = _parts(tmp_path, rest)
    result = cli("scan", folder, "--target", "y", "--engine", engine, "--out", tmp_path / "r")
    assert_one_line_exit_2(result, "part-1.parquet", "'b'")


def test_corrupt_parquet_part_is_named(tmp_path):
    folder = _parts(tmp_path, _table300().iloc[150:])
    (folder / "part-1.parquet").write_bytes(b"PAR1 not really")
    result = cli("scan", folder, "--target", "y", "--out", tmp_path / "r")
    assert_one_line_exit_2(result, "part-1.parquet", "cannot read")


def test_duplicate_column_names_in_a_part_are_named(tmp_path):
    import pyarrow as pa
    import pyarrow.parquet as pq

    folder = _parts(tmp_path, _table300().iloc[150:])
    table = pa.table([[1, 2], [3, 4]], names=["a", "a"])
    pq.write_table(table, folder / "part-1.parquet")
    result = cli("scan", folder, "--target", "y", "--out", tmp_path / "r")
    assert_one_line_exit_2(result, "part-1.parquet", "'a'")


def test_parquet_binary_columns_are_read(tmp_path):
    import pyarrow as pa
    import pyarrow.parquet as pq

    frame = _table300()
    table = pa.Table.from_pandas(frame, preserve_index=False)
    text = pa.array([f"k{i % 7}".encode() for i in range(300)], type=pa.binary())
    raw = pa.array([bytes([255, i % 5]) for i in range(300)], type=pa.binary())
    table = table.append_column("code", text).append_column("blob", raw)
    pq.write_table(table, tmp_path / "b.parquet")
    result = cli("scan", tmp_path / "b.parquet", "--target", "y", "--out", tmp_path / "r")
    assert result.exit_code == 0, result.stderr
    columns = fa.judge.findings.load_findings(tmp_path / "r" / "findings.json").document["columns"]
    assert {"code", "blob"} <= {c["column"] for c in columns}
    frame = fa.load.io.read_table(tmp_path / "b.parquet")
    assert frame["code"].astype(str).iloc[1] == "k1" and frame["blob"].astype(str).iloc[1] == "ff01"
    streamed = cli("scan", tmp_path / "b.parquet", "--target", "y", "--engine", "stream",
                   "--out", tmp_path / "s")  # fmt: skip
    assert_one_line_exit_2(streamed, "'code'", "binary", "--engine memory")


@pytest.mark.parametrize("change", ["lacks", "types"])
def test_dask_engine_on_parts_that_disagree(tmp_path, change):
    pytest.importorskip("distributed")
    rest = _table300().iloc[150:]
    rest = (
        rest.drop(columns="b")
        if change == "lacks"
        else rest.assign(b=lambda f: "x" + f["b"].astype(str))
    )
    folder = _parts(tmp_path, rest)
    import subprocess
    import sys
    from pathlib import Path

    run = subprocess.run(
        [str(Path(sys.executable).parent / "featureaudit"), "scan", str(folder), "--target", "y",
         "--engine", "dask", "--out", str(tmp_path / "r")],
        capture_output=True, text=True, timeout=120,
    )  # fmt: skip
    assert run.returncode == 2, (run.returncode, run.stderr)
    assert run.stderr.count("\n") == 1 and "part-1.parquet" in run.stderr, run.stderr


def test_dask_engine_input_error_found_on_the_cluster_is_one_line(tmp_path):
    # the target is also the split column: found on the sample, after the cluster started;
    # Dask's own log lines (a cancelled task, a nanny killing a worker) stay off stderr
    pytest.importorskip("distributed")
    import subprocess
    import sys
    from pathlib import Path

    frame = _table300().assign(s=np.where(np.arange(300) % 4 == 0, "test", "train"))
    folder = tmp_path / "parts"
    folder.mkdir()
    frame.iloc[:150].to_parquet(folder / "part-0.parquet")
    frame.iloc[150:].to_parquet(folder / "part-1.parquet")
    run = subprocess.run(
        [str(Path(sys.executable).parent / "featureaudit"), "scan", str(folder), "--target", "y",
         "--split-column", "y", "--engine", "dask", "--out", str(tmp_path / "r")],
        capture_output=True, text=True, timeout=300,
    )  # fmt: skip
    assert run.returncode == 2, (run.returncode, run.stderr)
    assert run.stderr.count("\n") == 1 and "'y' is the target" in run.stderr, run.stderr


# --- the Python door speaks its own words -------------------------------------------------
def test_audit_with_no_probes_is_refused():
    with pytest.raises(SettingError, match="probes"):
        fa.audit(_table300(), target="y", probes=[])


def test_whole_number_column_names_are_read_as_text():
    frame = pd.DataFrame(np.random.default_rng(0).normal(size=(200, 3)))
    frame[3] = np.arange(200) % 2
    with pytest.warns(UserWarning, match="whole numbers.*text"):
        result = fa.audit(frame, target=3)
    assert result.document["dataset"]["target"] == "3"
    assert set(result.columns["column"]) == {"0", "1", "2"}


@pytest.mark.parametrize(
    "kwargs, word",
    [
        ({"target": ["t"]}, "target"),
        ({"split_column": 3.5}, "split_column"),
        ({"task": "regression"}, "task"),
        ({"target": "nope"}, "target"),
        ({"target": "y", "label_time": "when", "horizon": "soon"}, "horizon"),
        ({"seed": 1.5}, "seed"),
        ({"engine": "spark"}, "engine"),
    ],
)
def test_api_errors_speak_keyword_names_not_flags(kwargs, word):
    with pytest.raises(FeatureAuditError) as info:
        fa.audit(_table300(), **kwargs)
    message = str(info.value)
    assert word in message and "--" not in message, message


def test_write_with_a_history_that_is_not_runs(tmp_path):
    result = fa.audit(_table300(), target="y", probes=["solo"])
    with pytest.raises(SettingError, match="history.*list of earlier"):
        result.write(tmp_path / "r", history="nope")
    assert not (tmp_path / "r").exists()


# --- the report folder --------------------------------------------------------------------
def test_symlinked_out_is_followed_and_leaves_nothing_behind(tmp_path):
    from featureaudit.render.writer import write_files

    real = tmp_path / "real"
    _earlier_report(real)
    link = tmp_path / "link"
    link.symlink_to(real, target_is_directory=True)
    write_files(link, REPORT)
    assert link.is_symlink() and link.resolve() == real.resolve()
    assert {p.name: p.read_text() for p in real.iterdir()} == REPORT
    assert sorted(p.name for p in tmp_path.iterdir()) == ["link", "real"]


# --- what a message shows ------------------------------------------------------------------
def test_a_huge_config_value_is_shortened_in_the_error(good_csv, tmp_path):
    cfg = tmp_path / "c.toml"
    cfg.write_text('seed = "' + "x" * 10_000_000 + '"\n')
    result = cli("scan", good_csv, "--config", cfg)
    assert_one_line_exit_2(result, "config key seed", "characters")
    assert len(result.stderr) < 500


@pytest.mark.parametrize("line", ["out = 5", 'quiet = "yes"', 'quiet = "no"'])
def test_config_values_of_the_wrong_type(good_csv, tmp_path, line):
    cfg = tmp_path / "c.toml"
    cfg.write_text(line + "\n")
    key = line.split(" ")[0]
    result = cli("scan", good_csv, "--target", "y", "--config", cfg, "--out", tmp_path / "r")
    assert_one_line_exit_2(result, f"config key {key}")
    assert not (tmp_path / "5").exists() and not (tmp_path / "r").exists()


def test_encoding_flag_that_does_not_match_a_utf8_file(tmp_path):
    path = tmp_path / "t.csv"
    ACCENTED.to_csv(path, index=False)  # UTF-8
    result = cli("scan", path, "--target", "y", "--encoding", "utf-16", "--out", tmp_path / "r")
    assert_one_line_exit_2(result, "t.csv", "UTF-8", "--encoding")
    plain = tmp_path / "ascii.csv"
    _table300().to_csv(plain, index=False)  # ASCII reads the same in latin-1: no complaint
    ok = cli("scan", plain, "--target", "y", "--encoding", "latin-1", "--out", tmp_path / "q")
    assert ok.exit_code == 0, ok.stderr


def test_sigterm_during_interpreter_exit_after_a_new_report(tmp_path):
    import os
    import signal
    import subprocess
    import sys
    import time

    path = _csv300(tmp_path)
    out = tmp_path / "r"
    code = (
        "import atexit, sys, time\n"
        "from featureaudit.cli import main\n"
        "atexit.register(time.sleep, 30)\n"
        "atexit.register(lambda: print('EXITING', file=sys.stderr, flush=True))\n"
        "main()\n"
    )
    proc = subprocess.Popen(
        [sys.executable, "-c", code, "scan", str(path), "--target", "y", "--out", str(out)],
        stderr=subprocess.PIPE, stdout=subprocess.DEVNULL, text=True,
        # away from the source tree: `-c` puts the working folder first on sys.path, and the
        # source's featureaudit/ lacks the probes that an installed (not editable) package holds
        cwd=tmp_path,
    )  # fmt: skip
    lines = []
    deadline = time.monotonic() + 240
    while time.monotonic() < deadline:
        line = proc.stderr.readline()
        if not line:
            break
        lines.append(line)
        if "EXITING" in line:
            os.kill(proc.pid, signal.SIGTERM)
            break
    rest = proc.communicate(timeout=60)[1]
    assert proc.returncode == 143, (proc.returncode, lines, rest)
    assert "the new report in" in rest and "is complete" in rest, rest
    assert (out / "findings.json").exists()
