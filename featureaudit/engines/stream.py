"""The ``stream`` engine: a Parquet file or folder read batch by batch in two passes (three
when the sample finds an identifier the inputs did not declare).

Pass 1 maps every batch into the row counts (per partition and class), the label-time
range per side and the seeded sample's keys (bottom-k per stratum, keys only), and spills
each row's key and stratum to disk, with its copy hashes (the declared features' row hash
and the entity's, per side, in buckets by their top bits) and the held-out label times;
pass 2 takes the rows the keys pick, without converting or hashing a batch again. When the
sample's audit table has other features than those declared (a column taken for an
identifier by its values), a third pass hashes those instead. Copies and shared entities
are then counted one bucket at a time. Partials merge as a binary counter does (O(n log n)
over n batches). Memory does not grow with the row count: one record batch (read page by
page from each file, whatever its row groups), the sample, twice the sample's size in keys
per stratum, and one bucket of hashes; the disk holds about 34 bytes a row meanwhile
(``spill``). The probes then run on the sample, and the exact figures are reported beside
them in ``settings.exact``.
"""

from __future__ import annotations

import os
import shutil
from collections.abc import Callable, Iterator
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any, TypeVar

import numpy as np
import pandas as pd
import pyarrow as pa
import pyarrow.dataset as ds
import pyarrow.parquet as pq

from featureaudit.engines.partials import (
    CopyCounts,
    CountPartial,
    Layout,
    batch_hashes,
    exact_statistics,
    heldout_times,
    merge_all,
    sides,
)
from featureaudit.engines.spill import HashSpill, KeySpill, spill_folder
from featureaudit.errors import InputFileError, SettingError
from featureaudit.findings import Findings
from featureaudit.io import normalise_frame
from featureaudit.sample import MAX_CLASSES, SampleRows, SampleSketch, content_keys
from featureaudit.settings import Settings

__all__ = [
    "parquet_dataset",
    "stream_layout",
    "stream_partials",
    "copy_pass",
    "stream_audit",
    "BATCH_ROWS",
]

BATCH_ROWS = 65_536  # rows per record batch (common practice, no source: pyarrow's default scale)
Tick = Callable[[str, int], None]
T = TypeVar("T")


def parquet_dataset(path: str | os.PathLike[str]) -> ds.Dataset:
    """A pyarrow dataset over a Parquet file or a folder of Parquet parts."""
    p = Path(path)
    if not p.exists():
        raise InputFileError(f"table {str(p)!r} does not exist; pass a Parquet file or folder.")
    if p.is_file() and p.suffix.lower() not in (".parquet", ".pq"):
        raise SettingError(
            f"--engine stream reads Parquet; {str(p)!r} is not a .parquet file. Convert it to "
            "Parquet or pass --engine memory."
        )
    files = (
        [p] if p.is_file() else sorted(f for f in p.rglob("*") if f.suffix in (".parquet", ".pq"))
    )
    if not files:
        raise InputFileError(f"folder {str(p)!r} holds no .parquet files; pass a Parquet folder.")
    if len(files) > 1:  # each part readable, with the first part's columns and types
        from featureaudit.io import check_parquet_parts

        schemas = check_parquet_parts(files, p)
    else:
        try:
            schemas = [pq.read_schema(f) for f in files]
        except (pa.ArrowInvalid, OSError) as exc:
            raise InputFileError(f"cannot read {str(p)!r} as Parquet: {exc}.") from exc
    return ds.dataset([str(f) for f in files], format="parquet", schema=_unified(schemas, p))


def _unified(schemas: list[pa.Schema], path: Path) -> pa.Schema:
    """One schema for every part, as pandas writes them: a column with gaps as floats in one
    part and whole numbers in another reads as floats, categories and text as text; parts
    whose types cannot meet are named. Columns keep the first part's order."""
    try:
        return pa.unify_schemas(schemas, promote_options="permissive")
    except (pa.ArrowInvalid, pa.ArrowTypeError):
        pass
    plain = [
        pa.schema(
            [
                f.with_type(f.type.value_type) if pa.types.is_dictionary(f.type) else f
                for f in schema
            ]
        )
        for schema in schemas
    ]
    try:
        return pa.unify_schemas(plain, promote_options="permissive")
    except (pa.ArrowInvalid, pa.ArrowTypeError) as exc:
        first = str(exc).strip().splitlines()[0]
        raise InputFileError(
            f"the Parquet parts of {str(path)!r} disagree on a column's type ({first}); "
            "write every part with the same types."
        ) from exc


def _batches(data: ds.Dataset, columns: list[str] | None = None) -> Iterator[pa.Table]:
    """Record batches of at most BATCH_ROWS rows, file after file, decoded page by page (no
    pre-buffering of whole row groups), with the table's columns (or ``columns``) in order."""
    names = list(columns or data.schema.names)
    target = pa.schema([data.schema.field(c) for c in names])
    for path in data.files:
        try:
            part = pq.ParquetFile(path, pre_buffer=False, buffer_size=1 << 20)
            try:
                present = set(part.schema_arrow.names)
                missing = [c for c in names if c not in present]
                if missing:
                    raise InputFileError(
                        f"Parquet part {path!r} lacks column {missing[0]!r} that the other "
                        "parts have; give every part the same columns."
                    )
                for batch in part.iter_batches(batch_size=BATCH_ROWS, columns=names):
                    if batch.num_rows:  # every part's batches in the one schema of all parts
                        yield pa.Table.from_batches([batch]).cast(target)
            finally:
                part.close()
        except InputFileError:
            raise
        except (pa.ArrowInvalid, pa.ArrowTypeError, pa.ArrowNotImplementedError, OSError) as exc:
            first = str(exc).strip().splitlines()[0] if str(exc).strip() else type(exc).__name__
            raise InputFileError(
                f"cannot read the Parquet parts ({path!r}): {first}. Check that every part "
                "is complete and that the parts share their columns' types."
            ) from exc


def _frame(batch: pa.Table) -> pd.DataFrame:
    return normalise_frame(batch.to_pandas(), source="batch")


def _strata(frame: pd.DataFrame, layout: Layout, by_side: bool = False) -> np.ndarray:
    """Stratum per row: the side and the target value (the side alone when ``by_side``)."""
    side = np.where(sides(frame, layout), "heldout", "train")
    if layout.target is None or by_side:
        return side
    y = frame[layout.target].astype(object)
    text = np.where(pd.isna(y.to_numpy()), "", y.astype(str).to_numpy())
    return np.char.add(np.char.add(side.astype(str), "\t"), text.astype(str))


@dataclass
class FirstPass:
    """Pass 1's partial: counts and time ranges, the sample's keys, and the target values
    seen (up to one past ``MAX_CLASSES``, after which the sample is stratified by side only).
    ``row_keys`` holds the batch's row keys, stratum labels and stratum codes (10 bytes a
    row) until the stream engine spills them, so that pass 2 picks the sample's rows without
    converting or hashing a batch again."""

    counts: CountPartial
    sketch: SampleSketch
    values: set[str]
    row_keys: tuple[np.ndarray, np.ndarray, np.ndarray] | None = field(default=None)

    @classmethod
    def map(
        cls, batch: pa.Table, layout: Layout, settings: Settings, keep_keys: bool = False
    ) -> FirstPass:
        return cls.from_frame(_frame(batch), batch.schema.names, layout, settings, keep_keys)

    @classmethod
    def from_frame(
        cls,
        frame: pd.DataFrame,
        names: list[str],
        layout: Layout,
        settings: Settings,
        keep_keys: bool = False,
    ) -> FirstPass:
        strata = _strata(frame, layout)
        keys = content_keys(frame, layout.key_columns(names), settings.seed)
        sketch = SampleSketch(settings.sample_rows)
        sketch.add(None, keys, strata)
        labels, inverse = np.unique(strata, return_inverse=True)
        values = {s.split("\t", 1)[-1] for s in labels}
        if keep_keys and len(values) > MAX_CLASSES:  # a numeric target: the sample is by side
            labels, inverse = np.unique(_strata(frame, layout, by_side=True), return_inverse=True)
        kept = (keys, labels, inverse.astype(np.uint16)) if keep_keys else None
        return cls(CountPartial.map(frame, layout), sketch, values, kept)._checked()

    def merge(self, other: FirstPass) -> FirstPass:
        values = self.values | other.values
        merged = FirstPass(self.counts.merge(other.counts), self.sketch.merge(other.sketch), values)
        return merged._checked()

    def _checked(self) -> FirstPass:
        if len(self.values) > MAX_CLASSES:  # a numeric target: stratified by side only
            self.sketch = self.sketch.collapse()
            self.values = set(sorted(self.values)[: MAX_CLASSES + 1])
        return self


def stream_partials(
    data: ds.Dataset,
    layout: Layout,
    settings: Settings,
    tick: Tick | None = None,
    folder: str | None = None,
    copies: HashSpill | None = None,
) -> tuple[CountPartial, pa.Table]:
    """Passes 1 and 2: counts, time ranges and the sample's keys, each row's key spilled to
    ``folder`` (a temporary one by default); then the sample's rows, picked by those keys.
    With ``copies``, pass 1 also spills each batch's copy hashes over ``layout.keys`` and the
    held-out label times, so that no third pass is needed when those are the features."""
    if folder is None:
        with spill_folder() as tmp:
            return stream_partials(data, layout, settings, tick, tmp, copies)
    spill = KeySpill(folder)
    hashed = Layout(**{**layout.__dict__, "features": layout.keys})
    step = "pass 1 of 2" if copies is not None else "pass 1 of 3"

    def first(batch: pa.Table) -> FirstPass:
        frame = _frame(batch)
        part = FirstPass.from_frame(frame, batch.schema.names, layout, settings, keep_keys=True)
        assert part.row_keys is not None
        spill.write(*part.row_keys)
        part.row_keys = None
        if copies is not None:
            _spill_copies(copies, frame, hashed, None)
        return _ticked(part, batch, tick, step)

    merged = merge_all(first(b) for b in _batches(data))
    if merged is None:
        raise InputFileError("the Parquet table has no rows; pass a table with data rows.")
    cut = merged.sketch.cutoffs(settings.sample_rows)
    kept = spill.read()
    step = "pass 2 of 2" if copies is not None else "pass 2 of 3"
    rows = merge_all(
        _ticked(_picked(b, next(kept, None), cut), b, tick, step) for b in _batches(data)
    )
    if rows is None or next(kept, None) is not None:
        raise InputFileError(_CHANGED)
    return merged.counts, rows.draw(whole_row_keys(layout, settings))


def whole_row_keys(layout: Layout, settings: Settings) -> Callable[[pa.Table], np.ndarray]:
    """The sample's tie-break: a key over every column but the split, for the candidate rows
    only (rows tied on the features' key may differ in time, entity or target)."""

    def keys(rows: pa.Table) -> np.ndarray:
        names = [c for c in rows.schema.names if c != layout.split_column]
        return content_keys(_frame(rows), names, settings.seed + 1)

    return keys


def _spill_copies(
    spill: HashSpill, frame: pd.DataFrame, layout: Layout, train_max: float | None
) -> None:
    """One batch's copy hashes per side into ``spill``; its held-out label times too when
    the training maximum is not known yet."""
    held, h, e, before = batch_hashes(frame, layout, train_max)
    spill.add("train", h[~held])
    spill.add("heldout", h[held])
    if e is not None:
        spill.add("train_entities", e[~held])
        spill.add("heldout_entities", e[held])
    if train_max is not None:
        spill.heldout_before_train_max += before
    elif layout.label_time is not None:
        spill.add_times(heldout_times(frame, layout, held))


_CHANGED = (
    "the Parquet parts changed while they were read (another row count on the second pass); "
    "audit a copy that nothing writes to."
)


def _picked(
    batch: pa.Table,
    kept: tuple[np.ndarray, np.ndarray, np.ndarray] | None,
    cut: dict[str, tuple[int, int]],
) -> SampleRows:
    """Pass 2's map: the rows of one batch that the sample takes, by the keys and strata
    pass 1 kept for it (``cut``: per stratum, the cut-off key and quota)."""
    if kept is None or kept[0].size != batch.num_rows:
        raise InputFileError(_CHANGED)
    keys, labels, inverse = kept
    if all("\t" not in k for k in cut):  # stratified by side only
        labels = np.array([label.split("\t", 1)[0] for label in labels])
    out = SampleRows(cut)
    out.add(batch, keys, labels[inverse])
    return out


def _ticked(part: T, batch: pa.Table, tick: Tick | None, what: str) -> T:
    """``part`` unchanged, after telling the progress display that ``batch`` is done."""
    if tick:
        tick(what, batch.num_rows)
    return part


def sample_rows(
    batch: pa.Table, layout: Layout, settings: Settings, cut: dict[str, tuple[int, int]]
) -> SampleRows:
    """Pass 2's map where pass 1's keys were not kept (the Dask engine): the rows of one
    batch that the sample takes, hashed again."""
    frame = _frame(batch)
    out = SampleRows(cut)
    strata = _strata(frame, layout, by_side=all("\t" not in k for k in cut))
    keys = content_keys(frame, layout.key_columns(batch.schema.names), settings.seed)
    out.add(batch, keys, strata)
    return out


def copy_pass(
    data: ds.Dataset,
    layout: Layout,
    train_max: float | None,
    tick: Tick | None = None,
    folder: str | None = None,
) -> CopyCounts:
    """Pass 3: feature-row and entity hashes per side, spilled into buckets, then counted
    one bucket at a time (exact: a hash falls in one bucket on both sides)."""
    if folder is None:
        with spill_folder() as tmp:
            return copy_pass(data, layout, train_max, tick, tmp)
    columns = list(
        dict.fromkeys([*layout.features, layout.split_column, layout.entity, layout.label_time])
    )
    picked = [c for c in columns if c]
    spill = HashSpill(folder, entities=layout.entity is not None)
    for batch in _batches(data, picked):
        _spill_copies(spill, _frame(batch), layout, train_max)
        _ticked(None, batch, tick, "pass 3 of 3")
    return spill.counts()


def _whole_or_text(t: pa.DataType) -> bool:
    if pa.types.is_dictionary(t):
        t = t.value_type
    return bool(
        pa.types.is_integer(t)
        or pa.types.is_string(t)
        or pa.types.is_large_string(t)
        or (hasattr(pa.types, "is_string_view") and pa.types.is_string_view(t))
    )


def stream_layout(schema: pa.Schema, build: dict[str, Any]) -> Layout:
    """The layout of a streamed table from the audit's inputs. The sample's row keys hash the
    features as far as the inputs declare them (not the split, target, times, entity, folds,
    nor a column the dictionary gives another role), the columns the copy search compares:
    a held-out copy of a training row's features then shares its key and the sample keeps
    both or neither, whatever its label time, target or entity (keys over every column kept
    one of 3,000 sampled rows' copies with chance 0.26: 1.5 % of held-out rows sampled with a
    copy against 6.4 % counted over every row). Whole-number and text columns named like an
    identifier are left out too: the audit takes them for identifiers when nearly every
    value is distinct, which only the whole table can tell."""
    from featureaudit.dictionary import id_like_name
    from featureaudit.table import NON_FEATURE_ROLES, _dictionary

    layout = Layout(
        split_column=build.get("split_column"),
        train_value=str(build.get("train_value", "train")),
        target=build.get("target"),
        label_time=build.get("label_time"),
        entity=build.get("entity"),
    )
    declared = {build.get(k) for k in ("split_column", "target", "label_time", "cutoff_time")}
    declared |= {build.get("entity"), build.get("fold_column"), build.get("order")}
    given = build.get("dictionary")
    ddict = _dictionary(given, build.get("encoding")) if given is not None else None
    if ddict is not None:
        roles = ddict.entries
        declared |= {c for c, e in roles.items() if e.role in (*NON_FEATURE_ROLES, "id")}
    names = schema.names
    declared |= {f.name for f in schema if id_like_name(f.name) and _whole_or_text(f.type)}
    keys = tuple(c for c in names if c not in declared)
    return Layout(**{**layout.__dict__, "keys": keys or tuple(layout.key_columns(names))})


_FLAGS = {
    "split_column": "--split-column",
    "target": "--target",
    "label_time": "--label-time",
    "cutoff_time": "--cutoff-time",
    "entity": "--entity",
    "fold_column": "--fold-column",
    "order": "--order",
}


def require_columns(names: list[str], build: dict[str, Any], data: object) -> None:
    """Every column a flag names is in the table, checked before the first pass reads it."""
    for key, flag in _FLAGS.items():
        col = build.get(key)
        if col is not None and col not in names:
            raise SettingError(f"{flag} column {col!r} is not in {str(data)!r}.")


def stream_audit(
    data: str | os.PathLike[str],
    build: dict[str, Any],
    settings: Settings,
    probes: list[str] | None = None,
    tick: Tick | None = None,
) -> Findings:
    """Audit a Parquet file or folder in bounded memory: exact counts and copies in two
    passes, the probes on the seeded sample."""
    from featureaudit.pipeline import run_audit
    from featureaudit.table import build_table

    if build.get("test") is not None:
        raise SettingError(
            "--engine stream reads one table with --split-column; put the held-out rows in "
            "the same folder with a split column, or pass --engine memory with --test."
        )
    dataset = parquet_dataset(data)
    layout = stream_layout(dataset.schema, build)
    require_columns(dataset.schema.names, build, data)
    with spill_folder() as folder:
        early = HashSpill(str(Path(folder) / "copies"), entities=layout.entity is not None)
        counts, drawn = stream_partials(dataset, layout, settings, tick, folder, early)
        sample = drawn.to_pandas()
        source = build.get("source") or Path(data).name
        table = build_table(sample, **{**build, "source": source})
        table.population_rows = int(sum(counts.partitions.values()))
        train_max = counts.times.get("train", [None, None])[1]
        passes = "two passes"
        if set(table.features) == set(layout.keys):  # pass 1 hashed the features: counted
            layout = Layout(**{**layout.__dict__, "features": layout.keys})
            copies = early.counts(train_max)
        else:  # the sample made other columns features (an identifier found by its values)
            early.close()
            for spilled in Path(folder).iterdir():  # room for pass 3's hashes
                shutil.rmtree(spilled) if spilled.is_dir() else spilled.unlink()
            layout = Layout(**{**layout.__dict__, "features": tuple(table.features)})
            copies = copy_pass(dataset, layout, train_max, tick, folder)
            passes = "three passes"
    findings = run_audit(table, settings, probes=probes, progress=False)
    exact = exact_statistics(counts, copies)
    _report_engine(findings.document, exact, table.n_rows, layout, "stream", passes)
    return findings


def _report_engine(
    doc: dict[str, Any],
    exact: dict[str, Any],
    sample_rows: int,
    layout: Layout,
    engine: str,
    passes: str,
) -> None:
    """Put the exact figures and what was sampled into the findings, honestly labelled."""
    rows = exact["rows"]
    s, d = doc["settings"], doc["dataset"]
    s["engine"], s["sample_rows"] = engine, sample_rows
    s["exact"] = exact
    s["sampled"] = (
        "every probe's level and figure (columns, dataset_findings, impact) comes from the "
        f"seeded sample of {sample_rows:,} of {rows:,} rows; settings.exact holds figures "
        "counted over every row"
    )
    s.setdefault("methods", {})["engine"] = (
        f"The {engine} engine read the table in {passes}: row counts per partition and class, "
        "label-time ranges per side, exact copies of training rows among held-out rows "
        "(hashes of the feature columns) and shared entities are counted over every row "
        f"(settings.exact); the probes ran on a seeded sample of {sample_rows:,} rows, "
        "stratified by side and target, drawn by the smallest content-and-seed hashes, so "
        "the same seed gives the same sample whatever the file's partitions or row order."
    )
    _check_copies(doc, exact, engine)
    parts = exact["partitions"]
    d["rows"] = rows
    train = parts.get(layout.train_value, 0) if layout.split_column else rows
    d["train_rows"], d["heldout_rows"] = train, rows - train
    d["partitions"] = dict(parts)
    if isinstance(doc.get("warnings"), list) and sample_rows < rows:
        doc["warnings"].append(
            f"the probes ran on a seeded sample of {sample_rows:,} of {rows:,} rows "
            f"({engine} engine); exact counts are in settings.exact"
        )


def _check_copies(doc: dict[str, Any], exact: dict[str, Any], engine: str) -> None:
    """Warn when the sample shows far fewer held-out rows with an exact copy than every row
    does (beyond 4 binomial SEs): copies that differ in a column the sample's keys hash (an
    identifier the inputs did not declare) are sampled apart, so the sample's copy finding
    understates them."""
    whole = exact.get("share_heldout_with_exact_twin")
    found = [
        f
        for f in doc.get("dataset_findings", [])
        if f.get("kind") == ("duplicate_rows_across_split") and "share_exact" in f.get("detail", {})
    ]
    if whole is None or not found or not isinstance(doc.get("warnings"), list):
        return
    detail = found[0]["detail"]
    held = max(int(detail.get("heldout_rows", 0)), 1)
    seen = float(detail["share_exact"])
    if whole - seen > 4 * np.sqrt(max(whole * (1 - whole), 1e-12) / held):
        doc["warnings"].append(
            f"{whole:.1%} of held-out rows have an exact copy among the training rows over "
            f"every row, but {seen:.1%} in the {engine} engine's sample, so the copy finding "
            "understates them: the copies differ in a column the sample's keys hash; give "
            "identifier columns the role id in the dictionary and audit again"
        )
