"""Thread bench: a 569-row audit while another process keeps one core busy.

Writes scikit-learn's bundled breast-cancer table (569 rows, 30 features, binary target) to
CSV, then times ``featureaudit scan`` as a whole process, several runs, first alone and then
with a competing ``while True: pass`` process. With nested or spinning thread pools the busy
run is many times slower than the quiet one; with one thread setting it stays close.

    python benchmarks/busy_core.py [--runs 5]
"""

from __future__ import annotations

import argparse
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path


def write_table(path: Path) -> None:
    from sklearn.datasets import load_breast_cancer

    frame = load_breast_cancer(as_frame=True).frame  # bundled with scikit-learn
    frame.to_csv(path, index=False)


def time_scan(table: Path, out: Path) -> float:
    exe = Path(sys.executable).with_name("featureaudit")
    start = time.perf_counter()
    subprocess.run(
        [str(exe), "scan", str(table), "--target", "target", "--out", str(out)],
        check=True,
        capture_output=True,
    )
    return time.perf_counter() - start


def main() -> None:
    parser = argparse.ArgumentParser()
    parser.add_argument("--runs", type=int, default=5)
    args = parser.parse_args()
    with tempfile.TemporaryDirectory() as tmp:
        table = Path(tmp) / "breast_cancer.csv"
        write_table(table)
        quiet = [time_scan(table, Path(tmp) / "q") for _ in range(args.runs)]
        busy_proc = subprocess.Popen([sys.executable, "-c", "while True: pass"])
        try:
            time.sleep(0.5)
            busy = [time_scan(table, Path(tmp) / "b") for _ in range(args.runs)]
        finally:
            busy_proc.kill()
            busy_proc.wait()
    for name, runs in (("quiet", quiet), ("one core busy", busy)):
        print(
            f"{name:>14}: median {statistics.median(runs):.2f} s, "
            f"min {min(runs):.2f} s, max {max(runs):.2f} s over {len(runs)} runs "
            f"({', '.join(f'{r:.2f}' for r in runs)})"
        )


if __name__ == "__main__":
    main()
