"""``FindingsSplit``: a cross-validation splitter that carries an audit's split remedies into
training: grouped by the entity when entities are shared across the split, ordered by time
when periods overlap, exact copies kept on one side with the rows they copy.

The remedies follow the split findings at level ``medium`` or above, as ``impact.remedied``
applies them; a lower finding leaves the plain shuffled K-fold.
"""

from __future__ import annotations

import os
from collections.abc import Iterator
from typing import Any

import numpy as np
import pandas as pd
from sklearn.model_selection import BaseCrossValidator, GroupKFold, KFold

from featureaudit.judge.findings import load_findings
from featureaudit.judge.remedied import SPLIT_FLOOR
from featureaudit.vocab.levels import Level

__all__ = ["FindingsSplit"]


class FindingsSplit(BaseCrossValidator):
    """Cross-validation folds built from a findings file.

    Parameters
    ----------
    findings : str or path-like
        The ``findings.json`` written by ``featureaudit scan`` (schema 1, 2 or 3).
    n_splits : int, default 5
        Number of folds (at least 2).
    frame : pandas.DataFrame, optional
        The table, row for row with the ``X`` given to ``split``, holding the entity and time
        columns the findings name; without it they are looked up in ``X`` itself.
    random_state : int, default 0
        Seed of the shuffled K-fold used when no split finding asks for more.

    Notes
    -----
    What it chose (:meth:`describe`) depends on the findings only: folds grouped by the
    entity (``GroupKFold``) when ``shared_entities_across_split`` is at medium or above;
    forward-chaining folds in time order (each fold trained on earlier rows, scored on the
    next block) when ``time_overlap_across_split`` is; and, with
    ``duplicate_rows_across_split``, rows that are exact copies of each other share a group,
    so that a copy never sits on the other side of its original. ``groups`` given to
    ``split`` replace the entity column.

    Examples
    --------
    >>> from sklearn.model_selection import cross_val_score             # doctest: +SKIP
    >>> cv = FindingsSplit("report/findings.json", n_splits=5, frame=df)  # doctest: +SKIP
    >>> cross_val_score(model, X, y, cv=cv)                              # doctest: +SKIP
    """

    def __init__(
        self,
        findings: str | os.PathLike[str] = "",
        n_splits: int = 5,
        *,
        frame: pd.DataFrame | None = None,
        random_state: int = 0,
    ) -> None:
        self.findings = findings
        self.n_splits = n_splits
        self.frame = frame
        self.random_state = random_state

    # -- what the findings ask for --------------------------------------------------------
    def _plan(self) -> dict[str, Any]:
        if (
            not isinstance(self.n_splits, int)
            or isinstance(self.n_splits, bool)
            or (self.n_splits < 2)
        ):
            raise ValueError(
                f"The 'n_splits' parameter of FindingsSplit must be a whole number of 2 or "
                f"more. Got {self.n_splits!r} instead."
            )
        if not str(self.findings):
            raise ValueError(
                "FindingsSplit needs `findings`: the path of the findings.json that "
                "`featureaudit scan` wrote."
            )
        doc = load_findings(os.fspath(self.findings)).document
        ds = doc.get("dataset") or {}
        kinds = {
            f.get("kind"): f.get("level")
            for f in doc.get("dataset_findings", [])
            if Level.parse(f.get("level", "none")) >= SPLIT_FLOOR and not f.get("accepted")
        }
        cutoff = str(ds.get("cutoff") or "")
        time = cutoff.removeprefix("column:") if cutoff.startswith("column:") else None
        return {
            "entity": ds.get("entity") if "shared_entities_across_split" in kinds else None,
            "time": (time or ds.get("label_time"))
            if "time_overlap_across_split" in kinds
            else None,
            "twins": "duplicate_rows_across_split" in kinds,
            "levels": kinds,
        }

    def describe(self) -> str:
        """What the splitter does, in a sentence, and which findings made it so."""
        p = self._plan()
        parts = []
        if p["time"]:
            lv = p["levels"]["time_overlap_across_split"]
            parts.append(f"forward-chaining folds ordered by {p['time']!r} (time overlap, {lv})")
        if p["entity"]:
            lv = p["levels"]["shared_entities_across_split"]
            how = "test rows of entities seen in training left out" if p["time"] else "folds"
            parts.append(f"{how} grouped by {p['entity']!r} (shared entities, {lv})")
        if p["twins"]:
            lv = p["levels"]["duplicate_rows_across_split"]
            parts.append(f"exact copies kept with the rows they copy (duplicate rows, {lv})")
        if not parts:
            return f"{self.n_splits} shuffled folds: no split finding at medium or above"
        return f"{self.n_splits} folds: " + "; ".join(parts)

    def __repr__(self) -> str:
        try:
            chose = self.describe()
        except Exception as exc:  # noqa: BLE001 — a repr must not raise
            chose = f"cannot read the findings: {exc}"
        path = os.fspath(self.findings)
        return f"FindingsSplit(findings={path!r}, n_splits={self.n_splits}): {chose}"

    # -- scikit-learn's splitter API ------------------------------------------------------
    def get_n_splits(self, X: Any = None, y: Any = None, groups: Any = None) -> int:
        """The number of folds, ``n_splits``."""
        return self.n_splits

    def split(
        self, X: Any, y: Any = None, groups: Any = None
    ) -> Iterator[tuple[np.ndarray, np.ndarray]]:
        """Yield (training indices, test indices) for each fold."""
        p = self._plan()
        n = len(X)
        table = self.frame if self.frame is not None else X
        if self.frame is not None and len(self.frame) != n:
            raise ValueError(
                f"FindingsSplit: `frame` has {len(self.frame)} rows but X has {n}; pass the "
                "table row for row with X."
            )
        g = self._groups(p, table, X, groups, n)
        if p["time"]:
            yield from self._forward(self._column(table, p["time"], "time"), g)
        elif g is not None:
            yield from GroupKFold(self.n_splits).split(np.zeros(n), groups=g)
        else:
            yield from KFold(self.n_splits, shuffle=True, random_state=self.random_state).split(
                np.zeros(n)
            )

    def _split_test(self, X: Any, y: Any = None, groups: Any = None) -> Iterator[np.ndarray]:
        for _, test in self.split(X, y, groups):
            yield test

    _iter_test_indices = _split_test  # BaseCrossValidator's hook (split is overridden)

    # -- helpers --------------------------------------------------------------------------
    @staticmethod
    def _column(table: Any, name: str, what: str) -> pd.Series:
        if not isinstance(table, pd.DataFrame) or name not in table.columns:
            raise ValueError(
                f"FindingsSplit: the findings ask for folds by {what}, column {name!r}, which "
                "is not in X; pass frame= (the table, row for row with X) or groups=."
            )
        return table[name].reset_index(drop=True)

    def _groups(self, p: dict, table: Any, X: Any, groups: Any, n: int) -> np.ndarray | None:
        g: np.ndarray | None = None
        if groups is not None:
            g = pd.factorize(pd.Series(np.asarray(groups)))[0]
        elif p["entity"]:
            g = pd.factorize(self._column(table, p["entity"], "entity"))[0]
        if g is not None:
            g = np.where(g < 0, n + np.arange(n), g)  # no entity: a group of its own
        if p["twins"]:
            frame = X if isinstance(X, pd.DataFrame) else pd.DataFrame(np.asarray(X))
            copies = pd.factorize(pd.util.hash_pandas_object(frame, index=False))[0]
            g = copies if g is None else _merge(g, copies)
        return g

    def _forward(self, times: pd.Series, g: np.ndarray | None) -> Iterator:
        """Forward chaining: the distinct times in order, cut into n_splits + 1 blocks; fold k
        trains on blocks 0..k and tests on block k + 1 (less rows whose group is in training,
        when that leaves any)."""
        t = pd.to_datetime(times, errors="coerce") if times.dtype == object else times
        codes, uniq = pd.factorize(t, sort=True)
        if len(uniq) < self.n_splits + 1:
            raise ValueError(
                f"FindingsSplit: {len(uniq)} distinct times cannot make {self.n_splits} "
                "forward-chaining folds; lower n_splits."
            )
        block = np.floor(codes * (self.n_splits + 1) / len(uniq)).astype(int)
        block = np.where(codes < 0, -1, block)  # no time: never used
        for k in range(self.n_splits):
            train = np.flatnonzero((block >= 0) & (block <= k))
            test = np.flatnonzero(block == k + 1)
            if g is not None:
                unseen = test[~np.isin(g[test], g[train])]
                test = unseen if len(unseen) else test
            yield train, test


def _merge(a: np.ndarray, b: np.ndarray) -> np.ndarray:
    """Groups joining ``a`` and ``b``: rows that share a label in either share a group
    (connected components, by repeated minimum over each labelling)."""
    label = np.arange(len(a))
    for _ in range(50):
        before = label
        for key in (a, b):
            label = pd.Series(label).groupby(key).transform("min").to_numpy()
        if np.array_equal(label, before):
            break
    return pd.factorize(label)[0]
