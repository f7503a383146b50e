"""Clean splits bench: honest tables split correctly, which no audit should raise to high.

Data the detection bench does not tune on (statsmodels' modechoice, grunfeld, randhie, engel,
sunspots, cancer; scikit-learn's digits and linnerud; palmerpenguins), each split in the
ways practitioners split correctly: at random (as a split column, and as a second file whose
rows come sorted by a feature, with a record id issued in file order), by entity where the
data has one (with --entity), and by time where it has a time (training rows earlier).
Expectation, written before the first run: no dataset finding and no column at high or
above in any case, on any seed (natural copies in few-valued data, trends between periods and
row order are no leak). Prints every finding at medium or above, then the counts.

    python benchmarks/clean_splits.py [--seeds 3] [--only PATTERN]
"""

from __future__ import annotations

import argparse
import fnmatch
import time
from collections.abc import Callable, Iterator

import numpy as np
import pandas as pd
import statsmodels.api as sm
from sklearn.datasets import load_digits, load_linnerud

import featureaudit as fa

HIGH = ("high", "critical")
Case = tuple[str, pd.DataFrame, dict]  # name, frame, audit arguments


def _modechoice() -> tuple[pd.DataFrame, str, str | None, str | None]:
    d = sm.datasets.modechoice.load_pandas().data.copy()
    d["chosen"] = d.pop("choice").astype(int)
    return d, "chosen", "individual", None


def _grunfeld() -> tuple[pd.DataFrame, str, str | None, str | None]:
    d = sm.datasets.grunfeld.load_pandas().data.copy()
    d["firm"] = d["firm"].astype(str)
    d["at"] = pd.to_datetime(d.pop("year").astype(int).astype(str) + "-12-31")
    return d, "invest", "firm", "at"


def _randhie() -> tuple[pd.DataFrame, str, str | None, str | None]:
    d = sm.datasets.randhie.load_pandas().data.copy()
    d["visited"] = (d.pop("mdvis") > 0).astype(int)
    return d, "visited", None, None


def _engel() -> tuple[pd.DataFrame, str, str | None, str | None]:
    return sm.datasets.engel.load_pandas().data.copy(), "foodexp", None, None


def _sunspots() -> tuple[pd.DataFrame, str, str | None, str | None]:
    d = sm.datasets.sunspots.load_pandas().data.copy()
    d["previous"] = d["SUNACTIVITY"].shift(1)
    d["at"] = pd.to_datetime(d.pop("YEAR").astype(int).astype(str) + "-12-31")
    return d.iloc[1:].reset_index(drop=True), "SUNACTIVITY", None, "at"


def _cancer() -> tuple[pd.DataFrame, str, str | None, str | None]:
    return sm.datasets.cancer.load_pandas().data.copy(), "cancer", None, None


def _digits() -> tuple[pd.DataFrame, str, str | None, str | None]:
    data = load_digits(as_frame=True)
    d = data.data.copy()
    d["digit"] = data.target.to_numpy()
    return d, "digit", None, None


def _linnerud() -> tuple[pd.DataFrame, str, str | None, str | None]:
    data = load_linnerud(as_frame=True)
    d = data.data.copy()
    d["weight"] = data.target["Weight"].to_numpy()
    return d, "weight", None, None


def _penguins() -> tuple[pd.DataFrame, str, str | None, str | None]:
    from palmerpenguins import load_penguins

    d = load_penguins().dropna(subset=["species"]).reset_index(drop=True)
    return d, "species", None, None


DATA: dict[str, Callable[[], tuple[pd.DataFrame, str, str | None, str | None]]] = {
    "modechoice": _modechoice,
    "grunfeld": _grunfeld,
    "randhie": _randhie,
    "engel": _engel,
    "sunspots": _sunspots,
    "cancer": _cancer,
    "digits": _digits,
    "linnerud": _linnerud,
    "penguins": _penguins,
}


def cases(name: str, seed: int) -> Iterator[Case]:
    """The correct splits of one dataset, as (case name, frame, audit arguments)."""
    frame, target, entity, at = DATA[name]()
    rng = np.random.default_rng(seed)
    held = rng.random(len(frame)) < 0.25
    base = {"target": target, "seed": seed}
    if name == "linnerud":  # weights in whole pounds: a quantity, not 20 class codes
        base["task"] = "numeric"
    yield (
        f"{name}/random",
        frame.assign(split=np.where(held, "test", "train")),
        {
            **base,
            "split_column": "split",
        },
    )
    by = next(c for c in frame.columns if c != target and pd.api.types.is_numeric_dtype(frame[c]))
    train = frame[~held].sort_values(by, kind="stable").reset_index(drop=True)
    test = frame[held].sort_values(by, kind="stable").reset_index(drop=True)
    train.insert(0, "record_id", [f"R{i:06d}" for i in range(len(train))])
    test.insert(0, "record_id", [f"R{i:06d}" for i in range(len(train), len(train) + len(test))])
    yield f"{name}/test-file-sorted", train, {**base, "test": test}
    if entity is not None:
        ids = frame[entity].unique()
        out = set(rng.choice(ids, max(1, len(ids) // 4), replace=False))
        side = np.where(frame[entity].isin(out), "test", "train")
        yield (
            f"{name}/by-entity",
            frame.assign(split=side),
            {
                **base,
                "split_column": "split",
                "entity": entity,
            },
        )
    if at is not None:
        cut = frame[at].quantile(0.75)
        side = np.where(frame[at] > cut, "test", "train")
        yield (
            f"{name}/by-time",
            frame.assign(split=side),
            {
                **base,
                "split_column": "split",
                "label_time": at,
            },
        )


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--seeds", type=int, default=3)
    parser.add_argument("--only", default="*", help="glob over case names, e.g. 'grunfeld/*'")
    args = parser.parse_args()
    runs = split_high = column_high = 0
    start = time.perf_counter()
    for name in DATA:
        for seed in range(args.seeds):
            for case, frame, kw in cases(name, seed):
                if not fnmatch.fnmatch(case, args.only):
                    continue
                result = fa.audit(frame, **kw)
                doc = result.document
                runs += 1
                shown = [
                    f"{f['kind']} {f['level']}"
                    for f in doc["dataset_findings"]
                    if f["level"] in ("medium", *HIGH)
                ]
                cols = [
                    f"{c['column']} {c['level']} {'/'.join(c['kinds'])}"
                    for c in doc["columns"]
                    if c["level"] in HIGH
                ]
                split_high += any(f["level"] in HIGH for f in doc["dataset_findings"])
                column_high += bool(cols)
                print(
                    f"{case:28s} seed {seed}: split {shown or '-'}; columns at high {cols or '-'}"
                )
    took = time.perf_counter() - start
    print(f"\n{runs} runs in {took:.0f} s")
    print(f"runs with a split finding at high or above: {split_high}/{runs}")
    print(f"runs with a column at high or above: {column_high}/{runs}")


if __name__ == "__main__":
    main()
