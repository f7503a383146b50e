"""Parse signed durations (``30d``, ``-30 days``, ``12h``, ``P30D``) without deprecated units."""

from __future__ import annotations

import re

import pandas as pd

from featureaudit.errors import DurationError

__all__ = ["parse_duration"]

_UNIT_SECONDS = {
    "w": 7 * 86400,
    "week": 7 * 86400,
    "weeks": 7 * 86400,
    "d": 86400,
    "day": 86400,
    "days": 86400,
    "h": 3600,
    "hr": 3600,
    "hrs": 3600,
    "hour": 3600,
    "hours": 3600,
    "m": 60,
    "min": 60,
    "mins": 60,
    "minute": 60,
    "minutes": 60,
    "s": 1,
    "sec": 1,
    "secs": 1,
    "second": 1,
    "seconds": 1,
}
_PLAIN = re.compile(r"^([+-]?)\s*(\d+(?:\.\d+)?)\s*([a-z]+)$")
_ISO = re.compile(
    r"^([+-]?)P(?:(\d+(?:\.\d+)?)W)?(?:(\d+(?:\.\d+)?)D)?"
    r"(?:T(?:(\d+(?:\.\d+)?)H)?(?:(\d+(?:\.\d+)?)M)?(?:(\d+(?:\.\d+)?)S)?)?$"
)
ACCEPTED = "e.g. 30d, 30 days, -12h, +2 weeks, P30D or -P1DT12H"
# pandas holds a Timedelta in nanoseconds: about 292 years either way
MAX_SECONDS = (2**63 - 1) // 10**9


def _timedelta(seconds: float, raw: str, what: str) -> pd.Timedelta:
    if abs(seconds) >= MAX_SECONDS:
        raise DurationError(
            f"{what} {raw!r} is longer than the 292 years a duration can span; write a "
            f"shorter one, {ACCEPTED}."
        )
    return pd.Timedelta(seconds=seconds)


def parse_duration(text: str, *, what: str = "duration") -> pd.Timedelta:
    """Return ``text`` as a :class:`pandas.Timedelta`; raise :class:`DurationError` otherwise.

    Units are converted to seconds here and handed to pandas as an integer number of
    seconds, so no unit spelling that pandas deprecates (lower-case ``d``) reaches it.

    >>> parse_duration("-30d")
    Timedelta('-30 days +00:00:00')
    """
    raw = str(text).strip()
    if not raw:
        raise DurationError(f"{what} is empty; write a signed duration, {ACCEPTED}.")
    iso = _ISO.match(raw.upper())
    if iso and raw.upper() not in ("P", "+P", "-P", "PT", "+PT", "-PT") and any(iso.groups()[1:]):
        sign = -1 if iso.group(1) == "-" else 1
        weeks, days, hours, minutes, seconds = (float(g) if g else 0.0 for g in iso.groups()[1:])
        total = (((weeks * 7 + days) * 24 + hours) * 60 + minutes) * 60 + seconds
        return _timedelta(sign * total, raw, what)
    plain = _PLAIN.match(raw.lower())
    if plain and plain.group(3) in _UNIT_SECONDS:
        sign = -1 if plain.group(1) == "-" else 1
        return _timedelta(sign * float(plain.group(2)) * _UNIT_SECONDS[plain.group(3)], raw, what)
    raise DurationError(f"{what} {raw!r} is not a duration; write it as {ACCEPTED}.")
