"""The level of copies across the split, as an ordered table of named rules.

The figures (:class:`CopyFigures`) are measured elsewhere; the first rule whose condition
holds sets the level and gives the sentence the evidence carries. Each rule is tested alone
(``tests/probes/test_twins.py``).
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass
from typing import TYPE_CHECKING, NamedTuple

from featureaudit.levels import Level

if TYPE_CHECKING:
    from featureaudit.probes.twins import TwinsThresholds

__all__ = ["COPY_RULES", "CopyFigures", "Rule", "decide_copies"]


@dataclass(frozen=True)
class CopyFigures:
    """What the copy level reads: the held-out share with a twin beyond natural copies
    (``excess``), the twin rows that share stands for, and how often twins share the target
    (``agreement``) against chance (``chance``; both None without a target)."""

    excess: float
    twin_rows: float
    agreement: float | None = None
    chance: float | None = None


class Rule(NamedTuple):
    """One row of a decision table: its name, the level it sets, when it holds, and why."""

    name: str
    level: Level
    holds: Callable[[CopyFigures, TwinsThresholds], bool]
    sentence: str


def _rung(f: CopyFigures, t: TwinsThresholds) -> Level:
    return t.copies.level(f.excess)


def _enough(f: CopyFigures, t: TwinsThresholds) -> bool:
    return f.twin_rows >= t.min_twins


def _by_chance(f: CopyFigures, t: TwinsThresholds) -> bool:
    """Twins agree on the target no more than chance plus ``chance_margin``."""
    return (
        f.agreement is not None
        and f.chance is not None
        and _enough(f, t)
        and f.agreement <= f.chance + t.chance_margin
    )


def _at(rung: Level, chance: bool) -> Callable[[CopyFigures, TwinsThresholds], bool]:
    """Holds on the ladder's ``rung`` with enough twin rows, labels by chance or not."""
    return lambda f, t: _rung(f, t) == rung and _enough(f, t) and _by_chance(f, t) == chance


CHANCE = "twins agree on the target no more than chance"
COPY_RULES: tuple[Rule, ...] = (
    Rule("copies far beyond natural", Level.CRITICAL, _at(Level.CRITICAL, False), ""),
    Rule("far beyond natural, labels by chance", Level.HIGH, _at(Level.CRITICAL, True), CHANCE),
    Rule("copies beyond natural", Level.HIGH, _at(Level.HIGH, False), ""),
    Rule("beyond natural, labels by chance", Level.MEDIUM, _at(Level.HIGH, True), CHANCE),
    Rule("some copies beyond natural", Level.MEDIUM, _at(Level.MEDIUM, False), ""),
    Rule("some beyond natural, labels by chance", Level.LOW, _at(Level.MEDIUM, True), CHANCE),
    Rule(
        "few twin rows",
        Level.LOW,
        lambda f, t: _rung(f, t) > Level.LOW and not _enough(f, t),
        "only {twin_rows:.0f} twin rows",
    ),
    Rule(
        "a trace beyond natural",
        Level.LOW,
        lambda f, t: _rung(f, t) == Level.LOW and not _by_chance(f, t),
        "",
    ),
    Rule("a trace, labels by chance", Level.NONE, _at(Level.LOW, True), CHANCE),
    Rule("no copies beyond natural", Level.NONE, lambda f, t: True, ""),
)


def decide_copies(f: CopyFigures, t: TwinsThresholds) -> tuple[Level, Rule]:
    """The first rule of :data:`COPY_RULES` that holds, and its level."""
    rule = next(r for r in COPY_RULES if r.holds(f, t))
    return rule.level, rule
