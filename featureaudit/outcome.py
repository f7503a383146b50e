"""What `scan` prints when it is done, and why it exits 1 (one job: the terminal's words)."""

from __future__ import annotations

from pathlib import Path
from typing import Any

from featureaudit.levels import Level
from featureaudit.names import quote_name

__all__ = ["outcome_lines", "gate_reason", "reached"]

SHOWN = 8  # column suspects printed; the rest are in the dossier


def _note(item: dict[str, Any]) -> str:
    return "  [accepted after review]" if item.get("accepted") else ""


def outcome_lines(doc: dict[str, Any], out_dir: Path) -> list[str]:
    """The lines `scan` prints on stdout: the table, the headline score as given and with the
    remedies applied, the verdict, the suspects (columns, split, code), what could not be
    judged, the drop and refit lists and where the report is."""
    from featureaudit.findings import Findings, droplist, refit_list
    from featureaudit.report import impact_line, undecided, verdict_line

    d = doc["dataset"]
    target = (
        f"target {d['target']} ({d['task']})"
        if d["target"] is not None
        else "no target (probes that need one are skipped; pass --target)"
    )
    out = [
        f"audited {d['source']}: {d['rows']} rows ({d['train_rows']} training, "
        f"{d['heldout_rows']} held out), {target}"
    ]
    if doc.get("impact"):
        out.append(impact_line(doc))
    findings = Findings(doc)
    out.append(verdict_line(findings))
    top = [c for c in doc["columns"] if Level.parse(c["level"]) >= Level.MEDIUM]
    for c in top[:SHOWN]:
        out.append(
            f"  {c['level']:<8} {c['score']:.2f}  {quote_name(c['column'])}: {c['summary']}"
            + _note(c)
        )
    if len(top) > SHOWN:
        out.append(f"  ... and {len(top) - SHOWN} more columns at medium or above (dossier)")
    for f in doc["dataset_findings"]:
        if Level.parse(f["level"]) >= Level.MEDIUM:
            out.append(f"  {f['level']:<8} split {f['kind']}: {f['summary']}" + _note(f))
    for f in doc.get("code_findings") or []:
        if Level.parse(f.get("level", "none")) >= Level.MEDIUM:
            where = f"{f.get('file')}:{f.get('line')}"
            out.append(f"  {f['level']:<8} code  {f['kind']} at {where}: {f.get('summary')}")
    for u in undecided(doc):
        out.append(f"  cannot tell {u['probe']} on {quote_name(u['column'])}: {u['summary']}")
    drops, refits = droplist(findings, "high"), refit_list(findings)
    out.append("drop: " + (", ".join(map(quote_name, drops)) if drops else "(none)"))
    if refits:
        out.append("refit on the training rows: " + ", ".join(map(quote_name, refits)))
    out.append(f"dossier: {out_dir / 'dossier.html'}")
    return out


def reached(doc: dict[str, Any], level: str) -> list[str]:
    """Findings (not accepted) at ``level`` or above: columns, split findings and training
    code findings, each named as the terminal names it."""
    floor = Level.parse(level)

    def hit(item: dict[str, Any]) -> bool:
        return Level.parse(item.get("level", "none")) >= floor and not item.get("accepted")

    hits = [f"{quote_name(c['column'])} ({c['level']})" for c in doc["columns"] if hit(c)]
    hits += [f"split {f['kind']} ({f['level']})" for f in doc["dataset_findings"] if hit(f)]
    hits += [
        f"code {f['kind']} at {f.get('file')}:{f.get('line')} ({f['level']})"
        for f in doc.get("code_findings") or []
        if hit(f)
    ]
    return hits


def gate_reason(
    doc: dict[str, Any], fail_at: str | None, fail_at_impact: float | None
) -> str | None:
    """Why `scan` exits 1: the gate and the findings that tripped it; ``None`` to exit 0."""
    if fail_at:
        hits = reached(doc, fail_at)
        if hits:
            shown = ", ".join(hits[:6]) + (f" and {len(hits) - 6} more" if len(hits) > 6 else "")
            return f"exit 1: --fail-at {fail_at} reached by {len(hits)} finding" + (
                f"{'s' * (len(hits) != 1)}: {shown}"
            )
    if fail_at_impact is not None:
        from featureaudit.impact import largest_lift

        found = largest_lift(doc)
        if found is not None and found[0] > float(fail_at_impact):
            lift, which = found
            return (
                f"exit 1: --fail-at-impact {fail_at_impact:g}: the as-given validation score "
                f"exceeds {which} by {lift:.3f}"
            )
    return None
