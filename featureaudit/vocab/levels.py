"""The ordered levels of a finding, and the ladder that turns a statistic into a level.

A level says how sure a finding is (``none`` < ``low`` < ``medium`` < ``high`` <
``critical``). It is written as its lower-case name in findings.json; in code it is an
``IntEnum`` so that levels compare and step without looking names up in a list.
"""

from __future__ import annotations

from dataclasses import dataclass
from enum import IntEnum

__all__ = ["Level", "Ladder", "LEVEL_NAMES"]


class Level(IntEnum):
    """How sure a finding is; compares in order and prints as its lower-case name."""

    NONE = 0
    LOW = 1
    MEDIUM = 2
    HIGH = 3
    CRITICAL = 4

    def __str__(self) -> str:
        return self.name.lower()

    @property
    def label(self) -> str:
        """The name used in findings.json, the dossier and on the command line."""
        return self.name.lower()

    @classmethod
    def parse(cls, value: str | Level) -> Level:
        """The level named ``value`` (case and surrounding spaces ignored); ValueError if none."""
        if isinstance(value, Level):
            return value
        try:
            return cls[str(value).strip().upper()]
        except KeyError:
            raise ValueError(
                f"{value!r} is not a level; use one of {', '.join(LEVEL_NAMES)}"
            ) from None

    def down(self, steps: int = 1) -> Level:
        """This level lowered by ``steps``, never below ``none``."""
        return Level(max(0, int(self) - steps))

    def at_most(self, cap: Level) -> Level:
        """This level, capped at ``cap``."""
        return min(self, cap)


LEVEL_NAMES: tuple[str, ...] = tuple(lv.label for lv in Level)


@dataclass(frozen=True)
class Ladder:
    """Floors of a statistic per level, highest level first: ``value >= floor`` reaches it.

    ``above_zero`` is the level a value reaches when it is positive but below every floor
    (``low`` for shares, ``none`` where a small value means nothing).
    """

    statistic: str
    floors: tuple[tuple[Level, float], ...]
    above_zero: Level = Level.NONE
    unit: str = ""

    def __post_init__(self) -> None:
        values = [f for _, f in self.floors]
        levels = [lv for lv, _ in self.floors]
        if values != sorted(values, reverse=True) or levels != sorted(levels, reverse=True):
            raise ValueError(f"ladder {self.statistic!r}: floors must fall with the level")

    def level(self, value: float | None) -> Level:
        """The highest level whose floor ``value`` reaches."""
        if value is None or value != value:  # None or NaN
            return Level.NONE
        for lv, floor in self.floors:
            if value >= floor:
                return lv
        return self.above_zero if value > 0 else Level.NONE

    def floor(self, level: Level = Level.HIGH) -> float | None:
        """The floor of ``level`` (the threshold reported beside a value), or None."""
        for lv, f in self.floors:
            if lv == level:
                return f
        return None

    def describe(self) -> str:
        """The ladder in words, e.g. ``high from 0.1, critical from 0.5``."""

        def fmt(v: float) -> str:
            if self.unit == "%":
                return f"{v * 100:g} %"
            return f"{v:g}{self.unit}"

        return ", ".join(f"{lv.label} from {fmt(f)}" for lv, f in reversed(self.floors))

    def to_dict(self) -> dict[str, float]:
        return {lv.label: f for lv, f in self.floors}
