"""Reviewed suspects (``--accepted FILE``): read the CSV and mark the findings a person accepted.

An accepted column or split finding stays in the report with its reason, reviewer and expiry,
and counts toward neither ``--fail-at`` nor the drop list until its ``until`` date has passed.
An expired or unmatched row becomes a warning, so a stale file is noticed.
"""

from __future__ import annotations

import csv
from dataclasses import dataclass
from datetime import UTC, date, datetime
from pathlib import Path
from typing import Any

from featureaudit.errors import InputFileError, SettingError
from featureaudit.kinds import KINDS
from featureaudit.levels import Level

__all__ = ["Acceptance", "SPLIT", "read_accepted", "apply_accepted", "is_accepted"]

SPLIT = "*split*"
HEADERS = ("column", "kind", "reason", "reviewed_by", "until")


@dataclass(frozen=True)
class Acceptance:
    """One row of the accepted-suspects file."""

    column: str
    kind: str
    reason: str
    reviewed_by: str
    until: date | None
    line: int

    def record(self) -> dict[str, Any]:
        """The ``accepted`` field of findings.json."""
        return {
            "reason": self.reason,
            "reviewed_by": self.reviewed_by,
            "until": self.until.isoformat() if self.until else None,
        }

    def label(self) -> str:
        where = "split finding" if self.column == SPLIT else f"column {self.column!r}"
        return f"{where} ({self.kind})"


def read_accepted(path: str | Path) -> list[Acceptance]:
    """Parse the CSV; a missing file, header, kind or a bad date names the file and line."""
    p = Path(path)
    if not p.is_file():
        raise InputFileError(
            f"--accepted file {str(p)!r} does not exist; pass a CSV with the header "
            f"{','.join(HEADERS)}."
        )
    try:
        text = p.read_text(encoding="utf-8-sig")
    except (OSError, UnicodeDecodeError) as exc:
        raise InputFileError(
            f"--accepted file {str(p)!r} cannot be read as UTF-8 text ({exc}); save it as a "
            "UTF-8 CSV."
        ) from exc
    reader = csv.DictReader(text.splitlines())
    header = [h.strip() for h in (reader.fieldnames or [])]
    missing = [h for h in HEADERS if h not in header]
    if missing:
        raise SettingError(
            f"--accepted file {str(p)!r} lacks the column(s) {', '.join(missing)}; its header "
            f"must name {','.join(HEADERS)}."
        )
    rows: list[Acceptance] = []
    for number, raw in enumerate(reader, start=2):
        where = f"--accepted file {str(p)!r}, line {number}"
        _whole_row(raw, len(header), where)
        row = {(k or "").strip(): (v or "").strip() for k, v in raw.items() if k is not None}
        if not any(row.values()):
            continue
        if not row["column"]:
            raise SettingError(f"{where}: `column` is blank; name a column or write {SPLIT}.")
        if row["kind"] not in KINDS:
            raise SettingError(
                f"{where}: kind {row['kind']!r} is not one of {', '.join(KINDS)}; use one of them."
            )
        rows.append(
            Acceptance(
                column=row["column"],
                kind=row["kind"],
                reason=row["reason"],
                reviewed_by=row["reviewed_by"],
                until=_date(row["until"], where),
                line=number,
            )
        )
    return rows


def _whole_row(raw: dict[str | None, Any], width: int, where: str) -> None:
    """A line with more or fewer cells than the header (a ragged row) is an error: a cell
    would be read under the wrong header or lost."""
    extra = raw.get(None) or []
    missing = sum(1 for k, v in raw.items() if k is not None and v is None)
    if not extra and not missing:
        return
    cells = width + len(extra) - missing
    if not any((v or "").strip() for k, v in raw.items() if k is not None) and not extra:
        return  # a blank line
    raise SettingError(
        f"{where} has {cells} cells but the header has {width}; give every line one cell "
        "per header (quote a cell that holds a comma)."
    )


def _date(text: str, where: str) -> date | None:
    if not text:
        return None
    try:
        return date.fromisoformat(text)
    except ValueError as exc:
        raise SettingError(
            f"{where}: until {text!r} is not an ISO date; write it as YYYY-MM-DD or leave it "
            "blank for no expiry."
        ) from exc


def is_accepted(item: dict[str, Any]) -> bool:
    """True when a column or split finding carries a current acceptance."""
    return bool(item.get("accepted"))


def apply_accepted(
    document: dict[str, Any], rows: list[Acceptance], *, today: date | None = None
) -> None:
    """Set ``accepted`` on matching columns and split findings, in place; warn on the rest.

    A row matches a column that has evidence of its kind at ``low`` or above, and a split
    finding (``column`` = ``*split*``) of its kind above ``none``. A column is accepted only
    when every kind of its evidence at ``medium`` or above is accepted: one reviewed kind
    does not hide another.
    """
    day = today or datetime.now(UTC).date()
    warnings: list[str] = document.setdefault("warnings", [])
    columns = {c["column"]: c for c in document["columns"]}
    for f in document["dataset_findings"]:
        f.setdefault("accepted", None)
    current: dict[str, list[Acceptance]] = {}
    for row in rows:
        if row.column == SPLIT:
            targets = [
                f
                for f in document["dataset_findings"]
                if f.get("kind") == row.kind and Level.parse(f.get("level", "none")) > Level.NONE
            ]
        else:
            col = columns.get(row.column)
            targets = [col] if col is not None and row.kind in col.get("kinds", []) else []
        if not targets:
            warnings.append(
                f"accepted {row.label()} (line {row.line}) matches no finding of this run; "
                "remove the row or correct its column and kind."
            )
            continue
        if row.until is not None and row.until < day:
            warnings.append(
                f"the acceptance of {row.label()} by {row.reviewed_by or 'an unnamed reviewer'} "
                f"expired on {row.until.isoformat()}; it counts again until it is reviewed anew."
            )
            continue
        if row.column == SPLIT:
            for t in targets:
                t["accepted"] = row.record()
        else:
            current.setdefault(row.column, []).append(row)
    for name, accepted in current.items():
        col = columns[name]
        kinds = {a.kind for a in accepted}
        open_kinds = sorted(
            {
                e["kind"]
                for e in col.get("evidence", [])
                if Level.parse(e.get("level", "none")) >= Level.MEDIUM
            }
            - kinds
        )
        if open_kinds:
            warnings.append(
                f"column {name!r} is accepted for {', '.join(sorted(kinds))} but not for "
                f"{', '.join(open_kinds)}; it still counts. Review those kinds too."
            )
            continue
        col["accepted"] = accepted[0].record()
