"""The data dictionary: parse and validate its CSV, and draft one from a table.

A row's ``known_at`` is blank, the name of a datetime column, or a signed duration relative
to the row's label time. Errors name the file, the line and the value. A ``column`` cell
that is a JSON string (``" leak "``) names the column exactly, spaces included: the draft
writes names that would otherwise be trimmed or lost that way.
"""

from __future__ import annotations

import csv
import io
import re
from dataclasses import dataclass, field
from pathlib import Path

import pandas as pd

from featureaudit.durations import parse_duration
from featureaudit.errors import DictionaryError, DurationError, InputFileError
from featureaudit.names import quote_name, unquote_name
from featureaudit.prose import looks_like_prose

__all__ = ["ROLES", "DictionaryEntry", "DataDictionary", "read_dictionary", "draft_dictionary"]

ROLES = (
    "feature",
    "target",
    "id",
    "entity",
    "label_time",
    "cutoff_time",
    "order",
    "split",
    "weight",
    "ignore",
)
STANDARD = ("column", "role", "known_at", "description")
SINGLE_ROLES = ("target", "label_time", "cutoff_time", "split", "entity")  # one column each


@dataclass(frozen=True)
class DictionaryEntry:
    """One dictionary row: the column, its role, when it becomes known and free text."""

    column: str
    role: str = "feature"
    known_at: str = ""
    known_at_column: str | None = None
    known_at_offset: pd.Timedelta | None = None
    description: str = ""
    line: int = 0
    extra: dict[str, str] = field(default_factory=dict)


@dataclass(frozen=True)
class DataDictionary:
    """All rows of a dictionary file, keyed by column name, with where they came from."""

    entries: dict[str, DictionaryEntry]
    source: str = ""
    extra_headers: tuple[str, ...] = ()

    def role_of(self, column: str) -> str | None:
        entry = self.entries.get(column)
        return entry.role if entry else None

    def columns_with_role(self, role: str) -> list[str]:
        return [c for c, e in self.entries.items() if e.role == role]


def read_dictionary(path: str | Path, *, encoding: str | None = None) -> DataDictionary:
    """Read and validate a dictionary CSV; raise :class:`DictionaryError` naming file and line.

    The text is read as its byte-order mark says (UTF-8, UTF-16), else as UTF-8, else as
    ``encoding`` (the ``--encoding`` flag).
    """
    from featureaudit.io import check_encoding, decode_text

    p = Path(path)
    if p.is_dir():
        raise InputFileError(
            f"dictionary {str(p)!r} is a folder, not a file; pass --dictionary with a CSV "
            "file (draft one with `featureaudit dictionary TABLE`)."
        )
    if not p.is_file():
        raise InputFileError(
            f"dictionary {str(p)!r} does not exist; pass --dictionary with a CSV "
            "file (draft one with `featureaudit dictionary TABLE`)."
        )
    encoding = check_encoding(encoding)
    try:
        raw = p.read_bytes()
    except OSError as exc:
        raise InputFileError(f"cannot read dictionary {str(p)!r}: {exc.strerror}.") from exc
    text = decode_text(raw, what=f"dictionary {str(p)!r}", encoding=encoding)
    return parse_dictionary(text, source=str(p))


def parse_dictionary(text: str, *, source: str = "dictionary") -> DataDictionary:
    """Parse dictionary CSV text (see :func:`read_dictionary`)."""
    reader = csv.reader(io.StringIO(text, newline=""))  # quoted line breaks stay in a cell
    try:
        rows = list(reader)
    except csv.Error as exc:
        raise DictionaryError(
            f"dictionary {source!r} line {reader.line_num} is not valid CSV ({exc}); quote "
            "cells that hold line breaks or quotes."
        ) from exc
    if not rows:
        raise DictionaryError(
            f"dictionary {source!r} is empty; it needs a header row with at "
            "least a 'column' header."
        )
    header = [h.strip() for h in rows[0]]
    lowered = [h.lower() for h in header]
    if "column" not in lowered:
        raise DictionaryError(
            f"dictionary {source!r} line 1 has headers {header}; a 'column' "
            "header is required (also allowed: role, known_at, description)."
        )
    index = {h: lowered.index(h) for h in STANDARD if h in lowered}
    extra_headers = tuple(h for h, low in zip(header, lowered, strict=True) if low not in STANDARD)
    entries: dict[str, DictionaryEntry] = {}
    for line_no, row in enumerate(rows[1:], start=2):
        if not any(cell.strip() for cell in row):
            continue
        if len(row) != len(header):
            raise DictionaryError(
                f"dictionary {source!r} line {line_no} has {len(row)} cells but the header has "
                f"{len(header)}; give every line one cell per header (quote a cell that holds "
                "a comma)."
            )

        def cell(name: str, row: list[str] = row) -> str:
            i = index.get(name)
            return row[i].strip() if i is not None and i < len(row) else ""

        raw_column = cell("column")
        column = unquote_name(raw_column)  # the drafted dictionary quotes awkward names
        if not raw_column:
            raise DictionaryError(
                f"dictionary {source!r} line {line_no}: the 'column' cell is "
                "empty; name a column of the table or delete the line."
            )
        role = (cell("role") or "feature").lower()
        if role not in ROLES:
            raise DictionaryError(
                f"dictionary {source!r} line {line_no}: role {cell('role')!r} "
                f"of column {column!r} is not one of {', '.join(ROLES)}."
            )
        if column in entries:
            raise DictionaryError(
                f"dictionary {source!r} line {line_no}: column {column!r} is "
                f"already described on line {entries[column].line}; keep one."
            )
        _one_column_per_role(entries, role, column, source, line_no)
        known_at = cell("known_at")
        offset, known_col = _parse_known_at(known_at, source=source, line=line_no, column=column)
        extra = {
            h: (row[i].strip() if i < len(row) else "")
            for i, h in enumerate(header)
            if h.lower() not in STANDARD
        }
        entries[column] = DictionaryEntry(
            column=column,
            role=role,
            known_at=known_at,
            known_at_column=known_col,
            known_at_offset=offset,
            description=cell("description"),
            line=line_no,
            extra=extra,
        )
    return DataDictionary(entries=entries, source=source, extra_headers=extra_headers)


def _one_column_per_role(
    entries: dict[str, DictionaryEntry], role: str, column: str, source: str, line: int
) -> None:
    """A role that names one column (target, label_time, ...) given on two lines is an error."""
    if role not in SINGLE_ROLES:
        return
    for other in entries.values():
        if other.role == role:
            raise DictionaryError(
                f"dictionary {source!r} line {line} gives role {role!r} to column {column!r}, "
                f"but line {other.line} gives it to {other.column!r}; one column holds it. "
                "Keep one of the two lines."
            )


def _parse_known_at(
    value: str, *, source: str, line: int, column: str
) -> tuple[pd.Timedelta | None, str | None]:
    """A duration if it parses as one; otherwise a column name (checked against the table later)."""
    if not value:
        return None, None
    looks_like_duration = value[0] in "+-" or value[0].isdigit() or value.upper().startswith("P")
    try:
        return parse_duration(value, what="known_at"), None
    except DurationError as exc:
        if looks_like_duration and (value[0] in "+-" or value[0].isdigit()):
            raise DictionaryError(
                f"dictionary {source!r} line {line}: known_at {value!r} of "
                f"column {column!r} is neither a duration nor a column name; "
                f"{str(exc).split('; ', 1)[-1]}"
            ) from exc
    return None, unquote_name(value)


def draft_dictionary(frame: pd.DataFrame, *, target: str | None = None) -> str:
    """Return dictionary CSV text: every column of ``frame``, a guessed role, blank known_at."""
    buf = io.StringIO()
    writer = csv.writer(buf, lineterminator="\n")
    writer.writerow(STANDARD)
    for name in frame.columns:
        role = guess_role(frame[name], name, target=target)
        writer.writerow([quote_name(name), role, "", ""])
    return buf.getvalue()


def id_like_name(name: str) -> bool:
    """A name that reads like an identifier's: ``id``, ``*_id``, ``*_key``, ``*_no``,
    ``*_number``, ``*Id``, ``*ID``."""
    low = name.lower()
    return (
        low == "id"
        or low.endswith(("_id", "_key", "_no", "_number"))
        or name.endswith(("Id", "ID"))
    )


def guess_role(s: pd.Series, name: str, *, target: str | None = None) -> str:
    """Guess a column's role from its name and values; the user confirms it in the draft."""
    low = name.lower()
    if target is not None and name == target:
        return "target"
    if low in ("split", "fold", "partition", "subset", "set", "is_test", "is_train"):
        return "split"
    if pd.api.types.is_datetime64_any_dtype(s.dtype):
        return "feature"
    is_integer_or_text = pd.api.types.is_integer_dtype(s.dtype) or not (
        pd.api.types.is_numeric_dtype(s.dtype) or pd.api.types.is_bool_dtype(s.dtype)
    )
    if not is_integer_or_text:
        return "feature"  # floats, booleans: never identifiers
    if looks_like_prose(s):
        return "feature"  # free text: every note may differ, yet it is read as words
    n = int(s.notna().sum())
    unique_share = s.nunique(dropna=True) / n if n else 0.0
    id_name = id_like_name(name)
    if is_integer_or_text and id_name:
        return "id" if unique_share > 0.95 else "entity"
    if is_integer_or_text and unique_share > 0.999 and n > 50:
        return "id"
    return "feature"


# ---- draft suggestions: time columns and columns that look recorded after the outcome ------
_LABEL_TIME_WORDS = ("decided", "resolved", "outcome", "label", "settled", "closed", "ended")
_CUTOFF_WORDS = ("issued", "created", "cutoff", "as_of", "asof", "snapshot", "scored", "opened")
_POST_OUTCOME_WORDS = (
    "after",
    "post",
    "outcome",
    "result",
    "final",
    "closed",
    "collection",
    "reminder",
    "paid",
    "settled",
    "resolved",
    "refund",
    "chargeback",
    "writeoff",
    "write_off",
    "churned",
    "cancelled",
    "canceled",
    "overdue",
    "recovered",
    "dunning",
)


def _tokens(name: str) -> list[str]:
    spaced = re.sub(r"([a-z0-9])([A-Z])", r"\1_\2", name)
    return [t for t in re.split(r"[^0-9a-zA-Z]+", spaced.lower()) if t]


def _is_datetime(s: pd.Series) -> bool:
    if pd.api.types.is_datetime64_any_dtype(s.dtype):
        return True
    if s.dtype != object and not pd.api.types.is_string_dtype(s.dtype):
        return False
    sample = s.dropna().astype(str).head(200)
    if sample.empty or not sample.str.contains(r"\d{4}-\d{2}-\d{2}", regex=True).all():
        return False
    parsed = pd.to_datetime(sample, errors="coerce", format="ISO8601")
    return bool(parsed.notna().mean() >= 0.9)


def draft_suggestions(frame: pd.DataFrame, *, target: str | None = None) -> dict[str, str]:
    """A note for the user per column worth a second look: datetime columns offered as
    ``label_time`` / ``cutoff_time`` candidates, and names that read like a record made after
    the outcome (to check, not a verdict)."""
    notes: dict[str, str] = {}
    for name in frame.columns:
        if name == target:
            continue
        text = str(name)
        tokens = _tokens(text)
        joined = "_".join(tokens)
        parts = []
        if _is_datetime(frame[name]):
            if any(w in joined for w in _LABEL_TIME_WORDS):
                parts.append("label_time candidate (a datetime named like an outcome time)")
            elif any(w in joined for w in _CUTOFF_WORDS):
                parts.append("cutoff_time candidate (a datetime named like a prediction time)")
            else:
                parts.append(
                    "datetime: a label_time or cutoff_time candidate, or the known_at of "
                    "another feature"
                )
        hits = [w for w in _POST_OUTCOME_WORDS if w in tokens or w in joined]
        if hits:
            parts.append(
                f"check: the name ({', '.join(hits[:3])}) suggests a record made after the "
                "outcome; give its known_at, or drop it"
            )
        if parts:
            notes[text] = "; ".join(parts)
    return notes


def add_suggestions(draft: str, frame: pd.DataFrame, *, target: str | None = None) -> str:
    """The draft CSV with a ``suggestion`` column (kept and shown when read back)."""
    notes = draft_suggestions(frame, target=target)
    rows = list(csv.reader(io.StringIO(draft)))
    buf = io.StringIO()
    writer = csv.writer(buf, lineterminator="\n")
    writer.writerow([*rows[0], "suggestion"])
    for row in rows[1:]:
        writer.writerow([*row, notes.get(row[0], "")])
    return buf.getvalue()
