"""Read tables (CSV, TSV, Parquet, Feather/Arrow, a folder of Parquet) through pyarrow.

Types are settled here once: ISO date strings become datetimes, low-cardinality strings
become categoricals, and every unreadable input raises one :class:`InputFileError` line.
"""

from __future__ import annotations

import os
import re
from collections import Counter
from pathlib import Path

import numpy as np
import pandas as pd
import pyarrow as pa

from featureaudit.errors import InputFileError

__all__ = ["read_table", "as_frame", "normalise_frame", "SUFFIXES"]

SUFFIXES = (".csv", ".tsv", ".parquet", ".pq", ".feather", ".arrow", ".ipc")
_ISO_DATE = re.compile(
    r"^\d{4}-\d{2}-\d{2}([T ]\d{2}:\d{2}(:\d{2}(\.\d+)?)?)?(Z|[+-]\d{2}:?\d{2})?$"
)
CATEGORY_MAX_LEVELS = 200  # common practice, no source: beyond this a string column stays text
CATEGORY_MAX_SHARE = 0.5  # ...or when more than half of its values are distinct


def read_table(path: str | os.PathLike[str]) -> pd.DataFrame:
    """Read one table file or a folder of Parquet files into a normalised DataFrame."""
    p = Path(path)
    if not p.exists():
        raise InputFileError(
            f"table {str(p)!r} does not exist; pass a .csv, .tsv, .parquet, "
            ".feather/.arrow file or a folder of Parquet files."
        )
    try:
        if p.is_dir():
            files = sorted(f for f in p.rglob("*") if f.suffix.lower() in (".parquet", ".pq"))
            if not files:
                raise InputFileError(
                    f"folder {str(p)!r} holds no .parquet files; pass a folder "
                    "of Parquet files or a single table file."
                )
            import pyarrow.parquet as pq

            table = pa.concat_tables(
                [pq.read_table(f, pre_buffer=False) for f in files], promote_options="default"
            )
        else:
            table = _read_file(p)
    except InputFileError:
        raise
    except (pa.ArrowInvalid, pa.ArrowTypeError, OSError, ValueError) as exc:
        first = str(exc).strip().splitlines()[0] if str(exc).strip() else type(exc).__name__
        raise InputFileError(
            f"cannot read table {str(p)!r}: {first}. Check that the file is a "
            "complete table of the type its suffix says."
        ) from exc
    if table.num_columns == 0:
        raise InputFileError(f"table {str(p)!r} has no columns; pass a table with a header row.")
    frame = _to_pandas(table, source=str(p))
    del table
    return normalise_frame(frame, source=p.name)


def _read_file(p: Path) -> pa.Table:
    suffix = p.suffix.lower()
    if suffix in (".csv", ".tsv"):
        import pyarrow.csv as pcsv

        if p.stat().st_size == 0:
            raise InputFileError(f"table {str(p)!r} is empty; pass a table with a header row.")
        _check_header(p, "\t" if suffix == ".tsv" else ",")
        return pcsv.read_csv(
            p,
            parse_options=pcsv.ParseOptions(delimiter="\t" if suffix == ".tsv" else ","),
            convert_options=pcsv.ConvertOptions(
                timestamp_parsers=[],
                strings_can_be_null=True,
                null_values=["", "NA", "N/A", "NaN", "nan", "null", "NULL", "None"],
            ),
        )
    if suffix in (".parquet", ".pq"):
        import pyarrow.parquet as pq

        # pre_buffer=False reads column chunks as they are decoded: about half the peak
        # memory of coalesced buffering, and no slower from local disk
        return pq.read_table(p, pre_buffer=False)
    if suffix in (".feather", ".arrow", ".ipc"):
        import pyarrow.feather as feather

        return feather.read_table(p)
    raise InputFileError(
        f"table {str(p)!r} has suffix {suffix!r}; accepted suffixes are "
        f"{', '.join(SUFFIXES)} or a folder of Parquet files."
    )


def _check_header(p: Path, sep: str) -> None:
    """Reject duplicate header names before pyarrow silently keeps both."""
    with p.open("r", encoding="utf-8", errors="replace") as fh:
        header = fh.readline().rstrip("\r\n").split(sep)
    dupes = [name for name, n in Counter(h.strip('"') for h in header).items() if n > 1]
    if dupes:
        raise InputFileError(
            f"table {str(p)!r} has duplicate column names {dupes}; rename them "
            "so every column name is unique."
        )


def _to_pandas(table: pa.Table, *, source: str) -> pd.DataFrame:
    dupes = [n for n, c in Counter(table.column_names).items() if c > 1]
    if dupes:
        raise InputFileError(
            f"table {source!r} has duplicate column names {dupes}; rename them "
            "so every column name is unique."
        )
    # split_blocks + self_destruct free each Arrow column as it is converted: peak memory
    # stays near one copy of the table instead of two.
    return table.to_pandas(split_blocks=True, self_destruct=True)


def as_frame(data: object, *, what: str = "table") -> pd.DataFrame:
    """Accept a path, a DataFrame or a pyarrow Table and return a normalised DataFrame."""
    if isinstance(data, pd.DataFrame):
        dupes = [str(n) for n, c in Counter(data.columns).items() if c > 1]
        if dupes:
            raise InputFileError(
                f"{what} has duplicate column names {dupes}; rename them so "
                "every column name is unique."
            )
        return normalise_frame(data.copy(), source=what)
    if isinstance(data, pa.Table):
        return normalise_frame(_to_pandas(data, source=what), source=what)
    if isinstance(data, (str, os.PathLike)):
        return read_table(data)
    raise InputFileError(
        f"{what} must be a file path, a pandas.DataFrame or a pyarrow.Table; "
        f"got {type(data).__name__}."
    )


def normalise_frame(frame: pd.DataFrame, *, source: str) -> pd.DataFrame:
    """Give every column one usable dtype: datetimes parsed, strings as text or categoricals."""
    frame.columns = [str(c) for c in frame.columns]
    frame = frame.reset_index(drop=True)
    out = {}
    for name in frame.columns:
        out[name] = _normalise_column(frame[name])
    return pd.DataFrame(out, index=frame.index, copy=False)


def _normalise_column(s: pd.Series) -> pd.Series:
    if isinstance(s.dtype, pd.CategoricalDtype):
        return s
    if pd.api.types.is_bool_dtype(s.dtype):
        return s
    if pd.api.types.is_numeric_dtype(s.dtype) or pd.api.types.is_datetime64_any_dtype(s.dtype):
        return s
    if isinstance(s.dtype, pd.ArrowDtype):
        s = s.astype(object)
    values = s.dropna()
    if values.empty:
        return s.astype("float64")
    if not all(isinstance(v, str) for v in values.iloc[:1000]):
        values = values.astype(str)
        s = s.where(s.isna(), s.astype(str))
    as_text = values.astype(str)
    if as_text.str.match(_ISO_DATE).all():
        parsed = _parse_iso(s)
        if parsed is not None:
            return parsed
    n_levels = as_text.nunique()
    if n_levels <= CATEGORY_MAX_LEVELS and n_levels <= max(2, CATEGORY_MAX_SHARE * len(values)):
        return s.astype("category")
    return s.astype(object)


def _parse_iso(s: pd.Series) -> pd.Series | None:
    """Parse ISO strings; mixed offsets become UTC, naive stays naive; None if unparseable."""
    text = s.astype(object)
    has_zone = text.dropna().astype(str).str.contains(r"(?:Z|[+-]\d{2}:?\d{2})$", regex=True)
    try:
        if has_zone.all():
            return pd.to_datetime(text, utc=True, format="ISO8601")
        if not has_zone.any():
            return pd.to_datetime(text, format="ISO8601")
    except (ValueError, OverflowError):
        return None
    return None  # zone-aware mixed with naive: left as text, the timing probe names it


def numeric_view(s: pd.Series) -> np.ndarray | None:
    """Float view of a numeric, boolean or datetime column (datetimes as epoch seconds)."""
    if pd.api.types.is_bool_dtype(s.dtype):
        return s.astype("float64").to_numpy()
    if pd.api.types.is_datetime64_any_dtype(s.dtype):
        values = (
            s.to_numpy(dtype="datetime64[ns]")
            if getattr(s.dt, "tz", None) is None
            else s.dt.tz_convert("UTC").dt.tz_localize(None).to_numpy(dtype="datetime64[ns]")
        )
        out = values.astype("int64").astype("float64") / 1e9
        out[np.isnat(values)] = np.nan
        return out
    if s.dtype == np.float64:
        return s.to_numpy()
    if pd.api.types.is_numeric_dtype(s.dtype):
        return pd.to_numeric(s, errors="coerce").astype("float64").to_numpy()
    return None
