"""Engines: where the table is read and the exact statistics computed.

``memory`` reads the whole table; ``stream`` reads Parquet batch by batch in bounded
memory; ``dask`` runs the same maps and merges on a Dask cluster (the optional extra).
``auto`` streams when the table would not fit comfortably in the memory available.

May import: every room below it (up to ``render``) and this room; only ``api`` and the
doors above import it.
"""

from __future__ import annotations

import os
from pathlib import Path

from featureaudit.errors import SettingError

__all__ = ["resolve_engine", "estimated_bytes", "available_bytes", "DASK_INSTALL", "FIT_SHARE"]

DASK_INSTALL = "pip install 'featureaudit[dask]'"
# the in-memory audit peaks at 2.0-2.8x the frame (benchmarks/speed.py, 1,000,000 x 100:
# 2.8x on 2026-12-03, 2.0x on 2026-12-04), taken as 3x, and a frame is about 1.3x the
# Parquet data uncompressed; stream when that would pass half the memory available. A table
# that fits is better audited in memory: fitscope does not run on a sample
PEAK_FACTOR = 3 * 1.3
FIT_SHARE = 0.5  # common practice, no source: leave half the memory to everything else


def estimated_bytes(path: str | os.PathLike[str]) -> int | None:
    """Uncompressed size of a Parquet file or folder from its footers (None otherwise)."""
    import pyarrow as pa
    import pyarrow.parquet as pq

    p = Path(path)
    if p.is_dir():
        files = [f for f in p.rglob("*") if f.suffix.lower() in (".parquet", ".pq")]
    elif p.suffix.lower() in (".parquet", ".pq"):
        files = [p]
    else:
        return None
    total = 0
    for f in files:
        try:
            meta = pq.ParquetFile(f).metadata
        except (pa.ArrowException, OSError):
            return None  # unreadable: the reader names the file and the problem
        total += sum(meta.row_group(i).total_byte_size for i in range(meta.num_row_groups))
    return total


def available_bytes() -> int:
    """Memory available to this process (MemAvailable on Linux, else physical memory)."""
    try:
        with open("/proc/meminfo", encoding="ascii") as fh:
            for line in fh:
                if line.startswith("MemAvailable:"):
                    return int(line.split()[1]) * 1024
    except OSError:
        pass
    return os.sysconf("SC_PAGE_SIZE") * os.sysconf("SC_PHYS_PAGES")


def resolve_engine(engine: str, data: object, test: object | None) -> str:
    """The engine that runs: ``auto`` picks stream for a Parquet table too big for memory."""
    if engine == "dask":
        try:
            import dask  # noqa: F401
            import distributed  # noqa: F401
        except ImportError:
            raise SettingError(
                f"--engine dask needs Dask, which is not installed; run {DASK_INSTALL}, "
                "or pass --engine stream."
            ) from None
    if engine in ("stream", "dask") and (
        test is not None or not isinstance(data, (str, os.PathLike))
    ):
        raise SettingError(
            f"--engine {engine} reads one Parquet file or folder (held-out rows marked by "
            "--split-column); pass --engine memory for a DataFrame or a --test table."
        )
    if engine != "auto":
        return engine
    if test is not None or not isinstance(data, (str, os.PathLike)):
        return "memory"
    size = estimated_bytes(data) if Path(data).exists() else None
    if size is not None and size * PEAK_FACTOR > FIT_SHARE * available_bytes():
        return "stream"
    return "memory"
