"""Speed and memory bench: the whole audit against one whole-process read of the same file.

Writes a synthetic table (N rows x F columns: numbers, a few categories and dates, a binary
target, a random split) to Parquet, reads it once to put it in the page cache, then times
as whole processes (interpreter start and imports included) one ``pyarrow.parquet`` read
with ``to_pandas`` and one ``featureaudit scan`` of the file, and reports each process's
peak memory and the audit's per-probe seconds (``settings.probe_seconds``).

    python benchmarks/speed.py --rows 1000000 --cols 100 [--probes solo,timing]
    python benchmarks/speed.py --rows 1000000,3000000 --parts 8 --engine stream
    python benchmarks/speed.py --rows 200000 --cols 100 --table /tmp/t.parquet --profile /tmp/p

With several ``--rows`` sizes it ends with a growth table (seconds per million rows).
``--table`` keeps the written table (reused when it exists with the same shape; with several
sizes, one per size, its row count appended to the name), and
``--profile FILE`` runs the audit under cProfile and prints its top functions.
"""

from __future__ import annotations

import argparse
import json
import os
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


# the whole read: interpreter, imports, read_table and to_pandas (what any audit must pay)
CHILD_READ = """
import sys, pyarrow.parquet as pq
frame = pq.read_table(sys.argv[1]).to_pandas()
print(int(frame.memory_usage(deep=True).sum()))
"""


def timed(cmd: list[str]) -> tuple[float, int, str]:
    """Run ``cmd`` as a child process: its wall seconds, its own peak RSS (bytes), stdout."""
    with tempfile.TemporaryFile("w+") as out:
        t = time.perf_counter()
        proc = subprocess.Popen(cmd, stdout=out, stderr=subprocess.PIPE, text=True)
        _, status, usage = os.wait4(proc.pid, 0)
        wall = time.perf_counter() - t
        proc.returncode = os.waitstatus_to_exitcode(status)
        err = proc.stderr.read() if proc.stderr else ""
        out.seek(0)
        text = out.read()
    if proc.returncode not in (0, 1):
        raise SystemExit(f"{' '.join(cmd[:4])} … exited {proc.returncode}:\n{err}")
    return wall, usage.ru_maxrss * 1024, text


def warm(path: Path) -> None:
    """Read every byte of the table once so both timed processes find it in the page cache."""
    for f in [path] if path.is_file() else sorted(path.iterdir()):
        with open(f, "rb") as fh:
            while fh.read(1 << 24):
                pass


# some probes only: the Python door (the CLI runs them all), writing the same findings.json
CHILD_PROBES = """
import sys
import featureaudit as fa
from featureaudit.load.settings import Settings
settings = Settings(n_jobs=int(sys.argv[5]), engine=sys.argv[3], sample_rows=int(sys.argv[4]))
result = fa.audit(sys.argv[1], target="y", split_column="split", label_time="decided_at",
                  probes=sys.argv[2].split(","), settings=settings, progress=False)
result.write(sys.argv[6])
"""


def audit_command(path: Path, out: Path, config: Path, args: argparse.Namespace) -> list[str]:
    """The audit of the bench table as a child process, under cProfile with ``--profile``."""
    head = [sys.executable] + (["-m", "cProfile", "-o", args.profile] if args.profile else [])
    if args.probes:
        script = Path(tempfile.gettempdir()) / "featureaudit_bench_probes.py"
        script.write_text(CHILD_PROBES, encoding="utf-8")
        rest = [args.probes, args.engine, str(args.sample_rows), str(args.n_jobs), str(out)]
        return head + [str(script), str(path), *rest]
    cli = Path(sys.executable).with_name("featureaudit")  # the console script beside python
    cmd = head + [str(cli), "scan", str(path), "--target", "y", "--split-column", "split"]
    cmd += ["--label-time", "decided_at", "--quiet", "--engine", args.engine]
    cmd += ["--sample-rows", str(args.sample_rows), "--out", str(out), "--config", str(config)]
    return cmd


def ensure_table(path: Path, rows: int, args: argparse.Namespace) -> None:
    """Write the bench table unless ``path`` already holds one with this many rows."""
    if path.exists():
        import pyarrow.dataset as ds

        if ds.dataset(str(path), format="parquet").count_rows() == rows:
            return
        raise SystemExit(f"{path} exists with another row count; remove it or pass another --table")
    t = time.perf_counter()
    # in a child process: Linux carries a process's peak RSS across exec into the children
    # it starts, so a bench that built the table itself would report its peak as theirs
    cmd = [sys.executable, __file__, "--write", str(path), "--rows", str(rows)]
    cmd += ["--cols", str(args.cols), "--parts", str(args.parts)]
    cmd += [] if args.dates is None else ["--dates", str(args.dates)]
    subprocess.run(cmd, check=True)
    print(f"table written in {time.perf_counter() - t:.1f} s")


def run_one(rows: int, args: argparse.Namespace) -> dict:
    """Write (or reuse) one table, then time one read and the audit, each a whole process."""
    with tempfile.TemporaryDirectory() as tmp:
        name = "bench" if args.parts > 1 else "bench.parquet"
        sizes = len(args.rows.split(","))
        kept = None if not args.table else args.table if sizes == 1 else f"{args.table}-{rows}"
        path = Path(kept) if kept else Path(tmp) / name
        ensure_table(path, rows, args)
        size = sum(f.stat().st_size for f in ([path] if path.is_file() else path.iterdir()))
        print(
            f"table: {rows:,} rows x {args.cols} columns in {args.parts} part(s), "
            f"{size / 1e6:.0f} MB on disk"
        )
        config = Path(tmp) / "bench.toml"
        config.write_text(f"n_jobs = {args.n_jobs}\n", encoding="utf-8")
        warm(path)
        read_wall, read_rss, frame_bytes = timed([sys.executable, "-c", CHILD_READ, str(path)])
        frame_bytes = int(frame_bytes.strip())
        out = Path(tmp) / "report"
        wall, rss, _ = timed(audit_command(path, out, config, args))
        doc = json.loads((out / "findings.json").read_text(encoding="utf-8"))
    seconds = doc["settings"]["probe_seconds"]
    print(
        f"one read (whole process: start, import, read_table + to_pandas): {read_wall:.2f} s, "
        f"peak RSS {read_rss / 1e9:.2f} GB, frame {frame_bytes / 1e9:.2f} GB in memory"
    )
    door = "audit()" if args.probes else "featureaudit scan"
    print(
        f"audit (whole process: {door}, {doc['settings']['engine']} engine, "
        f"n_jobs {args.n_jobs}): {wall:.2f} s = {wall / read_wall:.2f} x one read; peak RSS "
        f"{rss / 1e9:.2f} GB = {rss / frame_bytes:.1f} x the frame"
    )
    for probe, s in seconds.items():
        print(f"  {probe:<13} {s:7.2f} s = {s / read_wall:5.2f} x one read")
    rest = wall - sum(seconds.values())
    print(f"  {'rest':<13} {rest:7.2f} s (start, read, table, ranking, report files)")
    if args.profile:
        import pstats

        pstats.Stats(args.profile).sort_stats("cumulative").print_stats(args.top)
        pstats.Stats(args.profile).sort_stats("tottime").print_stats(args.top)
    return {"rows": rows, "read": read_wall, "wall": wall, "rss": rss}


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--rows", default="200000", help="one size, or several: 1000000,3000000")
    parser.add_argument("--cols", type=int, default=50)
    parser.add_argument("--probes", default="", help="some probes only: solo,timing")
    parser.add_argument("--dates", type=int, default=None, help="dated columns (default F/20)")
    parser.add_argument("--engine", default="memory", choices=["memory", "stream", "auto"])
    parser.add_argument("--parts", type=int, default=1, help="write a folder of this many parts")
    parser.add_argument("--sample-rows", type=int, default=200_000)
    parser.add_argument("--n-jobs", type=int, default=1, help="the audit's threads (config)")
    parser.add_argument("--table", default=None, help="keep the table (sizes: PATH-ROWS)")
    parser.add_argument("--profile", default=None, help="cProfile output file of the audit")
    parser.add_argument("--top", type=int, default=40, help="functions printed with --profile")
    parser.add_argument("--write", default=None, help=argparse.SUPPRESS)  # the table's child
    args = parser.parse_args()
    if args.write:
        make_table(Path(args.write), int(args.rows), args.cols, dates=args.dates, parts=args.parts)
        return
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
