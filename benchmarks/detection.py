"""Detection bench: planted leaks on real bundled data, and clean controls.

Prints, per case, the level and kinds featureaudit gave the planted column (or split
finding), then recall at level high, kind accuracy, and false positives at level high on
the original (clean) columns and on clean controls.

    python benchmarks/detection.py [--seeds 3]
"""

from __future__ import annotations

import argparse
import time
from collections.abc import Callable
from dataclasses import dataclass

import numpy as np
import pandas as pd
import statsmodels.api as sm
from sklearn.datasets import load_breast_cancer, load_diabetes, load_iris, load_wine

import featureaudit as fa

HIGH = ("high", "critical")


def _sk(loader: Callable, target: str) -> Callable[[], tuple[pd.DataFrame, str]]:
    def load() -> tuple[pd.DataFrame, str]:
        data = loader(as_frame=True)
        frame = data.data.copy()
        frame[target] = data.target.to_numpy()
        return frame, target
    return load


def _fair() -> tuple[pd.DataFrame, str]:
    frame = sm.datasets.fair.load_pandas().data.copy()
    frame["had_affair"] = (frame.pop("affairs") > 0).astype(int)
    return frame, "had_affair"


def _star98() -> tuple[pd.DataFrame, str]:
    frame = sm.datasets.star98.load_pandas().data.copy()
    frame = frame.drop(columns=["NABOVE"])
    frame["below"] = frame.pop("NBELOW").astype(float)
    return frame, "below"


def _anes96() -> tuple[pd.DataFrame, str]:
    frame = sm.datasets.anes96.load_pandas().data.copy()
    frame["vote"] = frame["vote"].astype(int)
    return frame, "vote"


DATASETS: dict[str, Callable[[], tuple[pd.DataFrame, str]]] = {
    "breast_cancer": _sk(load_breast_cancer, "label"), "wine": _sk(load_wine, "cultivar"),
    "iris": _sk(load_iris, "species"), "diabetes": _sk(load_diabetes, "progression"),
    "fair (statsmodels)": _fair, "star98 (statsmodels)": _star98,
    "anes96 (statsmodels)": _anes96,
}


@dataclass
class Outcome:
    case: str
    expected: str
    level: str
    kinds: tuple[str, ...]
    clean_high: list[str]

    @property
    def found(self) -> bool:
        return self.level in HIGH

    @property
    def kind_right(self) -> bool:
        return self.expected in self.kinds


def _classes(y: pd.Series) -> int:
    return int(y.nunique())


def plant(kind: str, frame: pd.DataFrame, target: str, rng: np.random.Generator
          ) -> tuple[pd.DataFrame, dict]:
    """Add one leak; return the frame and the audit arguments that go with it."""
    y = frame[target].to_numpy()
    numeric = _classes(frame[target]) > 20
    args: dict = {"target": target}
    out = frame.copy()
    if kind == "noisy_copy":
        if numeric:
            robust_sd = float(np.subtract(*np.percentile(y, [75, 25]))) / 1.349
            out["leak"] = y + rng.normal(0, 0.3 * robust_sd, len(y))
        else:
            k = _classes(frame[target])
            codes = pd.factorize(y, sort=True)[0]
            flip = rng.random(len(y)) < 0.05
            out["leak"] = np.where(flip, (codes + rng.integers(1, k, len(y))) % k, codes)
    elif kind == "after_outcome_count":
        high = y > np.median(y) if numeric else y == np.max(y)
        out["leak"] = np.where(high, rng.poisson(3.0, len(y)), rng.poisson(0.4, len(y)))
    elif kind == "filled_when_positive":
        high = y > np.median(y) if numeric else y == np.max(y)
        value = rng.uniform(10, 500, len(y))
        out["leak"] = np.where(high ^ (rng.random(len(y)) < 0.04), value, np.nan)
    elif kind == "sorted_with_id":
        out = out.sort_values(target, kind="stable").reset_index(drop=True)
        out.insert(0, "record_id", np.arange(1, len(out) + 1))
    elif kind == "recorded_after_cutoff":
        label = pd.Timestamp("2024-01-01") + pd.to_timedelta(rng.integers(0, 700, len(y)), "D")
        out["decided_at"] = label
        lag = np.where(rng.random(len(y)) < 0.4, rng.uniform(1, 30, len(y)),
                       -rng.uniform(1, 60, len(y)))
        out["leak"] = label + pd.to_timedelta(lag * 86400, unit="s")
        args.update(label_time="decided_at")
    elif kind == "random_split_in_time":
        out["decided_at"] = pd.Timestamp("2024-01-01") + pd.to_timedelta(
            np.sort(rng.integers(0, 700, len(y))), "D")
        out["split"] = np.where(rng.random(len(y)) < 0.8, "train", "test")
        args.update(label_time="decided_at", split_column="split")
    return out, args


EXPECTED = {"noisy_copy": "target_proxy", "after_outcome_count": "target_proxy",
            "filled_when_positive": "target_proxy", "sorted_with_id": "row_order_tells_target",
            "recorded_after_cutoff": "recorded_after_cutoff",
            "random_split_in_time": "time_overlap_across_split"}


def run_case(name: str, kind: str, seed: int) -> Outcome:
    frame, target = DATASETS[name]()
    frame = frame.sample(frac=1, random_state=seed).reset_index(drop=True)
    originals = [c for c in frame.columns if c != target]
    planted, args = plant(kind, frame, target, np.random.default_rng(seed))
    result = fa.audit(planted, seed=seed, **args)
    cols = result.columns.set_index("column")
    clean_high = [c for c in originals if c in cols.index and cols.loc[c, "level"] in HIGH]
    expected = EXPECTED[kind]
    if kind == "sorted_with_id":
        row = cols.loc["record_id"]
        level, kinds = row["level"], tuple(row["kinds"])
    elif kind == "random_split_in_time":
        found = [f for f in result.document["dataset_findings"] if f["kind"] == expected]
        level = found[0]["level"] if found else "none"
        kinds = (expected,) if found and level != "none" else ()
    else:
        level, kinds = cols.loc["leak", "level"], tuple(cols.loc["leak", "kinds"])
    return Outcome(f"{name} / {kind} / seed {seed}", expected, level, kinds, clean_high)


def run_control(name: str, seed: int) -> tuple[list[str], list[str]]:
    frame, target = DATASETS[name]()
    frame = frame.sample(frac=1, random_state=seed).reset_index(drop=True)
    result = fa.audit(frame, target=target, seed=seed)
    cols = [c["column"] for c in result.document["columns"] if c["level"] in HIGH]
    split = [f["kind"] for f in result.document["dataset_findings"] if f["level"] in HIGH]
    return cols, split


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--seeds", type=int, default=2)
    args = parser.parse_args()
    start = time.perf_counter()
    outcomes: list[Outcome] = []
    for name in DATASETS:
        for kind in EXPECTED:
            for seed in range(args.seeds):
                o = run_case(name, kind, seed)
                outcomes.append(o)
                mark = "ok " if o.found and o.kind_right else "MISS"
                print(f"{mark} {o.case:<58} {o.level:<8} {','.join(o.kinds) or '-'}"
                      + (f"  clean at high: {o.clean_high}" if o.clean_high else ""))
    controls = []
    for name in DATASETS:
        for seed in range(args.seeds):
            cols, split = run_control(name, seed)
            controls.append((name, seed, cols, split))
            if cols or split:
                print(f"FP  control {name} seed {seed}: columns {cols} split {split}")
    found = sum(o.found for o in outcomes)
    kind_ok = sum(o.found and o.kind_right for o in outcomes)
    clean_fp = sum(len(o.clean_high) for o in outcomes)
    clean_total = sum(len(DATASETS[o.case.split(" / ")[0]]()[0].columns) - 1 for o in outcomes)
    ctrl_fp = sum(bool(c[2] or c[3]) for c in controls)
    print()
    print(f"planted leaks found at high or above: {found}/{len(outcomes)} "
          f"({found / len(outcomes):.0%}); with the right kind: {kind_ok}/{len(outcomes)}")
    print(f"clean columns at high or above in planted runs: {clean_fp}/{clean_total}")
    print(f"clean controls with any finding at high or above: {ctrl_fp}/{len(controls)}")
    print(f"wall time: {time.perf_counter() - start:.1f} s")


if __name__ == "__main__":
    main()
