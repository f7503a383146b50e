"""The ``--order`` column: a sortable column (period number, date, sequence) read as ranks.

Numbers and datetimes sort as they are; text that is all numbers or all ISO dates sorts as
those, other text as text (``2020-Q1`` < ``2020-Q2``). Values of several types at once, or no
value at all, cannot order rows: one error naming the column and what to pass.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from featureaudit.errors import SettingError

__all__ = ["order_ranks"]


def order_ranks(s: pd.Series, *, column: str, source: str) -> np.ndarray:
    """Dense ranks (1, 2, ...) of ``s`` as floats, NaN where missing; raises when unsortable."""
    if isinstance(s.dtype, pd.CategoricalDtype):
        s = s.astype(object)  # the values, not the order in which categories were met
    present = s.dropna()
    if present.empty:
        raise SettingError(
            f"--order column {column!r} of {source} has no values; pass --order with a "
            "column of period numbers, dates or sequence numbers."
        )
    return _sortable(s, present, column, source).rank(method="dense").to_numpy(dtype="float64")


def _sortable(s: pd.Series, present: pd.Series, column: str, source: str) -> pd.Series:
    if pd.api.types.is_bool_dtype(s.dtype):
        raise SettingError(
            f"--order column {column!r} of {source} holds true/false values, which order no "
            "periods; pass a column of period numbers, dates or sequence numbers."
        )
    if pd.api.types.is_numeric_dtype(s.dtype) or pd.api.types.is_datetime64_any_dtype(s.dtype):
        return s
    kind = pd.api.types.infer_dtype(present, skipna=True)
    if kind != "string":
        types = sorted({type(v).__name__ for v in present.iloc[:: max(1, len(present) // 500)]})
        raise SettingError(
            f"--order column {column!r} of {source} mixes values that do not sort together "
            f"({kind}: {', '.join(types)}); pass a column whose values are all numbers, all "
            "dates or all text."
        )
    for what, parsed in (
        ("numbers", pd.to_numeric(s, errors="coerce")),
        ("dates", pd.to_datetime(s, errors="coerce", format="ISO8601")),
    ):
        read = int(parsed.notna().sum())
        if read == len(present):
            return parsed
        if read > 0 and what == "numbers" or read >= len(present) / 2:
            example = present[parsed[present.index].isna()].iloc[0]
            raise SettingError(
                f"--order column {column!r} of {source} mixes {what} with other text (e.g. "
                f"{example!r}), which do not sort together; pass a column whose values are "
                "all numbers, all dates or all text."
            )
    return s.astype(object)
