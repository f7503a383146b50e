"""The inputs of an audit, declared once: type, default, CLI flag and config key of each.

``build_table``, ``audit()``, ``scan`` and the ``--config`` reader all take their inputs from
:class:`Inputs`, which checks every value when it is made, before any work starts. Adding an
input is one field here (with :func:`_declare`) and its use where it matters.
"""

from __future__ import annotations

import os
from collections.abc import Callable, Mapping
from dataclasses import dataclass, field, fields
from typing import Any

from featureaudit.errors import SettingError

__all__ = ["Inputs", "InputSpec", "input_specs", "shown", "TASKS"]

TASKS = ("binary", "multiclass", "numeric")


@dataclass(frozen=True)
class InputSpec:
    """How one input is given and checked: its flag, config key and what it allows."""

    name: str
    flag: str
    allowed: str  # in words, for the error message
    accepts: Callable[[Any], bool]
    scan_only: bool = False  # a scan flag (report folder, exit rules), not a table input
    help: str = ""  # the flag's line in `scan --help`
    metavar: str | None = None  # how --help shows its value, e.g. [binary|multiclass|numeric]
    kind: str = "text"  # its command-line type: text, number, switch or repeated

    @property
    def config_key(self) -> str:
        return self.name


def _text(value: Any) -> bool:
    return isinstance(value, str) and value.strip() != ""


def _path(value: Any) -> bool:
    return isinstance(value, os.PathLike) or _text(value)


def _table(value: Any) -> bool:
    import pandas as pd

    if isinstance(value, pd.DataFrame) or _path(value):
        return True
    return type(value).__module__.startswith("pyarrow") and type(value).__name__ == "Table"


def _dictionary(value: Any) -> bool:
    import pandas as pd

    from featureaudit.dictionary import DataDictionary

    return isinstance(value, DataDictionary | pd.DataFrame) or _path(value)


def _task(value: Any) -> bool:
    return value in TASKS


def _level(value: Any) -> bool:
    from featureaudit.levels import LEVEL_NAMES

    return isinstance(value, str) and value.strip().lower() in LEVEL_NAMES


def _number(value: Any) -> bool:
    return isinstance(value, int | float) and not isinstance(value, bool) and value == value


def _difference(value: Any) -> bool:
    return _number(value) and 0 <= value < float("inf")


def _paths(value: Any) -> bool:
    if isinstance(value, list | tuple):
        return len(value) > 0 and all(_path(v) for v in value)
    return _path(value)


def _encoding(value: Any) -> bool:
    import codecs

    if not _text(value):
        return False
    try:
        codecs.lookup(value)
    except LookupError:
        return False
    return True


def _value(value: Any) -> bool:
    return isinstance(value, str) or _number(value)


def _declare(flag: str, allowed: str, accepts: Callable[[Any], bool], **kw: Any) -> Any:
    """A field of :class:`Inputs`: default ``None`` and its spec in the field's metadata
    (``kw``: ``scan_only``, ``help``, ``metavar``, ``kind``; see :class:`InputSpec`)."""
    return field(default=None, metadata={"spec": (flag, allowed, accepts, kw)})


_COLUMN = "a column name (text)"


@dataclass(frozen=True)
class Inputs:
    """Every input of an audit except the table itself and the probe settings.

    Each field is ``None`` when not given. Values are checked on creation, so a bad one is a
    :class:`SettingError` naming the flag (and config key), the value and what is allowed.
    """

    test: Any = _declare(
        "--test",
        "a table path, DataFrame or pyarrow.Table",
        _table,
        help="Held-out table with the same columns.",
    )
    split_column: str | None = _declare(
        "--split-column", _COLUMN, _text, help="Column that marks the split."
    )
    train_value: str | None = _declare(
        "--train-value",
        "a value (text or number)",
        _value,
        help="Value of --split-column that marks training rows [default: train].",
    )
    target: str | None = _declare("--target", _COLUMN, _text, help="The outcome column.")
    task: str | None = _declare(
        "--task",
        "one of binary, multiclass, numeric",
        _task,
        help="Overrides the inferred task.",
        metavar="[" + "|".join(TASKS) + "]",
    )
    dictionary: Any = _declare(
        "--dictionary",
        "a CSV path, a DataFrame or a DataDictionary",
        _dictionary,
        help="Data dictionary CSV.",
    )
    label_time: str | None = _declare(
        "--label-time", _COLUMN, _text, help="When each outcome became known."
    )
    cutoff_time: str | None = _declare(
        "--cutoff-time", _COLUMN, _text, help="When each prediction is made."
    )
    horizon: str | None = _declare(
        "--horizon",
        "a duration such as 30d or P30D",
        _text,
        help="Cutoff = label time minus this, e.g. 30d.",
    )
    entity: str | None = _declare(
        "--entity", _COLUMN, _text, help="Customer, patient… a row belongs to."
    )
    fold_column: str | None = _declare(
        "--fold-column", _COLUMN, _text, help="The cross-validation fold of each training row."
    )
    order: str | None = _declare(
        "--order",
        _COLUMN,
        _text,
        help="Sortable column (period, date) ordering each entity's rows.",
    )
    source: str | None = _declare("source", "a name for the table (text)", _text)
    out: str | None = _declare(
        "--out",
        "a folder path (not empty)",
        _path,
        scan_only=True,
        help="Report folder [default: featureaudit-report].",
    )
    fail_at: str | None = _declare(
        "--fail-at",
        "a level: critical, high, medium or low",
        _level,
        scan_only=True,
        help="Exit 1 when a finding reaches this level.",
        metavar="[critical|high|medium|low]",
    )
    fail_at_impact: float | None = _declare(
        "--fail-at-impact",
        "a score difference of 0 or more, such as 0.02",
        _difference,
        scan_only=True,
        help="Exit 1 when the as-given validation score exceeds a corrected one by more "
        "than this, e.g. 0.02.",
        kind="number",
    )
    encoding: str | None = _declare(
        "--encoding",
        "a text encoding Python knows, e.g. latin-1",
        _encoding,
        help="Encoding of CSV files that are not UTF-8 (e.g. latin-1, cp1252).",
    )
    normalise_labels: bool | None = _declare(
        "--normalise-labels",
        "true or false",
        lambda v: isinstance(v, bool),
        help="Merge target labels differing only in case or spaces.",
        kind="switch",
    )
    accepted: str | None = _declare(
        "--accepted",
        "a CSV path of reviewed suspects",
        _path,
        scan_only=True,
        help="CSV of reviewed suspects: column,kind,reason,...",
    )
    history: str | None = _declare(
        "--history",
        "a folder path for the run history",
        _path,
        scan_only=True,
        help="Folder that keeps every run's findings.",
    )
    scheduler: str | None = _declare(
        "--scheduler",
        "a Dask scheduler address such as tcp://host:8786",
        _text,
        help="Dask scheduler address.",
    )
    quiet: bool | None = _declare(
        "--quiet",
        "true or false",
        lambda v: isinstance(v, bool),
        scan_only=True,
        help="No progress on stderr.",
        kind="switch",
    )
    code: Any = _declare(
        "--code",
        "a script or notebook path, or a list of them",
        _paths,
        help="Training script or notebook to audit (repeatable).",
        metavar="PATH",
        kind="repeated",
    )

    def __post_init__(self) -> None:
        for spec in input_specs():
            value = getattr(self, spec.name)
            if value is not None and not spec.accepts(value):
                raise SettingError(_message(spec, value))
        if self.test is not None and self.split_column is not None:
            raise SettingError(
                "--test and --split-column were both given; pass one way of naming the "
                "held-out rows."
            )
        if self.cutoff_time is not None and self.horizon is not None:
            raise SettingError("--cutoff-time and --horizon were both given; pass one of them.")
        if self.fail_at is not None and self.fail_at.strip().lower() == "none":
            raise SettingError(
                "--fail-at 'none' would fail every run (every column reaches none); pass "
                "critical, high, medium or low, or leave --fail-at out."
            )
        if self.train_value is not None and not isinstance(self.train_value, str):
            object.__setattr__(self, "train_value", _as_text(self.train_value))

    @classmethod
    def from_mapping(cls, given: Mapping[str, Any], *, where: str = "") -> Inputs:
        """Inputs from keyword arguments or config keys; an unknown name is an error."""
        names = {s.name for s in input_specs()}
        unknown = sorted(set(given) - names)
        if unknown:
            raise SettingError(
                f"{where or 'audit()'} got unknown inputs {unknown}; known ones are "
                f"{', '.join(sorted(names))}."
            )
        return cls(**dict(given))

    def table_inputs(self) -> dict[str, Any]:
        """The inputs that ``audit()`` takes (everything but the scan-only ones)."""
        return {s.name: getattr(self, s.name) for s in input_specs() if not s.scan_only}

    def replace(self, **changes: Any) -> Inputs:
        """A copy with ``changes`` (given values only: ``None`` keeps the current one)."""
        current = {s.name: getattr(self, s.name) for s in input_specs()}
        current.update({k: v for k, v in changes.items() if v is not None})
        return Inputs.from_mapping(current)


def _as_text(value: Any) -> str:
    """A number given as --train-value, as the split column's values print (1, not 1.0)."""
    if isinstance(value, float) and value.is_integer():
        return str(int(value))
    return str(value)


SHOWN = 60  # characters of a value shown in an error; the rest is counted, not echoed


def shown(value: Any) -> str:
    """``repr(value)``, cut to its first SHOWN characters when longer (a 10 MB config value
    is not echoed whole on the one error line)."""
    text = repr(value)
    if len(text) <= SHOWN:
        return text
    return f"{text[:SHOWN]}… ({len(text):,} characters)"


def _message(spec: InputSpec, value: Any) -> str:
    given = shown(value) if not hasattr(value, "shape") else f"a {type(value).__name__}"
    where = spec.flag if spec.flag == spec.name else f"{spec.flag} (config key {spec.name})"
    return f"{where} must be {spec.allowed}; got {given} ({type(value).__name__})."


def input_specs() -> tuple[InputSpec, ...]:
    """One spec per field of :class:`Inputs`, in declaration order."""
    return tuple(
        InputSpec(f.name, flag, allowed, accepts, **kw)
        for f in fields(Inputs)
        for flag, allowed, accepts, kw in [f.metadata["spec"]]
    )
