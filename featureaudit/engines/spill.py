"""Spill files: the per-row data the stream engine keeps between passes, on disk, not in memory.

Pass 1's row keys and strata codes (10 bytes a row) are written in batch order and read back
batch by batch in pass 2. The row and entity hashes (pass 1's, or a third pass's when the
sample's features differ from the declared ones) go into ``BUCKETS`` files per side by their
top bits, so each bucket, counted alone, fits in memory; a hash falls in the same
bucket on both sides, so the exact copy and entity counts are sums over the buckets. Memory:
one batch and one bucket (1/``BUCKETS`` of the hashes); disk: 10 bytes a row for the keys, 8
for the row hash, 8 for the entity's and 8 per held-out row for its label time (up to 34), in a
temporary folder (``TMPDIR``) removed at the end.
"""

from __future__ import annotations

import errno
import tempfile
from collections.abc import Iterator
from pathlib import Path
from typing import IO

import numpy as np

from featureaudit.engines.partials import CopyCounts, CopyPartial, copy_counts, unique_counts
from featureaudit.errors import InputFileError

__all__ = ["KeySpill", "HashSpill", "BUCKETS", "spill_folder"]

BUCKETS = 32  # 100 million rows: 25 MB of hashes a bucket (cost, no source)
_SHIFT = np.uint64(64 - 5)  # the top 5 bits of a hash name its bucket (2**5 == BUCKETS)
SIDES = ("train", "heldout", "train_entities", "heldout_entities")


def spill_folder() -> tempfile.TemporaryDirectory[str]:
    """A fresh temporary folder for one audit's spill files (``TMPDIR`` chooses the disk)."""
    return tempfile.TemporaryDirectory(prefix="featureaudit-spill-")


def _full(exc: OSError, folder: str) -> InputFileError:
    if exc.errno == errno.ENOSPC:
        return InputFileError(
            f"no space left in {folder!r} for the stream engine's spill files (up to 34 bytes "
            "a row); set TMPDIR to a folder on a larger disk."
        )
    return InputFileError(f"cannot write the stream engine's spill files in {folder!r}: {exc}.")


def _close(files: list[IO[bytes]], folder: str) -> None:
    """Close spill files; the last buffered writes land here, so a full disk shows here too."""
    try:
        for fh in files:
            fh.close()
    except OSError as exc:
        raise _full(exc, folder) from exc


class KeySpill:
    """Pass 1's row keys and strata codes per batch, written in order and read back in order;
    the few stratum labels of each batch stay in memory (a numeric target's batches keep
    the side only)."""

    def __init__(self, folder: str) -> None:
        self.folder = folder
        self._keys: IO[bytes] = open(Path(folder) / "keys.bin", "wb")  # noqa: SIM115
        self._codes: IO[bytes] = open(Path(folder) / "strata.bin", "wb")  # noqa: SIM115
        self.batches: list[tuple[int, np.ndarray]] = []  # (rows, labels) per batch

    def write(self, keys: np.ndarray, labels: np.ndarray, inverse: np.ndarray) -> None:
        try:
            self._keys.write(np.ascontiguousarray(keys, dtype=np.uint64).tobytes())
            self._codes.write(np.ascontiguousarray(inverse, dtype=np.uint16).tobytes())
        except OSError as exc:
            raise _full(exc, self.folder) from exc
        self.batches.append((int(keys.size), labels))

    def read(self) -> Iterator[tuple[np.ndarray, np.ndarray, np.ndarray]]:
        """(keys, labels, strata codes) per batch, in the order they were written."""
        _close([self._keys, self._codes], self.folder)
        with (
            open(Path(self.folder) / "keys.bin", "rb") as keys,
            open(Path(self.folder) / "strata.bin", "rb") as codes,
        ):
            for rows, labels in self.batches:
                yield (
                    np.fromfile(keys, dtype=np.uint64, count=rows),
                    labels,
                    np.fromfile(codes, dtype=np.uint16, count=rows),
                )


class HashSpill:
    """Row and entity hashes per side, written into ``BUCKETS`` files by their top bits."""

    def __init__(self, folder: str, entities: bool) -> None:
        self.folder = folder
        Path(folder).mkdir(parents=True, exist_ok=True)
        self.sides = SIDES if entities else SIDES[:2]
        self._files: dict[tuple[str, int], IO[bytes]] = {}
        self._times: IO[bytes] | None = None
        self.heldout_before_train_max = 0
        for side in self.sides:
            for b in range(BUCKETS):
                self._files[side, b] = open(self._path(side, b), "wb")  # noqa: SIM115

    def _path(self, side: str, bucket: int) -> Path:
        return Path(self.folder) / f"{side}-{bucket:02d}.bin"

    def add(self, side: str, hashes: np.ndarray) -> None:
        """Append one batch's hashes of ``side`` (training rows: their distinct values)."""
        h = np.unique(hashes) if side in ("train", "train_entities") else np.sort(hashes)
        cuts = np.searchsorted(h >> _SHIFT, np.arange(1, BUCKETS, dtype=np.uint64))
        try:
            for b, part in enumerate(np.split(h, cuts)):
                if part.size:
                    self._files[side, b].write(part.tobytes())
        except OSError as exc:
            raise _full(exc, self.folder) from exc

    def close(self) -> None:
        """Close every file unread (the spill is not needed after all)."""
        _close([*self._files.values(), *([self._times] if self._times else [])], self.folder)

    def add_times(self, times: np.ndarray) -> None:
        """Append held-out label times (ns), counted against the training maximum at the end
        (for a spill written before that maximum is known)."""
        if self._times is None:
            self._times = open(Path(self.folder) / "heldout-times.bin", "wb")  # noqa: SIM115
        try:
            self._times.write(np.ascontiguousarray(times, dtype=np.float64).tobytes())
        except OSError as exc:
            raise _full(exc, self.folder) from exc

    def _count_times(self, train_max: float | None) -> int:
        if self._times is None:
            return 0
        _close([self._times], self.folder)
        if train_max is None:
            return 0
        count, chunk = 0, 1 << 22
        with open(Path(self.folder) / "heldout-times.bin", "rb") as fh:
            while (t := np.fromfile(fh, dtype=np.float64, count=chunk)).size:
                count += int((t <= train_max).sum())
        return count

    def counts(self, train_max: float | None = None) -> CopyCounts:
        """The exact figures, one bucket at a time (``train_max``: held-out label times
        spilled by :meth:`add_times` are counted against it)."""
        _close(list(self._files.values()), self.folder)
        self.heldout_before_train_max += self._count_times(train_max)
        total = CopyCounts(0, 0, 0, 0 if len(self.sides) > 2 else None, 0)
        for b in range(BUCKETS):
            bucket = CopyPartial()
            for side in self.sides:
                setattr(bucket, side, unique_counts(np.fromfile(self._path(side, b), np.uint64)))
            total = total + copy_counts(bucket)  # the copy counts every engine uses
        return total + CopyCounts(0, 0, 0, None, self.heldout_before_train_max)
