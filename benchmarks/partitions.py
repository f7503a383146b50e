"""Partitions, folds and oversampling: planted cases on real bundled data, and clean ones.

Prints one line per case and seed: the level featureaudit gave (and the statistic), so
the figures for three-way splits, CV folds and SMOTE before/after the split can be read;
then, per case, the planted ones at high or above and the clean ones below medium.

    python benchmarks/partitions.py [--seeds 3]
"""

from __future__ import annotations

import argparse
import time

import numpy as np
import pandas as pd
from imblearn.over_sampling import SMOTE
from sklearn.datasets import load_breast_cancer, load_wine
from sklearn.model_selection import KFold, train_test_split
from sklearn.preprocessing import StandardScaler

import featureaudit as fa
from featureaudit.vocab.levels import Level

LOADERS = {"breast_cancer": load_breast_cancer, "wine": load_wine}


def _frame(name: str) -> pd.DataFrame:
    data = LOADERS[name](as_frame=True)
    return data.data.assign(y=data.target.to_numpy())


def _features(frame: pd.DataFrame) -> list[str]:
    return [c for c in frame.columns if c not in ("y", "split", "fold")]


def _three_way(frame: pd.DataFrame, seed: int) -> pd.DataFrame:
    u = np.random.default_rng(seed).random(len(frame))
    return frame.assign(split=np.where(u < 0.6, "train", np.where(u < 0.8, "valid", "test")))


def _scale(frame: pd.DataFrame, rows: np.ndarray) -> pd.DataFrame:
    out, cols = frame.copy(), _features(frame)
    out[cols] = StandardScaler().fit(frame.loc[rows, cols]).transform(frame[cols])
    return out


def _top(result: fa.AuditResult, kind: str, pair_start: str = "") -> str:
    """The highest level of ``kind`` evidence (columns and split) whose pair starts so."""
    best = Level.NONE
    for c in result.document["columns"]:
        for e in c["evidence"]:
            pair = e["detail"].get("partitions", ["whole"])
            if e["kind"] == kind and str(pair[0]).startswith(pair_start):
                best = max(best, Level.parse(e["level"]))
    for f in result.document["dataset_findings"]:
        if f["kind"] == kind and str(f["partitions"][0]).startswith(pair_start):
            best = max(best, Level.parse(f["level"]))
    return best.label


def _smote(name: str, seed: int, before: bool) -> pd.DataFrame:
    data = LOADERS[name](as_frame=True)
    x, y = data.data, data.target
    if before:
        x, y = SMOTE(random_state=seed).fit_resample(x, y)
    x_tr, x_te, y_tr, y_te = train_test_split(x, y, test_size=0.25, random_state=seed, stratify=y)
    if not before:
        x_tr, y_tr = SMOTE(random_state=seed).fit_resample(x_tr, y_tr)
    return pd.concat(
        [
            x_tr.assign(y=np.asarray(y_tr), split="train"),
            x_te.assign(y=np.asarray(y_te), split="test"),
        ],
        ignore_index=True,
    )


PLANTED = ("fit train+valid", "scaler before KFold", "SMOTE before")  # expected at high+
CLEAN = ("fit train only", "random 3-way", "unscaled folds", "SMOTE after")  # below medium


def _tally(counts: dict[str, list[int]], label: str, level: str) -> None:
    """Count a case as right (planted at high or above, clean below medium)."""
    right = (
        Level.parse(level) >= Level.HIGH if label in PLANTED else Level.parse(level) < Level.MEDIUM
    )
    counts.setdefault(label, [0, 0])
    counts[label][0] += int(right)
    counts[label][1] += 1


def run(n_seeds: int) -> dict[str, list[int]]:
    """Every case over ``n_seeds`` seeds, one line per dataset and seed; the tallies per case
    ([right, total]: planted at high or above, clean below medium)."""
    seeds = range(n_seeds)
    counts: dict[str, list[int]] = {}
    for name in LOADERS:
        for seed in seeds:
            start = time.perf_counter()
            base = _three_way(_frame(name), seed)
            lines = []
            for label, rows in (
                ("fit train+valid", base.split.isin(["train", "valid"]).to_numpy()),
                ("fit train only", (base.split == "train").to_numpy()),
            ):
                r = fa.audit(
                    _scale(base, rows), target="y", split_column="split", probes=["fitscope"]
                )
                top = _top(r, "fit_on_all_rows")
                lines.append(f"{label}: fit_on_all_rows {top}")
                _tally(counts, label, top)
            r = fa.audit(
                base,
                target="y",
                split_column="split",
                probes=["twins", "timing", "separability", "fitscope"],
            )
            loud = [f["level"] for f in r.document["dataset_findings"]]
            lines.append(f"random 3-way: split findings {sorted(set(loud))}")
            _tally(counts, "random 3-way", max(loud, key=Level.parse, default="none"))
            cv = base.assign(split=np.where(base.split == "train", "train", "test"))
            train = np.flatnonzero(cv.split == "train")
            fold = np.full(len(cv), np.nan)
            for k, (_, part) in enumerate(KFold(5, shuffle=True, random_state=seed).split(train)):
                fold[train[part]] = k
            cv["fold"] = fold
            for label, rows in (("scaler before KFold", (cv.split == "train").to_numpy()),):
                r = fa.audit(
                    _scale(cv, rows),
                    target="y",
                    split_column="split",
                    fold_column="fold",
                    probes=["fitscope"],
                )
                top = _top(r, "fit_on_all_rows", "fold")
                lines.append(f"{label}: folds {top}")
                _tally(counts, label, top)
            r = fa.audit(
                cv, target="y", split_column="split", fold_column="fold", probes=["fitscope"]
            )
            top = _top(r, "fit_on_all_rows", "fold")
            lines.append(f"unscaled folds: {top}")
            _tally(counts, "unscaled folds", top)
            for before in (True, False):
                r = fa.audit(
                    _smote(name, seed, before), target="y", split_column="split", probes=["twins"]
                )
                hits = [
                    f
                    for f in r.document["dataset_findings"]
                    if f["statistic"] == "heldout_share_interpolated"
                ]
                label = f"SMOTE {'before' if before else 'after'}"
                shown = f"{hits[0]['value']:.3f} {hits[0]['level']}" if hits else "none"
                lines.append(f"{label}: {shown}")
                _tally(counts, label, hits[0]["level"] if hits else "none")
            secs = time.perf_counter() - start
            print(f"{name} seed {seed} ({secs:.1f} s): " + "; ".join(lines), flush=True)
    return counts


def print_tallies(counts: dict[str, list[int]]) -> None:
    """One line per case: planted at high or above, clean below medium."""
    for label in PLANTED + CLEAN:
        right, total = counts.get(label, [0, 0])
        what = "at high or above" if label in PLANTED else "below medium"
        print(f"{label:<20} {what:<17} {right}/{total}")


def main() -> None:
    parser = argparse.ArgumentParser()
    parser.add_argument("--seeds", type=int, default=3)
    counts = run(parser.parse_args().seeds)
    print()
    print_tallies(counts)


if __name__ == "__main__":
    main()
