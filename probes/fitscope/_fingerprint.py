"""The verdict every fingerprint test of ``fitscope`` shares: exact over all rows only is a
leak, over the training rows only is clean, and both or an unclear case is said plainly."""

from __future__ import annotations

from featureaudit.evidence import Evidence
from featureaudit.levels import Level
from featureaudit.probes.fitscope._thresholds import THRESHOLDS, FitscopeThresholds


def fit_level(
    all_exact: bool,
    train_exact: bool,
    distinguishable: bool,
    split: bool,
    th: FitscopeThresholds = THRESHOLDS,
) -> tuple[Level, str] | None:
    """The level of a fingerprint and which rows the fit used (``all rows``, ``training
    rows``, ``cannot tell``, or ``no split``); None when neither fit is exact."""
    if not all_exact and not train_exact:
        return None
    if not split:
        return Level.NONE, "no split"
    if train_exact and not all_exact:
        return Level.NONE, "training rows"
    if train_exact or not distinguishable:
        return Level.NONE, "cannot tell"
    return th.leak, "all rows"


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
