"""Dossier bench: a 1,000-column audit's dossier size and its render time in headless Chromium.

    python benchmarks/dossier.py [--cols 1000] [--rows 5000]

Render time is the wall time of ``chromium --headless --dump-dom`` on the file (browser start
included), minus the same for an empty page, best of five.
"""

from __future__ import annotations

import argparse
import shutil
import subprocess
import tempfile
import time
from pathlib import Path

import numpy as np
import pandas as pd

import featureaudit as fa

FLAGS = [
    "--headless",
    "--no-sandbox",
    "--disable-gpu",
    "--no-first-run",
    "--disable-background-networking",
    "--disable-component-update",
    "--disable-sync",
]


def _render(browser: str, url: str, tmp: Path) -> float:
    best = float("inf")
    for i in range(5):
        t = time.perf_counter()
        subprocess.run(
            [browser, *FLAGS, f"--user-data-dir={tmp / f'p{i}'}", "--dump-dom", url],
            capture_output=True,
            check=True,
            timeout=120,
        )
        best = min(best, time.perf_counter() - t)
    return best


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--cols", type=int, default=1000)
    parser.add_argument("--rows", type=int, default=5000)
    args = parser.parse_args()
    rng = np.random.default_rng(0)
    y = rng.integers(0, 2, args.rows)
    data = {
        f"c{i:04d}": rng.normal(size=args.rows) + (0.3 * y if i % 10 == 0 else 0)
        for i in range(args.cols)
    }
    for i in range(5):  # planted proxies so the dossier has cards and charts
        data[f"c{i:04d}"] = np.where(rng.random(args.rows) < 0.95, y, 1 - y) + 0.0
    frame = pd.DataFrame(data).assign(y=y)
    t = time.perf_counter()
    result = fa.audit(frame, target="y")
    audit_s = time.perf_counter() - t
    with tempfile.TemporaryDirectory() as tmp:
        out = Path(tmp) / "report"
        result.write(out)
        size = (out / "dossier.html").stat().st_size
        print(
            f"{args.cols} columns x {args.rows} rows: audit {audit_s:.1f} s; dossier "
            f"{size / 1e6:.2f} MB, {result.columns['level'].ne('none').sum()} suspects"
        )
        browser = shutil.which("chromium") or shutil.which("chromium-browser")
        if browser is None:
            print("no Chromium: render time not measured")
            return
        blank = Path(tmp) / "blank.html"
        blank.write_text("<!DOCTYPE html><title>x</title>")
        base = _render(browser, blank.as_uri(), Path(tmp))
        page = _render(browser, (out / "dossier.html").as_uri(), Path(tmp))
        print(
            f"render (dump-dom): {page:.2f} s with browser start, {page - base:.2f} s beyond "
            f"an empty page"
        )
        # the worst case: every one of 1,000 columns a suspect with binned evidence
        doc = dict(result.document)
        template = next(c for c in doc["columns"] if c["level"] != "none")
        levels = ["critical", "high", "medium", "low"]
        doc["columns"] = [
            {
                **template,
                "column": f"suspect_{i:04d}",
                "level": levels[i % 4],
                "score": 0.9 - i * 0.0008,
            }
            for i in range(args.cols)
        ]
        from featureaudit.judge.findings import Findings
        from featureaudit.render.report import render_dossier

        worst = Path(tmp) / "worst.html"
        worst.write_text(render_dossier(Findings(doc)), encoding="utf-8")
        page = _render(browser, worst.as_uri(), Path(tmp))
        print(
            f"{args.cols} suspects: dossier {worst.stat().st_size / 1e6:.2f} MB, render "
            f"{page:.2f} s with browser start, {page - base:.2f} s beyond an empty page"
        )


if __name__ == "__main__":
    main()
