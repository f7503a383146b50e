"""Impact figures on planted cases, and the time impact adds to the audit.

.venv/bin/python benchmarks/impact.py                   # planted cases on bundled data
.venv/bin/python benchmarks/impact.py --rows 200000 --cols 50   # time ratio at size
"""

from __future__ import annotations

import argparse
import time

import numpy as np
import pandas as pd
from sklearn.datasets import load_breast_cancer

import featureaudit as fa


def _cases() -> dict[str, tuple[pd.DataFrame, dict]]:
    data = load_breast_cancer(as_frame=True)
    base = data.data.copy()
    base["y"] = data.target.to_numpy()
    rng = np.random.default_rng(0)
    split = np.where(rng.random(len(base)) < 0.3, "test", "train")
    leak = base.assign(leak=np.where(rng.random(len(base)) < 0.05, 1 - base.y, base.y), split=split)
    dup = base.assign(split=split)
    dup = pd.concat(
        [dup, dup[dup.split == "train"].sample(120, random_state=1).assign(split="test")],
        ignore_index=True,
    )
    scaled = base.assign(split=split)
    v = scaled["mean radius"]
    scaled["mean radius"] = (v - v.mean()) / v.std(ddof=0)
    kw = {"target": "y", "split_column": "split"}
    n = 3000  # covariate shift: held-out rows drawn from N(1, 1), training rows from N(0, 1)
    held = rng.random(n) < 0.3
    sx = rng.normal(size=n) + held
    sz = rng.normal(size=n)
    shifted = pd.DataFrame(
        {
            "x": sx,
            "z": sz,
            "y": (sx + 0.5 * sz + rng.normal(size=n) > 0.5).astype(int),
            "split": np.where(held, "test", "train"),
        }
    )
    return {
        "covariate shift": (shifted, kw),
        "noisy target copy": (leak, kw),
        "planted duplicates": (dup, kw),
        "scaler on all rows": (scaled, kw),
        "clean": (base.assign(split=split), kw),
    }


def _planted() -> None:
    for name, (frame, kw) in _cases().items():
        imp = fa.audit(frame, **kw).document["impact"]
        print(
            f"{name}: as given {imp['as_given']:.4f}, without suspects "
            f"{imp['without_suspects']:.4f} {imp['ci95']} ({imp['how']})"
        )
        for e in imp["by_finding"]:
            print(
                f"    {e['column'] or e['kind']}: corrected {e['corrected']} change "
                f"{e['change']} {e['ci95']} — {e['how']}"
            )


def _timed(rows: int, cols: int) -> None:
    rng = np.random.default_rng(0)
    x = rng.normal(size=(rows, cols)).astype(np.float64)
    frame = pd.DataFrame(x, columns=[f"x{i}" for i in range(cols)])
    frame["y"] = (x[:, 0] + x[:, 1] + rng.normal(size=rows) > 0).astype(int)
    frame["leak"] = np.where(rng.random(rows) < 0.05, 1 - frame.y, frame.y)
    frame["split"] = np.where(rng.random(rows) < 0.2, "test", "train")
    start = time.perf_counter()
    doc = fa.audit(frame, target="y", split_column="split").document
    total = time.perf_counter() - start
    spent = doc["settings"]["probe_seconds"]["impact"]
    print(
        f"{rows} x {cols}: audit {total:.1f} s, impact {spent:.1f} s = "
        f"{spent / (total - spent):.0%} of the rest of the audit"
    )


if __name__ == "__main__":
    ap = argparse.ArgumentParser(description=__doc__)
    ap.add_argument("--rows", type=int)
    ap.add_argument("--cols", type=int, default=50)
    args = ap.parse_args()
    if args.rows:
        _timed(args.rows, args.cols)
    else:
        _planted()
