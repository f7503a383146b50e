"""Audit settings: defaults, validation at the public edge, and the TOML ``--config`` file."""

from __future__ import annotations

import tomllib
from dataclasses import asdict, dataclass, field, fields
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


@dataclass(frozen=True)
class Settings:
    """Knobs of the probes; every one is recorded in findings.json under ``settings``."""

    seed: int = 0
    folds: int = DEFAULT_FOLDS  # out-of-fold folds of the single-column scores
    bins: int = 20  # quantile bins per numeric column
    reference_rows: int = 20_000  # sample for the model-based reference (seeded, stratified)
    min_rows: int = 100  # below this, levels are capped at medium (small sample)
    time_tolerance: str = "auto"  # "auto": follows the times' resolution (see probes/timing.py)
    share_tolerance: float = 0.01  # shares of rows below this are not flagged
    n_jobs: int = field(default_factory=_default_jobs)  # threads: the CPUs this process may use
    engine: str = "auto"  # auto, memory, stream or dask (featureaudit/engines)
    sample_rows: int = 200_000  # rows of the seeded sample the stream and dask engines audit

    def __post_init__(self) -> None:
        _whole(self, "seed", None, None, "any whole number")
        if not 0 <= self.seed < SEED_SPAN:  # numpy takes any size, other libraries do not
            object.__setattr__(self, "seed", int(self.seed) % SEED_SPAN)
        _whole(self, "folds", 2, MAX_ROWS, f"a whole number from 2 to at most {MAX_ROWS:,}")
        _whole(self, "bins", 2, 256, "a whole number from 2 to 256")
        rows = f"at most {MAX_ROWS:,}"
        _whole(self, "reference_rows", 100, MAX_ROWS, f"a whole number, at least 100 and {rows}")
        _whole(self, "min_rows", 0, MAX_ROWS, f"a whole number, at least 0 and {rows}")
        _whole(self, "n_jobs", 1, MAX_JOBS, f"a whole number, at least 1 and at most {MAX_JOBS}")
        share = self.share_tolerance
        if not _is_number(share) or not 0 <= share < 1:
            raise SettingError(_bad("share_tolerance", share, "a number in [0, 1)"))
        object.__setattr__(self, "share_tolerance", float(share))
        if not isinstance(self.time_tolerance, str):
            raise SettingError(_bad("time_tolerance", self.time_tolerance, '"auto" or a duration'))
        from featureaudit.durations import parse_duration

        if self.time_tolerance != "auto" and parse_duration(
            self.time_tolerance, what="time_tolerance"
        ) < pd.Timedelta(0):
            raise SettingError(_bad("time_tolerance", self.time_tolerance, "not negative"))
        _whole(self, "sample_rows", 100, MAX_ROWS, f"a whole number, at least 100 and {rows}")
        if self.engine not in ENGINES:
            raise SettingError(_bad("engine", self.engine, "one of " + ", ".join(ENGINES)))

    def to_dict(self) -> dict[str, Any]:
        return asdict(self)

    @classmethod
    def names(cls) -> tuple[str, ...]:
        return tuple(f.name for f in fields(cls))


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


def _bad(name: str, value: Any, allowed: str) -> str:
    flagged = ("seed", "engine", "sample_rows")  # the settings that scan takes as flags
    where = f"--{name.replace('_', '-')}" if name in flagged else f"setting {name}"
    return (
        f"{where} (config key {name}) must be {allowed}; got {shown(value)} "
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


def _whole(settings: Settings, name: str, low: int | None, high: int | None, allowed: str) -> None:
    """Check that a setting is a whole number within [low, high]; numpy integers become int."""
    import numbers

    given = getattr(settings, name)
    if not isinstance(given, numbers.Integral) or isinstance(given, bool):
        raise SettingError(_bad(name, given, allowed))
    value = int(given)
    if (low is not None and value < low) or (high is not None and value > high):
        raise SettingError(_bad(name, value, allowed))
    object.__setattr__(settings, name, value)


def check_level(value: str, *, flag: str) -> str:
    """Validate a level name given to ``flag``."""
    try:
        return Level.parse(value).label
    except ValueError:
        raise SettingError(
            f"{flag} {value!r} is not a level; use one of {', '.join(LEVEL_NAMES)}."
        ) from None
