"""A seeded, stratified sample that depends on neither row order nor partition boundaries.

Each row gets a key: a hash of its content (every column but the split column) mixed with
the seed. Within each stratum (the split side and the target value) the rows with the
smallest keys are kept (a bottom-k sample). The smallest keys of a union are among the
smallest keys of its parts, so partials computed on any partitioning merge to the same
sample; and a training row and its held-out copy share a key, so copies stay together.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass, field

import numpy as np
import pandas as pd
import pyarrow as pa

from featureaudit.load.io import numeric_view

__all__ = [
    "SampleSketch",
    "SampleRows",
    "content_keys",
    "number_bits",
    "NAN_BITS",
    "order_keys",
    "allocate",
    "MIN_PER_STRATUM",
    "MAX_CLASSES",
]

MIN_PER_STRATUM = 20  # common practice, no source: a rare class keeps this many rows if it has them
MAX_CLASSES = 20  # beyond this many target values the sample is stratified by side only

_MULT = np.uint64(0x9E3779B97F4A7C15)
_M1 = np.uint64(0xBF58476D1CE4E5B9)
_M2 = np.uint64(0x94D049BB133111EB)
NAN_BITS = np.uint64(0x7FF8DEADBEEF0001)


def _splitmix(x: np.ndarray) -> np.ndarray:
    """The splitmix64 finaliser (one-to-one on uint64): spreads every input bit over the key."""
    with np.errstate(over="ignore"):
        x = x ^ (x >> np.uint64(30))
        x = x * _M1
        x = x ^ (x >> np.uint64(27))
        x = x * _M2
        return x ^ (x >> np.uint64(31))


def number_bits(values: np.ndarray) -> np.ndarray:
    """Each float's 64-bit pattern, one pattern for 0.0 and -0.0 and one for every NaN: equal
    numbers get equal codes (row keys here, row hashes in the copy search)."""
    with np.errstate(invalid="ignore"):
        bits = np.add(values, 0.0).view(np.uint64)  # -0.0 + 0.0 is 0.0: one zero, one copy
    bits[np.isnan(values)] = NAN_BITS
    return bits


def _value_codes(s: pd.Series) -> np.ndarray:
    """A uint64 per value that does not depend on the batch it came in (categories hashed by
    their text, so two batches with different category lists agree)."""
    values = numeric_view(s)
    if values is not None:
        return number_bits(values)
    if isinstance(s.dtype, pd.CategoricalDtype):  # each category's text hashed once
        names = np.asarray(s.cat.categories.astype(object), dtype=object).astype(str)
        table = pd.util.hash_array(np.r_[names, ["\x00NA"]].astype(object)).astype(np.uint64)
        return table[s.cat.codes.to_numpy()]  # code -1 (missing) takes the last entry
    text = np.asarray(s.astype(object), dtype=object)
    missing = pd.isna(text)
    text = np.where(missing, "\x00NA", text).astype(str).astype(object)
    return pd.util.hash_array(text).astype(np.uint64)


def content_keys(frame: pd.DataFrame, columns: list[str], seed: int) -> np.ndarray:
    """One uint64 key per row from the values of ``columns`` and ``seed``; equal rows get
    equal keys whatever their position or partition."""
    with np.errstate(over="ignore"):
        h = np.full(len(frame), _splitmix(np.array([seed], dtype=np.uint64))[0], np.uint64)
        spare = np.empty_like(h)
        for name in sorted(columns):
            np.multiply(h, _MULT, out=h)
            np.bitwise_xor(h, _value_codes(frame[name]), out=h)
            _splitmix_inplace(h, spare)
    return h


def _splitmix_inplace(x: np.ndarray, spare: np.ndarray) -> None:
    """:func:`_splitmix` written into ``x`` with one spare buffer: the same bits, without
    the five full-size temporaries a table's worth of columns would otherwise allocate."""
    for shift, mult in ((30, _M1), (27, _M2)):
        np.right_shift(x, np.uint64(shift), out=spare)
        np.bitwise_xor(x, spare, out=x)
        np.multiply(x, mult, out=x)
    np.right_shift(x, np.uint64(31), out=spare)
    np.bitwise_xor(x, spare, out=x)


KEY_COLUMNS = 8  # columns hashed for a row key where the order of rows must not matter (cost)


def order_keys(frame: pd.DataFrame, columns: list[str], seed: int) -> np.ndarray:
    """A row key from a few of ``columns`` (floating-point ones first, by name) and the
    seed: cheap, and equal whatever the file's order; rows equal in those columns tie."""
    floats = sorted(c for c in columns if pd.api.types.is_float_dtype(frame[c]))
    rest = sorted(c for c in columns if c not in set(floats))
    return content_keys(frame, (floats + rest)[:KEY_COLUMNS], seed)


def allocate(counts: dict[str, int], size: int) -> dict[str, int]:
    """Rows per stratum: proportional to ``counts`` (largest remainders), each stratum at
    least ``MIN_PER_STRATUM`` rows or all it has."""
    total = sum(counts.values())
    if total <= size:
        return dict(counts)
    exact = {k: size * n / total for k, n in counts.items()}
    out = {k: int(np.floor(v)) for k, v in exact.items()}
    short = size - sum(out.values())
    for k in sorted(exact, key=lambda k: (-(exact[k] - out[k]), k))[:short]:
        out[k] += 1
    return {k: min(counts[k], max(n, MIN_PER_STRATUM)) for k, n in out.items()}


@dataclass
class SampleSketch:
    """Mergeable partial of the sample: per stratum, the ``size`` rows with the smallest keys
    and the number of rows seen."""

    size: int
    keys: dict[str, np.ndarray] = field(default_factory=dict)
    rows: dict[str, pa.Table] = field(default_factory=dict)
    seen: dict[str, int] = field(default_factory=dict)
    limit: dict[str, np.uint64] = field(default_factory=dict)

    def add(self, batch: pa.Table | None, keys: np.ndarray, strata: np.ndarray) -> None:
        """Map one batch (``keys`` and stratum labels per row) into this partial; with
        ``batch`` None only the keys are kept (the rows are fetched by :class:`SampleRows`)."""
        labels, inverse = np.unique(strata.astype(str), return_inverse=True)
        for i, label in enumerate(labels):
            idx = np.flatnonzero(inverse == i)
            rows = None if batch is None else batch.take(pa.array(idx))
            self._offer(str(label), keys[idx], rows, idx.size)

    def merge(self, other: SampleSketch) -> SampleSketch:
        """Combine two partials; the result is the partial of the union of their rows."""
        out = SampleSketch(
            self.size, dict(self.keys), dict(self.rows), dict(self.seen), dict(self.limit)
        )
        for label in other.keys:
            out._offer(label, other.keys[label], other.rows.get(label), other.seen[label])
        return out

    def collapse(self) -> SampleSketch:
        """One stratum per split side: the strata's side is the text before the first tab."""
        out = SampleSketch(self.size)
        for label in self.keys:
            side = label.split("\t")[0]
            out._offer(side, self.keys[label], self.rows.get(label), self.seen[label])
        return out

    def _offer(self, label: str, keys: np.ndarray, rows: pa.Table | None, seen: int) -> None:
        """Add candidates; compact to the ``size`` smallest keys only when twice that many are
        held, so a batch costs a filter, not a copy of the whole sample."""
        if label in self.keys:
            limit = self.limit.get(label)
            if limit is not None:  # the k-th smallest key so far: larger keys cannot enter
                enter = keys <= limit
                keys = keys[enter]
                rows = None if rows is None else rows.filter(pa.array(enter))
            keys = np.concatenate([self.keys[label], keys])
            if rows is not None:
                rows = pa.concat_tables([self.rows[label], rows], promote_options="default")
            seen += self.seen[label]
        if keys.size > 2 * self.size:
            keep = np.sort(np.argpartition(keys, self.size - 1)[: self.size])
            keys = keys[keep]
            rows = None if rows is None else rows.take(pa.array(keep)).combine_chunks()
            self.limit[label] = keys.max()
        self.keys[label], self.seen[label] = keys, seen
        if rows is not None:
            self.rows[label] = rows

    def cutoffs(self, size: int) -> dict[str, tuple[int, int]]:
        """Per stratum, the largest key of the final sample and how many rows it takes."""
        quota = allocate(self.seen, size)
        return {
            label: (int(np.sort(k)[quota[label] - 1]), quota[label])
            for label, k in self.keys.items()
            if quota[label] > 0
        }

    def draw(self, size: int) -> pa.Table:
        """The final sample of ``size`` rows (stratum shares as in the data), in key order."""
        quota = allocate(self.seen, size)
        parts, keys = [], []
        for label in sorted(self.keys):
            k = self.keys[label]
            take = np.argsort(k, kind="stable")[: quota[label]]
            parts.append(self.rows[label].take(pa.array(take)))
            keys.append(k[take])
        table = pa.concat_tables(parts, promote_options="default")
        order = np.argsort(np.concatenate(keys), kind="stable")
        return table.take(pa.array(order))


@dataclass
class SampleRows:
    """Mergeable partial of the sample's rows, once :meth:`SampleSketch.cutoffs` has fixed
    which keys each stratum takes: rows at or below their stratum's cut-off key."""

    cut: dict[str, tuple[int, int]]
    keys: dict[str, list[np.ndarray]] = field(default_factory=dict)
    rows: dict[str, list[pa.Table]] = field(default_factory=dict)

    def add(self, batch: pa.Table, keys: np.ndarray, strata: np.ndarray) -> None:
        labels = strata.astype(str)
        for label, (limit, _) in self.cut.items():
            take = np.flatnonzero((labels == label) & (keys <= np.uint64(limit)))
            if take.size:
                self.keys.setdefault(label, []).append(keys[take])
                self.rows.setdefault(label, []).append(batch.take(pa.array(take)))

    def merge(self, other: SampleRows) -> SampleRows:
        out = SampleRows(self.cut, {k: list(v) for k, v in self.keys.items()})
        out.rows = {k: list(v) for k, v in self.rows.items()}
        for label in other.keys:
            out.keys.setdefault(label, []).extend(other.keys[label])
            out.rows.setdefault(label, []).extend(other.rows[label])
        return out

    def draw(self, tiebreak: Callable[[pa.Table], np.ndarray] | None = None) -> pa.Table:
        """The sample in key order. Keys hash the features only, so rows tied at a cut-off
        key may differ elsewhere (time, entity, target): ``tiebreak`` gives each candidate
        row a second key from its other columns, so which of them the sample takes does not
        follow the file's order or partitions."""
        parts, keys, seconds = [], [], []
        for label in sorted(self.keys):
            k = np.concatenate(self.keys[label])
            rows = pa.concat_tables(self.rows[label], promote_options="default")
            second = tiebreak(rows) if tiebreak is not None else np.zeros(k.size, np.uint64)
            take = np.lexsort((second, k))[: self.cut[label][1]]
            parts.append(rows.take(pa.array(take)))
            keys.append(k[take])
            seconds.append(second[take])
        table = pa.concat_tables(parts, promote_options="default")
        order = np.lexsort((np.concatenate(seconds), np.concatenate(keys)))
        return table.take(pa.array(order))
