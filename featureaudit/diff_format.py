"""`featureaudit diff` output as text, JSON or a Markdown table (one job: formatting)."""

from __future__ import annotations

import json

from featureaudit.findings import DiffLine

__all__ = ["FORMATS", "format_diff"]

FORMATS = ("text", "json", "markdown")


def _cell(text: str) -> str:
    return text.replace("|", "\\|").replace("\n", " ")


def format_diff(lines: list[DiffLine], fmt: str) -> str:
    """The changes, highest level first, in one of :data:`FORMATS`."""
    if fmt == "json":
        return json.dumps([d.to_dict() for d in lines], indent=2, ensure_ascii=False)
    if fmt == "markdown":
        if not lines:
            return "No change in levels."
        rows = ["| change | scope | name | level | summary |", "| --- | --- | --- | --- | --- |"]
        for d in lines:
            note = (
                f" (accepted: {d.accepted.get('reason') or 'no reason given'})"
                if d.accepted
                else ""
            )
            rows.append(
                f"| {d.change} | {d.scope} | `{_cell(d.name)}` | {d.levels} | "
                f"{_cell(d.detail)}{_cell(note)} |"
            )
        return "\n".join(rows)
    return "\n".join(d.text() for d in lines) if lines else "no change in levels"
