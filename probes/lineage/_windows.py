"""Windows of the target that reach the row's own label or later periods.

For each numeric column, the mean (or the running sum) of the target over windows of its
entity's periods is matched against the column: windows ending from ``max_lag`` periods
before the row to ``max_lead`` after, 1 to ``max_width`` periods wide, and expanding windows
from the entity's first period. The best window that reaches the row's label or later is set
against the best one that ends before: a pipeline's rolling mean that includes the label,
a count that includes the outcome, or next period's value used as a lag are matched exactly
by a window with later rows and by no window of earlier ones.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from featureaudit.probes.lineage._fit import unexplained, unexplained_within
from featureaudit.probes.lineage._sequence import Sequence
from featureaudit.probes.lineage._thresholds import LineageThresholds

__all__ = ["Window", "WindowFigures", "target_windows", "window_figures"]


@dataclass(frozen=True)
class Window:
    """A window ending ``end`` periods after the row, ``width`` wide (None: expanding)."""

    end: int
    width: int | None
    total: bool = False  # a running sum rather than a mean (only expanding windows differ)

    @property
    def later(self) -> bool:
        """Does it reach the row's own period or a later one?"""
        return self.end >= 0

    @property
    def holds_label(self) -> bool:
        """Does it hold the row's own outcome (period t itself)?"""
        return self.end >= 0 and (self.width is None or self.end - self.width + 1 <= 0)

    def words(self) -> str:
        stat = "running sum" if self.total else "mean"
        last = _period(self.end)
        if self.width is None:
            return f"{stat} over every period up to {last}"
        if self.width == 1:
            return f"value at {last}"
        return f"{stat} over the {self.width} periods {_period(self.end - self.width + 1)}..{last}"

    def to_dict(self) -> dict[str, object]:
        return {"end_offset": self.end, "width": self.width or "expanding", "sum": self.total}


def _period(offset: int) -> str:
    return "t" if offset == 0 else f"t{offset:+d}"


@dataclass(frozen=True)
class WindowFigures:
    """The best window with later rows and the best without, as unexplained shares."""

    rows: int
    u_later: float
    u_earlier: float
    later: Window
    earlier: Window | None


def _candidates(th: LineageThresholds) -> list[Window]:
    out: list[Window] = []
    for end in range(-th.max_lag, th.max_lead + 1):
        out += [Window(end, w) for w in range(1, th.max_width + 1)]
        out += [Window(end, None), Window(end, None, total=True)]
    return out


def target_windows(
    seq: Sequence, y: np.ndarray, th: LineageThresholds
) -> list[tuple[Window, np.ndarray]]:
    """Each candidate window of the target over the sorted rows (computed once per audit)."""
    ys = y[seq.rows]
    return [(w, seq.window(ys, w.end, w.width, total=w.total)) for w in _candidates(th)]


def window_figures(
    x_sorted: np.ndarray,
    windows: list[tuple[Window, np.ndarray]],
    th: LineageThresholds,
    group: np.ndarray | None = None,
) -> WindowFigures | None:
    """The best window with later rows and the best without, for one column (sorted rows).

    With ``group`` (the entity of each sorted row) a line per entity is also fitted, so a
    window rescaled within each entity (standardised per entity) is matched as well."""
    best: dict[bool, tuple[float, int, Window]] = {}
    for window, values in windows:
        u, n = unexplained(x_sorted, values, th.min_rows)
        if group is not None and u > th.exact:
            u_in, n_in = unexplained_within(x_sorted, values, group, th.min_rows, th.min_group_rows)
            if n_in >= th.min_rows and u_in < u:
                u, n = u_in, n_in
        if n < th.min_rows:
            continue
        key = window.later
        if key not in best or u < best[key][0]:
            best[key] = (u, n, window)
    if True not in best:
        return None
    u_later, rows, later = best[True]
    u_earlier, _, earlier = best.get(False, (1.0, 0, None))
    return WindowFigures(rows, u_later, u_earlier, later, earlier)
