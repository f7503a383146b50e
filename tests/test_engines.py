"""Engines: the seeded sample, exact mergeable statistics, memory against stream, the flags."""

import importlib.util

import numpy as np
import pandas as pd
import pytest
from sklearn.datasets import load_breast_cancer
from typer.testing import CliRunner

import featureaudit as fa
from featureaudit import engines
from featureaudit.cli import app
from featureaudit.engines.partials import CopyPartial, CountPartial, Layout, exact_statistics
from featureaudit.progress import row_progress
from featureaudit.sample import SampleSketch, allocate, content_keys

runner = CliRunner()
PLANTED = 150  # held-out rows made exact copies of training rows


def _table(reps: int, seed: int = 0) -> pd.DataFrame:
    """scikit-learn's bundled breast_cancer rows, repeated with 1 % noise, with an invented
    split, label time and entity (the original row), and planted exact copies."""
    x, y = load_breast_cancer(return_X_y=True, as_frame=True)
    rng = np.random.default_rng(seed)
    f = pd.concat([x] * reps, ignore_index=True)
    f = f * (1 + rng.normal(0, 0.01, f.shape))
    f["entity"] = np.tile(np.arange(len(x)), reps)
    f["target"] = np.tile(y.to_numpy(), reps)
    f["split"] = np.where(rng.random(len(f)) < 0.8, "train", "test")
    f["decided_at"] = pd.Timestamp("2024-01-01") + pd.to_timedelta(
        rng.integers(0, 365 * 24, len(f)), unit="h"
    )
    train, held = np.flatnonzero(f["split"] == "train"), np.flatnonzero(f["split"] == "test")
    src, dst = rng.choice(train, PLANTED, replace=False), held[:PLANTED]
    f.loc[dst, list(x.columns)] = f.loc[src, list(x.columns)].to_numpy()
    return f


def _write_parts(frame: pd.DataFrame, folder, parts: int, shuffle_seed: int | None = None):
    folder.mkdir()
    rows = np.arange(len(frame))
    if shuffle_seed is not None:
        rows = np.random.default_rng(shuffle_seed).permutation(rows)
    for i, chunk in enumerate(np.array_split(rows, parts)):
        frame.iloc[chunk].to_parquet(folder / f"part-{i:02d}.parquet", index=False)
    return folder


def _scan_stream(table, *extra: str):
    """``featureaudit scan`` of ``table`` with the stream engine and ``extra`` flags."""
    head = ["scan", str(table), "--target", "target", "--split-column", "split"]
    return runner.invoke(app, [*head, "--engine", "stream", *extra])


@pytest.fixture(scope="module")
def big(tmp_path_factory):
    frame = _table(reps=20)  # 11,380 rows
    base = tmp_path_factory.mktemp("engines")
    return frame, _write_parts(frame, base / "seven", 7), _write_parts(frame, base / "three", 3, 1)


ARGS = dict(target="target", split_column="split", label_time="decided_at", entity="entity")


def test_exact_statistics_match_pandas(big):
    frame, seven, _ = big
    result = fa.audit(str(seven), engine="stream", sample_rows=2000, probes=["timing"], **ARGS)
    exact = result.document["settings"]["exact"]
    # pandas as the outside reference for every count
    assert exact["partitions"] == frame["split"].value_counts().to_dict()
    by_class = frame.groupby(["split", "target"]).size()
    assert exact["rows_per_class"] == {f"{p}/{y}": int(n) for (p, y), n in by_class.items()}
    features = [c for c in frame.columns if c not in ("entity", "target", "split", "decided_at")]
    train, held = frame[frame["split"] == "train"], frame[frame["split"] == "test"]
    keys = held[features].merge(train[features].drop_duplicates(), how="inner")
    assert exact["heldout_rows_with_exact_twin"] == len(keys) >= PLANTED
    assert exact["heldout_rows_with_shared_entity"] == int(
        held["entity"].isin(train["entity"]).sum()
    )
    assert exact["label_time_range"]["train"] == [
        str(train["decided_at"].min()),
        str(train["decided_at"].max()),
    ]
    assert exact["heldout_rows_labelled_by_training_max"] == int(
        (held["decided_at"] <= train["decided_at"].max()).sum()
    )
    doc = result.document
    assert doc["settings"]["engine"] == "stream" and doc["settings"]["sample_rows"] == 2000
    assert doc["dataset"]["rows"] == len(frame) and "engine" in doc["settings"]["methods"]


def test_memory_partials_equal_stream(big):
    """One partition (the memory engine's view) and many batches give the same figures."""
    frame, seven, _ = big
    stream = fa.audit(str(seven), engine="stream", sample_rows=500, probes=["timing"], **ARGS)
    table = stream.document["settings"]["exact"]
    features = tuple(
        c for c in frame.columns if c not in ("entity", "target", "split", "decided_at")
    )
    layout = Layout("split", "train", "target", "decided_at", "entity", features)
    counts = CountPartial.map(frame, layout)
    copies = CopyPartial.map(frame, layout, counts.times["train"][1])
    assert exact_statistics(counts, copies) == table


def test_sample_does_not_depend_on_partitions_or_order(big):
    _, seven, three = big
    a = fa.audit(str(seven), engine="stream", sample_rows=1500, probes=["twins"], **ARGS)
    b = fa.audit(str(three), engine="stream", sample_rows=1500, probes=["twins"], **ARGS)
    assert a.document["settings"]["exact"] == b.document["settings"]["exact"]
    assert a.document["columns"] == b.document["columns"]
    assert a.document["dataset_findings"] == b.document["dataset_findings"]


def test_same_levels_as_memory_when_the_sample_holds_every_row(tmp_path):
    frame = _table(reps=4)
    folder = _write_parts(frame, tmp_path / "parts", 5, shuffle_seed=3)
    mem = fa.audit(str(folder), engine="memory", **ARGS)
    stream = fa.audit(str(folder), engine="stream", sample_rows=len(frame), **ARGS)
    levels = {c["column"]: c["level"] for c in mem.document["columns"]}
    assert levels == {c["column"]: c["level"] for c in stream.document["columns"]}
    pick = sorted((f["kind"], f["level"]) for f in mem.document["dataset_findings"])
    assert pick == sorted((f["kind"], f["level"]) for f in stream.document["dataset_findings"])
    twins = next(f for f in mem.document["dataset_findings"] if f["probe"] == "twins")
    exact = stream.document["settings"]["exact"]
    if "heldout_rows_with_exact_twin" in twins["detail"]:
        assert (
            twins["detail"]["heldout_rows_with_exact_twin"]
            == (exact["heldout_rows_with_exact_twin"])
        )


def test_sample_is_stratified_and_merges():
    frame = _table(reps=2)
    keys = content_keys(frame, [c for c in frame.columns if c != "split"], seed=4)
    strata = (frame["split"] + "\t" + frame["target"].astype(str)).to_numpy()
    import pyarrow as pa

    whole = SampleSketch(300)
    whole.add(pa.Table.from_pandas(frame, preserve_index=False), keys, strata)
    halves = [SampleSketch(300), SampleSketch(300)]
    for part, rows in zip(halves, np.array_split(np.arange(len(frame)), 2), strict=True):
        part.add(
            pa.Table.from_pandas(frame.iloc[rows], preserve_index=False), keys[rows], strata[rows]
        )
    merged = halves[1].merge(halves[0])
    a, b = whole.draw(300).to_pandas(), merged.draw(300).to_pandas()
    pd.testing.assert_frame_equal(a, b)
    # proportional allocation: each stratum's share within one row of pandas' value_counts
    share = pd.Series(strata).value_counts(normalize=True)
    got = (a["split"] + "\t" + a["target"].astype(str)).value_counts()
    assert all(abs(got[k] - 300 * share[k]) <= 1 for k in share.index)
    # by hand: 0.7 and 99.3 rows; the remainder goes to a, which then keeps all its 7 rows
    assert allocate({"a": 7, "b": 993}, 100) == {"a": 7, "b": 99}


def test_auto_streams_a_parquet_table_too_big_for_memory(big, monkeypatch):
    _, seven, _ = big
    assert engines.resolve_engine("auto", str(seven), None) == "memory"
    monkeypatch.setattr(engines, "available_bytes", lambda: 1_000)
    assert engines.resolve_engine("auto", str(seven), None) == "stream"
    assert engines.resolve_engine("auto", pd.DataFrame({"a": [1]}), None) == "memory"


@pytest.mark.skipif(importlib.util.find_spec("dask") is not None, reason="dask is installed")
def test_dask_without_dask_exits_2_with_the_install_line(big):
    _, seven, _ = big
    out = runner.invoke(app, ["scan", str(seven), "--target", "target", "--engine", "dask"])
    assert out.exit_code == 2 and "pip install 'featureaudit[dask]'" in out.output


@pytest.mark.parametrize(
    "extra, words",
    [
        (["--engine", "fast"], "--engine"),
        (["--engine", "stream", "--sample-rows", "10"], "--sample-rows"),
    ],
)
def test_bad_engine_flags_exit_2(big, tmp_path, extra, words):
    _, seven, _ = big
    out = runner.invoke(
        app, ["scan", str(seven), "--target", "target", "--out", str(tmp_path), *extra]
    )
    assert out.exit_code == 2 and words in out.output


def test_stream_rejects_csv_and_dataframes(tmp_path):
    path = tmp_path / "t.csv"
    _table(reps=2).to_csv(path, index=False)
    out = runner.invoke(app, ["scan", str(path), "--target", "target", "--engine", "stream"])
    assert out.exit_code == 2 and "Parquet" in out.output
    with pytest.raises(ValueError, match="engine='memory'"):  # the API's words
        fa.audit(_table(reps=2), target="target", engine="stream")


def test_progress_is_silent_unless_shown(capsys):
    with row_progress(100, show=False) as tick:
        tick("pass 1 of 2", 50)
    assert capsys.readouterr().err == ""
    with row_progress(100, show=True) as tick:
        tick("pass 1 of 2", 100)
    assert "pass 1 of 2" in capsys.readouterr().err


def test_quiet_scan_writes_nothing_to_stderr(big, tmp_path):
    _, seven, _ = big
    out = _scan_stream(seven, "--sample-rows", "800", "--quiet", "--out", str(tmp_path))
    assert out.exit_code in (0, 1), out.output
    assert (tmp_path / "findings.json").is_file()


@pytest.mark.skipif(importlib.util.find_spec("distributed") is None, reason="needs the dask extra")
def test_dask_on_a_local_cluster_agrees_with_stream(big):
    """The same maps and merges as Dask tasks on a LocalCluster of 2 workers that the test
    starts and stops; same exact figures and same levels as the stream engine."""
    from distributed import LocalCluster

    _, seven, _ = big
    kw = dict(sample_rows=1500, probes=["twins", "timing"], **ARGS)
    stream = fa.audit(str(seven), engine="stream", **kw)
    with LocalCluster(n_workers=2, threads_per_worker=1, dashboard_address=None) as cluster:
        dask = fa.audit(str(seven), engine="dask", scheduler=cluster.scheduler_address, **kw)
    assert dask.document["settings"]["engine"] == "dask"
    assert dask.document["settings"]["exact"] == stream.document["settings"]["exact"]
    assert dask.document["columns"] == stream.document["columns"]


def test_corrupt_parquet_under_auto_and_stream_exits_2(tmp_path):
    (tmp_path / "bad.parquet").write_bytes(b"not parquet at all")
    for engine in ("auto", "stream"):
        out = runner.invoke(
            app, ["scan", str(tmp_path / "bad.parquet"), "--target", "y", "--engine", engine]
        )
        assert out.exit_code == 2 and "bad.parquet" in out.output, (engine, out.output)


def test_parts_rewritten_between_passes_exit_2(tmp_path):
    """Pass 2 picks the sample by the keys pass 1 kept per batch; a part rewritten with
    another row count in between is named as a changed input, not silently misread."""
    from featureaudit.engines.stream import parquet_dataset, stream_partials
    from featureaudit.errors import InputFileError
    from featureaudit.settings import Settings

    frame = _table(reps=2)
    folder = _write_parts(frame, tmp_path / "parts", 3)
    dataset = parquet_dataset(folder)
    total = len(frame)
    seen = []

    def tick(what: str, rows: int) -> None:
        seen.append(rows)
        if what == "pass 1 of 3" and sum(seen) == total:  # pass 1 done: rewrite one part
            frame.iloc[:10].to_parquet(folder / "part-01.parquet", index=False)

    layout = Layout("split", "train", "target", "decided_at", "entity")
    with pytest.raises(InputFileError, match="the Parquet parts"):  # changed, or unreadable
        stream_partials(dataset, layout, Settings(sample_rows=200), tick)
    # a batch without its pass-1 keys, or with another row count, is the same changed input
    import pyarrow as pa

    from featureaudit.engines.stream import _picked

    batch = pa.Table.from_pandas(frame.iloc[:20], preserve_index=False)
    keys = (np.arange(19, dtype=np.uint64), np.array(["train\t0"]), np.zeros(19, np.uint16))
    for kept in (None, keys):
        with pytest.raises(InputFileError, match="changed while they were read"):
            _picked(batch, kept, {"train\t0": (10, 5)})


def test_memory_engine_verdicts_do_not_depend_on_row_order(wine):
    # scikit-learn's wine data with a noisy copy of the class and copied rows across a
    # random split: the reference model saw its rows in file order, so shuffling the file
    # moved its power (0.9985 vs 0.9970 in one such table, enough to flip the copy between
    # medium and high); every figure must stay, only the finding about the file's own order
    # may differ
    frame = wine.copy()
    for seed in (0, 1):  # two rounds of copies: 30 copied rows, the last round's split
        rng = np.random.default_rng(seed)
        frame["split"] = np.where(rng.random(len(frame)) < 0.75, "train", "test")
        noise = rng.normal(0, frame["cultivar"].std() * 0.3, len(frame))
        frame["noisy_copy"] = frame["cultivar"] + noise
        copied = frame[frame["split"] == "train"].sample(15, random_state=seed)
        frame = pd.concat([frame, copied.assign(split="test")], ignore_index=True)

    def verdicts(f: pd.DataFrame) -> tuple[dict, list, dict]:
        doc = fa.audit(f, target="cultivar", split_column="split", seed=0, progress=False).document
        columns = {c["column"]: c["level"] for c in doc["columns"]}
        found = [d for d in doc["dataset_findings"] if d["kind"] != "row_order_tells_target"]
        reference = {
            c["column"]: round(e["detail"]["reference_power"], 9)
            for c in doc["columns"]
            for e in c["evidence"]
            if e["probe"] == "solo" and e["detail"].get("reference_power") is not None
        }
        return columns, sorted((d["kind"], d["level"]) for d in found), reference

    first = verdicts(frame)
    for order in (7, 8):
        assert verdicts(frame.sample(frac=1, random_state=order).reset_index(drop=True)) == first


def test_bucketed_copy_counts_equal_pandas_on_whole_sets():
    """Pass 3's bucketed spill against pandas on the whole hash sets: a hash falls in one
    bucket on both sides, so the per-bucket counts add up to the exact totals."""
    import tempfile

    from featureaudit.engines.spill import BUCKETS, HashSpill

    rng = np.random.default_rng(5)
    train = rng.integers(0, 2**63, 20_000, dtype=np.uint64) * np.uint64(2)  # all top bits
    held = rng.integers(0, 2**63, 6_000, dtype=np.uint64)
    held[:700] = train[rng.choice(train.size, 700)]  # copies, some of one training row twice
    ent_train, ent_held = rng.integers(0, 3000, 20_000), rng.integers(2000, 5000, 6_000)
    with tempfile.TemporaryDirectory() as folder:
        spill = HashSpill(folder, entities=True)
        for part in np.array_split(np.arange(train.size), 7):  # batches of either side
            spill.add("train", train[part])
            spill.add("train_entities", ent_train[part].astype(np.uint64) << np.uint64(51))
        for part in np.array_split(np.arange(held.size), 3):
            spill.add("heldout", held[part])
            spill.add("heldout_entities", ent_held[part].astype(np.uint64) << np.uint64(51))
        got = spill.counts()
    used = {int(h) >> 59 for h in train}
    assert len(used) == BUCKETS  # the test reaches every bucket
    assert got.distinct_training_rows == pd.Series(train).nunique()
    assert got.heldout_rows == held.size
    assert got.heldout_with_twin == int(pd.Series(held).isin(set(train.tolist())).sum())
    assert got.heldout_with_shared_entity == int(pd.Series(ent_held).isin(ent_train).sum())


def test_a_full_spill_disk_exits_2_naming_tmpdir(monkeypatch, tmp_path):
    import errno

    from featureaudit.engines import spill as spill_module
    from featureaudit.errors import InputFileError

    class Full:
        def write(self, data: bytes) -> int:
            raise OSError(errno.ENOSPC, "No space left on device")

        def close(self) -> None:
            pass

    hashes = spill_module.HashSpill(str(tmp_path), entities=False)
    hashes._files = {key: Full() for key in hashes._files}
    with pytest.raises(InputFileError, match="TMPDIR"):
        hashes.add("heldout", np.arange(10, dtype=np.uint64))
    keys = spill_module.KeySpill(str(tmp_path))
    keys._keys = Full()
    with pytest.raises(InputFileError, match="no space left"):
        keys.write(np.arange(3, dtype=np.uint64), np.array(["train"]), np.zeros(3, np.uint16))


def test_stream_leaves_no_spill_files_and_reads_any_row_groups(big, monkeypatch, tmp_path):
    """The spill folder is removed after the audit; parts written with small row groups give
    the same exact figures as the same rows in one row group each."""
    import tempfile

    frame, seven, _ = big
    spills = tmp_path / "tmp"
    spills.mkdir()
    monkeypatch.setattr(tempfile, "tempdir", str(spills))
    small = tmp_path / "small"
    small.mkdir()
    for i, chunk in enumerate(np.array_split(np.arange(len(frame)), 4)):
        frame.iloc[chunk].to_parquet(small / f"p{i}.parquet", index=False, row_group_size=700)
    a = fa.audit(str(small), engine="stream", sample_rows=500, probes=["timing"], **ARGS)
    b = fa.audit(str(seven), engine="stream", sample_rows=500, probes=["timing"], **ARGS)
    assert a.document["settings"]["exact"] == b.document["settings"]["exact"]
    assert list(spills.iterdir()) == []


def test_a_part_without_a_column_exits_2_naming_it(tmp_path):
    frame = _table(reps=2)
    folder = _write_parts(frame, tmp_path / "parts", 2)
    frame.iloc[:50].drop(columns=["mean radius"]).to_parquet(folder / "part-02.parquet")
    out = _scan_stream(folder, "--out", str(tmp_path / "r"))
    assert out.exit_code == 2 and "part-02.parquet" in out.output, out.output
    assert not (tmp_path / "r").exists()


def test_sampled_figures_fall_within_their_stated_interval(big):
    """On a sample of 3,000 of 11,380 rows, each column's out-of-fold AUC lies within 4 of its
    stated standard errors (Hanley-McNeil, both runs' combined) of the whole table's, and the
    sample's share of held-out rows with an exact copy within 4 binomial SEs of the exact
    share counted over every row (scikit-learn's breast-cancer rows, `_table`)."""
    frame, seven, _ = big
    mem = fa.audit(str(seven), engine="memory", probes=["solo", "twins"], **ARGS).document
    sam = fa.audit(
        str(seven), engine="stream", sample_rows=3000, probes=["solo", "twins"], **ARGS
    ).document

    def aucs(doc: dict) -> dict:
        return {
            c["column"]: (e["detail"]["oof_value"], e["detail"]["se"])
            for c in doc["columns"]
            for e in c["evidence"]
            if e["probe"] == "solo" and e["detail"].get("se") is not None
        }

    full, part = aucs(mem), aucs(sam)
    assert len(part) >= 30
    for name, (value, se) in part.items():
        whole, se_whole = full[name]
        assert abs(value - whole) <= 4 * np.hypot(se, se_whole), name
    exact = sam["settings"]["exact"]["share_heldout_with_exact_twin"]
    twins = next(f for f in sam["dataset_findings"] if f["kind"] == "duplicate_rows_across_split")
    held = twins["detail"]["heldout_rows"]
    share = twins["detail"]["heldout_rows_with_exact_twin"] / held
    assert abs(share - exact) <= 4 * np.sqrt(exact * (1 - exact) / held)


def test_sample_keys_hash_the_declared_features_only():
    import pyarrow as pa

    from featureaudit.engines.stream import stream_layout

    def schema(names: list[str]) -> pa.Schema:
        return pa.schema([(n, pa.float64()) for n in names])

    names = ["row_id", "a", "b", "note", "entity", "target", "split", "decided_at", "fold"]
    dictionary = pd.DataFrame(
        {"column": ["row_id", "note", "b"], "role": ["id", "ignore", "feature"]}
    )
    build = dict(ARGS, dictionary=dictionary, fold_column="fold")
    assert stream_layout(schema(names), build).keys == ("a", "b")
    # nothing declared: every column but the split
    layout = stream_layout(schema(["a", "split"]), {"split_column": "split"})
    assert layout.key_columns(["a", "split"]) == ["a"]


@pytest.mark.parametrize("name", ["ref_id", "reference"])
def test_an_undeclared_identifier_is_named_or_warned(big, tmp_path, name):
    """Copies that differ in a unique text column the inputs do not declare: named like an
    identifier, the sample's keys leave it out and keep each copy with its source; named
    otherwise, the sample splits them and a warning says the copy finding understates."""
    frame, _, _ = big
    frame = frame.assign(**{name: [f"r{i:06d}" for i in range(len(frame))]})
    folder = _write_parts(frame, tmp_path / "parts", 4)
    doc = fa.audit(
        str(folder), engine="stream", sample_rows=3000, probes=["twins"], **ARGS
    ).document
    warned = [w for w in doc["warnings"] if "understates" in w]
    assert bool(warned) == (name == "reference"), doc["warnings"]
    # the identifier found by its values makes the features differ from the declared ones:
    # a third pass hashes those, and counts the same copies as pandas on the features
    passes = doc["settings"]["methods"]["engine"]
    assert ("three passes" if name == "reference" else "two passes") in passes
    features = [c for c in frame.columns if c not in ("entity", "target", "split", "decided_at")]
    features.remove(name)
    train, held = frame[frame["split"] == "train"], frame[frame["split"] == "test"]
    twins = held[features].merge(train[features].drop_duplicates(), how="inner")
    assert doc["settings"]["exact"]["heldout_rows_with_exact_twin"] == len(twins)


def test_a_sample_keeps_natural_copies_natural(tmp_path):
    """statsmodels' fair data (6,366 survey rows of few-valued answers, no split): many rows
    are natural copies. A content-keyed sample keeps copies together, so its copy share is
    the whole table's; judged against chance among the sample's own rows it looked like a
    pipeline's copies (high on a 3,000-row sample in 3 of 3 seeds); chance is reckoned among
    the whole table's rows, as the memory engine does."""
    import statsmodels.api as sm

    frame = sm.datasets.fair.load_pandas().data.copy()
    frame["had_affair"] = (frame.pop("affairs") > 0).astype(int)
    folder = _write_parts(frame, tmp_path / "parts", 4)
    for seed in (0, 1):
        doc = fa.audit(
            str(folder),
            target="had_affair",
            engine="stream",
            sample_rows=3000,
            probes=["twins"],
            seed=seed,
        ).document
        found = {f["kind"]: f for f in doc["dataset_findings"]}
        assert found["duplicate_rows_across_split"]["level"] not in ("high", "critical")


def test_fitted_steps_are_not_judged_on_a_sample(big, tmp_path):
    """A scaler fitted on all rows (scikit-learn's StandardScaler on breast-cancer rows) is
    caught when the sample holds every row; on a sample, where the all-rows fingerprint
    cannot hold and chance matches raised a clean column, fitscope says it did not run."""
    from sklearn.preprocessing import StandardScaler

    frame, _, _ = big
    frame = frame.copy()
    frame["mean radius"] = StandardScaler().fit_transform(frame[["mean radius"]]).ravel()
    folder = _write_parts(frame, tmp_path / "parts", 4)
    whole = fa.audit(str(folder), engine="stream", sample_rows=len(frame), **ARGS).document
    row = next(c for c in whole["columns"] if c["column"] == "mean radius")
    assert "fit_on_all_rows" in row["kinds"] and row["level"] in ("high", "critical")
    part = fa.audit(str(folder), engine="stream", sample_rows=3000, **ARGS).document
    assert not any("fit_on_all_rows" in c["kinds"] for c in part["columns"])
    assert any(s["probe"] == "fitscope" and "sample" in s["reason"] for s in part["skipped"])


def test_parts_with_promotable_types_are_read_as_one_table(tmp_path):
    """pandas writes a whole-number column with gaps as floats and text as categories or
    strings: parts that differ so read as one table (the same exact figures as one part)."""
    frame = _table(reps=2)
    frame["visits"] = np.arange(len(frame)) % 7
    frame["kind"] = np.where(np.arange(len(frame)) % 3 == 0, "a", "b")
    whole = tmp_path / "whole"
    whole.mkdir()
    frame.to_parquet(whole / "all.parquet", index=False)
    mixed = tmp_path / "mixed"
    mixed.mkdir()
    half = len(frame) // 2
    frame.iloc[:half].to_parquet(mixed / "p0.parquet", index=False)
    tail = frame.iloc[half:].assign(
        visits=frame["visits"].iloc[half:].astype(float),
        kind=frame["kind"].iloc[half:].astype("category"),
    )
    tail.to_parquet(mixed / "p1.parquet", index=False)
    kw = dict(sample_rows=400, probes=["timing"], **ARGS)
    a = fa.audit(str(whole), engine="stream", **kw).document["settings"]["exact"]
    b = fa.audit(str(mixed), engine="stream", **kw).document["settings"]["exact"]
    assert a == b


@pytest.mark.parametrize("flag", ["--entity", "--label-time", "--cutoff-time"])
def test_a_flag_naming_a_missing_column_exits_2_before_reading(big, flag, tmp_path):
    _, seven, _ = big
    out = _scan_stream(seven, flag, "nope", "--out", str(tmp_path / "r"))
    assert out.exit_code == 2 and "'nope'" in out.output and flag in out.output, out.output


def test_a_numeric_target_keeps_side_only_strata_per_batch(diabetes):
    """A numeric target has a value per row: a batch keeps its rows' sides, not 65,536 labels
    (the sample is stratified by side only for such a target anyway)."""
    import pyarrow as pa

    from featureaudit.engines.stream import FirstPass
    from featureaudit.settings import Settings

    frame = diabetes.assign(split=np.where(np.arange(len(diabetes)) % 4 == 0, "test", "train"))
    batch = pa.Table.from_pandas(frame, preserve_index=False)
    layout = Layout("split", "train", "progression")
    part = FirstPass.map(batch, layout, Settings(sample_rows=100), keep_keys=True)
    assert part.row_keys is not None
    assert sorted(part.row_keys[1]) == ["heldout", "train"]


def test_stream_sample_does_not_follow_row_order_when_keys_tie(tmp_path):
    """Few-valued features: many rows share the features' key and differ in time and entity;
    the tie-break over the other columns takes the same rows whatever the file's order."""
    rng = np.random.default_rng(4)
    n = 4000
    frame = pd.DataFrame(
        {
            "a": rng.integers(0, 3, n),
            "b": rng.integers(0, 2, n),
            "target": rng.integers(0, 2, n),
            "entity": rng.integers(0, 900, n),
            "decided_at": pd.Timestamp("2024-01-01")
            + pd.to_timedelta(rng.integers(0, 9000, n), "h"),
            "split": np.where(rng.random(n) < 0.75, "train", "test"),
        }
    )
    runs = []
    for order in (None, 1):
        folder = _write_parts(frame, tmp_path / f"parts{order}", 3, shuffle_seed=order)
        doc = fa.audit(str(folder), engine="stream", sample_rows=500, **ARGS).document
        runs.append((doc["columns"], doc["dataset_findings"]))
    assert runs[0] == runs[1]
