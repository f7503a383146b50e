"""The numbers behind the lineage probe's decisions, declared once with their sources."""

from __future__ import annotations

from dataclasses import dataclass


@dataclass(frozen=True)
class LineageThresholds:
    """Thresholds of the lineage probe, each with its source.

    ``min_rows``: a window, scaling or group fit is judged on at least 30 rows (common
    practice, no source); ``min_group_rows``: a line fitted within one entity needs 6 rows
    (four points beyond its two parameters; common practice, no source). ``exact``: a fit
    leaves at most 0.1 % of a column's variance unexplained (r >= 0.9995): a pipeline's
    statistic written with two decimals leaves about 1e-4 (a rounding error of SD
    q/sqrt(12), a textbook formula); honest columns are judged against what earlier windows
    explain (``ratio``), not against this floor alone (common practice, no source).
    ``ratio``: the fit with later rows must leave at most 5 % of what the best fit without
    them leaves, so a smooth series whose past explains it almost as well is not a finding
    (common practice, no source). ``close`` / ``ratio_medium``: the looser pair of ``medium``.
    ``max_lag`` / ``max_lead`` / ``max_width``: windows end from 4 periods before to 2 after
    the row and span 1 to 8 periods, plus expanding windows (common pipeline choices, no
    source). ``entity_share``: per-entity standardisation is read when at least 90 % of the
    entities with ``min_entity_rows`` rows show it (common practice, no source).
    ``max_groups_share``: a grouping column has at most one group per 2 rows;
    ``min_groups``: at least 5 groups, below which any group-level column matches the group
    means (common practice, no source). ``text_distinct``: a text column whose values are at
    least half distinct is read as free text; ``phrase_min_docs`` / ``phrase_alpha``: a
    phrase is named when it occurs in 5 rows or more and all of them have one outcome with a
    chance below 0.01 after Bonferroni over the phrases (binomial tail, a textbook formula).
    ``auc_floor`` / ``r2_floor``: the text alone, out of fold, must predict at all (common
    practice, no source); ``gain_high`` / ``gain_medium``: blended with the other columns'
    out-of-fold score (a logistic or ridge model on the two scores, out of fold), the words
    must remove half (a quarter) of the error (1 − AUC or 1 − R²) those columns leave, so
    an honest description of the row's own values is not a finding (common practice, no
    source);
    ``coverage``: phrases of one outcome in at least 10 % of rows (common practice, no
    source).
    """

    min_rows: int = 30
    min_group_rows: int = 6
    exact: float = 1e-3
    ratio: float = 0.05
    close: float = 0.02
    ratio_medium: float = 0.25
    max_lag: int = 4
    max_lead: int = 2
    max_width: int = 8
    entity_share: float = 0.9
    min_entity_rows: int = 3
    max_groups_share: float = 0.5
    min_groups: int = 5
    text_distinct: float = 0.5
    phrase_min_docs: int = 5
    phrase_alpha: float = 0.01
    auc_floor: float = 0.7
    r2_floor: float = 0.2
    gain_high: float = 0.5
    gain_medium: float = 0.25
    coverage: float = 0.1


THRESHOLDS = LineageThresholds()
