"""Reading tables of every accepted format, types settled once, the split and the roles."""

import numpy as np
import pandas as pd
import pyarrow as pa
import pyarrow.parquet as pq
import pytest

from featureaudit.load.dictionary import draft_dictionary, parse_dictionary
from featureaudit.load.io import read_table
from featureaudit.load.table import build_table, infer_task


@pytest.fixture()
def frame():
    return pd.DataFrame(
        {
            "id": [f"r{i}" for i in range(60)],
            "x": np.arange(60) * 1.5,
            "kind": ["a", "b", "c"] * 20,
            "day": [f"2025-01-{1 + i % 28:02d}" for i in range(60)],
            "y": [0, 1] * 30,
        }
    )


@pytest.mark.parametrize("suffix", [".csv", ".tsv", ".parquet", ".feather", ".arrow"])
def test_every_format_reads_the_same(tmp_path, frame, suffix):
    path = tmp_path / f"t{suffix}"
    if suffix == ".csv":
        frame.to_csv(path, index=False)
    elif suffix == ".tsv":
        frame.to_csv(path, index=False, sep="\t")
    elif suffix == ".parquet":
        frame.to_parquet(path)
    else:
        frame.to_feather(path)
    got = read_table(path)
    assert list(got.columns) == list(frame.columns) and len(got) == 60
    assert pd.api.types.is_datetime64_any_dtype(got["day"])  # ISO strings become datetimes
    assert isinstance(got["kind"].dtype, pd.CategoricalDtype)  # low cardinality → category
    assert got["id"].dtype == object  # unique text stays text
    # reference: pandas' own parsing of the same values
    assert (got["day"] == pd.to_datetime(frame["day"])).all()


def test_folder_of_parquet_files(tmp_path, frame):
    (tmp_path / "parts").mkdir()
    for i, part in enumerate([frame.iloc[:20], frame.iloc[20:40], frame.iloc[40:]]):
        pq.write_table(
            pa.Table.from_pandas(part, preserve_index=False), tmp_path / "parts" / f"p{i}.parquet"
        )
    assert len(read_table(tmp_path / "parts")) == 60


def test_split_column_and_train_value(frame):
    frame = frame.assign(part=["fit"] * 45 + ["check"] * 15)
    t = build_table(frame, target="y", split_column="part", train_value="fit")
    assert t.train_rows == 45 and t.heldout_rows == 15 and t.split == "column:part"
    assert "part" not in t.features


def test_test_table_without_target(frame):
    test = frame.drop(columns="y").iloc[:10]
    t = build_table(frame, test=test, target="y")
    assert t.heldout_rows == 10 and t.labelled.sum() == 60 and t.split.startswith("test:")


@pytest.mark.parametrize(
    "values, task",
    [
        ([0, 1] * 10, "binary"),
        (["yes", "no"] * 10, "binary"),
        ([True, False] * 10, "binary"),
        ([0, 1, 2, 3] * 5, "multiclass"),
        (["a", "b", "c"] * 7, "multiclass"),
        (list(np.linspace(0, 1, 20)), "numeric"),
        (list(range(50)), "numeric"),
    ],
)
def test_task_inference(values, task):
    assert infer_task(pd.Series(values)) == task


def test_flags_win_over_the_dictionary(frame):
    d = parse_dictionary("column,role\nx,target\nid,id\n")
    t = build_table(frame, target="y", dictionary=d)
    assert t.target == "y" and t.roles["y"] == "target" and "id" in t.id_columns


def test_dictionary_row_for_a_missing_column_is_a_warning(frame):
    d = parse_dictionary("column,role,known_at\nghost,feature,\ny,target,\n")
    t = build_table(frame, dictionary=d)
    assert t.target == "y" and any("ghost" in w for w in t.warnings)


def test_dictionary_keeps_other_headers_and_reads_durations():
    d = parse_dictionary(
        "column,role,known_at,description,owner\na,feature,-30d,amount,finance\nb,,decided_at,,\n"
    )
    assert d.extra_headers == ("owner",) and d.entries["a"].extra == {"owner": "finance"}
    assert d.entries["a"].known_at_offset == pd.Timedelta(days=-30)
    assert d.entries["b"].role == "feature" and d.entries["b"].known_at_column == "decided_at"


def test_draft_dictionary_guesses_roles(frame):
    text = draft_dictionary(read_table_like(frame).assign(split="train"), target="y")
    rows = dict(line.split(",")[:2] for line in text.strip().splitlines()[1:])
    assert rows["id"] == "id" and rows["y"] == "target" and rows["split"] == "split"
    assert rows["x"] == "feature"


def read_table_like(frame):
    from featureaudit.load.io import normalise_frame

    return normalise_frame(frame.copy(), source="t")


def test_horizon_sets_the_cutoff(frame):
    frame = frame.assign(decided=pd.Timestamp("2025-06-01"))
    t = build_table(frame, target="y", label_time="decided", horizon="30d")
    assert (t.cutoff_time == pd.Timestamp("2025-05-02")).all()
    assert t.cutoff_source == "horizon:30d"


def test_named_index_levels_become_columns_unnamed_ones_do_not():
    from featureaudit.load.io import as_frame

    keyed = pd.DataFrame({"a": [1, 2, 3], "k": ["x", "y", "z"], "j": [4, 5, 6]})
    assert as_frame(pa.Table.from_pandas(keyed.set_index("k"))).columns.tolist() == ["k", "a", "j"]
    assert as_frame(keyed.set_index(["k", "j"])).columns.tolist() == ["k", "j", "a"]
    assert as_frame(keyed.iloc[[2, 0]]).columns.tolist() == ["a", "k", "j"]  # positions only
    clash = keyed.set_index("k").assign(k=0)
    with pytest.raises(Exception, match="index level 'k'"):
        as_frame(clash)


def test_a_few_bad_dates_keep_the_column_a_date_column():
    from featureaudit.load.io import UNPARSED_DATES, normalise_frame

    days = pd.Series([f"2025-01-{1 + i % 28:02d}" for i in range(300)])
    few, many = days.copy(), days.copy()
    few[[3, 40]] = ["soon", "n/a?"]
    many[:10] = "soon"  # 10 of 300 is more than 1%: left as text
    got = normalise_frame(pd.DataFrame({"few": few, "many": many}), source="t")
    assert pd.api.types.is_datetime64_any_dtype(got["few"]) and got["few"].isna().sum() == 2
    assert not pd.api.types.is_datetime64_any_dtype(got["many"])
    assert got.attrs[UNPARSED_DATES] == {"few": (2, "n/a?")}
    # pandas' own parse of the good values is what we keep
    assert (got["few"].dropna() == pd.to_datetime(few.drop([3, 40]))).all()


def test_times_outside_the_nanosecond_range_convert():
    from featureaudit.load.io import numeric_view
    from featureaudit.load.times import as_datetime

    times = as_datetime(pd.Series(["1600-03-01", "2300-03-01", None]), column="t")
    assert [t.year for t in times.dropna()] == [1600, 2300]
    seconds = numeric_view(times)
    # days between the two dates, from Python's own calendar arithmetic
    import datetime as dt

    gap = (dt.date(2300, 3, 1) - dt.date(1600, 3, 1)).days
    assert (seconds[1] - seconds[0]) / 86400 == gap and np.isnan(seconds[2])


@pytest.mark.parametrize("name", ["", " leak ", "a\nb", '"x"', "tab\there", "plain", "a,b"])
def test_quoted_names_read_back(name):
    from featureaudit.vocab.names import quote_name, unquote_name

    written = quote_name(name)
    assert "\n" not in written and unquote_name(written) == name
    assert (written == name) == (name in ("plain", "a,b"))
