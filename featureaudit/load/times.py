"""Turn a column into datetimes once, with one clear error when it cannot be done.

Accepted: datetime dtypes, ISO strings, whole years (1000–3000, read as 1 January) and epoch
numbers (seconds or milliseconds, chosen by magnitude). Zone-aware values are converted to
UTC and compared as naive UTC; a column mixing aware and naive values is an error naming
the column, since no conversion is safe. Times are held in microseconds, so years outside
pandas' nanosecond range (1677-2262), such as 1600 or 2300, are kept rather than overflowing.
"""

from __future__ import annotations

import re

import numpy as np
import pandas as pd

from featureaudit.errors import SettingError

__all__ = ["as_datetime"]

_EPOCH_S = (1e8, 5e9)  # 1973 .. 2128 in seconds
_EPOCH_MS = (1e11, 5e12)  # the same span in milliseconds
UNIT = "datetime64[us]"  # one resolution for every time the probes compare
_ISO_PREFIX = re.compile(r"^\d{4}-\d{2}-\d{2}(?:[T ]\d{2}:\d{2}(?::\d{2}(?:\.\d+)?)?)?")
_ZONE = r"(?:Z|[+-]\d{2}:?\d{2})$"


def as_datetime(s: pd.Series, *, column: str, what: str = "column") -> pd.Series:
    """Return ``s`` as naive UTC ``datetime64[us]``; raise :class:`SettingError` if impossible."""
    if pd.api.types.is_datetime64_any_dtype(s.dtype):
        if getattr(s.dt, "tz", None) is not None:
            s = s.dt.tz_convert("UTC").dt.tz_localize(None)
        return s.astype(UNIT)
    if pd.api.types.is_bool_dtype(s.dtype):
        raise SettingError(
            f"{what} {column!r} holds true/false values, not times; name a "
            "column of dates or datetimes."
        )
    if pd.api.types.is_numeric_dtype(s.dtype):
        values = pd.to_numeric(s, errors="coerce").astype("float64")
        med = float(np.nanmedian(np.abs(values))) if values.notna().any() else np.nan
        present = values.dropna()
        if (
            not present.empty
            and present.between(1000, 3000).all()
            and np.allclose(present, np.round(present))
        ):
            years = values.round().astype("Int64").astype(str).where(values.notna(), None)
            return pd.to_datetime(years, format="%Y").astype(UNIT)
        if _EPOCH_S[0] <= med <= _EPOCH_S[1]:
            return pd.to_datetime(values, unit="s").astype(UNIT)
        if _EPOCH_MS[0] <= med <= _EPOCH_MS[1]:
            return pd.to_datetime(values, unit="ms").astype(UNIT)
        raise SettingError(
            f"{what} {column!r} holds numbers that are not epoch seconds or "
            "milliseconds (e.g. "
            f"{values.dropna().iloc[0] if values.notna().any() else 'none'}); "
            "store it as ISO dates such as 2026-01-31."
        )
    text = s.astype(object).where(s.notna(), None)
    present = pd.Series(text.dropna().astype(str))
    if present.empty:
        raise SettingError(f"{what} {column!r} has no values; name a column of dates.")
    _one_format(present, column=column, what=what)
    zoned = present.str.contains(_ZONE, regex=True)
    if zoned.any() and not zoned.all():
        raise SettingError(
            f"{what} {column!r} mixes times with a time zone and times without "
            f"one (e.g. {present[zoned].iloc[0]!r} and {present[~zoned].iloc[0]!r});"
            " write them all with an offset or all without."
        )
    parsed = pd.to_datetime(text, errors="coerce", utc=bool(zoned.all()), format="ISO8601")
    bad = parsed.isna() & text.notna()
    if bad.any():
        raise SettingError(
            f"{what} {column!r} has {int(bad.sum())} values that are not dates "
            f"(e.g. {str(text[bad].iloc[0])!r}); write them as ISO dates such as "
            "2026-01-31 or 2026-01-31T09:30:00."
        )
    if zoned.all():
        parsed = parsed.dt.tz_convert("UTC").dt.tz_localize(None)
    return parsed.astype(UNIT)


def _one_format(present: pd.Series, *, column: str, what: str) -> None:
    """Reject a column that writes its dates in several formats (ISO and others mixed).

    Told apart from "mixes zones" and "not dates": some values are ISO dates and some are
    not, yet those others still read as dates in another spelling (day/month, month names).
    """
    iso = present.str.match(_ISO_PREFIX)
    if iso.all() or not iso.any():
        return
    others = present[~iso]
    sample = others.drop_duplicates().sort_values().head(200)
    readable = pd.to_datetime(sample, errors="coerce", format="mixed", dayfirst=False)
    if readable.notna().mean() < 0.5:
        return  # mostly not dates at all: the "not dates" error below says so
    raise SettingError(
        f"{what} {column!r} is written in several date formats (e.g. "
        f"{present[iso].iloc[0]!r} and {others.iloc[0]!r}; {int((~iso).sum())} not in ISO "
        "form); write every value in one format, ISO dates such as 2026-01-31 or "
        "2026-01-31T09:30:00."
    )
