"""`featureaudit diff` output as text, JSON or Markdown: the level changes and, beside them,
the tables compared, the change of the headline score and the dictionary's coverage."""

from __future__ import annotations

import json
from typing import Any

from featureaudit.findings import DiffLine, Findings
from featureaudit.markdown import md_code, md_text

__all__ = ["FORMATS", "format_diff", "diff_context"]

FORMATS = ("text", "json", "markdown")


def _scores(doc: dict[str, Any]) -> dict[str, Any]:
    block = doc.get("impact") or {}
    rem = block.get("remedied") or {}
    return {
        "metric": block.get("metric"),
        "as_given": block.get("as_given"),
        "remedied": rem.get("value"),
    }


def _coverage(doc: dict[str, Any]) -> dict[str, Any] | None:
    d = (doc.get("dataset") or {}).get("dictionary")
    if not isinstance(d, dict):
        return None
    return {"source": d.get("source"), "not_covered": list(d.get("audited_not_covered") or [])}


def diff_context(old: Findings, new: Findings) -> dict[str, Any]:
    """What changed around the findings: the tables, the headline score (as given and with
    the remedies applied), the dictionary's coverage (``None`` where a run did not record
    it, as schema 1 and 2 files do not)."""
    a, b = old.document, new.document
    before, after = _scores(a), _scores(b)
    score: dict[str, Any] = {"metric": after["metric"] or before["metric"]}
    for key in ("as_given", "remedied"):
        x, y = before[key], after[key]
        score[key] = {
            "old": x,
            "new": y,
            "change": None if x is None or y is None else round(y - x, 4),
        }
    cov_old, cov_new = _coverage(a), _coverage(b)
    dictionary: dict[str, Any] = {"old": cov_old, "new": cov_new, "newly_not_covered": []}
    if cov_new is not None:
        was = set(cov_old["not_covered"]) if cov_old else set()
        dictionary["newly_not_covered"] = [c for c in cov_new["not_covered"] if c not in was]
    return {
        "tables": {
            "old": (a.get("dataset") or {}).get("source"),
            "new": (b.get("dataset") or {}).get("source"),
        },
        "score": score,
        "dictionary": dictionary,
    }


def _fmt(v: Any) -> str:
    return "not measured" if v is None else f"{v:.3f}"


def _context_lines(ctx: dict[str, Any]) -> list[str]:
    """The context in plain sentences (the text and Markdown forms share them)."""
    t = ctx["tables"]
    out = [f"tables: {t['old']} -> {t['new']}"]
    s = ctx["score"]
    metric = s.get("metric") or "score"
    for key, words in (("as_given", "as given"), ("remedied", "with the remedies applied")):
        x = s[key]
        if x["old"] is None and x["new"] is None:
            continue
        change = "" if x["change"] is None else f" ({x['change']:+.3f})"
        out.append(f"validation {metric} {words}: {_fmt(x['old'])} -> {_fmt(x['new'])}{change}")
    d = ctx["dictionary"]
    if d["new"] is None:
        out.append("dictionary: none given in the new run" if d["old"] else "dictionary: none")
    else:
        missing = d["new"]["not_covered"]
        out.append(
            f"dictionary {d['new']['source']}: "
            + (
                f"{len(missing)} audited columns it does not name"
                if missing
                else "names every audited column"
            )
        )
        if d["newly_not_covered"]:
            out.append("  no longer or never covered: " + ", ".join(d["newly_not_covered"]))
    return out


def format_diff(lines: list[DiffLine], fmt: str, context: dict[str, Any] | None = None) -> str:
    """The changes, highest level first, in one of :data:`FORMATS`, after the context."""
    if fmt == "json":
        payload = {"changes": [d.to_dict() for d in lines], **(context or {})}
        return json.dumps(payload, indent=2, ensure_ascii=False)
    head = _context_lines(context) if context else []
    if fmt == "markdown":
        out = [f"- {md_text(x.strip())}" for x in head]
        if not lines:
            return "\n".join(
                [*out, "", "No change in levels."] if out else ["No change in levels."]
            )
        rows = ["| change | scope | name | level | summary |", "| --- | --- | --- | --- | --- |"]
        for d in lines:
            note = (
                f" (accepted: {d.accepted.get('reason') or 'no reason given'})"
                if d.accepted
                else ""
            )
            rows.append(
                f"| {d.change} | {d.scope} | {md_code(d.name)} | {md_text(d.levels)} | "
                f"{md_text(d.detail)}{md_text(note)} |"
            )
        return "\n".join([*out, ""] + rows if out else rows)
    body = [d.text() for d in lines] if lines else ["no change in levels"]
    return "\n".join([*head, *body])
