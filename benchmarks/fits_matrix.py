"""Fitted steps on all rows versus on the training rows: the fitscope matrix of issue 14.

Each of scikit-learn's preprocessing steps below is fitted on all rows (leaky) or on the
training rows only (clean), on two real bundled datasets, then stored as float64, float32
or through a CSV written with six decimals. Prints one line per case (the level fitscope
gave the step's output columns and what it said) and the counts: leaky cases at high or
above, clean cases at medium or above. A case whose two fits write the same values (wine's
quartiles of one column can be the training rows' too) is ill-posed and not counted.

    python benchmarks/fits_matrix.py [--seeds 1] [--only pca]
"""

from __future__ import annotations

import argparse
import inspect
import tempfile
import time
import warnings
from collections.abc import Callable
from pathlib import Path

import numpy as np
import pandas as pd
import statsmodels.api as sm
from palmerpenguins import load_penguins
from sklearn.datasets import load_breast_cancer, load_wine
from sklearn.decomposition import PCA
from sklearn.pipeline import make_pipeline
from sklearn.preprocessing import (
    FunctionTransformer,
    KBinsDiscretizer,
    MaxAbsScaler,
    OneHotEncoder,
    OrdinalEncoder,
    PowerTransformer,
    RobustScaler,
    StandardScaler,
)

import featureaudit as fa
from featureaudit.vocab.levels import Level

HIGH = Level.HIGH
MEDIUM = Level.MEDIUM


def _wine() -> pd.DataFrame:
    # scikit-learn's bundled wine data: 178 rows, measurements with one to four digits
    return load_wine(as_frame=True).frame.rename(columns={"target": "y"})


def _cancer() -> pd.DataFrame:
    # scikit-learn's bundled breast-cancer data: 569 rows
    data = load_breast_cancer(as_frame=True)
    return data.data.assign(y=data.target.to_numpy())


def _penguins() -> pd.DataFrame:
    # palmerpenguins' bundled data: 333 complete rows, island a category of three
    frame = load_penguins().dropna().reset_index(drop=True)
    num = ["bill_length_mm", "bill_depth_mm", "flipper_length_mm", "body_mass_g"]
    return frame[num].assign(cat=frame["island"].astype(str), y=(frame["sex"] == "male") * 1)


def _grunfeld() -> pd.DataFrame:
    # statsmodels' bundled Grunfeld investment panel: 11 firms, 20 years each
    frame = sm.datasets.grunfeld.load_pandas().data
    y = (frame["invest"] > frame["invest"].median()).astype(int)
    return frame[["value", "capital"]].assign(cat=frame["firm"].astype(str), y=y)


NUMERIC = {"wine": (_wine, "alcalinity_of_ash"), "breast_cancer": (_cancer, "mean texture")}
CATEGORY = {"penguins": (_penguins, "Dream"), "grunfeld": (_grunfeld, "Goodyear")}


def _kbins() -> KBinsDiscretizer:
    extra = (
        {"quantile_method": "linear"}
        if "quantile_method" in inspect.signature(KBinsDiscretizer).parameters
        else {}
    )
    return KBinsDiscretizer(n_bins=5, encode="ordinal", strategy="quantile", **extra)


STEPS: dict[str, Callable[[], object]] = {
    "robust": RobustScaler,
    "maxabs": MaxAbsScaler,
    "power": lambda: PowerTransformer(method="yeo-johnson", standardize=True),
    "log_standard": lambda: make_pipeline(FunctionTransformer(np.log1p), StandardScaler()),
    "kbins": _kbins,
    "pca": lambda: PCA(n_components=5, whiten=False),
    "pca_whiten": lambda: PCA(n_components=5, whiten=True),
    "onehot": lambda: OneHotEncoder(sparse_output=False, handle_unknown="ignore"),
    "onehot_drop": lambda: OneHotEncoder(
        sparse_output=False, handle_unknown="ignore", drop="first"
    ),
    "ordinal": lambda: OrdinalEncoder(handle_unknown="use_encoded_value", unknown_value=np.nan),
}


def _numeric_case(step: str, name: str, seed: int, leaky: bool) -> tuple[pd.DataFrame, list[str]]:
    loader, column = NUMERIC[name]
    frame = loader()
    if step == "kbins" and name == "wine":
        column = "proline"  # alcalinity_of_ash ties across bin edges: no fit balances its bins
    held = np.random.default_rng(seed).random(len(frame)) < 0.25
    features = [c for c in frame.columns if c != "y"]
    if step.startswith("pca"):
        x = frame[features].to_numpy(dtype=float)
        cols = [f"pc{i}" for i in range(5)]
    else:
        x = frame[[column]].to_numpy(dtype=float)
        cols = [column]
    if step == "maxabs":  # the fingerprint needs the largest |x| among the held-out rows
        held[int(np.argmax(np.abs(x[:, 0])))] = True
    rows = np.ones(len(frame), bool) if leaky else ~held
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        out = STEPS[step]().fit(x[rows]).transform(x)  # type: ignore[attr-defined]
    if step.startswith("pca"):
        frame = frame.drop(columns=features)
    frame = frame.assign(**{c: out[:, i] for i, c in enumerate(cols)})
    return frame.assign(split=np.where(held, "test", "train")), cols


def _category_case(step: str, name: str, seed: int, leaky: bool) -> tuple[pd.DataFrame, list[str]]:
    """A category held out whole (a new island, a new firm) plus a random quarter of rows."""
    loader, level = CATEGORY[name]
    frame = loader()
    held = (np.random.default_rng(seed).random(len(frame)) < 0.25) | (frame["cat"] == level)
    rows = np.ones(len(frame), bool) if leaky else ~held.to_numpy()
    cats = frame[["cat"]]
    enc = STEPS[step]().fit(cats[rows])  # type: ignore[attr-defined]
    with warnings.catch_warnings():  # the held-out category is unknown to a training-row fit
        warnings.simplefilter("ignore")
        out = enc.transform(cats)
    onehot = step.startswith("onehot")
    cols = [str(c) for c in enc.get_feature_names_out(["cat"])] if onehot else ["cat_code"]
    frame = frame.drop(columns="cat").assign(**{c: out[:, i] for i, c in enumerate(cols)})
    return frame.assign(split=np.where(held, "test", "train")), cols


def _store(frame: pd.DataFrame, cols: list[str], dtype: str, folder: Path) -> object:
    if dtype == "float32":
        return frame.assign(**{c: frame[c].astype(np.float32) for c in cols})
    if dtype == "csv":
        path = folder / "t.csv"
        frame.to_csv(path, index=False, float_format="%.6f")
        return str(path)
    return frame


def _verdict(result: fa.AuditResult, cols: list[str]) -> tuple[Level, str]:
    """The highest fitscope level among the step's output columns, and its summary."""
    best, said = Level.NONE, ""
    table = result.columns.set_index("column")
    for c in cols:
        if c not in table.index:
            continue
        for e in table.loc[c, "evidence"]:
            level = Level.parse(e["level"])
            if e["probe"] == "fitscope" and (level > best or not said):
                best, said = level, e["summary"]
    return best, said


def run(seeds: int = 1, only: str = "") -> dict[bool, list[int]]:
    """Every case, one line each; returns {leaky: [at high+, cases], clean: [at medium+, ...]}."""
    counts = {True: [0, 0], False: [0, 0]}
    with tempfile.TemporaryDirectory() as tmp:
        for step in STEPS:
            if not step.startswith(only):
                continue
            categorical = step in ("onehot", "onehot_drop", "ordinal")
            names = CATEGORY if categorical else NUMERIC
            build = _category_case if categorical else _numeric_case
            for name in names:
                for seed in range(seeds):
                    variants = {leaky: build(step, name, seed, leaky) for leaky in (True, False)}
                    same = variants[True][0].equals(variants[False][0])
                    if same:  # the two fits write the same values: nothing tells them apart
                        print(
                            f"N/A {step:12s} {name:13s} seed {seed} "
                            "all-rows and training-row fits coincide"
                        )
                        continue
                    for leaky in (True, False):
                        frame, cols = variants[leaky]
                        for dtype in ("float64", "float32", "csv"):
                            start = time.perf_counter()
                            table = _store(frame, cols, dtype, Path(tmp))
                            result = fa.audit(
                                table, target="y", split_column="split", probes=["fitscope"]
                            )
                            level, said = _verdict(result, cols)
                            ok = level >= HIGH if leaky else level < MEDIUM
                            counts[leaky][0] += int(level >= (HIGH if leaky else MEDIUM))
                            counts[leaky][1] += 1
                            secs = time.perf_counter() - start
                            print(
                                f"{'ok ' if ok else 'BAD'} {step:12s} {name:13s} seed {seed} "
                                f"{dtype:7s} {'all rows' if leaky else 'training':8s} "
                                f"{level.label:8s} ({secs:.1f} s) {said[:90]}",
                                flush=True,
                            )
    return counts


def main() -> None:
    parser = argparse.ArgumentParser()
    parser.add_argument("--seeds", type=int, default=1)
    parser.add_argument("--only", default="", help="run the steps whose name starts so")
    args = parser.parse_args()
    counts = run(args.seeds, args.only)
    print(f"leaky cases at high or above: {counts[True][0]} of {counts[True][1]}")
    print(f"clean cases at medium or above: {counts[False][0]} of {counts[False][1]}")


if __name__ == "__main__":
    main()
