"""From evidence to one verdict per column (score 0–1, level, kinds, summary) and dataset findings.

A column's level is the highest level of its evidence; two different kinds each at ``high``
corroborate one another and make it ``critical``. The score places the column within its
level band (none 0–0.2, low 0.2–0.4, …, critical 0.8–1) by the strongest evidence's severity.
"""

from __future__ import annotations

from dataclasses import replace

from featureaudit.evidence import ColumnVerdict, Evidence
from featureaudit.levels import Level
from featureaudit.table import AuditTable

__all__ = ["rank"]


def _strength(e: Evidence) -> tuple[Level, float]:
    return e.rank, min(max(e.severity, 0.0), 0.999)


def rank(table: AuditTable, evidence: list[Evidence]) -> tuple[list[ColumnVerdict], list[Evidence]]:
    """Return column verdicts sorted by score (descending) and dataset findings by level."""
    by_column: dict[str, list[Evidence]] = {c: [] for c in table.id_columns + table.features}
    dataset: list[Evidence] = []
    for e in evidence:
        if e.column is None:
            dataset.append(e)
        else:
            by_column.setdefault(e.column, []).append(e)
    verdicts = [_verdict(table, name, items) for name, items in by_column.items()]
    verdicts.sort(key=lambda v: (-v.score, v.column))
    dataset.sort(key=lambda e: (-_strength(e)[0], -_strength(e)[1], e.probe, e.kind))
    return verdicts, dataset


def _explained(items: list[Evidence]) -> list[Evidence]:
    """Evidence that another probe explains honestly is capped at low, saying why.

    An evidence's ``detail["explains"]`` names kinds it accounts for (the lineage probe's
    proof that a column is the target's value over periods that end before the row: a lag
    predicts the target, and is no leak); evidence of those kinds from other probes then
    stays at low at most."""
    cleared = {k: e for e in items for k in e.detail.get("explains", ())}
    if not cleared:
        return items
    out = []
    for e in items:
        why = cleared.get(e.kind)
        if why is None or why is e or e.probe == why.probe or e.rank <= Level.LOW:
            out.append(e)
            continue
        note = f"{e.summary}; at most low: {why.summary}"
        out.append(replace(e, level=Level.LOW, summary=note))
    return out


def _verdict(table: AuditTable, name: str, items: list[Evidence]) -> ColumnVerdict:
    items = sorted(_explained(items), key=_strength, reverse=True)
    entry = table.dictionary.entries.get(name) if table.dictionary else None
    role = table.roles.get(name, "feature")
    description = entry.description if entry else ""
    if not items:
        return ColumnVerdict(
            name, 0.0, "none", (), "no probe measured this column", (), role, description
        )
    top = items[0]
    rank_, sev = _strength(top)
    strong_kinds = {e.kind for e in items if e.rank >= Level.HIGH}
    if rank_ == Level.HIGH and len(strong_kinds) >= 2:
        rank_, sev = Level.CRITICAL, 0.0
    level = rank_.label
    kinds: list[str] = []
    for e in items:
        if e.rank >= Level.LOW and e.kind not in kinds:
            kinds.append(e.kind)
    summary = top.summary or f"{top.statistic} = {top.value}"
    # "also" names only other kinds that are themselves worth a reviewer's look (medium+)
    others = []
    for e in items:
        if e.rank >= Level.MEDIUM and e.kind != top.kind and e.kind not in others:
            others.append(e.kind)
    if others:
        summary += "; also " + ", ".join(k.replace("_", " ") for k in others)
    score = (int(rank_) + sev) / len(Level)
    return ColumnVerdict(name, score, level, tuple(kinds), summary, tuple(items), role, description)
