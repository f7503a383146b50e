"""The ``timing`` probe: values not known at the moment of prediction, and a split that is not
forward in time.

Per column, a row's value becomes known at the dictionary's ``known_at`` (a datetime column,
or a duration from the label time) or, for a datetime feature without one, at its own value.
The share of rows known after the cutoff (and, stronger, after the label time) is the
evidence. For the split, the share of held-out rows earlier than the end of the training
period, overall and within each entity.

Tolerances: ``time_tolerance`` (default 1 day) absorbs clock skew and same-day recording: a
cutoff stored as a date sits at midnight, so a value recorded later that day looks up to
24 h "late". ``share_tolerance`` (default 1 %) is the share of rows below which nothing is
flagged (common practice, no source: a few mistyped dates are data errors, not a design).
Levels (common practice, no source): a share of 2 % is medium, 10 % high; half the rows,
or 10 % known only after the outcome itself, critical. A random split of time-ordered rows
puts about half the held-out rows before the training period's end, a forward split none.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pandas as pd

from featureaudit.durations import parse_duration
from featureaudit.errors import SettingError
from featureaudit.evidence import Evidence, Skip
from featureaudit.registry import Probe, ProbeOutput, register
from featureaudit.settings import Settings
from featureaudit.table import AuditTable
from featureaudit.times import as_datetime

SHARE_LEVELS = (("critical", 0.5), ("high", 0.10), ("medium", 0.02))
AFTER_LABEL_CRITICAL = 0.10
QUANTILES = (0.0, 0.05, 0.25, 0.5, 0.75, 0.95, 1.0)
_DAY = 86400e9


def _level(share: float, tolerance: float) -> str:
    for level, floor in SHARE_LEVELS:
        if share >= floor:
            return level
    return "low" if share >= max(tolerance, 1e-12) else "none"


def _ns(times: pd.Series) -> np.ndarray:
    """Naive UTC datetimes as float nanoseconds, NaN where missing."""
    values = times.to_numpy(dtype="datetime64[ns]")
    out = values.astype("int64").astype(np.float64)
    out[np.isnat(values)] = np.nan
    return out


def _quantiles_days(lag_ns: np.ndarray) -> dict[str, float]:
    lag = lag_ns[np.isfinite(lag_ns)]
    if lag.size == 0:
        return {}
    values = np.quantile(lag, QUANTILES)          # one partition for all seven quantiles
    return {f"q{int(q * 100):02d}": float(v / _DAY) for q, v in zip(QUANTILES, values,
                                                                     strict=True)}


def _examples(table: AuditTable, mask: np.ndarray, k: int = 5) -> list[str]:
    rows = np.flatnonzero(mask)[:k]
    if table.id_columns:
        ids = table.frame[table.id_columns[0]].to_numpy()
        return [str(ids[i]) for i in rows]
    return [f"row {i}" for i in rows]


@register
class Timing(Probe):
    """Columns known only after the moment of prediction, and held-out periods that overlap
    training. Thresholds and tolerances: see the module docstring."""

    name = "timing"
    scope = "column"
    kinds = ("recorded_after_cutoff", "time_overlap_across_split")

    def run(self, table: AuditTable, settings: Settings) -> ProbeOutput:
        tol_ns = parse_duration(settings.time_tolerance).value
        evidence: list[Evidence] = []
        skipped: list[Skip] = []
        if table.cutoff_time is None:
            skipped.append(Skip(self.name, "no label time or cutoff time given: pass "
                                           "--label-time (and --cutoff-time or --horizon)"))
        else:
            cutoff = _ns(table.cutoff_time)
            label = _ns(table.label_time) if table.label_time is not None else None
            for name in table.features:
                found = self._column(table, name, cutoff, label, tol_ns, settings, skipped)
                if found is not None:
                    evidence.append(found)
        evidence += self._split(table, tol_ns, settings, skipped)
        return evidence, skipped

    def _known_times(self, table: AuditTable, name: str, label: np.ndarray | None,
                     skipped: list[Skip]) -> tuple[np.ndarray, str] | None:
        entry = table.dictionary.entries.get(name) if table.dictionary else None
        source = Path(table.dictionary.source).name if table.dictionary else ""
        where = f"dictionary {source!r} line {entry.line}" if entry else ""
        if entry is not None and entry.known_at_offset is not None:
            if label is None:
                skipped.append(Skip(self.name, f"known_at {entry.known_at!r} counts from the "
                                               "label time, and no label time is given", name))
                return None
            return label + float(entry.known_at_offset.value), f"{where}: known_at = " \
                f"{entry.known_at!r} (relative to the label time)"
        source_col = entry.known_at_column if entry is not None and entry.known_at_column \
            else None
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
        basis = f"{where}: known_at = {source_col!r}" if source_col else \
            "the column's own datetime values (no known_at in the dictionary)"
        return _ns(times), basis

    def _column(self, table: AuditTable, name: str, cutoff: np.ndarray,
                label: np.ndarray | None, tol_ns: int, settings: Settings,
                skipped: list[Skip]) -> Evidence | None:
        known = self._known_times(table, name, label, skipped)
        if known is None:
            return None
        times, basis = known
        ok = np.isfinite(times) & np.isfinite(cutoff)
        if not ok.any():
            skipped.append(Skip(self.name, "no row has both a known time and a cutoff", name))
            return None
        lag = np.where(ok, times - cutoff, np.nan)
        after = ok & (lag > tol_ns)
        share = float(after.sum() / ok.sum())
        detail: dict = {"basis": basis, "rows_checked": int(ok.sum()),
                        "rows_missing_time": int((~ok).sum()),
                        "rows_after_cutoff": int(after.sum()), "share_after_cutoff": share,
                        "lag_days_vs_cutoff": _quantiles_days(lag),
                        "examples_after_cutoff": _examples(table, after),
                        "cutoff": table.cutoff_source, "tolerance": settings.time_tolerance}
        level = _level(share, settings.share_tolerance)
        text = f"known after the moment of prediction for {share:.0%} of rows"
        if label is not None:
            ok_l = np.isfinite(times) & np.isfinite(label)
            after_l = ok_l & (times - label > tol_ns)
            share_l = float(after_l.sum() / ok_l.sum()) if ok_l.any() else 0.0
            detail.update(share_after_label=share_l, rows_after_label=int(after_l.sum()),
                          lag_days_vs_label=_quantiles_days(np.where(ok_l, times - label,
                                                                     np.nan)))
            if share_l >= AFTER_LABEL_CRITICAL:
                level = "critical"
                text += f", and after the outcome itself for {share_l:.0%}"
        if level == "none":
            text = "known by the moment of prediction" + (
                f" (after it for {share:.1%} of rows, within tolerance)" if share else "")
        text += f"; {detail['rows_missing_time']} rows lack a time" \
            if detail["rows_missing_time"] else ""
        return Evidence(self.name, "recorded_after_cutoff", "share_after_cutoff", share,
                        SHARE_LEVELS[1][1], level, column=name, summary=text,
                        severity=min(1.0, share), detail=detail)

    def _split(self, table: AuditTable, tol_ns: int, settings: Settings,
               skipped: list[Skip]) -> list[Evidence]:
        base = table.cutoff_time if table.cutoff_time is not None else table.label_time
        if base is None:
            return []
        if table.heldout is None:
            skipped.append(Skip(self.name, "audited as one pool: no held-out period to compare "
                                           "with training (pass --split-column or --test)"))
            return []
        t = _ns(base)
        ok = np.isfinite(t)
        train, held = ok & ~table.heldout, ok & table.heldout
        if not train.any() or not held.any():
            skipped.append(Skip(self.name, "one side of the split has no time values"))
            return []
        end = float(np.max(t[train]))
        before = held & (t < end - tol_ns)
        share = float(before.sum() / held.sum())
        detail: dict = {
            "time_column": table.cutoff_source if table.cutoff_time is not None
            else f"label time {table.label_time_column}",
            "train_period": [_iso(np.min(t[train])), _iso(end)],
            "heldout_period": [_iso(np.min(t[held])), _iso(np.max(t[held]))],
            "overlap_days": max(0.0, (end - float(np.min(t[held]))) / _DAY),
            "heldout_rows_before_train_end": int(before.sum()), "heldout_rows": int(held.sum()),
            "rows_missing_time": int((~ok).sum()),
            "heldout_days_vs_train_end": _quantiles_days(t[held] - end),
            "examples": _examples(table, before), "tolerance": settings.time_tolerance}
        if table.label_time is not None and table.cutoff_time is not None:
            lab = _ns(table.label_time)
            lab_end = float(np.nanmax(np.where(train, lab, np.nan)))
            detail["share_heldout_before_train_outcomes_known"] = float(
                (held & (t < lab_end - tol_ns)).sum() / held.sum())
        if table.entity is not None:
            detail.update(_per_entity(table.frame[table.entity], t, train, held, tol_ns))
        level = _level(share, settings.share_tolerance)
        summary = (f"{share:.0%} of held-out rows are earlier than the end of the training "
                   f"period (overlap {detail['overlap_days']:.0f} days)" if level != "none"
                   else "the held-out period starts after the training period ends")
        return [Evidence(self.name, "time_overlap_across_split", "heldout_share_before_train_end",
                         share, SHARE_LEVELS[1][1], level, summary=summary,
                         severity=min(1.0, share), detail=detail)]


def _per_entity(entity: pd.Series, t: np.ndarray, train: np.ndarray, held: np.ndarray,
                tol_ns: int) -> dict:
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
    return {"entity_share_before_own_training_end": float(before.sum() / max(h.sum(), 1)),
            "entity_rows_before_own_training_end": int(before.sum())}


def _datetime_like(s: pd.Series) -> bool:
    if pd.api.types.is_datetime64_any_dtype(s.dtype):
        return True
    if pd.api.types.is_numeric_dtype(s.dtype) or pd.api.types.is_bool_dtype(s.dtype):
        return False
    sample = s.iloc[:2000].dropna().head(200).astype(str)
    return bool(len(sample)) and sample.str.match(r"^\d{4}-\d{2}-\d{2}").mean() > 0.9


def _iso(ns: float) -> str:
    return pd.Timestamp(int(ns)).isoformat()
