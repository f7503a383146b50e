"""Audit settings: defaults, validation at the public edge, and the TOML ``--config`` file."""

from __future__ import annotations

import numbers
import tomllib
from collections.abc import Callable
from dataclasses import Field, asdict, dataclass, field, fields
from pathlib import Path
from typing import Any

import pandas as pd

from featureaudit.errors import InputFileError, SettingError
from featureaudit.inputs import TASKS, shown
from featureaudit.levels import LEVEL_NAMES, Level

__all__ = ["Settings", "read_config", "config_keys", "check_counts", "shown", "TASKS"]

ENGINES = ("auto", "memory", "stream", "dask")
SEED_SPAN = 2**31 - 1  # seeds are mapped into [0, 2**31 - 1): every library here takes them
# upper bounds of the count settings (common practice, no source): a row count past 2**31 - 1
# is beyond any table pandas holds in one frame (a larger value would mean "every row" anyway)
# and a thread count past 1,024 beyond any machine; folds are also bounded by the table's
# labelled training rows, checked when the table is read (check_counts)
MAX_ROWS = 2**31 - 1
DEFAULT_FOLDS = 5
MAX_JOBS = 1024


def config_keys() -> tuple[str, ...]:
    """Keys of the config file: every scan input, with '-' written as '_', then the settings."""
    from featureaudit.inputs import input_specs

    return tuple(s.config_key for s in input_specs()) + Settings.names()


def _default_jobs() -> int:
    from featureaudit.threads import available_cpus

    return available_cpus()


def _whole_in(low: int | None, high: int | None) -> Callable[[Any], int | None]:
    """A check: a whole number within [low, high] (numpy integers become int), else None."""

    def check(value: Any) -> int | None:
        if not isinstance(value, numbers.Integral) or isinstance(value, bool):
            return None
        v = int(value)
        return None if (low is not None and v < low) or (high is not None and v > high) else v

    return check


def _seed(value: Any) -> int | None:
    """Any whole number, mapped into [0, 2**31 - 1): numpy takes any size, other libraries
    do not."""
    v = _whole_in(None, None)(value)
    return None if v is None else v % SEED_SPAN


def _share(value: Any) -> float | None:
    return float(value) if _is_number(value) and 0 <= value < 1 else None


def _tolerance(value: Any) -> str | None:
    if not isinstance(value, str):
        return None
    if value == "auto":
        return value
    from featureaudit.durations import parse_duration

    return value if parse_duration(value, what="time_tolerance") >= pd.Timedelta(0) else None


def _engine(value: Any) -> str | None:
    return value if value in ENGINES else None


def _setting(
    default: Any,
    allowed: str,
    check: Callable[[Any], Any],
    *,
    flag: str | None = None,
    help: str = "",
    metavar: str | None = None,
    factory: Callable[[], Any] | None = None,
) -> Any:
    """A field of :class:`Settings` with its declared constraint: ``check`` returns the value
    to keep (normalised) or ``None`` when it is not ``allowed``; ``flag`` is its scan flag."""
    meta = {"allowed": allowed, "check": check, "flag": flag, "help": help, "metavar": metavar}
    if factory is not None:
        return field(default_factory=factory, metadata=meta)
    return field(default=default, metadata=meta)


@dataclass(frozen=True)
class Settings:
    """Knobs of the probes; every one is recorded in findings.json under ``settings``.

    Each field declares what it allows; values are checked (and normalised) on creation, so a
    bad one is a :class:`SettingError` naming the setting, its flag, the value and what is
    allowed.
    """

    seed: int = _setting(
        0, "any whole number", _seed, flag="--seed", help="Seed of folds and samples [default: 0]."
    )
    # out-of-fold folds of the single-column scores
    folds: int = _setting(
        DEFAULT_FOLDS, f"a whole number from 2 to at most {MAX_ROWS:,}", _whole_in(2, MAX_ROWS)
    )
    # quantile bins per numeric column
    bins: int = _setting(20, "a whole number from 2 to 256", _whole_in(2, 256))
    # sample for the model-based reference (seeded, stratified)
    reference_rows: int = _setting(
        20_000, f"a whole number, at least 100 and at most {MAX_ROWS:,}", _whole_in(100, MAX_ROWS)
    )
    # below this, levels are capped at medium (small sample)
    min_rows: int = _setting(
        100, f"a whole number, at least 0 and at most {MAX_ROWS:,}", _whole_in(0, MAX_ROWS)
    )
    # "auto": follows the times' resolution (see probes/timing.py)
    time_tolerance: str = _setting("auto", '"auto" or a duration, not negative', _tolerance)
    # shares of rows below this are not flagged
    share_tolerance: float = _setting(0.01, "a number in [0, 1)", _share)
    # threads: the CPUs this process may use
    n_jobs: int = _setting(
        None,
        f"a whole number, at least 1 and at most {MAX_JOBS}",
        _whole_in(1, MAX_JOBS),
        factory=_default_jobs,
    )
    # auto, memory, stream or dask (featureaudit/engines)
    engine: str = _setting(
        "auto",
        "one of " + ", ".join(ENGINES),
        _engine,
        flag="--engine",
        help="Where the table is read [default: auto].",
        metavar="[" + "|".join(ENGINES) + "]",
    )
    # rows of the seeded sample the stream and dask engines audit
    sample_rows: int = _setting(
        200_000,
        f"a whole number, at least 100 and at most {MAX_ROWS:,}",
        _whole_in(100, MAX_ROWS),
        flag="--sample-rows",
        help="Seeded sample for the model-based parts [default: 200000].",
    )

    def __post_init__(self) -> None:
        for f in fields(self):
            given = getattr(self, f.name)
            kept = f.metadata["check"](given)
            if kept is None:
                raise SettingError(_bad(f, given))
            object.__setattr__(self, f.name, kept)

    def to_dict(self) -> dict[str, Any]:
        return asdict(self)

    @classmethod
    def names(cls) -> tuple[str, ...]:
        return tuple(f.name for f in fields(cls))

    @classmethod
    def flagged(cls) -> tuple[Field[Any], ...]:
        """The settings that ``scan`` takes as flags (each declares its flag and help)."""
        return tuple(f for f in fields(cls) if f.metadata["flag"])


def read_config(path: str | Path) -> dict[str, Any]:
    """Read a TOML settings file; unknown keys are an error that lists the known ones."""
    p = Path(path)
    if p.is_dir():
        raise InputFileError(
            f"config {str(p)!r} is a folder, not a file; pass --config with a TOML file."
        )
    if not p.is_file():
        raise InputFileError(f"config {str(p)!r} does not exist; pass --config with a TOML file.")
    try:
        data = tomllib.loads(p.read_text(encoding="utf-8"))
    except (tomllib.TOMLDecodeError, UnicodeDecodeError) as exc:
        raise SettingError(
            f"config {str(p)!r} is not valid TOML: {exc}; fix the line it names."
        ) from exc
    unknown = sorted(set(data) - set(config_keys()))
    if unknown:
        raise SettingError(
            f"config {str(p)!r} has unknown keys [{', '.join(shown(k) for k in unknown[:10])}]; "
            "known keys are "
            f"{', '.join(config_keys())}."
        )
    return data


def _is_number(value: Any) -> bool:
    return isinstance(value, int | float) and not isinstance(value, bool) and value == value


def _bad(f: Field[Any], value: Any) -> str:
    flag = f.metadata["flag"]
    where = flag if flag else f"setting {f.name}"
    allowed = f.metadata["allowed"]
    return (
        f"{where} (config key {f.name}) must be {allowed}; got {shown(value)} "
        f"({type(value).__name__})."
    )


def check_counts(settings: Settings, *, rows: int, source: str) -> None:
    """The count settings that the table bounds: ``folds`` at most its labelled training
    rows (``rows``), or the default when the table has fewer; raise :class:`SettingError`
    naming the setting, the value and the rows."""
    default = DEFAULT_FOLDS
    limit = max(rows, default)  # the default adapts to a small table (each probe caps it)
    if settings.folds > limit:
        raise SettingError(
            f"setting folds (config key folds) is {settings.folds} but table {source!r} has "
            f"{rows} labelled training rows; pass folds of at most {limit} (default {default})."
        )


def check_level(value: str, *, flag: str) -> str:
    """Validate a level name given to ``flag``."""
    try:
        return Level.parse(value).label
    except ValueError:
        raise SettingError(
            f"{flag} {value!r} is not a level; use one of {', '.join(LEVEL_NAMES)}."
        ) from None
