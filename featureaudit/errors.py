"""Public exceptions: each names what is wrong, the value received and how to fix it.

Every class also inherits the matching built-in, so callers that catch ``ValueError`` or
``KeyError`` keep working. The CLI prints ``str(error)`` on one line and exits with code 2.
"""

from __future__ import annotations

__all__ = [
    "FeatureAuditError",
    "InputFileError",
    "ColumnNotFound",
    "DictionaryError",
    "DurationError",
    "SettingError",
    "TargetError",
    "ProbeFailed",
    "Interrupted",
    "TooFewRows",
]


class FeatureAuditError(Exception):
    """Base class of every error featureaudit raises on purpose (bad input or invocation)."""

    def __str__(self) -> str:  # KeyError would otherwise quote the message
        return " ".join(str(a) for a in self.args).replace("\n", " ")


class InputFileError(FeatureAuditError, OSError):
    """A table, dictionary, config or findings file that is missing or cannot be read."""


class ColumnNotFound(FeatureAuditError, KeyError):
    """A column named by a flag, the dictionary or the config is not in the table."""


class DictionaryError(FeatureAuditError, ValueError):
    """A data dictionary row whose role or known_at cannot be understood."""


class DurationError(FeatureAuditError, ValueError):
    """A duration such as ``--horizon`` or ``known_at`` that is not in an accepted spelling."""


class SettingError(FeatureAuditError, ValueError, TypeError):
    """A flag, config or argument value outside what is allowed (a wrong value or type)."""


class TargetError(FeatureAuditError, ValueError):
    """A target that cannot be audited: all missing, a single class, or the wrong task."""


class TooFewRows(FeatureAuditError, ValueError):
    """A table with too few rows for any probe to compare parts of it."""


class Interrupted(BaseException):
    """SIGINT or SIGTERM arrived; raised by the CLI's handler so the report is left whole."""

    def __init__(self, signum: int) -> None:
        super().__init__(f"signal {signum}")
        self.signum = signum


class ProbeFailed(RuntimeError):
    """A probe raised an unexpected error: a bug in featureaudit (or a plugin), not bad input.

    Not a :class:`FeatureAuditError`: the run must fail (exit 3) rather than report an audit
    with a probe missing, and nothing is written over an earlier report.
    """

    def __init__(self, probe: str, error: BaseException) -> None:
        super().__init__(f"probe {probe!r} failed with {type(error).__name__}: {error}")
        self.probe = probe
        self.error = error
