"""Which door an input came through, and error messages in that door's words.

The library's messages name command-line flags (``--target``, ``config key target``); raised
through ``audit()`` the same message names the keyword instead (``target``), so a Python user
is never sent to a flag. The CLI marks its calls with :func:`command_line`.
"""

from __future__ import annotations

import re
from collections.abc import Iterator
from contextlib import contextmanager
from contextvars import ContextVar

from featureaudit.errors import FeatureAuditError

__all__ = ["command_line", "python_words", "in_python_words"]

_DOOR: ContextVar[str] = ContextVar("featureaudit_door", default="python")
_CONFIG = re.compile(r" \(config key [a-z_]+\)")
_CHOICE = re.compile(r"(?<![\w-])--(engine|task) ([a-z]+)\b")  # a flag with its value
_FLAG = re.compile(r"(?<![\w-])--([a-z][a-z0-9-]*[a-z0-9])")


@contextmanager
def command_line() -> Iterator[None]:
    """Within this block errors keep the command line's words (the CLI's ``scan``)."""
    token = _DOOR.set("cli")
    try:
        yield
    finally:
        _DOOR.reset(token)


def in_python_words(message: str) -> str:
    """``message`` with each ``--flag`` written as its keyword (``--engine dask`` as
    ``engine='dask'``) and the config key notes left out."""
    text = _CONFIG.sub("", message)
    text = _CHOICE.sub(lambda m: f"{m[1]}={m[2]!r}", text)
    return _FLAG.sub(lambda m: m[1].replace("-", "_"), text)


@contextmanager
def python_words() -> Iterator[None]:
    """Re-raise a :class:`FeatureAuditError` of the block in keyword words, same class,
    unless the command line is the caller."""
    try:
        yield
    except FeatureAuditError as exc:
        if _DOOR.get() == "cli":
            raise
        worded = type(exc)(in_python_words(str(exc)))
        raise worded.with_traceback(exc.__traceback__) from exc.__cause__
