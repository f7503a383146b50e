"""Speed and memory bench: the audit's wall time against one read of the same Parquet file.

Writes a synthetic table (N rows x F columns: numbers, a few categories and dates, a binary
target, a random split) to Parquet, then in fresh processes times one
``pyarrow.parquet.read_table`` and the audit (per probe), and reports peak memory.

    python benchmarks/speed.py --rows 1000000 --cols 100 [--probes solo,timing]
    python benchmarks/speed.py --rows 1000000,3000000 --parts 8 --engine stream

With several ``--rows`` sizes it ends with a growth table (seconds per million rows).
"""

from __future__ import annotations

import argparse
import json
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import numpy as np
import pandas as pd


def make_table(
    path: Path, rows: int, cols: int, seed: int = 0, dates: int | None = None, parts: int = 1
) -> None:
    rng = np.random.default_rng(seed)
    data: dict[str, np.ndarray] = {}
    latent = rng.normal(size=rows)
    n_cat, n_date = max(1, cols // 20), dates if dates is not None else max(1, cols // 20)
    for i in range(cols - n_cat - n_date):
        data[f"num_{i:03d}"] = (0.2 * latent + rng.normal(size=rows)).astype(np.float64)
    for i in range(n_cat):
        data[f"cat_{i:02d}"] = pd.Categorical(rng.choice([f"level_{k}" for k in range(12)], rows))
    start = np.datetime64("2023-01-01T00:00:00")
    label = start + (rng.uniform(0, 730, rows) * 86400).astype("timedelta64[s]")
    for i in range(n_date):
        data[f"date_{i:02d}"] = label - (rng.uniform(1, 90, rows) * 86400).astype("timedelta64[s]")
    data["decided_at"] = label
    data["split"] = np.where(rng.random(rows) < 0.8, "train", "test")
    data["y"] = (latent + rng.normal(size=rows) > 1).astype(np.int8)
    frame = pd.DataFrame(data)
    if parts == 1:
        frame.to_parquet(path, index=False)
        return
    path.mkdir()
    for i, rows_i in enumerate(np.array_split(np.arange(rows), parts)):
        frame.iloc[rows_i].to_parquet(path / f"part-{i:03d}.parquet", index=False)


CHILD_READ = """
import resource, sys, time, pyarrow.parquet as pq
t = time.perf_counter(); table = pq.read_table(sys.argv[1]); frame = table.to_pandas()
wall = time.perf_counter() - t
print(wall, resource.getrusage(resource.RUSAGE_SELF).ru_maxrss * 1024,
      frame.memory_usage(deep=True).sum())
"""

CHILD_AUDIT = """
import json, resource, sys, time
import featureaudit as fa
probes = sys.argv[2].split(",") if sys.argv[2] else None
t = time.perf_counter()
result = fa.audit(sys.argv[1], target="y", split_column="split", label_time="decided_at",
                  probes=probes, engine=sys.argv[3], sample_rows=int(sys.argv[4]))
wall = time.perf_counter() - t
print(json.dumps({"wall": wall, "rss": resource.getrusage(resource.RUSAGE_SELF).ru_maxrss * 1024,
                  "probes": result.document["settings"]["probe_seconds"],
                  "engine": result.document["settings"]["engine"]}))
"""


def run_one(rows: int, args: argparse.Namespace) -> dict:
    """Write one table, then time one read and the audit, each in a fresh process."""
    with tempfile.TemporaryDirectory() as tmp:
        path = Path(tmp) / ("bench" if args.parts > 1 else "bench.parquet")
        t = time.perf_counter()
        make_table(path, rows, args.cols, dates=args.dates, parts=args.parts)
        size = sum(f.stat().st_size for f in ([path] if path.is_file() else path.iterdir()))
        print(
            f"table: {rows:,} rows x {args.cols} columns in {args.parts} part(s), "
            f"{size / 1e6:.0f} MB on disk (written in {time.perf_counter() - t:.1f} s)"
        )
        read = subprocess.run(
            [sys.executable, "-c", CHILD_READ, str(path)],
            check=True,
            capture_output=True,
            text=True,
        ).stdout.split()
        read_wall, read_rss, frame_bytes = float(read[0]), int(read[1]), int(read[2])
        out = subprocess.run(
            [
                sys.executable,
                "-c",
                CHILD_AUDIT,
                str(path),
                args.probes,
                args.engine,
                str(args.sample_rows),
            ],
            check=True,
            capture_output=True,
            text=True,
        ).stdout
        audit = json.loads(out.strip().splitlines()[-1])
    print(
        f"one read (read_table + to_pandas): {read_wall:.2f} s, peak RSS "
        f"{read_rss / 1e9:.2f} GB, frame {frame_bytes / 1e9:.2f} GB in memory"
    )
    print(
        f"audit ({audit['engine']} engine): {audit['wall']:.2f} s = "
        f"{audit['wall'] / read_wall:.1f} x one read; peak RSS "
        f"{audit['rss'] / 1e9:.2f} GB = {audit['rss'] / frame_bytes:.1f} x the frame"
    )
    for name, seconds in audit["probes"].items():
        print(f"  {name:<13} {seconds:7.2f} s = {seconds / read_wall:5.2f} x one read")
    return {"rows": rows, "read": read_wall, **audit}


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--rows", default="200000", help="one size, or several: 1000000,3000000")
    parser.add_argument("--cols", type=int, default=50)
    parser.add_argument("--probes", default="")
    parser.add_argument("--dates", type=int, default=None, help="dated columns (default F/20)")
    parser.add_argument("--engine", default="memory", choices=["memory", "stream", "auto"])
    parser.add_argument("--parts", type=int, default=1, help="write a folder of this many parts")
    parser.add_argument("--sample-rows", type=int, default=200_000)
    args = parser.parse_args()
    runs = [run_one(int(r), args) for r in args.rows.split(",")]
    if len(runs) > 1:
        print("growth: rows, audit s, read s, audit s per million rows, peak RSS GB")
        for r in runs:
            print(
                f"  {r['rows']:>11,} {r['wall']:8.1f} {r['read']:7.1f} "
                f"{r['wall'] / r['rows'] * 1e6:8.1f} {r['rss'] / 1e9:6.2f}"
            )


if __name__ == "__main__":
    main()
