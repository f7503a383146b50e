"""findings.json (schema ``featureaudit.findings/3``; reads 1, 2 and 3): build, read, drop, diff."""

from __future__ import annotations

import json
from dataclasses import dataclass
from datetime import UTC, datetime
from pathlib import Path
from typing import Any

from featureaudit.errors import InputFileError
from featureaudit.vocab.evidence import clean_json
from featureaudit.vocab.levels import Level

__all__ = [
    "SCHEMA",
    "Findings",
    "load_findings",
    "droplist",
    "refit_list",
    "diff_findings",
    "DiffLine",
]

SCHEMA = "featureaudit.findings/3"
# each schema keeps every field of the one before (3 adds the kind computed_from_later_rows)
READABLE = ("featureaudit.findings/1", "featureaudit.findings/2", SCHEMA)


@dataclass(frozen=True)
class Findings:
    """The whole result of an audit as plain data (the JSON document, field for field)."""

    document: dict[str, Any]

    @property
    def columns(self) -> list[dict[str, Any]]:
        return self.document["columns"]

    @property
    def dataset_findings(self) -> list[dict[str, Any]]:
        return self.document["dataset_findings"]

    def to_json(self) -> str:
        return json.dumps(self.document, indent=2, ensure_ascii=False, allow_nan=False) + "\n"


def build_document(
    *,
    tool_version: str,
    dataset: dict[str, Any],
    settings: dict[str, Any],
    columns: list[dict[str, Any]],
    dataset_findings: list[dict[str, Any]],
    skipped: list[dict[str, Any]],
    warnings: list[str],
    created: datetime | None = None,
) -> Findings:
    """Assemble the document in the contract's key order (columns and findings arrive as
    plain JSON data from ``to_dict``; the rest is cleaned here)."""
    stamp = (created or datetime.now(UTC)).strftime("%Y-%m-%dT%H:%M:%SZ")
    return Findings(
        {
            "schema": SCHEMA,
            "tool_version": tool_version,
            "created": stamp,
            "dataset": clean_json(dataset),
            "settings": clean_json(settings),
            "columns": columns,
            "dataset_findings": dataset_findings,
            "skipped": clean_json(skipped),
            "warnings": [str(w) for w in warnings],
            "impact": None,
            "code_findings": [],
        }
    )


def load_findings(path: str | Path) -> Findings:
    """Read a findings file, checking that it is one of ours and of a schema we read."""
    p = Path(path)
    if p.is_dir():
        raise InputFileError(
            f"findings file {str(p)!r} is a folder, not a file; pass the findings.json "
            "inside it that `featureaudit scan` wrote."
        )
    if not p.is_file():
        raise InputFileError(
            f"findings file {str(p)!r} does not exist; pass the findings.json "
            "that `featureaudit scan` wrote."
        )
    try:
        doc = json.loads(p.read_text(encoding="utf-8"))
    except (json.JSONDecodeError, UnicodeDecodeError) as exc:
        raise InputFileError(
            f"findings file {str(p)!r} is not valid JSON ({exc}); pass the "
            "findings.json that `featureaudit scan` wrote."
        ) from exc
    except RecursionError:
        raise InputFileError(
            f"findings file {str(p)!r} is nested too deeply to be a findings file; pass the "
            "findings.json that `featureaudit scan` wrote."
        ) from None
    except OSError as exc:
        raise InputFileError(
            f"cannot read findings file {str(p)!r}: {exc.strerror or exc}; pass a findings.json "
            "you can read."
        ) from exc
    if not isinstance(doc, dict) or doc.get("schema") not in READABLE:
        got = doc.get("schema") if isinstance(doc, dict) else type(doc).__name__
        raise InputFileError(
            f"findings file {str(p)!r} has schema {got!r}; this version reads "
            f"{', '.join(map(repr, READABLE))}. Re-run `featureaudit scan` "
            "to produce it."
        )
    for key in ("columns", "dataset_findings"):
        if not isinstance(doc.get(key), list):
            raise InputFileError(
                f"findings file {str(p)!r} has no {key!r} list; it is "
                "incomplete. Re-run `featureaudit scan`."
            )
    for key, required in (("columns", "column"), ("dataset_findings", "kind")):
        for i, entry in enumerate(doc[key]):
            problem = _entry_problem(entry, required)
            if problem:
                raise InputFileError(
                    f"findings file {str(p)!r}: entry {key}[{i}] {problem}; fix or remove "
                    "that entry, or re-run `featureaudit scan`."
                )
    return Findings(doc)


def _entry_problem(entry: object, required: str) -> str | None:
    """What is wrong with one column or dataset finding read from a file, or None."""
    from featureaudit.vocab.levels import LEVEL_NAMES

    if not isinstance(entry, dict):
        return f"is a {type(entry).__name__}, not an object"
    if not isinstance(entry.get(required), str):
        return f"has no text {required!r} (got {entry.get(required)!r})"
    level = entry.get("level", "none")
    if level not in LEVEL_NAMES:
        return f"has level {level!r}, not one of {', '.join(LEVEL_NAMES)}"
    score = entry.get("score")
    if score is not None and (
        isinstance(score, bool) or not isinstance(score, int | float) or score != score
    ):
        return f"has score {score!r}, not a number"
    if score is not None and not 0 <= score <= 1:
        return f"has score {score!r}, not a number from 0 to 1"
    return None


def droplist(
    findings: Findings, at_least: str = "high", *, refit: bool = False, accepted: bool = False
) -> list[str]:
    """Columns at ``at_least`` or above, most suspect first (the file lists them by score).

    Columns whose remedy is ``refit_on_training_rows`` are to be refitted, not dropped, so
    they are left out unless ``refit`` is true; columns a reviewer accepted (``--accepted``)
    are left out unless ``accepted`` is true. Columns to recompute from earlier rows
    (``recompute_before_cutoff``) stay in: as they are, they leak until recomputed.
    """
    floor = Level.parse(at_least)
    cols = [
        c
        for c in findings.columns
        if Level.parse(c.get("level", "none")) >= floor
        and (refit or c.get("remedy") != "refit_on_training_rows")
        and (accepted or not c.get("accepted"))
    ]
    cols.sort(key=lambda c: -float(c.get("score") or 0.0))
    return [c["column"] for c in cols]


def refit_list(findings: Findings) -> list[str]:
    """Columns to keep but refit on the training rows, most suspect first (not accepted)."""
    cols = [
        c
        for c in findings.columns
        if c.get("remedy") == "refit_on_training_rows" and not c.get("accepted")
    ]
    cols.sort(key=lambda c: -float(c.get("score") or 0.0))
    return [c["column"] for c in cols]


@dataclass(frozen=True)
class DiffLine:
    """One change between two runs; ``accepted`` is the later run's review record, if any."""

    change: str  # new, gone, raised, lowered, cannot tell, added (a column new, no finding)
    scope: str  # column or split (the words `scan` uses)
    name: str
    old_level: str | None
    new_level: str | None
    detail: str = ""
    accepted: dict[str, Any] | None = None

    @property
    def levels(self) -> str:
        if self.change in ("new", "added"):
            return self.new_level or ""
        if self.change == "gone":
            return self.old_level or ""
        if self.change == "cannot tell":
            return f"{self.old_level} -> cannot tell"
        return f"{self.old_level} -> {self.new_level}"

    def counts_at(self, level: str) -> bool:
        """True when this change is new or raised, reaches ``level`` and is not accepted."""
        return (
            self.change in ("new", "raised")
            and self.new_level is not None
            and Level.parse(self.new_level) >= Level.parse(level)
            and not self.accepted
        )

    def text(self) -> str:
        note = (
            f"  [accepted: {self.accepted.get('reason') or 'no reason given'}]"
            if self.accepted
            else ""
        )
        return (
            f"{self.change:<11} {self.scope:<7} {self.name}  {self.levels}"
            + (f"  ({self.detail})" if self.detail else "")
            + note
        )

    def to_dict(self) -> dict[str, Any]:
        return {
            "change": self.change,
            "scope": self.scope,
            "name": self.name,
            "old_level": self.old_level,
            "new_level": self.new_level,
            "summary": self.detail,
            "accepted": self.accepted,
        }


def _dataset_key(f: dict[str, Any]) -> str:
    return f"{f.get('probe')}/{f.get('kind')}/{f.get('statistic')}"


def _split_names(findings: list[dict[str, Any]]) -> dict[str, str]:
    """Key -> shown name: the kind, with the statistic only when two findings share a kind."""
    kinds = [f.get("kind") for f in findings]
    return {
        _dataset_key(f): str(f.get("kind"))
        if kinds.count(f.get("kind")) == 1
        else f"{f.get('kind')} ({f.get('statistic')})"
        for f in findings
    }


def cannot_tell_probes(column: dict[str, Any]) -> set[str]:
    """Probes that ran on a column but could not judge it (``fitted_on: cannot tell``, or a
    check with too few values): their silence is not a level."""
    out = set()
    for e in column.get("evidence", []):
        d = e.get("detail") or {}
        if d.get("fitted_on") == "cannot tell" or str(e.get("summary", "")).startswith(
            "could not judge"
        ):
            out.add(str(e.get("probe")))
    return out


def raised_by(column: dict[str, Any]) -> set[str]:
    """Probes whose evidence set the column's level."""
    level = Level.parse(column.get("level", "none"))
    return {
        str(e.get("probe"))
        for e in column.get("evidence", [])
        if Level.parse(e.get("level", "none")) >= level > Level.NONE
    }


def _change(scope: str, was_item: dict, item: dict) -> str | None:
    was, level = was_item.get("level", "none"), item.get("level", "none")
    if was == level:
        return None
    lowered = scope == "column" and Level.parse(level) < Level.parse(was)
    if lowered and cannot_tell_probes(item) & raised_by(was_item):
        return "cannot tell"
    return "raised" if Level.parse(level) > Level.parse(was) else "lowered"


def diff_findings(old: Findings, new: Findings) -> list[DiffLine]:
    """Columns and split findings that are new, gone, or changed level between two runs,
    highest level first. A lower level where the probe that raised it could not judge the
    new run is ``cannot tell``, never ``lowered``; a column new to the table with no finding
    is ``added``."""
    lines: list[DiffLine] = []
    names = {**_split_names(old.dataset_findings), **_split_names(new.dataset_findings)}
    pairs = [
        ("column", {c["column"]: c for c in old.columns}, {c["column"]: c for c in new.columns}),
        (
            "split",
            {_dataset_key(f): f for f in old.dataset_findings},
            {_dataset_key(f): f for f in new.dataset_findings},
        ),
    ]
    for scope, before, after in pairs:

        def shown(key: str, scope: str = scope) -> str:
            return names.get(key, key) if scope == "split" else key

        for key, item in after.items():
            level = item.get("level", "none")
            summary: str = item.get("summary") or ""
            accepted = item.get("accepted") or None
            if key not in before:
                what = "new" if scope == "split" or level != "none" else "added"
                lines.append(DiffLine(what, scope, shown(key), None, level, summary, accepted))
                continue
            moved = _change(scope, before[key], item)
            if moved is not None:
                was = before[key].get("level", "none")
                lines.append(DiffLine(moved, scope, shown(key), was, level, summary, accepted))
        for key, item in before.items():
            if key not in after:
                lines.append(DiffLine("gone", scope, shown(key), item.get("level", "none"), None))
    order = {"new": 0, "raised": 1, "cannot tell": 2, "lowered": 3, "gone": 4, "added": 5}
    lines.sort(
        key=lambda d: (
            -Level.parse(
                (d.old_level if d.change == "cannot tell" else d.new_level) or d.old_level or "none"
            ),
            order[d.change],
            d.scope,
            d.name,
        )
    )
    return lines
