"""The ``timing`` probe: values not known at the moment of prediction, and a split that is not
forward in time.

Per column, a row's value becomes known at the dictionary's ``known_at`` (a datetime column,
or a duration from the label time) or, for a datetime feature without one, at its own value.
The share of rows known after the cutoff (and, stronger, after the label time) is the
evidence. A ``known_at`` duration is evidence even without any time column: durations are
compared with each other, the cutoff being the label time (0) or ``-horizon``. A ``known_at``
column with no label or cutoff time is reported as "cannot compare", with the reason. For the
split, the share of held-out rows earlier than the end of the training period, overall and
within each entity.

Tolerances: ``time_tolerance`` absorbs clock skew and the rounding of times. Left at ``auto``
it follows the resolution of the cutoff and the horizon: a cutoff written to a unit (a date,
a whole hour) stands for that whole unit, so a value is late from the start of the next unit
(a lag of at least one unit of the cutoff's resolution), never below one minute of clock skew
and never beyond the horizon. A value recorded later on the cutoff's own day passes; one on
the outcome's day under ``--horizon 1d`` is late (the whole horizon), and so is a value
written as a date hours after a cutoff written to the minute (the value's own coarser unit
no longer widens the tolerance: a date is known from that midnight on). Durations from the
dictionary are exact and compared with no tolerance. The split keeps the coarsest resolution
of its times. A duration the user sets (e.g. ``3d``) is used everywhere instead, lags beyond
it late. The tolerance, its reason and the comparison are in every column's evidence.
``share_tolerance`` (default 1 %) is the share of rows below which nothing is flagged. All
numbers are in :class:`TimingThresholds`; the column level is the table :data:`COLUMN_RULES`.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass
from pathlib import Path
from typing import NamedTuple

import numpy as np
import pandas as pd

from featureaudit.errors import SettingError
from featureaudit.kit.registry import Capabilities, Probe, ProbeOutput, register
from featureaudit.load.durations import parse_duration
from featureaudit.load.settings import Settings
from featureaudit.load.table import AuditTable
from featureaudit.load.times import as_datetime
from featureaudit.vocab.evidence import Evidence, Skip
from featureaudit.vocab.levels import Ladder, Level

QUANTILES = (0.0, 0.05, 0.25, 0.5, 0.75, 0.95, 1.0)
_SECOND = 1e9
_MINUTE = 60 * _SECOND
_HOUR = 60 * _MINUTE
_DAY = 24 * _HOUR
# The units a time column can be resolved to, coarsest first: (name, nanoseconds).
UNITS = (("day", _DAY), ("hour", _HOUR), ("minute", _MINUTE), ("second", _SECOND))


@dataclass(frozen=True)
class TimingThresholds:
    """The numbers behind the timing levels.

    ``share``: the share of rows known after the cutoff; medium from 2 %, high from 10 %,
    critical from half the rows (common practice, no source: a few mistyped dates are data
    errors, a tenth of the rows is a design). On the detection bench's clean columns with
    times (``benchmarks/detection.py --seeds 3``) no honest column exceeds 0 %.
    ``after_label_critical``: a share of 10 % known only after the outcome itself is critical
    (common practice, no source). ``clock_skew_floor``: the smallest automatic tolerance, one
    minute of clock skew between systems (common practice, no source). A random split of
    time-ordered rows puts about half the held-out rows before the training period's end, a
    forward split none; the split uses the same ``share`` ladder.
    """

    share: Ladder = Ladder(
        "share_after_cutoff",
        ((Level.CRITICAL, 0.5), (Level.HIGH, 0.10), (Level.MEDIUM, 0.02)),
        above_zero=Level.LOW,
        unit="%",
    )
    after_label_critical: float = 0.10
    clock_skew_floor: str = "1min"


THRESHOLDS = TimingThresholds()


class LateFigures(NamedTuple):
    """What a column's level reads: the share of rows known after the cutoff, the share
    known after the label time (None without one), and the share below which nothing is
    flagged (``share_tolerance``)."""

    after_cutoff: float
    after_label: float | None
    share_tolerance: float


class Rule(NamedTuple):
    """One row of a decision table: its name, the level it sets, when it holds, and why."""

    name: str
    level: Level
    holds: Callable[[LateFigures, TimingThresholds], bool]
    sentence: str


def _on(level: Level) -> Callable[[LateFigures, TimingThresholds], bool]:
    return lambda f, th: th.share.level(f.after_cutoff) == level


COLUMN_RULES: tuple[Rule, ...] = (
    Rule(
        "known after the outcome",
        Level.CRITICAL,
        lambda f, th: f.after_label is not None and f.after_label >= th.after_label_critical,
        "known after the outcome itself for enough rows",
    ),
    Rule("most rows late", Level.CRITICAL, _on(Level.CRITICAL), "late for half the rows"),
    Rule("a tenth late", Level.HIGH, _on(Level.HIGH), "late for a tenth of the rows or more"),
    Rule("a few late", Level.MEDIUM, _on(Level.MEDIUM), "late for a few per cent of rows"),
    Rule(
        "a trace late",
        Level.LOW,
        lambda f, th: _on(Level.LOW)(f, th) and f.after_cutoff >= max(f.share_tolerance, 1e-12),
        "late for a share of rows past the share tolerance",
    ),
    Rule("in time", Level.NONE, lambda f, th: True, "known by the moment of prediction"),
)


def decide_column(f: LateFigures, th: TimingThresholds = THRESHOLDS) -> tuple[Level, Rule]:
    """The first rule of :data:`COLUMN_RULES` that holds, and its level."""
    rule = next(r for r in COLUMN_RULES if r.holds(f, th))
    return rule.level, rule


def share_level(share: float, share_tolerance: float, th: TimingThresholds = THRESHOLDS) -> Level:
    """The level of a share of late rows; below ``share_tolerance`` it is nothing."""
    return decide_column(LateFigures(share, None, share_tolerance), th)[0]


def column_level(
    share_after_cutoff: float,
    share_after_label: float | None,
    share_tolerance: float,
    th: TimingThresholds = THRESHOLDS,
) -> Level:
    """A column's level: the first rule of :data:`COLUMN_RULES` that holds."""
    return decide_column(LateFigures(share_after_cutoff, share_after_label, share_tolerance), th)[0]


def resolution(ns: np.ndarray) -> tuple[str, float]:
    """The finest non-zero unit the times carry: ``day`` when every value sits at midnight,
    ``hour`` when on the hour, and so on; ``second`` for anything finer."""
    t = ns[np.isfinite(ns)]
    if t.size == 0:
        return UNITS[0]
    # whole milliseconds: exact for every unit tested here, and within int64 for any year
    # (float nanoseconds of years outside 1677-2262 do not fit an int64)
    whole = np.round(t / 1e6).astype(np.int64)
    for name, unit in UNITS[:-1]:
        if np.all(whole % int(unit // 1e6) == 0):
            return name, unit
    return UNITS[-1]


@dataclass(frozen=True)
class Tolerance:
    """The time tolerance in force for one comparison, and why. ``inclusive``: a lag of
    exactly ``ns`` is late (the cutoff's own resolution unit: a value in the next unit is
    after it); otherwise only lags beyond ``ns`` are."""

    ns: float
    reason: str
    inclusive: bool = False

    def late(self, lag: np.ndarray) -> np.ndarray:
        """Which lags (NaN: not compared) are past the tolerance."""
        with np.errstate(invalid="ignore"):
            return lag >= self.ns if self.inclusive else lag > self.ns

    @property
    def rule(self) -> str:
        """The comparison in words, for the evidence."""
        amount = _amount(self.ns / self.unit[1], self.unit[0])
        return f"late when {'at least' if self.inclusive else 'more than'} {amount} after"

    @property
    def unit(self) -> tuple[str, float]:
        """The unit the lags are best shown in: days, hours or minutes."""
        for name, unit in UNITS[:-1]:
            if self.ns >= unit:
                return name + "s", unit
        return "minutes", _MINUTE


def tolerance(
    settings: Settings, *times: np.ndarray, th: TimingThresholds = THRESHOLDS
) -> Tolerance:
    """The user's ``time_tolerance``, or under ``auto`` the coarsest resolution of ``times``
    (never below the clock-skew floor)."""
    if settings.time_tolerance != "auto":
        return Tolerance(
            float(parse_duration(settings.time_tolerance).value),
            f"time_tolerance = {settings.time_tolerance!r} as set",
        )
    floor = float(parse_duration(th.clock_skew_floor).value)
    found = [resolution(t) for t in times]
    name, unit = max(found, key=lambda r: r[1]) if found else UNITS[0]
    ns = max(unit, floor)
    return Tolerance(
        ns,
        f"automatic: the coarsest resolution of the times compared is one {name}"
        + (f" (clock-skew floor {th.clock_skew_floor})" if ns > unit else ""),
    )


def column_tolerance(
    settings: Settings,
    cutoff: np.ndarray,
    horizon: pd.Timedelta | None = None,
    exact: bool = False,
    th: TimingThresholds = THRESHOLDS,
) -> Tolerance:
    """The tolerance of a column's comparison with its cutoff (or label) times.

    A cutoff written to a unit (a date, a whole hour) stands for that whole unit, so a value
    is late from the start of the next unit: the lag must reach one unit of the cutoff's
    resolution (never below the clock-skew floor, never beyond the horizon). The value's own
    resolution plays no part: a value written as a date became known at or after that
    midnight, so a date later than the cutoff is late however fine the cutoff is. Times from
    a dictionary duration (``exact``) are compared exactly; a tolerance the user sets wins.
    """
    if settings.time_tolerance != "auto":
        return tolerance(settings, th=th)
    if exact:
        return Tolerance(0.0, "automatic: durations from the dictionary are exact")
    name, unit = resolution(cutoff)
    floor = float(parse_duration(th.clock_skew_floor).value)
    ns = max(unit, floor)
    reason = f"automatic: late from the cutoff's next {name}"
    if ns > unit:
        reason = f"automatic: clock-skew floor {th.clock_skew_floor}"
    if horizon is not None and 0 < float(horizon.value) < ns:
        ns, reason = (
            float(horizon.value),
            f"automatic: at most the horizon {horizon}",
        )
    return Tolerance(ns, reason, inclusive=True)


def _display_unit(lag_ns: np.ndarray) -> tuple[str, float]:
    """Days, hours or minutes, whichever shows the typical lag as a readable number."""
    lag = np.abs(lag_ns[np.isfinite(lag_ns)])
    typical = float(np.median(lag)) if lag.size else 0.0
    for name, unit in UNITS[:-1]:
        if typical >= 2 * unit:
            return name + "s", unit
    return "minutes", _MINUTE


def _amount(value: float, unit_plural: str) -> str:
    """``1 minute``, ``3 days``: a number with its unit, singular for one."""
    return f"{value:g} {unit_plural[:-1] if value == 1 else unit_plural}"


def _ns(times: pd.Series) -> np.ndarray:
    """Naive UTC datetimes as float nanoseconds, NaN where missing.

    Read through microseconds: years outside the int64 nanosecond range (before 1677, after
    2262) still convert, as floats.
    """
    values = times.to_numpy(dtype="datetime64[us]")
    out = values.astype("int64").astype(np.float64) * 1000.0
    out[np.isnat(values)] = np.nan
    return out


def _quantiles(lag_ns: np.ndarray, unit: float = _DAY) -> dict[str, float]:
    lag = lag_ns[np.isfinite(lag_ns)]
    if lag.size == 0:
        return {}
    values = np.quantile(lag, QUANTILES)  # one partition for all seven quantiles
    return {f"q{int(q * 100):02d}": float(v / unit) for q, v in zip(QUANTILES, values, strict=True)}


def _quantiles_days(lag_ns: np.ndarray) -> dict[str, float]:
    return _quantiles(lag_ns, _DAY)


def _examples(table: AuditTable, mask: np.ndarray, k: int = 5) -> list[str]:
    rows = np.flatnonzero(mask)[:k]
    if table.id_columns:
        ids = table.frame[table.id_columns[0]].to_numpy()
        return [str(ids[i]) for i in rows]
    return [f"row {i}" for i in rows]


@register
class Timing(Probe):
    """Columns known only after the moment of prediction, and held-out periods that overlap
    training. Thresholds: :class:`TimingThresholds`; tolerances: the module docstring."""

    name = "timing"
    scope = "column"
    kinds = ("recorded_after_cutoff", "time_overlap_across_split")
    thresholds = THRESHOLDS
    capabilities = Capabilities(pairs=frozenset({"partition", "between_heldout", "fold"}))

    @classmethod
    def describe(cls, settings: Settings) -> str:
        th = cls.thresholds
        if settings.time_tolerance == "auto":
            tol = (
                "a tolerance that follows the cutoff's resolution and the horizon (a value "
                "is late from the cutoff's next unit: one day for dates, one hour or one "
                f"minute for times of day, never below {th.clock_skew_floor} of clock skew "
                "nor beyond the horizon; durations from the dictionary are compared exactly; "
                "the split compares at the coarsest resolution of its times)"
            )
        else:
            tol = f"a tolerance of {settings.time_tolerance} (set by time_tolerance)"
        return (
            f"A value is known at its dictionary known_at (a datetime column, or a duration "
            f"from the label time) or, for a datetime feature, at its own value; durations "
            f"are compared with each other when no time column is given (cutoff 0, or "
            f"minus the horizon). The share of rows known after the cutoff, past {tol} "
            f"and {settings.share_tolerance:.0%} of rows, is {th.share.describe()}, and "
            f"critical when {th.after_label_critical:.0%} of rows are known only after the "
            f"outcome itself. For the split: the share of held-out rows earlier than the "
            f"end of training, on the same ladder."
        )

    def run(self, table: AuditTable, settings: Settings) -> ProbeOutput:
        evidence: list[Evidence] = []
        skipped: list[Skip] = []
        if table.cutoff_time is None:
            skipped.append(
                Skip(
                    self.name,
                    "no label time or cutoff time given: datetime "
                    "columns are not compared; pass --label-time (and "
                    "--cutoff-time or --horizon)",
                )
            )
            for name in table.features:
                found = self._without_times(table, name, settings)
                if found is not None:
                    evidence.append(found)
        else:
            cutoff = _ns(table.cutoff_time)
            label = _ns(table.label_time) if table.label_time is not None else None
            for name in table.features:
                found = self._column(table, name, cutoff, label, settings, skipped)
                if found is not None:
                    evidence.append(found)
        evidence += self._split(table, settings, skipped)
        return evidence, skipped

    def _where(self, table: AuditTable, name: str):  # noqa: ANN202
        entry = table.dictionary.entries.get(name) if table.dictionary else None
        source = Path(table.dictionary.source).name if table.dictionary else ""
        return entry, (f"dictionary {source!r} line {entry.line}" if entry else "")

    def _without_times(self, table: AuditTable, name: str, settings: Settings) -> Evidence | None:
        """No label or cutoff time: durations against the cutoff's own offset, columns not."""
        entry, where = self._where(table, name)
        if entry is None or not entry.known_at:
            return None
        if entry.known_at_offset is None:
            return Evidence(
                self.name,
                "recorded_after_cutoff",
                "share_after_cutoff",
                None,
                self.thresholds.share.floor(),
                Level.NONE,
                column=name,
                summary=f"cannot compare: known_at names column "
                f"{entry.known_at!r}, and no label time or cutoff time is "
                "given (pass --label-time or --cutoff-time)",
                detail={
                    "basis": f"{where}: known_at = {entry.known_at!r}",
                    "compared": False,
                    "reason": "no label or cutoff time",
                },
            )
        offset = float(entry.known_at_offset.value)
        cut = -float(table.horizon.value) if table.horizon is not None else 0.0
        tol = (
            0.0
            if settings.time_tolerance == "auto"
            else float(parse_duration(settings.time_tolerance).value)
        )
        late, after_label = offset - cut > tol, offset > tol
        share, share_l = float(late), float(after_label)
        level = column_level(share, share_l, settings.share_tolerance, self.thresholds)
        cut_text = (
            f"-{str(table.cutoff_source).split(':', 1)[1]}"
            if table.horizon is not None
            else "the label time"
        )
        text = (
            f"known {entry.known_at} from the label time, after the cutoff "
            f"({cut_text}) for every row"
            if late
            else f"known {entry.known_at} from the label time, by the cutoff ({cut_text})"
        )
        if after_label:
            text += ", and after the outcome itself"
        unit_name, unit = Tolerance(max(abs(offset - cut), _MINUTE), "").unit
        detail = {
            "basis": f"{where}: known_at = {entry.known_at!r} (relative to the label "
            "time; no time column, durations compared)",
            "compared": "durations",
            "cutoff": table.cutoff_source or "label time",
            "known_after_cutoff": f"{(offset - cut) / unit:g} {unit_name}",
            "share_after_cutoff": share,
            "share_after_label": share_l,
            "tolerance": settings.time_tolerance,
            "tolerance_used": "none (durations are exact)" if tol == 0 else settings.time_tolerance,
        }
        return Evidence(
            self.name,
            "recorded_after_cutoff",
            "share_after_cutoff",
            share,
            self.thresholds.share.floor(),
            level,
            column=name,
            summary=text,
            severity=share,
            detail=detail,
        )

    def _known_times(
        self, table: AuditTable, name: str, label: np.ndarray | None, skipped: list[Skip]
    ) -> tuple[np.ndarray, str, bool] | None:
        """The times a column's values become known, the basis, and whether they come from a
        dictionary duration (exact, compared without a resolution tolerance)."""
        entry, where = self._where(table, name)
        if entry is not None and entry.known_at_offset is not None:
            if label is None:
                skipped.append(
                    Skip(
                        self.name,
                        f"known_at {entry.known_at!r} counts from the "
                        "label time, and no label time is given",
                        name,
                    )
                )
                return None
            return (
                label + float(entry.known_at_offset.value),
                f"{where}: known_at = {entry.known_at!r} (relative to the label time)",
                True,
            )
        source_col = entry.known_at_column if entry is not None and entry.known_at_column else None
        if source_col is not None and source_col not in table.frame.columns:
            return None  # the loader already warned about the missing column
        column = source_col or name
        s = table.frame[column]
        if source_col is None and not _datetime_like(s):
            return None
        try:
            times = as_datetime(s, column=column, what="time column")
        except SettingError as exc:
            skipped.append(Skip(self.name, str(exc), name))
            return None
        basis = (
            f"{where}: known_at = {source_col!r}"
            if source_col
            else "the column's own datetime values (no known_at in the dictionary)"
        )
        return _ns(times), basis, False

    def _column(
        self,
        table: AuditTable,
        name: str,
        cutoff: np.ndarray,
        label: np.ndarray | None,
        settings: Settings,
        skipped: list[Skip],
    ) -> Evidence | None:
        known = self._known_times(table, name, label, skipped)
        if known is None:
            return None
        times, basis, from_duration = known
        ok = np.isfinite(times) & np.isfinite(cutoff)
        if not ok.any():
            skipped.append(Skip(self.name, "no row has both a known time and a cutoff", name))
            return None
        tol = column_tolerance(
            settings, cutoff[ok], table.horizon, from_duration, th=self.thresholds
        )
        lag = np.where(ok, times - cutoff, np.nan)
        after = ok & tol.late(lag)
        unit_name, unit = _display_unit(lag[after] if after.any() else lag[ok])
        share = float(after.sum() / ok.sum())
        detail: dict = {
            "basis": basis,
            "rows_checked": int(ok.sum()),
            **_not_dates(table, name),
            "rows_missing_time": int((~ok).sum()),
            "rows_after_cutoff": int(after.sum()),
            "share_after_cutoff": share,
            "lag_days_vs_cutoff": _quantiles_days(lag),
            "lag_unit": unit_name,
            f"lag_{unit_name}_vs_cutoff": _quantiles(lag, unit),
            "examples_after_cutoff": _examples(table, after),
            "cutoff": table.cutoff_source,
            "tolerance": settings.time_tolerance,
            "tolerance_used": _amount(tol.ns / tol.unit[1], tol.unit[0]),
            "tolerance_reason": tol.reason,
            "tolerance_rule": tol.rule + " the cutoff",
        }
        share_l = None
        if label is not None:
            ok_l = np.isfinite(times) & np.isfinite(label)
            tol_l = column_tolerance(settings, label[ok_l], None, from_duration, self.thresholds)
            after_l = ok_l & tol_l.late(np.where(ok_l, times - label, np.nan))
            share_l = float(after_l.sum() / ok_l.sum()) if ok_l.any() else 0.0
            detail.update(
                share_after_label=share_l,
                rows_after_label=int(after_l.sum()),
                lag_days_vs_label=_quantiles_days(np.where(ok_l, times - label, np.nan)),
            )
        level = column_level(share, share_l, settings.share_tolerance, self.thresholds)
        return Evidence(
            self.name,
            "recorded_after_cutoff",
            "share_after_cutoff",
            share,
            self.thresholds.share.floor(),
            level,
            column=name,
            summary=_column_sentence(level, share, share_l, detail, tol),
            severity=min(1.0, share),
            detail=detail,
        )

    def _split(self, table: AuditTable, settings: Settings, skipped: list[Skip]) -> list[Evidence]:
        base = table.cutoff_time if table.cutoff_time is not None else table.label_time
        if base is None:
            return []
        if table.heldout is None:
            skipped.append(
                Skip(
                    self.name,
                    "audited as one pool: no held-out period to compare "
                    "with training (pass --split-column or --test)",
                )
            )
            return []
        t = _ns(base)
        ok = np.isfinite(t)
        train, held = ok & ~table.heldout, ok & table.heldout
        if not train.any() or not held.any():
            skipped.append(Skip(self.name, "one side of the split has no time values"))
            return []
        tol = tolerance(settings, t[ok], th=self.thresholds)
        tol_ns = tol.ns
        end = float(np.max(t[train]))
        before = held & (t < end - tol_ns)
        share = float(before.sum() / held.sum())
        detail: dict = {
            "time_column": table.cutoff_source
            if table.cutoff_time is not None
            else f"label time {table.label_time_column}",
            "train_period": [_iso(np.min(t[train])), _iso(end)],
            "heldout_period": [_iso(np.min(t[held])), _iso(np.max(t[held]))],
            "overlap_days": max(0.0, (end - float(np.min(t[held]))) / _DAY),
            "heldout_rows_before_train_end": int(before.sum()),
            "heldout_rows": int(held.sum()),
            "rows_missing_time": int((~ok).sum()),
            "heldout_days_vs_train_end": _quantiles_days(t[held] - end),
            "examples": _examples(table, before),
            "tolerance": settings.time_tolerance,
            "tolerance_used": _amount(tol.ns / tol.unit[1], tol.unit[0]),
            "tolerance_reason": tol.reason,
        }
        if table.label_time is not None and table.cutoff_time is not None:
            lab = _ns(table.label_time)
            lab_end = float(np.nanmax(np.where(train, lab, np.nan)))
            detail["share_heldout_before_train_outcomes_known"] = float(
                (held & (t < lab_end - tol_ns)).sum() / held.sum()
            )
        if table.entity is not None:
            detail.update(_per_entity(table.frame[table.entity], t, train, held, tol_ns))
        level = share_level(share, settings.share_tolerance, self.thresholds)
        summary = (
            f"{share:.0%} of held-out rows are earlier than the end of the training "
            f"period (overlap {detail['overlap_days']:.0f} days)"
            if level != Level.NONE
            else "the held-out period starts after the training period ends"
        )
        return [
            Evidence(
                self.name,
                "time_overlap_across_split",
                "heldout_share_before_train_end",
                share,
                self.thresholds.share.floor(),
                level,
                summary=summary,
                severity=min(1.0, share),
                detail=detail,
            )
        ]


def _column_sentence(
    level: Level, share: float, share_l: float | None, detail: dict, tol: Tolerance
) -> str:
    """The sentence that explains a column's level (the level is decided elsewhere)."""
    unit_name = detail["lag_unit"]
    median = detail[f"lag_{unit_name}_vs_cutoff"].get("q50", 0.0)
    if level == Level.NONE:
        text = "known by the moment of prediction" + (
            f" (after it for {share:.1%} of rows, within tolerance)" if share else ""
        )
    else:
        text = f"known after the moment of prediction for {share:.0%} of rows"
        if share_l is not None and share_l > 0 and level == Level.CRITICAL:
            text += f", and after the outcome itself for {share_l:.0%}"
        text += f" (median lag {median:.3g} {unit_name})"
    text += f"; tolerance {detail['tolerance_used']} ({tol.reason})"
    text += (
        f"; {detail['rows_missing_time']} rows lack a time" if detail["rows_missing_time"] else ""
    )
    return text


def _per_entity(
    entity: pd.Series, t: np.ndarray, train: np.ndarray, held: np.ndarray, tol_ns: float
) -> dict:
    """Within each entity: held-out rows earlier than that entity's latest training row."""
    codes, _ = pd.factorize(entity, use_na_sentinel=True)
    valid = codes >= 0
    n = int(codes.max()) + 1 if valid.any() else 0
    last = np.full(n, -np.inf)
    idx = train & valid
    np.maximum.at(last, codes[idx], t[idx])
    h = held & valid
    before = np.zeros(len(t), dtype=bool)
    before[h] = t[h] < last[codes[h]] - tol_ns
    return {
        "entity_share_before_own_training_end": float(before.sum() / max(h.sum(), 1)),
        "entity_rows_before_own_training_end": int(before.sum()),
    }


def _not_dates(table: AuditTable, name: str) -> dict:
    """Values of the column (or of its known_at column) that were not dates, read as missing,
    so a few bad entries show in the evidence instead of silently shrinking what is checked."""
    entry = table.dictionary.entries.get(name) if table.dictionary is not None else None
    source = entry.known_at_column if entry is not None and entry.known_at_column else name
    bad = table.unparsed_dates.get(source)
    if bad is None:
        return {}
    return {"values_not_dates": bad[0], "example_not_date": bad[1], "not_dates_column": source}


def _datetime_like(s: pd.Series) -> bool:
    if pd.api.types.is_datetime64_any_dtype(s.dtype):
        return True
    if pd.api.types.is_numeric_dtype(s.dtype) or pd.api.types.is_bool_dtype(s.dtype):
        return False
    sample = s.iloc[:2000].dropna().head(200).astype(str)
    return bool(len(sample)) and sample.str.match(r"^\d{4}-\d{2}-\d{2}").mean() > 0.9


def _iso(ns: float) -> str:
    return pd.Timestamp(int(ns // 1000), unit="us").isoformat()
