"""Exact, mergeable statistics: a map over one partition and a merge of two partials.

The same functions serve every engine: the memory engine maps the whole table as one
partition, the stream engine maps record batches, the Dask engine maps its partitions.
Pass 1 (:class:`CountPartial`) needs only the split and target columns; pass 2
(:class:`CopyPartial`) needs the feature list, which the sample settles.
"""

from __future__ import annotations

from collections import Counter
from collections.abc import Iterable
from dataclasses import dataclass, field
from typing import Any, Protocol, TypeVar

import numpy as np
import pandas as pd

from featureaudit.hashing import row_hashes
from featureaudit.times import as_datetime

__all__ = [
    "Layout",
    "CountPartial",
    "CopyPartial",
    "CopyCounts",
    "copy_counts",
    "unique_counts",
    "batch_hashes",
    "heldout_times",
    "sides",
    "exact_statistics",
    "merge_all",
]

MISSING = "(missing)"


class _Mergeable(Protocol):
    def merge(self: P, other: P) -> P: ...


P = TypeVar("P", bound=_Mergeable)


def merge_all(parts: Iterable[P]) -> P | None:
    """Merge partials in order as a binary counter does: only two of equal standing merge,
    so n partials cost O(n log n) work, not the O(n^2) of folding each batch into a growing
    total (10 million rows of hashes folded 150 times); None when there are none."""
    stack: list[tuple[int, P]] = []
    for part in parts:
        level = 0
        while stack and stack[-1][0] == level:
            part = stack.pop()[1].merge(part)
            level += 1
        stack.append((level, part))
    out: P | None = None
    for _, part in stack:
        out = part if out is None else out.merge(part)
    return out


@dataclass(frozen=True)
class Layout:
    """Which columns play which part in the exact statistics."""

    split_column: str | None = None
    train_value: str = "train"
    target: str | None = None
    label_time: str | None = None
    entity: str | None = None
    features: tuple[str, ...] = ()
    keys: tuple[str, ...] = ()  # columns of the sample's row keys (empty: all but the split)

    def key_columns(self, names: list[str]) -> list[str]:
        """The columns of ``names`` that a row's sample key hashes."""
        if self.keys:
            return [c for c in names if c in set(self.keys)]
        return [c for c in names if c != self.split_column]


def _text(s: pd.Series) -> np.ndarray:
    """Values as text with missing ones as ``MISSING`` (the partition names build_table uses)."""
    values = np.asarray(s.astype(object), dtype=object)
    return np.where(pd.isna(values), MISSING, values).astype(str)


def sides(frame: pd.DataFrame, layout: Layout) -> np.ndarray:
    """True for held-out rows (split value other than the training value, or missing)."""
    if layout.split_column is None:
        return np.zeros(len(frame), dtype=bool)
    return _text(frame[layout.split_column]) != str(layout.train_value)


def _epoch_ns(s: pd.Series, column: str) -> np.ndarray:
    t = as_datetime(s, column=column, what="label time")
    if getattr(t.dt, "tz", None) is not None:
        t = t.dt.tz_convert("UTC").dt.tz_localize(None)
    values = t.to_numpy(dtype="datetime64[ns]")
    out = values.astype("int64").astype("float64")
    out[np.isnat(values)] = np.nan
    return out


@dataclass
class CountPartial:
    """Rows per partition and per (partition, target value); label-time range per side."""

    partitions: Counter[str] = field(default_factory=Counter)
    classes: Counter[tuple[str, str]] = field(default_factory=Counter)
    times: dict[str, list[float]] = field(default_factory=dict)  # side -> [min, max] in ns

    @classmethod
    def map(cls, frame: pd.DataFrame, layout: Layout) -> CountPartial:
        out = cls()
        part = (
            _text(frame[layout.split_column])
            if layout.split_column
            else np.full(len(frame), "all rows")
        )
        out.partitions.update(dict(zip(*np.unique(part, return_counts=True), strict=True)))
        if layout.target is not None:
            pairs = pd.DataFrame({"p": part, "y": _text(frame[layout.target])})
            out.classes.update(pairs.value_counts().to_dict())
        if layout.label_time is not None:
            t = _epoch_ns(frame[layout.label_time], layout.label_time)
            held = sides(frame, layout)
            for side, rows in (("train", ~held), ("heldout", held)):
                v = t[rows]
                v = v[np.isfinite(v)]
                if v.size:
                    out.times[side] = [float(v.min()), float(v.max())]
        return out

    def merge(self, other: CountPartial) -> CountPartial:
        out = CountPartial(self.partitions + other.partitions, self.classes + other.classes)
        for side in set(self.times) | set(other.times):
            a, b = self.times.get(side), other.times.get(side)
            out.times[side] = [min(a[0], b[0]), max(a[1], b[1])] if a and b else list(a or b or [])
        return out


def unique_counts(keys: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    values, counts = np.unique(keys, return_counts=True)
    return values, counts.astype(np.int64)


def _merge_counts(
    a: tuple[np.ndarray, np.ndarray], b: tuple[np.ndarray, np.ndarray]
) -> tuple[np.ndarray, np.ndarray]:
    keys = np.concatenate([a[0], b[0]])
    counts = np.concatenate([a[1], b[1]])
    values, inverse = np.unique(keys, return_inverse=True)
    return values, np.bincount(inverse, weights=counts, minlength=values.size).astype(np.int64)


def _hashable(frame: pd.DataFrame, columns: list[str]) -> pd.DataFrame:
    """Text columns as categoricals, so a value hashes alike in every partition whatever
    dtype the partition's reader gave it."""
    out = {}
    for c in columns:
        s = frame[c]
        out[c] = s.astype("category") if s.dtype == object else s
    return pd.DataFrame(out, index=frame.index, copy=False)


_EMPTY = (np.empty(0, np.uint64), np.empty(0, np.int64))


def batch_hashes(
    frame: pd.DataFrame, layout: Layout, train_max: float | None = None
) -> tuple[np.ndarray, np.ndarray, np.ndarray | None, int]:
    """One partition's copy statistics, row by row: held-out flags, feature-row hashes,
    entity hashes (None without an entity) and held-out rows labelled no later than
    ``train_max``. Every engine's copy counts start here."""
    held = sides(frame, layout)
    h = row_hashes(_hashable(frame, list(layout.features)), list(layout.features))
    e = None
    if layout.entity is not None:
        e = row_hashes(_hashable(frame, [layout.entity]), [layout.entity])
    before = 0
    if train_max is not None:
        before = int((heldout_times(frame, layout, held) <= train_max).sum())
    return held, h, e, before


def heldout_times(frame: pd.DataFrame, layout: Layout, held: np.ndarray) -> np.ndarray:
    """The held-out rows' label times in ns (NaN where missing; empty without a label time)."""
    if layout.label_time is None:
        return np.empty(0)
    return _epoch_ns(frame[layout.label_time], layout.label_time)[held]


@dataclass
class CopyPartial:
    """Feature-row hashes per side (distinct values with counts), entity hashes per side,
    and held-out rows labelled no later than a given training maximum."""

    train: tuple[np.ndarray, np.ndarray] = _EMPTY
    heldout: tuple[np.ndarray, np.ndarray] = _EMPTY
    train_entities: tuple[np.ndarray, np.ndarray] = _EMPTY
    heldout_entities: tuple[np.ndarray, np.ndarray] = _EMPTY
    heldout_before_train_max: int = 0

    @classmethod
    def map(
        cls, frame: pd.DataFrame, layout: Layout, train_max: float | None = None
    ) -> CopyPartial:
        held, h, e, before = batch_hashes(frame, layout, train_max)
        out = cls(unique_counts(h[~held]), unique_counts(h[held]))
        if e is not None:
            out.train_entities = unique_counts(e[~held])
            out.heldout_entities = unique_counts(e[held])
        out.heldout_before_train_max = before
        return out

    def merge(self, other: CopyPartial) -> CopyPartial:
        return CopyPartial(
            _merge_counts(self.train, other.train),
            _merge_counts(self.heldout, other.heldout),
            _merge_counts(self.train_entities, other.train_entities),
            _merge_counts(self.heldout_entities, other.heldout_entities),
            self.heldout_before_train_max + other.heldout_before_train_max,
        )


def _rows_in(a: tuple[np.ndarray, np.ndarray], pool: np.ndarray) -> int:
    """Rows counted in ``a`` whose key is in ``pool`` (both sorted distinct)."""
    return int(a[1][np.isin(a[0], pool, assume_unique=True)].sum())


@dataclass(frozen=True)
class CopyCounts:
    """The exact copy figures, summed over buckets or counted from whole hash sets."""

    distinct_training_rows: int
    heldout_rows: int
    heldout_with_twin: int
    heldout_with_shared_entity: int | None  # None without an entity column
    heldout_before_train_max: int

    def __add__(self, other: CopyCounts) -> CopyCounts:
        entity = (
            None
            if self.heldout_with_shared_entity is None and other.heldout_with_shared_entity is None
            else (self.heldout_with_shared_entity or 0) + (other.heldout_with_shared_entity or 0)
        )
        return CopyCounts(
            self.distinct_training_rows + other.distinct_training_rows,
            self.heldout_rows + other.heldout_rows,
            self.heldout_with_twin + other.heldout_with_twin,
            entity,
            self.heldout_before_train_max + other.heldout_before_train_max,
        )


def copy_counts(copies: CopyPartial) -> CopyCounts:
    """The exact copy figures of a merged :class:`CopyPartial`."""
    entities = bool(copies.heldout_entities[0].size)
    return CopyCounts(
        int(copies.train[0].size),
        int(copies.heldout[1].sum()),
        _rows_in(copies.heldout, copies.train[0]),
        _rows_in(copies.heldout_entities, copies.train_entities[0]) if entities else None,
        copies.heldout_before_train_max,
    )


def exact_statistics(
    counts: CountPartial, copies: CopyPartial | CopyCounts | None
) -> dict[str, Any]:
    """The merged partials as the JSON block ``settings.exact`` (every figure exact)."""
    if isinstance(copies, CopyPartial):
        copies = copy_counts(copies)
    held_rows = copies.heldout_rows if copies is not None else None
    out: dict[str, Any] = {
        "rows": int(sum(counts.partitions.values())),
        "partitions": {str(k): int(v) for k, v in sorted(counts.partitions.items())},
        "rows_per_class": {f"{p}/{y}": int(n) for (p, y), n in sorted(counts.classes.items())},
        "label_time_range": {
            side: [str(pd.Timestamp(int(lo))), str(pd.Timestamp(int(hi)))]
            for side, (lo, hi) in sorted(counts.times.items())
        },
    }
    if copies is None:
        return out
    out["distinct_training_rows"] = copies.distinct_training_rows
    if held_rows:
        twins = copies.heldout_with_twin
        out["heldout_rows_with_exact_twin"] = twins
        out["share_heldout_with_exact_twin"] = twins / held_rows
        if "train" in counts.times:
            out["heldout_rows_labelled_by_training_max"] = copies.heldout_before_train_max
        if copies.heldout_with_shared_entity is not None:
            shared = copies.heldout_with_shared_entity
            out["heldout_rows_with_shared_entity"] = shared
            out["share_heldout_with_shared_entity"] = shared / held_rows
    return out
