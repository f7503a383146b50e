"""Generated cases of the development corpus: planted leaks and honest splits on real tables.

Each ``Spec`` states its expectation before the tool runs: the kind each planted column (or
the split) must be reported with, and the lowest level that counts as found (``high`` for
leaks a user must not miss, ``medium`` for the weak grades). ``klass`` is the failure class
of issue 24 the case exercises (0: none in particular). Honest cases plant nothing: every
column is honest and the split is clean.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass, field

import numpy as np
import pandas as pd

Rng = np.random.Generator


@dataclass
class Built:
    """A case's table, audit arguments and expectation."""

    frame: pd.DataFrame
    args: dict
    planted: dict[str, str] = field(default_factory=dict)  # column -> expected kind
    split_kind: str | None = None  # planted dataset-level kind
    test: pd.DataFrame | None = None  # a separate held-out table
    dictionary: pd.DataFrame | None = None


@dataclass(frozen=True)
class Spec:
    """A generator and its expectation, written before any run."""

    name: str
    klass: int
    kind: str | None  # None: an honest case
    min_level: str
    build: Callable[[pd.DataFrame, str, str, Rng], Built | None]
    needs: str = ""  # "numeric": a numeric target; "numeric_feature": a numeric column


def event(frame: pd.DataFrame, target: str, task: str) -> np.ndarray:
    """The 'outcome happened' side: the last class in sorted order, or above the median."""
    y = frame[target]
    if task == "numeric":
        return (y > y.median()).to_numpy()
    return (y == sorted(y.dropna().unique(), key=str)[-1]).to_numpy()


def numeric_features(frame: pd.DataFrame, target: str) -> list[str]:
    """Numeric honest columns with at least 20 distinct values, in table order."""
    return [
        c
        for c in frame.columns
        if c != target
        and pd.api.types.is_numeric_dtype(frame[c])
        and not pd.api.types.is_bool_dtype(frame[c])
        and frame[c].nunique() >= 20
    ]


def _split(n: int, rng: Rng, share: float = 0.25) -> np.ndarray:
    return np.where(rng.random(n) < share, "test", "train")


def _args(target: str, task: str, **more: object) -> dict:
    return {"target": target, "task": task, **more}


def _dictionary(frame: pd.DataFrame, target: str, known: dict[str, str]) -> pd.DataFrame:
    rows = [
        {"column": c, "role": "target" if c == target else "feature", "known_at": known.get(c, "")}
        for c in frame.columns
    ]
    return pd.DataFrame(rows)


# target_proxy ------------------------------------------------------------------------------
def near_copy(noise: float) -> Callable:
    """The outcome with a share ``noise`` of rows scrambled (classes) or noise of that many
    standard deviations (numeric)."""

    def build(frame: pd.DataFrame, target: str, task: str, rng: Rng) -> Built:
        out = frame.copy()
        y = frame[target]
        n = len(out)
        if task == "numeric":
            sd = float(y.std()) or 1.0
            out["score_copy"] = y.to_numpy(float) + rng.normal(0, noise * sd, n)
        else:
            codes = pd.factorize(y.astype(str), sort=True)[0]
            k = int(codes.max()) + 1
            flip = rng.random(n) < noise
            moved = (codes + rng.integers(1, k, n)) % k
            out["score_copy"] = np.where(flip, moved, codes) + rng.normal(0, 0.05, n)
        return Built(out, _args(target, task), planted={"score_copy": "target_proxy"})

    return build


def filled_when(frame: pd.DataFrame, target: str, task: str, rng: Rng) -> Built:
    """An amount that exists only when the outcome happened (3 % of rows mismatched)."""
    out = frame.copy()
    present = event(frame, target, task) ^ (rng.random(len(out)) < 0.03)
    out["claim_amount"] = np.where(present, rng.lognormal(5, 1, len(out)).round(2), np.nan)
    return Built(out, _args(target, task), planted={"claim_amount": "target_proxy"})


def pair(frame: pd.DataFrame, target: str, task: str, rng: Rng) -> Built:
    """Class 1: an amount that is zero unless the outcome happened, and its share of an
    honest income: two leaks that explain each other."""
    out = frame.copy()
    hit = event(frame, target, task)
    income = rng.lognormal(8, 0.5, len(out)).round(0)
    spend = np.where(hit, rng.lognormal(6, 0.8, len(out)).round(2), 0.0)
    out["income"], out["spend"] = income, spend
    out["spend_share"] = spend / (spend + income)
    planted = {"spend": "target_proxy", "spend_share": "target_proxy"}
    return Built(out, _args(target, task), planted=planted)


def _followup_days(hit: np.ndarray, rng: Rng) -> np.ndarray:
    """Days under follow-up: rows without the event run to an administrative end (a study
    of 1-5 years); rows with it stop at the event, drawn from the same span."""
    n = len(hit)
    end = rng.integers(365, 5 * 365, n)
    at_event = np.minimum(rng.exponential(1.2 * 365, n), end).astype(int) + 1
    return np.where(hit, at_event, end)


def followup(frame: pd.DataFrame, target: str, task: str, rng: Rng) -> Built:
    """Class 2: time under follow-up until the outcome (weak alone, censored shape)."""
    out = frame.copy()
    out["followup_days"] = _followup_days(event(frame, target, task), rng)
    return Built(out, _args(target, task), planted={"followup_days": "target_proxy"})


def contacts(frame: pd.DataFrame, target: str, task: str, rng: Rng) -> Built:
    """Class 2: contacts counted over the follow-up that ends at the outcome."""
    out = frame.copy()
    days = _followup_days(event(frame, target, task), rng)
    out["contacts"] = rng.poisson(days / 120.0)
    return Built(out, _args(target, task), planted={"contacts": "target_proxy"})


def part_of_sum(frame: pd.DataFrame, target: str, task: str, rng: Rng) -> Built | None:
    """Class 2: an exact part of a numeric target (one kind of user of a total): a share
    (Beta(5, 2), about 70 %) of the target's amount above its minimum, whole when the target
    is. Changed after the first fast run, where a share of the whole value of a temperature
    (a narrow range far from zero) was noise, not a part of a sum."""
    y = frame[target].to_numpy(float)
    if task != "numeric" or np.isnan(y).any():
        return None
    out = frame.copy()
    base = y - y.min()
    part = base * rng.beta(5, 2, len(out))
    out["part_of_total"] = np.floor(part) if np.all(np.mod(y, 1) == 0) else part
    return Built(out, _args(target, task), planted={"part_of_total": "target_proxy"})


def ward(frame: pd.DataFrame, target: str, task: str, rng: Rng) -> Built | None:
    """A code assigned from the outcome: three codes per class, 5 % reassigned."""
    if task == "numeric":
        return None
    out = frame.copy()
    codes = pd.factorize(frame[target].astype(str), sort=True)[0]
    w = codes * 3 + rng.integers(0, 3, len(out))
    swap = rng.random(len(out)) < 0.05
    w = np.where(swap, rng.integers(0, w.max() + 1, len(out)), w)
    out["ward"] = [f"W{v}" for v in w]
    return Built(out, _args(target, task), planted={"ward": "target_proxy"})


# recorded_after_cutoff ----------------------------------------------------------------------
def known_after(offset: str) -> Callable:
    """A weak review score whose dictionary line says it is known ``offset`` from the label
    time (positive: after the outcome, planted; negative: before, honest)."""

    def build(frame: pd.DataFrame, target: str, task: str, rng: Rng) -> Built:
        out = frame.copy()
        out["review_score"] = event(frame, target, task) * 0.5 + rng.normal(0, 1, len(out))
        d = _dictionary(out, target, {"review_score": offset})
        built = Built(out, _args(target, task), dictionary=d)
        if not offset.startswith("-"):
            built.planted = {"review_score": "recorded_after_cutoff"}
        return built

    return build


def _label_days(n: int, rng: Rng) -> pd.Series:
    return pd.Series(pd.Timestamp("2024-01-01") + pd.to_timedelta(rng.integers(0, 700, n), "D"))


def same_day_horizon(frame: pd.DataFrame, target: str, task: str, rng: Rng) -> Built:
    """Class 6: a date recorded the same day as the outcome, with --horizon 1d (so one day
    after the cutoff) for 40 % of rows, weeks before it for the rest."""
    out = frame.copy()
    n = len(out)
    label = _label_days(n, rng)
    out["decided_on"] = label
    lag = np.where(rng.random(n) < 0.4, 0, -rng.integers(8, 60, n))
    out["logged_on"] = label + pd.to_timedelta(lag, "D")
    args = _args(target, task, label_time="decided_on", horizon="1d")
    return Built(out, args, planted={"logged_on": "recorded_after_cutoff"})


def hours_late(frame: pd.DataFrame, target: str, task: str, rng: Rng) -> Built:
    """Class 6: a timestamp 2-9 hours after the label time for 40 % of rows."""
    out = frame.copy()
    n = len(out)
    label = _label_days(n, rng) + pd.to_timedelta(rng.integers(0, 24 * 60, n), "min")
    out["decided_at"] = label
    lag = np.where(rng.random(n) < 0.4, rng.integers(120, 540, n), -rng.integers(1, 120, n))
    out["logged_at"] = label + pd.to_timedelta(lag, "min")
    args = _args(target, task, label_time="decided_at")
    return Built(out, args, planted={"logged_at": "recorded_after_cutoff"})


# fit_on_all_rows ---------------------------------------------------------------------------
def _fit(values: np.ndarray, ref: np.ndarray, step: str) -> np.ndarray:
    """Apply a preprocessing step to ``values`` with statistics taken from ``ref``."""
    if step in ("zscore", "zscore32"):
        out = (values - np.nanmean(ref)) / np.nanstd(ref)
        return out.astype(np.float32).astype(float) if step == "zscore32" else out
    if step == "minmax":
        return (values - np.nanmin(ref)) / (np.nanmax(ref) - np.nanmin(ref))
    if step == "robust":
        q1, q2, q3 = np.nanpercentile(ref, [25, 50, 75])
        return (values - q2) / (q3 - q1)
    if step in ("cap1", "cap2.5"):
        p = 1.0 if step == "cap1" else 2.5
        lo, hi = np.nanpercentile(ref, [p, 100 - p])
        return np.clip(values, lo, hi)
    fill = np.nanmean(ref) if step == "mean_impute" else np.nanmedian(ref)
    return np.where(np.isnan(values), fill, values)


def fitted(step: str, all_rows: bool) -> Callable:
    """A numeric column scaled, capped or imputed with statistics of all rows (planted) or of
    the training rows (honest), on a random 75/25 split."""

    def build(frame: pd.DataFrame, target: str, task: str, rng: Rng) -> Built | None:
        cols = numeric_features(frame, target)
        if not cols:
            return None
        col = cols[int(rng.integers(len(cols)))]
        out = frame.copy()
        out["split"] = _split(len(out), rng)
        train = (out["split"] == "train").to_numpy()
        values = out[col].to_numpy(float).copy()
        if step.endswith("impute"):
            holes = rng.choice(len(out), size=max(10, len(out) // 12), replace=False)
            values[holes] = np.nan
        ref = values if all_rows else values[train]
        out[col] = _fit(values, ref, step)
        if step == "zscore32":
            out[col] = out[col].map(lambda v: float(f"{np.float32(v):.7g}"))  # CSV round-trip
        built = Built(out, _args(target, task, split_column="split"))
        if all_rows:
            built.planted = {col: "fit_on_all_rows"}
        return built

    return build


# split kinds --------------------------------------------------------------------------------
def copies(share: float, oversample: bool = False, small: bool = False) -> Callable:
    """Held-out rows copied into the training rows (``share`` of them), or the minority
    class oversampled by copying before a random split; ``small`` keeps 270 rows."""

    def build(frame: pd.DataFrame, target: str, task: str, rng: Rng) -> Built:
        out = frame.copy()
        if small:
            out = out.iloc[np.sort(rng.choice(len(out), min(270, len(out)), replace=False))]
            out = out.reset_index(drop=True)
        if oversample:
            hit = event(out, target, task)
            extra = out[hit].sample(frac=1.0, replace=True, random_state=int(rng.integers(1e9)))
            out = pd.concat([out, extra], ignore_index=True)
            out["split"] = _split(len(out), rng, 0.2)
        else:
            out["split"] = _split(len(out), rng, 0.2)
            held = out[out["split"] == "test"]
            k = max(6, int(round(share * len(held))))
            picked = held.sample(n=min(k, len(held)), random_state=int(rng.integers(1e9)))
            out = pd.concat([out, picked.assign(split="train")], ignore_index=True)
        args = _args(target, task, split_column="split")
        return Built(out, args, split_kind="duplicate_rows_across_split")

    return build


def _entities(n: int, rng: Rng) -> np.ndarray:
    """Entity ids of 2-6 rows each."""
    sizes = rng.integers(2, 7, n)
    ids = np.repeat(np.arange(n), sizes)[:n]
    return np.array([f"E{i:05d}" for i in rng.permutation(ids)])


def shared_entities(frame: pd.DataFrame, target: str, task: str, rng: Rng) -> Built:
    out = frame.copy()
    out["entity_id"] = _entities(len(out), rng)
    out["split"] = _split(len(out), rng, 0.2)
    args = _args(target, task, split_column="split", entity="entity_id")
    return Built(out, args, split_kind="shared_entities_across_split")


def time_overlap(frame: pd.DataFrame, target: str, task: str, rng: Rng) -> Built:
    out = frame.copy()
    out["decided_on"] = _label_days(len(out), rng)
    out["split"] = _split(len(out), rng, 0.2)
    args = _args(target, task, split_column="split", label_time="decided_on")
    return Built(out, args, split_kind="time_overlap_across_split")


def shift(frame: pd.DataFrame, target: str, task: str, rng: Rng) -> Built | None:
    """Held-out rows taken from the top fifth of a real numeric column."""
    cols = numeric_features(frame, target)
    if not cols:
        return None
    col = cols[int(rng.integers(len(cols)))]
    out = frame.copy()
    top = out[col].rank(method="first").to_numpy() > 0.8 * len(out)
    out["split"] = np.where(top, "test", "train")
    return Built(out, _args(target, task, split_column="split"), split_kind="split_shift")


def sorted_id(frame: pd.DataFrame, target: str, task: str, rng: Rng) -> Built:
    """Rows sorted by the outcome, then numbered: the record id tells the target."""
    out = frame.sort_values(target, kind="stable").reset_index(drop=True)
    out.insert(0, "record_id", np.arange(1, len(out) + 1))
    return Built(out, _args(target, task), planted={"record_id": "row_order_tells_target"})


# honest splits ----------------------------------------------------------------------------
def _honest_scale(out: pd.DataFrame, target: str, train: np.ndarray, rng: Rng) -> None:
    """z-score one numeric column with the training rows' mean and deviation."""
    cols = numeric_features(out, target)
    if cols:
        col = cols[int(rng.integers(len(cols)))]
        values = out[col].to_numpy(float)
        out[col] = _fit(values, values[train], "zscore")


def honest(form: str) -> Callable:
    """A clean split of one form, with honest preprocessing where the form has a train side."""

    def build(frame: pd.DataFrame, target: str, task: str, rng: Rng) -> Built:
        out = frame.copy()
        n = len(out)
        args = _args(target, task, split_column="split")
        if form == "pool":
            return Built(out, _args(target, task))
        if form == "random":
            out["split"] = _split(n, rng, 0.2)
        elif form == "grouped":
            out["entity_id"] = _entities(n, rng)
            held = set(rng.choice(out["entity_id"].unique(), size=n // 20, replace=False))
            out["split"] = np.where(out["entity_id"].isin(held), "test", "train")
            args["entity"] = "entity_id"
        elif form == "time":
            out["decided_on"] = _label_days(n, rng)
            late = out["decided_on"] > out["decided_on"].quantile(0.8)
            out["split"] = np.where(late, "test", "train")
            args["label_time"] = "decided_on"
        elif form == "partitions":
            u = rng.random(n)
            out["split"] = np.where(u < 0.7, "train", np.where(u < 0.85, "valid", "test"))
        elif form == "folds":
            out["split"] = _split(n, rng, 0.2)
            out["fold"] = rng.integers(0, 5, n)
            args["fold_column"] = "fold"
        elif form == "test_file":
            test = rng.random(n) < 0.2
            _honest_scale(out, target, ~test, rng)
            held = out[test].reset_index(drop=True)
            return Built(out[~test].reset_index(drop=True), _args(target, task), test=held)
        _honest_scale(out, target, (out["split"] == "train").to_numpy(), rng)
        return Built(out, args)

    return build


PLANTED: list[Spec] = [
    Spec("near_copy_2pct", 3, "target_proxy", "high", near_copy(0.02)),
    Spec("near_copy_10pct", 3, "target_proxy", "high", near_copy(0.10)),
    Spec("near_copy_30pct", 3, "target_proxy", "medium", near_copy(0.30)),
    Spec("filled_when_outcome", 4, "target_proxy", "high", filled_when),
    Spec("amount_and_share", 1, "target_proxy", "high", pair),
    Spec("followup_until_outcome", 2, "target_proxy", "high", followup),
    Spec("contacts_until_outcome", 2, "target_proxy", "high", contacts),
    Spec("part_of_sum", 2, "target_proxy", "high", part_of_sum, needs="numeric"),
    Spec("code_from_outcome", 0, "target_proxy", "high", ward),
    Spec("known_plus_30d", 0, "recorded_after_cutoff", "high", known_after("+30d")),
    Spec("same_day_horizon_1d", 6, "recorded_after_cutoff", "high", same_day_horizon),
    Spec("hours_after_label", 6, "recorded_after_cutoff", "high", hours_late),
    *[
        Spec(
            f"{step}_all_rows", 5, "fit_on_all_rows", "high", fitted(step, True), "numeric_feature"
        )
        for step in (
            "zscore",
            "minmax",
            "mean_impute",
            "median_impute",
            "cap1",
            "cap2.5",
            "robust",
            "zscore32",
        )
    ],
    Spec("copies_15pct", 7, "duplicate_rows_across_split", "high", copies(0.15)),
    Spec("oversampled_before_split", 7, "duplicate_rows_across_split", "high", copies(0, True)),
    Spec("copies_small_table", 7, "duplicate_rows_across_split", "high", copies(0.11, small=True)),
    Spec("shared_entities", 0, "shared_entities_across_split", "high", shared_entities),
    Spec("time_overlap", 0, "time_overlap_across_split", "high", time_overlap),
    Spec("split_on_feature_tail", 0, "split_shift", "high", shift, "numeric_feature"),
    Spec("sorted_then_numbered", 8, "row_order_tells_target", "high", sorted_id),
]
HONEST: list[Spec] = [
    Spec(f"honest_{form}", 0, None, "", honest(form))
    for form in ("pool", "random", "grouped", "time", "partitions", "folds", "test_file")
]
HONEST += [
    Spec(f"honest_{step}_train_rows", 5, None, "", fitted(step, False), "numeric_feature")
    for step in ("zscore", "median_impute", "cap1", "robust")
]
HONEST.append(Spec("honest_known_minus_30d", 0, None, "", known_after("-30d")))
