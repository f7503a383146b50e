"""Audit settings: defaults, validation at the public edge, and the TOML ``--config`` file."""

from __future__ import annotations

import tomllib
from dataclasses import asdict, dataclass, field, fields
from pathlib import Path
from typing import Any

import pandas as pd

from featureaudit.errors import InputFileError, SettingError
from featureaudit.levels import LEVEL_NAMES, Level

__all__ = ["Settings", "read_config", "CONFIG_KEYS"]

TASKS = ("binary", "multiclass", "numeric")
ENGINES = ("auto", "memory", "stream", "dask")

# Keys of the config file: every scan flag, with '-' written as '_'.
CONFIG_KEYS = (
    "test",
    "split_column",
    "train_value",
    "target",
    "task",
    "dictionary",
    "label_time",
    "cutoff_time",
    "horizon",
    "entity",
    "out",
    "fail_at",
    "seed",
    "fail_at_impact",
    "scheduler",
    "quiet",
)


def _default_jobs() -> int:
    from featureaudit.threads import available_cpus

    return available_cpus()


@dataclass(frozen=True)
class Settings:
    """Knobs of the probes; every one is recorded in findings.json under ``settings``."""

    seed: int = 0
    folds: int = 5  # out-of-fold folds of the single-column scores
    bins: int = 20  # quantile bins per numeric column
    reference_rows: int = 20_000  # sample for the model-based reference (seeded, stratified)
    min_rows: int = 100  # below this, levels are capped at medium (small sample)
    time_tolerance: str = "auto"  # "auto": follows the times' resolution (see probes/timing.py)
    share_tolerance: float = 0.01  # shares of rows below this are not flagged
    n_jobs: int = field(default_factory=_default_jobs)  # threads: the CPUs this process may use
    engine: str = "auto"  # auto, memory, stream or dask (featureaudit/engines)
    sample_rows: int = 200_000  # rows of the seeded sample the stream and dask engines audit

    def __post_init__(self) -> None:
        if self.folds < 2:
            raise SettingError(f"folds must be at least 2; got {self.folds}.")
        if not 2 <= self.bins <= 256:
            raise SettingError(f"bins must be between 2 and 256; got {self.bins}.")
        if not 0 <= self.share_tolerance < 1:
            raise SettingError(f"share_tolerance must be in [0, 1); got {self.share_tolerance}.")
        from featureaudit.durations import parse_duration

        if self.time_tolerance != "auto" and parse_duration(
            self.time_tolerance, what="time_tolerance"
        ) < pd.Timedelta(0):
            raise SettingError(f"time_tolerance must not be negative; got {self.time_tolerance}.")
        if self.n_jobs < 1:
            raise SettingError(f"n_jobs must be at least 1; got {self.n_jobs}.")
        if self.engine not in ENGINES:
            raise SettingError(f"--engine {self.engine!r} is not one of {', '.join(ENGINES)}.")
        if self.sample_rows < 100:
            raise SettingError(f"--sample-rows must be at least 100; got {self.sample_rows}.")
        if self.reference_rows < 100:
            raise SettingError(f"reference_rows must be at least 100; got {self.reference_rows}.")

    def to_dict(self) -> dict[str, Any]:
        return asdict(self)

    @classmethod
    def names(cls) -> tuple[str, ...]:
        return tuple(f.name for f in fields(cls))


def read_config(path: str | Path) -> dict[str, Any]:
    """Read a TOML settings file; unknown keys are an error that lists the known ones."""
    p = Path(path)
    if not p.is_file():
        raise InputFileError(f"config {str(p)!r} does not exist; pass --config with a TOML file.")
    try:
        data = tomllib.loads(p.read_text(encoding="utf-8"))
    except (tomllib.TOMLDecodeError, UnicodeDecodeError) as exc:
        raise SettingError(
            f"config {str(p)!r} is not valid TOML: {exc}; fix the line it names."
        ) from exc
    unknown = sorted(set(data) - set(CONFIG_KEYS) - set(Settings.names()))
    if unknown:
        raise SettingError(
            f"config {str(p)!r} has unknown keys {unknown}; known keys are "
            f"{', '.join(CONFIG_KEYS + Settings.names())}."
        )
    return data


def check_level(value: str, *, flag: str) -> str:
    """Validate a level name given to ``flag``."""
    try:
        return Level.parse(value).label
    except ValueError:
        raise SettingError(
            f"{flag} {value!r} is not a level; use one of {', '.join(LEVEL_NAMES)}."
        ) from None
