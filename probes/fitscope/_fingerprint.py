"""The verdict every fingerprint test of ``fitscope`` shares: exact over all rows only is a
leak, over the training rows only is clean, and both or an unclear case is said plainly."""

from __future__ import annotations

from collections.abc import Callable
from typing import NamedTuple

from featureaudit.evidence import Evidence
from featureaudit.levels import Level
from featureaudit.probes.fitscope._thresholds import THRESHOLDS, FitscopeThresholds


class FitFigures(NamedTuple):
    """What a fingerprint's level reads: is the statistic exact over all rows, over the
    training rows, can the two fits be told apart here, and is there a split at all."""

    all_exact: bool
    train_exact: bool
    distinguishable: bool
    split: bool


class Rule(NamedTuple):
    """One row of a decision table: its name, the level it sets (None: the leak level of
    the thresholds), which rows the fit used, and when it holds."""

    name: str
    level: Level | None
    fitted_on: str
    holds: Callable[[FitFigures], bool]


FIT_RULES: tuple[Rule, ...] = (
    Rule("no split", Level.NONE, "no split", lambda f: not f.split),
    Rule("training rows only", Level.NONE, "training rows", lambda f: not f.all_exact),
    Rule("both fits exact", Level.NONE, "cannot tell", lambda f: f.train_exact),
    Rule("fits look alike here", Level.NONE, "cannot tell", lambda f: not f.distinguishable),
    Rule("all rows only", None, "all rows", lambda f: True),
)


def fit_level(
    all_exact: bool,
    train_exact: bool,
    distinguishable: bool,
    split: bool,
    th: FitscopeThresholds = THRESHOLDS,
) -> tuple[Level, str] | None:
    """The level of a fingerprint and which rows the fit used (``all rows``, ``training
    rows``, ``cannot tell``, or ``no split``): the first rule of :data:`FIT_RULES` that
    holds; None when neither fit is exact (no fingerprint at all)."""
    if not all_exact and not train_exact:
        return None
    f = FitFigures(all_exact, train_exact, distinguishable, split)
    rule = next(r for r in FIT_RULES if r.holds(f))
    return (th.leak if rule.level is None else rule.level), rule.fitted_on


def evidence(
    name: str,
    statistic: str,
    value: float | None,
    level: str | Level,
    summary: str,
    detail: dict,
    severity: float = 0.5,
) -> Evidence:
    return Evidence(
        "fitscope",
        "fit_on_all_rows",
        statistic,
        value,
        None,
        level,
        column=name,
        summary=summary,
        severity=severity,
        detail=detail,
    )


def verdict(
    name: str,
    what: str,
    all_exact: bool,
    train_exact: bool,
    distinguishable: bool,
    split: bool,
    detail: dict,
    statistic: str,
    value: float | None,
) -> Evidence | None:
    """Exact over all rows only: leak; over training rows only: clean; both or unclear: say so."""
    decided = fit_level(all_exact, train_exact, distinguishable, split)
    if decided is None:
        return None
    level, fitted_on = decided
    detail = {**detail, "fingerprint": what}
    if fitted_on == "no split":
        return evidence(
            name,
            statistic,
            value,
            level,
            f"looks {what} over all rows; with no "
            "split the probe cannot judge whether held-out rows were used",
            detail,
            0.0,
        )
    if fitted_on == "training rows":
        return evidence(
            name,
            statistic,
            value,
            level,
            f"{what} with training-row statistics",
            {**detail, "fitted_on": "training rows"},
            0.0,
        )
    if fitted_on == "cannot tell":
        return evidence(
            name,
            statistic,
            value,
            level,
            f"looks {what}, but a fit on the "
            "training rows alone would look the same here (too few held-out rows, "
            "or the extremes lie in training rows): cannot tell",
            {**detail, "fitted_on": "cannot tell"},
            0.0,
        )
    return evidence(
        name,
        statistic,
        value,
        level,
        f"{what} with statistics of all rows, "
        "held-out rows included: exact over all rows, off over the training rows",
        {**detail, "fitted_on": "all rows"},
        0.8,
    )
