"""The lineage probe's decisions: ordered tables of named rules (level, condition, sentence).

The first rule whose condition holds gives the level and the sentence; the last rule of each
table always holds. Conditions read only the figures and the thresholds, so each rule can be
tested alone and the decision never depends on how the figures were measured.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass
from typing import Any

from featureaudit.probes.lineage._thresholds import LineageThresholds
from featureaudit.vocab.levels import Level

__all__ = [
    "Rule",
    "decide",
    "WINDOW_RULES",
    "SCALE_RULES",
    "AGGREGATE_RULES",
    "GROUP_RULES",
    "TEXT_RULES",
]


@dataclass(frozen=True)
class Rule:
    """One named decision: when ``condition(figures, thresholds)`` holds, ``level`` applies
    and ``sentence`` (formatted with the figures' fields) says why."""

    name: str
    level: Level
    condition: Callable[[Any, LineageThresholds], bool]
    sentence: str


def decide(rules: tuple[Rule, ...], figures: Any, th: LineageThresholds) -> Rule:
    """The first rule of ``rules`` whose condition holds for ``figures``."""
    for rule in rules:
        if rule.condition(figures, th):
            return rule
    raise ValueError("a rule table must end with a rule that always holds")


def _always(f: Any, th: LineageThresholds) -> bool:
    return True


# figures: u_later, u_earlier (unexplained variance shares), rows
WINDOW_RULES = (
    Rule(
        "window_with_later_rows_exact",
        Level.HIGH,
        lambda f, th: (
            f.rows >= th.min_rows and f.u_later <= th.exact and f.u_later < th.ratio * f.u_earlier
        ),
        "a window that reaches the label or later explains it exactly, far beyond any window "
        "that ends before",
    ),
    Rule(
        "window_with_later_rows_close",
        Level.MEDIUM,
        lambda f, th: (
            f.rows >= th.min_rows
            and f.u_later <= th.close
            and f.u_later < th.ratio_medium * f.u_earlier
        ),
        "a window that reaches the label or later explains it closely, beyond any window that "
        "ends before",
    ),
    Rule(
        "earlier_rows_explain",
        Level.NONE,
        _always,
        "no window reaching the label explains it beyond what earlier periods do",
    ),
)

# figures: holds_all, holds_train (shares of entities), split, entities
SCALE_RULES = (
    Rule(
        "scaled_over_heldout_periods",
        Level.HIGH,
        lambda f, th: (
            f.split and f.holds_all >= th.entity_share and f.holds_train < th.entity_share
        ),
        "standardised within each entity over all its periods, held-out periods included",
    ),
    Rule(
        "scaled_over_training_periods",
        Level.NONE,
        lambda f, th: f.split and f.holds_train >= th.entity_share,
        "standardised within each entity over its training periods only",
    ),
    Rule(
        "scaled_over_whole_history",
        Level.HIGH,
        lambda f, th: not f.split and f.holds_all >= th.entity_share,
        "standardised within each entity over its whole history, later periods included",
    ),
    Rule("not_scaled_per_entity", Level.NONE, _always, "not standardised within entities"),
)

# figures: u_all, u_train (unexplained shares), split
AGGREGATE_RULES = (
    Rule(
        "aggregate_over_heldout_periods",
        Level.HIGH,
        lambda f, th: f.split and f.u_all <= th.exact and f.u_all < th.ratio * f.u_train,
        "an aggregate of another column over each entity's periods, held-out ones included",
    ),
    Rule(
        "aggregate_over_training_periods",
        Level.NONE,
        lambda f, th: f.split and f.u_train <= th.exact,
        "an aggregate of another column over each entity's training periods",
    ),
    Rule(
        "aggregate_over_whole_history",
        Level.HIGH,
        lambda f, th: not f.split and f.u_all <= th.exact,
        "an aggregate of another column over each entity's whole history, later periods included",
    ),
    Rule("no_aggregate", Level.NONE, _always, "not an aggregate of another column"),
)

# figures: variant ("in_sample", "leave_one_out", "varies"), u_fit, u_half, groups
GROUP_RULES = (
    Rule(
        "in_sample_group_mean",
        Level.HIGH,
        lambda f, th: (
            f.variant == "in_sample"
            and f.groups >= th.min_groups
            and f.u_fit <= th.exact
            and f.u_fit < th.ratio * f.u_half
        ),
        "equals its group's target mean computed with the row's own outcome",
    ),
    Rule(
        "leave_one_out_group_mean",
        Level.HIGH,
        lambda f, th: (
            f.variant == "leave_one_out" and f.groups >= th.min_groups and f.u_fit <= th.exact
        ),
        "equals its group's target mean without the row (leave-one-out): within a group it "
        "falls as the row's own outcome rises",
    ),
    Rule(
        "cross_fitted_group_mean",
        Level.NONE,
        lambda f, th: f.variant == "varies",
        "tracks its group's target mean but varies within groups as a cross-fitted encoding does",
    ),
    Rule("no_group_mean", Level.NONE, _always, "does not match its group's target mean"),
)

# figures: power, gain (share of the other columns' error removed), coverage, phrases, numeric
TEXT_RULES = (
    Rule(
        "text_carries_outcome",
        Level.HIGH,
        lambda f, th: (
            f.power >= (th.r2_floor if f.numeric else th.auc_floor)
            and f.gain >= th.gain_high
            and f.coverage >= th.coverage
        ),
        "its words remove much of the error the other columns leave, and phrases that occur "
        "with only one outcome cover many rows",
    ),
    Rule(
        "text_predicts",
        Level.MEDIUM,
        lambda f, th: (
            f.power >= (th.r2_floor if f.numeric else th.auc_floor)
            and f.gain >= th.gain_medium
            and f.phrases > 0
        ),
        "its words add to the other columns, with phrases of one outcome",
    ),
    Rule(
        "text_phrases_only",
        Level.LOW,
        lambda f, th: f.phrases > 0 and f.gain > 0,
        "a few phrases occur with one outcome only, and the words add to the other columns",
    ),
    Rule("honest_text", Level.NONE, _always, "its words add nothing beyond the other columns"),
)
