"""Cases of the detection bench on data the project's tests do not use, one per failure class.

Each case states its expectation in code before the tool runs: which columns are planted (and
the kind each must be reported with), which columns are clean, and which dataset-level kind
is planted (or that the split is clean). Cases on digits, randhie and macrodata form the
"tune" set; cases on palmerpenguins, modechoice and grunfeld form the "check" set.
"""

from __future__ import annotations

import tempfile
from collections.abc import Callable
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np
import palmerpenguins
import pandas as pd
import statsmodels.api as sm
from sklearn.cluster import KMeans
from sklearn.datasets import load_digits

Frame = tuple[pd.DataFrame, str]


def _digits() -> Frame:
    """Twelve fixed pixel columns (values 0-16, so natural copies are common); ten classes."""
    data = load_digits(as_frame=True)
    frame = data.data.iloc[:, 2::5].copy()
    frame["digit"] = data.target.to_numpy()
    return frame, "digit"


def _randhie() -> Frame:
    """RAND health insurance: any doctor visit, a weakly predictable binary target."""
    frame = sm.datasets.randhie.load_pandas().data
    # randhie holds one row per person-year with the same covariates each year: those are
    # copies of one person, so a random split of them is a real leak. Keep one row per
    # covariate vector so the clean cases are clean (fixed after the first run showed
    # duplicate_rows_across_split on every randhie case).
    frame = frame.drop_duplicates(subset=[c for c in frame.columns if c != "mdvis"])
    frame = frame.sample(n=1500, random_state=12345).reset_index(drop=True)
    frame["visited"] = (frame.pop("mdvis") > 0).astype(int)
    return frame, "visited"


def _macrodata() -> Frame:
    """US quarterly macro data: real investment with one strong honest peer (real GDP)."""
    frame = sm.datasets.macrodata.load_pandas().data
    keep = ["year", "quarter", "realgdp", "infl", "realint", "unemp", "tbilrate", "realinv"]
    return frame[keep].copy(), "realinv"


def _penguins() -> Frame:
    frame = palmerpenguins.load_penguins()
    frame = frame.dropna(subset=["bill_length_mm", "sex"]).reset_index(drop=True)
    return frame, "species"


def _penguins_sex() -> Frame:
    """Penguins with sex as the target: a moderately predictable table."""
    frame, _ = _penguins()
    frame = frame.drop(columns=["species"])
    frame["female"] = (frame.pop("sex") == "female").astype(int)
    return frame, "female"


def _modechoice() -> Frame:
    frame = sm.datasets.modechoice.load_pandas().data.copy()
    frame["chosen"] = frame.pop("choice").astype(int)
    return frame, "chosen"


def _grunfeld() -> Frame:
    """Grunfeld panel: investment with firm value as the strong honest feature."""
    frame = sm.datasets.grunfeld.load_pandas().data
    return frame[["firm", "year", "value", "invest"]].copy(), "invest"


DATASETS: dict[str, Callable[[], Frame]] = {
    "digits": _digits,
    "randhie": _randhie,
    "macrodata": _macrodata,
    "penguins": _penguins,
    "penguins_sex": _penguins_sex,
    "modechoice": _modechoice,
    "grunfeld": _grunfeld,
}
CHECK = {"penguins", "penguins_sex", "modechoice", "grunfeld"}


@dataclass
class Built:
    """A case's table, audit arguments and expectation."""

    frame: pd.DataFrame
    args: dict
    planted: dict[str, str] = field(default_factory=dict)  # column -> expected kind
    clean: list[str] = field(default_factory=list)  # extra clean columns
    split_kind: str | None = None  # planted dataset-level kind
    coverage: list[str] = field(default_factory=list)  # columns fitscope should examine
    ill_posed: str = ""


@dataclass(frozen=True)
class Case:
    name: str
    klass: int
    dataset: str
    status: str  # "planted" or "clean"
    build: Callable[[pd.DataFrame, str, np.random.Generator], Built]

    @property
    def set(self) -> str:
        return "check" if self.dataset in CHECK else "tune"


def _positive(frame: pd.DataFrame, target: str) -> np.ndarray:
    y = frame[target].to_numpy()
    return y == np.max(y)


def _dictionary(frame: pd.DataFrame, target: str, known: dict[str, str]) -> str:
    """Write a dictionary CSV for the case (the audit takes a path) and return its path."""
    rows = ["column,role,known_at,description"]
    for c in frame.columns:
        role = "target" if c == target else "feature"
        rows.append(f"{c},{role},{known.get(c, '')},")
    with tempfile.NamedTemporaryFile("w", suffix=".csv", delete=False) as handle:
        handle.write("\n".join(rows) + "\n")
    return handle.name


# 1 relative known_at, no label-time column ------------------------------------------------
def _known(offset: str, planted: bool) -> Callable:
    def build(frame: pd.DataFrame, target: str, rng: np.random.Generator) -> Built:
        out = frame.copy()
        # a review score weakly related to the outcome; its dictionary line decides the case
        out["review_score"] = _positive(frame, target) * 0.5 + rng.normal(0, 1, len(out))
        args = {"target": target, "dictionary": _dictionary(out, target, {"review_score": offset})}
        if planted:
            return Built(out, args, planted={"review_score": "recorded_after_cutoff"})
        return Built(out, args, clean=["review_score"])

    return build


# 2 near-deterministic categories -------------------------------------------------------------
def _honest_cluster_code(frame: pd.DataFrame, target: str, rng: np.random.Generator) -> Built:
    """A code made from the features alone (k-means cells): nearly one class per value."""
    out = frame.copy()
    x = frame.drop(columns=[target]).to_numpy(float)
    cells = KMeans(40, n_init=3, random_state=int(rng.integers(1 << 30))).fit_predict(x)
    out["cell_code"] = [f"C{c:02d}" for c in cells]
    return Built(out, {"target": target}, clean=["cell_code"])


def _real_island(frame: pd.DataFrame, target: str, rng: np.random.Generator) -> Built:
    """Penguins' island: Gentoo only on Biscoe, Chinstrap only on Dream; measurements
    already tell the species."""
    return Built(frame.copy(), {"target": target}, clean=["island"])


def _category_leak(frame: pd.DataFrame, target: str, rng: np.random.Generator) -> Built:
    """A ward code assigned from the outcome (three codes per class, 5 % reassigned)."""
    out = frame.copy()
    codes = pd.factorize(frame[target], sort=True)[0]
    ward = codes * 3 + rng.integers(0, 3, len(out))
    swap = rng.random(len(out)) < 0.05
    ward = np.where(swap, rng.integers(0, ward.max() + 1, len(out)), ward)
    out["ward"] = [f"W{w}" for w in ward]
    return Built(out, {"target": target}, planted={"ward": "target_proxy"})


# 3 near copy / strong honest feature ---------------------------------------------------------
def _near_copy(frame: pd.DataFrame, target: str, rng: np.random.Generator) -> Built:
    out = frame.copy()
    codes = pd.factorize(frame[target], sort=True)[0]
    k = int(codes.max()) + 1
    flip = rng.random(len(out)) < 0.05
    copy = np.where(flip, (codes + rng.integers(1, k, len(out))) % k, codes)
    out["score_copy"] = copy + rng.normal(0, 0.05, len(out))
    return Built(out, {"target": target}, planted={"score_copy": "target_proxy"})


def _strong_honest(column: str) -> Callable:
    def build(frame: pd.DataFrame, target: str, rng: np.random.Generator) -> Built:
        return Built(frame.copy(), {"target": target}, clean=[column])

    return build


# 4 present only when the outcome happened ----------------------------------------------------
def _filled_when(frame: pd.DataFrame, target: str, rng: np.random.Generator) -> Built:
    out = frame.copy()
    pos = _positive(frame, target)
    present = pos ^ (rng.random(len(out)) < 0.03)
    out["claim_amount"] = np.where(present, rng.lognormal(5, 1, len(out)).round(2), np.nan)
    return Built(out, {"target": target}, planted={"claim_amount": "target_proxy"})


def _honest_missing(frame: pd.DataFrame, target: str, rng: np.random.Generator) -> Built:
    """A measurement missing at random in 35 % of rows (unrelated to the outcome)."""
    out = frame.copy()
    value = rng.lognormal(5, 1, len(out)).round(2)
    out["lab_value"] = np.where(rng.random(len(out)) < 0.35, np.nan, value)
    return Built(out, {"target": target}, clean=["lab_value"])


# 5 imputation and capping in columns with natural ties ---------------------------------------
def _time_split(frame: pd.DataFrame, dataset: str) -> np.ndarray:
    """A random 75/25 split (fixed per dataset). A split by year was tried first, but on
    trending macro data it adds an honest split_shift that has nothing to do with the fit
    being measured here (drift has its own cases in class 7)."""
    rng = np.random.default_rng(len(dataset))
    return np.where(rng.random(len(frame)) < 0.75, "train", "test")


def _impute(column: str, dataset: str, all_rows: bool) -> Callable:
    def build(frame: pd.DataFrame, target: str, rng: np.random.Generator) -> Built:
        out = frame.copy()
        out["split"] = _time_split(out, dataset)
        train = out["split"] == "train"
        hole = rng.choice(len(out), size=40, replace=False)
        values = out[column].astype(float).copy()
        values.iloc[hole] = np.nan
        fill_all, fill_train = float(values.median()), float(values[train].median())
        out[column] = values.fillna(fill_all if all_rows else fill_train)
        args = {"target": target, "split_column": "split"}
        ill = "" if fill_all != fill_train else "all-rows and training-rows medians coincide"
        if all_rows:
            return Built(out, args, planted={column: "fit_on_all_rows"}, ill_posed=ill)
        return Built(out, args, clean=[column], coverage=[column])

    return build


def _cap(column: str, dataset: str, all_rows: bool) -> Callable:
    def build(frame: pd.DataFrame, target: str, rng: np.random.Generator) -> Built:
        out = frame.copy()
        out["split"] = _time_split(out, dataset)
        train = (out["split"] == "train").to_numpy()
        values = out[column].astype(float).to_numpy()
        ref = values if all_rows else values[train]
        lo, hi = np.percentile(ref, [1, 99])
        lo_t, hi_t = np.percentile(values[train], [1, 99])
        out[column] = np.clip(values, lo, hi)
        args = {"target": target, "split_column": "split"}
        ill = "" if (lo, hi) != (lo_t, hi_t) else "all-rows and training-rows caps coincide"
        if all_rows:
            return Built(out, args, planted={column: "fit_on_all_rows"}, ill_posed=ill)
        return Built(out, args, clean=[column], coverage=[column])

    return build


# 6 natural copies in discrete tables -------------------------------------------------------
def _discrete_split(group: str | None, copies: bool) -> Callable:
    def build(frame: pd.DataFrame, target: str, rng: np.random.Generator) -> Built:
        out = frame.copy()
        if group:
            ids = out[group].unique()
            held = set(rng.choice(ids, size=len(ids) // 5, replace=False))
            test = out[group].isin(held).to_numpy()
        else:
            test = rng.random(len(out)) < 0.2
        out["split"] = np.where(test, "test", "train")
        if copies:
            # 15 % of the held-out rows also appear, as copies, among the training rows
            picked = out[test].sample(frac=0.15, random_state=int(rng.integers(1 << 30)))
            picked = picked.assign(split="train")
            out = pd.concat([out, picked], ignore_index=True)
        args = {"target": target, "split_column": "split"}
        if copies:
            return Built(out, args, split_kind="duplicate_rows_across_split")
        return Built(out, args)

    return build


# 7 identifiers and row order in adversarial validation ---------------------------------------
def _ids(frame: pd.DataFrame, rng: np.random.Generator) -> pd.DataFrame:
    out = frame.copy()
    out.insert(0, "record_id", [f"R{i:06d}" for i in range(len(out))])
    return out


def _test_files(shift: str | None) -> Callable:
    def build(frame: pd.DataFrame, target: str, rng: np.random.Generator) -> Built:
        if shift:
            # held-out rows from one end of a real column: a real shift
            test = frame[shift].rank(method="first").to_numpy() > 0.8 * len(frame)
        else:
            test = rng.random(len(frame)) < 0.2
        ordered = pd.concat([frame[~test], frame[test]], ignore_index=True)
        ordered = _ids(ordered, rng)
        train, held = ordered.iloc[: (~test).sum()], ordered.iloc[(~test).sum() :]
        args = {"target": target, "test": held.reset_index(drop=True)}
        built = Built(train.reset_index(drop=True), args, clean=["record_id"])
        if shift:
            built.split_kind = "split_shift"
        return built

    return build


def _sorted_by_date(frame: pd.DataFrame, target: str, rng: np.random.Generator) -> Built:
    """A random split; the file sorted by an entry date that is unrelated to the split."""
    out = frame.copy()
    out["entered"] = pd.Timestamp("2023-01-01") + pd.to_timedelta(
        rng.integers(0, 365 * 24 * 60, len(out)), "min"
    )
    out["split"] = np.where(rng.random(len(out)) < 0.2, "test", "train")
    out = _ids(out.sort_values("entered", kind="stable").reset_index(drop=True), rng)
    return Built(out, {"target": target, "split_column": "split"}, clean=["record_id"])


# 8 leaks that explain each other -------------------------------------------------------------
def _figure_and_share(frame: pd.DataFrame, target: str, rng: np.random.Generator) -> Built:
    out = frame.copy()
    granted = _positive(frame, target)
    income = rng.lognormal(8, 0.5, len(out)).round(0)
    spend = np.where(granted, rng.lognormal(6, 0.8, len(out)).round(2), 0.0)
    out["income"] = income
    out["spend"] = spend
    out["spend_share"] = spend / (spend + income)
    return Built(
        out,
        {"target": target},
        clean=["income"],
        planted={"spend": "target_proxy", "spend_share": "target_proxy"},
    )


# 9 lateness finer than a day -----------------------------------------------------------------
def _minutes(late: bool) -> Callable:
    def build(frame: pd.DataFrame, target: str, rng: np.random.Generator) -> Built:
        out = frame.copy()
        n = len(out)
        label = pd.Timestamp("2024-01-01") + pd.to_timedelta(
            rng.integers(0, 300 * 24 * 60, n), "min"
        )
        out["decided_at"] = label
        if late:
            lag = np.where(
                rng.random(n) < 0.4, rng.integers(2 * 60, 9 * 60, n), -rng.integers(1, 120, n)
            )
        else:
            lag = -rng.integers(0, 50, n)  # within minutes before, or the same time
        out["logged_at"] = label + pd.to_timedelta(lag, "min")
        args = {"target": target, "label_time": "decided_at"}
        if late:
            return Built(out, args, planted={"logged_at": "recorded_after_cutoff"})
        return Built(out, args, clean=["logged_at"])

    return build


def _cases() -> list[Case]:
    c: list[Case] = []
    for ds in ("randhie", "penguins"):
        c.append(Case("known_at_plus_30d", 1, ds, "planted", _known("+30d", True)))
        c.append(Case("known_at_minus_30d", 1, ds, "clean", _known("-30d", False)))
    c += [
        Case("honest_cell_code", 2, "digits", "clean", _honest_cluster_code),
        Case("island_real", 2, "penguins", "clean", _real_island),
        Case("ward_from_outcome", 2, "randhie", "planted", _category_leak),
        Case("ward_from_outcome", 2, "modechoice", "planted", _category_leak),
        Case("near_copy_flips_jitter", 3, "digits", "planted", _near_copy),
        Case("near_copy_flips_jitter", 3, "modechoice", "planted", _near_copy),
        Case("strong_honest_realgdp", 3, "macrodata", "clean", _strong_honest("realgdp")),
        Case("strong_honest_value", 3, "grunfeld", "clean", _strong_honest("value")),
    ]
    for ds in ("randhie", "penguins_sex"):
        c.append(Case("filled_when_positive", 4, ds, "planted", _filled_when))
        c.append(Case("missing_at_random", 4, ds, "clean", _honest_missing))
    for ds, col in (("macrodata", "unemp"), ("penguins", "bill_depth_mm")):
        c.append(Case(f"impute_all_rows_{col}", 5, ds, "planted", _impute(col, ds, True)))
        c.append(Case(f"impute_train_{col}", 5, ds, "clean", _impute(col, ds, False)))
        c.append(Case(f"cap_all_rows_{col}", 5, ds, "planted", _cap(col, ds, True)))
        c.append(Case(f"cap_train_{col}", 5, ds, "clean", _cap(col, ds, False)))
    c += [
        Case("random_split_discrete", 6, "digits", "clean", _discrete_split(None, False)),
        Case(
            "group_split_discrete", 6, "modechoice", "clean", _discrete_split("individual", False)
        ),
        Case("copies_across_split", 6, "digits", "planted", _discrete_split(None, True)),
        Case(
            "copies_across_split", 6, "modechoice", "planted", _discrete_split("individual", True)
        ),
    ]
    for ds, shift in (("randhie", "lpi"), ("penguins", "body_mass_g")):
        c.append(Case("test_files_text_id", 7, ds, "clean", _test_files(None)))
        c.append(Case("sorted_by_date_text_id", 7, ds, "clean", _sorted_by_date))
        c.append(Case(f"test_files_shift_{shift}", 7, ds, "planted", _test_files(shift)))
    c += [
        Case("figure_and_share", 8, "randhie", "planted", _figure_and_share),
        Case("figure_and_share", 8, "modechoice", "planted", _figure_and_share),
    ]
    for ds in ("randhie", "modechoice"):
        c.append(Case("logged_hours_late", 9, ds, "planted", _minutes(True)))
        c.append(Case("logged_minutes_before", 9, ds, "clean", _minutes(False)))
    return c


CASES = _cases()


def cleanup(built: Built) -> None:
    """Remove the dictionary file a case wrote."""
    path = built.args.get("dictionary")
    if path:
        Path(path).unlink(missing_ok=True)
