"""The ``stream`` engine: a Parquet file or folder read batch by batch in three passes.

Pass 1 maps every batch into the row counts (per partition and class), the label-time
range per side and the seeded sample's keys (bottom-k per stratum, keys only), and keeps
each row's key and stratum; pass 2 takes the rows those keys pick, without converting or
hashing a batch again; pass 3, once the sample has settled which columns are features,
maps every batch into the feature-row hashes and entity hashes per side. Partials merge as
a binary counter does (O(n log n) over n batches). Memory: one record batch (at most one
Parquet row group's worth of decoded pages), the sample, twice the sample's size in keys
per stratum, 10 bytes a row for pass 1's keys and strata, and 8 bytes per distinct row
hash (the exact copy count needs the set of training rows). The probes then run on the
sample, and the exact figures are reported beside them in ``settings.exact``.
"""

from __future__ import annotations

import os
from collections.abc import Callable, Iterator
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any, TypeVar

import numpy as np
import pandas as pd
import pyarrow as pa
import pyarrow.dataset as ds

from featureaudit.engines.partials import (
    CopyPartial,
    CountPartial,
    Layout,
    exact_statistics,
    merge_all,
    sides,
)
from featureaudit.errors import InputFileError, SettingError
from featureaudit.findings import Findings
from featureaudit.io import normalise_frame
from featureaudit.sample import MAX_CLASSES, SampleRows, SampleSketch, content_keys
from featureaudit.settings import Settings

__all__ = ["parquet_dataset", "stream_partials", "stream_audit", "BATCH_ROWS"]

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
    try:
        return ds.dataset([str(f) for f in files], format="parquet")
    except (pa.ArrowInvalid, OSError) as exc:
        raise InputFileError(f"cannot read {str(p)!r} as Parquet: {exc}.") from exc


def _batches(data: ds.Dataset) -> Iterator[pa.Table]:
    try:
        # no read-ahead: pyarrow's default holds up to 16 batches of 4 files at once
        for batch in data.to_batches(
            batch_size=BATCH_ROWS, batch_readahead=0, fragment_readahead=0
        ):
            if batch.num_rows:
                yield pa.Table.from_batches([batch])
    except (pa.ArrowInvalid, pa.ArrowTypeError, OSError) as exc:
        first = str(exc).strip().splitlines()[0] if str(exc).strip() else type(exc).__name__
        raise InputFileError(
            f"cannot read the Parquet parts: {first}. Check that every part is complete and "
            "that the parts share their columns' types."
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
    With ``keep_keys``, each batch's row keys and strata too (10 bytes a row), so that pass
    2 picks the sample's rows without converting or hashing a batch again."""

    counts: CountPartial
    sketch: SampleSketch
    values: set[str]
    row_keys: list[tuple[np.ndarray, np.ndarray, np.ndarray]] = field(default_factory=list)

    @classmethod
    def map(
        cls, batch: pa.Table, layout: Layout, settings: Settings, keep_keys: bool = False
    ) -> FirstPass:
        frame = _frame(batch)
        key_columns = [c for c in batch.schema.names if c != layout.split_column]
        strata = _strata(frame, layout)
        keys = content_keys(frame, key_columns, settings.seed)
        sketch = SampleSketch(settings.sample_rows)
        sketch.add(None, keys, strata)
        labels, inverse = np.unique(strata, return_inverse=True)
        values = {s.split("\t", 1)[-1] for s in labels}
        kept = [(keys, labels, inverse.astype(np.uint16))] if keep_keys else []
        return cls(CountPartial.map(frame, layout), sketch, values, kept)._checked()

    def merge(self, other: FirstPass) -> FirstPass:
        values = self.values | other.values
        merged = FirstPass(
            self.counts.merge(other.counts),
            self.sketch.merge(other.sketch),
            values,
            self.row_keys + other.row_keys,
        )
        return merged._checked()

    def _checked(self) -> FirstPass:
        if len(self.values) > MAX_CLASSES:  # a numeric target: stratified by side only
            self.sketch = self.sketch.collapse()
            self.values = set(sorted(self.values)[: MAX_CLASSES + 1])
        return self


def stream_partials(
    data: ds.Dataset, layout: Layout, settings: Settings, tick: Tick | None = None
) -> tuple[CountPartial, pa.Table]:
    """Passes 1 and 2: counts, time ranges and the sample's keys; then the sample's rows,
    picked by the keys pass 1 kept."""
    merged = merge_all(
        _ticked(FirstPass.map(b, layout, settings, keep_keys=True), b, tick, "pass 1 of 3")
        for b in _batches(data)
    )
    if merged is None:
        raise InputFileError("the Parquet table has no rows; pass a table with data rows.")
    cut = merged.sketch.cutoffs(settings.sample_rows)
    kept = iter(merged.row_keys)
    rows = merge_all(
        _ticked(_picked(b, next(kept, None), cut), b, tick, "pass 2 of 3") for b in _batches(data)
    )
    if rows is None or next(kept, None) is not None:
        raise InputFileError(_CHANGED)
    return merged.counts, rows.draw()


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
    key_columns = [c for c in batch.schema.names if c != layout.split_column]
    out = SampleRows(cut)
    strata = _strata(frame, layout, by_side=all("\t" not in k for k in cut))
    out.add(batch, content_keys(frame, key_columns, settings.seed), strata)
    return out


def copy_partials(
    data: ds.Dataset, layout: Layout, train_max: float | None, tick: Tick | None = None
) -> CopyPartial:
    """Pass 3: feature-row and entity hashes per side, merged over every batch."""
    columns = list(
        dict.fromkeys([*layout.features, layout.split_column, layout.entity, layout.label_time])
    )
    picked = [c for c in columns if c]
    step = "pass 3 of 3"
    copies = merge_all(
        _ticked(CopyPartial.map(_frame(b.select(picked)), layout, train_max), b, tick, step)
        for b in _batches(data)
    )
    return copies if copies is not None else CopyPartial()


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
    layout = Layout(
        split_column=build.get("split_column"),
        train_value=str(build.get("train_value", "train")),
        target=build.get("target"),
        label_time=build.get("label_time"),
        entity=build.get("entity"),
    )
    for flag, col in (("--split-column", layout.split_column), ("--target", layout.target)):
        if col is not None and col not in dataset.schema.names:
            raise SettingError(f"{flag} column {col!r} is not in {str(data)!r}.")
    counts, drawn = stream_partials(dataset, layout, settings, tick)
    sample = drawn.to_pandas()
    source = build.get("source") or Path(data).name
    table = build_table(sample, **{**build, "source": source})
    layout = Layout(**{**layout.__dict__, "features": tuple(table.features)})
    train_max = counts.times.get("train", [None, None])[1]
    copies = copy_partials(dataset, layout, train_max, tick)
    findings = run_audit(table, settings, probes=probes, progress=False)
    exact = exact_statistics(counts, copies)
    _report_engine(findings.document, exact, table.n_rows, layout, "stream", "three passes")
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
