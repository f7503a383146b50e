"""What the data-flow pass knows about a value and what it records: :class:`Val`, :class:`Event`
and :class:`Split`.

Rows carry their *provenance*: the source they were read from and every split side taken since
(``("src@0:5", "S@0:9:a")`` is the first part of the split at line 9 of the rows read at line 5).
A fit on rows whose provenance is a prefix of a later split's input saw rows that the split
later held out, whatever the variables are called.
"""

from __future__ import annotations

import re
from dataclasses import dataclass, field, replace
from typing import Any

from featureaudit.code.parse import Unit

__all__ = ["ALL", "TRAIN", "VALID", "TEST", "HELDOUT", "Val", "Event", "Split", "name_role"]

ALL, TRAIN, VALID, TEST = "all", "train", "valid", "test"
HELDOUT = (VALID, TEST)
_TOKENS = {
    TRAIN: {"train", "training", "tr", "trn"},
    VALID: {"valid", "val", "validation", "dev"},
    TEST: {"test", "tst", "te", "holdout", "heldout", "oos"},
}


def name_role(name: str) -> str | None:
    """The part a name says it holds (``X_train``, ``test_df``, ``y_val``), if any: used only
    for names the file never assigns and for files read from disk (``test.csv``)."""
    tokens = set(re.split(r"[_\d]+", re.sub(r"([a-z])([A-Z])", r"\1_\2", name).lower()))
    for role in (TRAIN, VALID, TEST):
        if tokens & _TOKENS[role]:
            return role
    return None


@dataclass(frozen=True)
class Val:
    """A value: rows of some part, a statistic of them, split indices or a mask, an estimator,
    a score, a training callback, or a tuple of values.

    ``taint`` holds the indices of the events (fits on rows, statistics applied) whose output
    shaped this value, so that a fit whose output reaches a model can be told from one that is
    only looked at.
    """

    kind: str  # rows, stat, index, mask, folds, estimator, tuple, score, callback
    role: str | None = None
    prov: tuple[str, ...] = ()
    trail: tuple[str, ...] = ()
    cls: str = ""
    family: str | None = None
    items: tuple[Val | None, ...] = ()
    columns: tuple[str, ...] = ()
    taint: frozenset[int] = frozenset()
    loop: int | None = None
    stops: bool = False  # an estimator built with early stopping

    def step(self, text: str) -> Val:
        return replace(self, trail=(self.trail + (text,))[-6:])

    def tainted(self, more: frozenset[int]) -> Val:
        return replace(self, taint=self.taint | more) if more - self.taint else self


@dataclass
class Event:
    """Something the rules judge: what happened, on which rows, where."""

    what: str  # fit, stat_use, score, resample, select_func, corr, early_stop
    role: str | None
    unit: Unit
    line: int
    cls: str = ""
    family: str | None = None
    supervised: bool = False
    trail: tuple[str, ...] = ()
    loop: int | None = None
    columns: tuple[str, ...] = ()
    prov: tuple[str, ...] = ()
    extra: dict[str, Any] = field(default_factory=dict)


@dataclass(frozen=True)
class Split:
    """An operation that divides rows of provenance ``prov`` into disjoint parts.

    ``cv`` marks cross-validation (the parts are folds); ``key`` groups positional slices of the
    same rows, which are a split only when two of them exist."""

    unit: Unit
    line: int
    how: str
    prov: tuple[str, ...]
    cv: bool = False
    key: str = ""
    side: str = ""

    def covers(self, prov: tuple[str, ...]) -> bool:
        """Did rows of provenance ``prov`` include rows this split later divides?"""
        return bool(prov) and self.prov[: len(prov)] == prov
