"""Issue 24's classes 1, 3, 4 and 8 for ``solo``: case families on real tables of four
source packages, the expectation of each case written before the tool ran on it.

Sources: scikit-learn (breast cancer), statsmodels (fair, anes96), palmerpenguins. Prints
one line per case and the count of cases as expected; run with ``--seeds N``.
"""

from __future__ import annotations

import argparse
import time
from collections.abc import Callable

import numpy as np
import pandas as pd

from featureaudit.api import audit

HIGH = ("high", "critical")


def _breast_cancer() -> pd.DataFrame:
    from sklearn.datasets import load_breast_cancer

    frame = load_breast_cancer(as_frame=True).frame
    frame["y"] = 1 - frame.pop("target")
    return frame


def _fair() -> pd.DataFrame:
    import statsmodels.api as sm

    frame = sm.datasets.fair.load_pandas().data.copy()
    frame["y"] = (frame.pop("affairs") > 0).astype(int)
    return frame


def _anes96() -> pd.DataFrame:
    import statsmodels.api as sm

    frame = sm.datasets.anes96.load_pandas().data.copy()
    frame["y"] = frame.pop("vote").astype(int)
    return frame


def _penguins() -> pd.DataFrame:
    import palmerpenguins

    frame = palmerpenguins.load_penguins().dropna().reset_index(drop=True)
    frame["y"] = (frame.pop("sex") == "male").astype(int)
    return frame


# each source with an honest positive column the planted ratio divides by
SOURCES: dict[str, tuple[Callable[[], pd.DataFrame], str]] = {
    "sklearn breast cancer": (_breast_cancer, "mean area"),
    "statsmodels fair": (_fair, "yrs_married"),
    "statsmodels anes96": (_anes96, "age"),
    "palmerpenguins": (_penguins, "body_mass_g"),
}
Case = tuple[pd.DataFrame, dict[str, str], dict]


def class1(frame: pd.DataFrame, income: str, rng: np.random.Generator) -> Case:
    """An amount only where the outcome happened (3 % of positives spent nothing) and its
    ratio to an honest column with a fee on every row: both high."""
    pos = (frame["y"].to_numpy() == 1) & (rng.random(len(frame)) > 0.03)
    spend = np.where(pos, rng.lognormal(6, 0.8, len(frame)).round(2), 0.0)
    base = frame[income].abs().to_numpy() + 1
    fee = 5 * base.mean() / base * rng.uniform(0.5, 1.5, len(frame))
    expect = {c: "below high" for c in frame.columns if c != "y"}
    frame["spend"], frame["spend_ratio"] = spend, (spend + fee) / base
    return frame, {**expect, "spend": "high", "spend_ratio": "high"}, {}


def class3(frame: pd.DataFrame, income: str, rng: np.random.Generator) -> Case:
    """The column most correlated with the outcome among permuted others: medium."""
    numeric = [c for c in frame.columns if c != "y" and pd.api.types.is_numeric_dtype(frame[c])]
    corr = {c: abs(np.corrcoef(frame[c].rank(), frame["y"])[0, 1]) for c in numeric}
    cause = max(corr, key=lambda c: corr[c])
    order = rng.permutation(len(frame))
    for c in frame.columns:
        if c not in ("y", cause):
            frame[c] = frame[c].to_numpy()[order]
    return frame, {cause: "medium"}, {}


def class4(frame: pd.DataFrame, income: str, rng: np.random.Generator) -> Case:
    """Six model names per class, each in one class: medium."""
    draws = rng.integers(0, 6, len(frame))
    frame["model_name"] = [f"M{k}_{j}" for k, j in zip(frame["y"], draws, strict=True)]
    return frame, {"model_name": "medium"}, {}


def class8(frame: pd.DataFrame, income: str, rng: np.random.Generator) -> Case:
    """Rows shipped sorted by the outcome and numbered in that order, split at random: the
    row-order finding at the id's level."""
    frame = frame.sort_values("y", kind="stable").reset_index(drop=True)
    frame.insert(0, "record_id", np.arange(1, len(frame) + 1))
    frame["split"] = np.where(rng.random(len(frame)) < 0.25, "test", "train")
    return frame, {"record_id": "high", "@position": "=record_id"}, {"split_column": "split"}


def _met(expect: str, got: str, cols: pd.DataFrame) -> bool:
    if expect == "high":
        return got in HIGH
    if expect == "below high":
        return got not in HIGH
    if expect.startswith("="):
        return got == cols.loc[expect[1:], "level"]
    return got == expect


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--seeds", type=int, default=2)
    args = parser.parse_args()
    start = time.perf_counter()
    tally: dict[tuple[str, bool], tuple[int, int]] = {}
    builds: list[Callable[[pd.DataFrame, str, np.random.Generator], Case]] = [
        class1,
        class3,
        class4,
        class8,
    ]
    for build in builds:
        for source, (load, income) in SOURCES.items():
            for seed in range(args.seeds):
                frame, expect, kw = build(load(), income, np.random.default_rng(seed))
                result = audit(frame, target="y", probes=["solo"], seed=seed, **kw)
                cols = result.columns.set_index("column")
                for column, want in expect.items():
                    if column == "@position":
                        got = next(
                            f["level"]
                            for f in result.document["dataset_findings"]
                            if f["kind"] == "row_order_tells_target"
                        )
                    else:
                        got = cols.loc[column, "level"]
                    ok = _met(want, got, cols)
                    key = (build.__name__, want != "below high")
                    hit, n = tally.get(key, (0, 0))
                    tally[key] = (hit + ok, n + 1)
                    if want != "below high" or not ok:
                        print(
                            f"{'ok  ' if ok else 'MISS'} {build.__name__} {source:22s} s{seed} "
                            f"{column:16s} expected {want:10s} got {got}",
                            flush=True,
                        )
    for (name, planted), (hit, n) in sorted(tally.items()):
        what = "cases as expected" if planted else "honest columns below high"
        print(f"{name}: {what} {hit}/{n}")
    print(f"wall time: {time.perf_counter() - start:.1f} s")


if __name__ == "__main__":
    main()
