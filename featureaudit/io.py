"""Read tables (CSV, TSV, Parquet, Feather/Arrow, a folder of Parquet) through pyarrow.

Types are settled here once: ISO date strings become datetimes, low-cardinality strings
become categoricals, and every unreadable input raises one :class:`InputFileError` line.
"""

from __future__ import annotations

import codecs
import os
import re
from collections import Counter
from pathlib import Path

import numpy as np
import pandas as pd
import pyarrow as pa

from featureaudit.errors import InputFileError, SettingError

__all__ = [
    "read_table",
    "as_frame",
    "normalise_frame",
    "decode_text",
    "detect_encoding",
    "check_encoding",
    "UNPARSED_DATES",
    "SUFFIXES",
]

SUFFIXES = (".csv", ".tsv", ".parquet", ".pq", ".feather", ".arrow", ".ipc")
_ISO_DATE = re.compile(
    r"^\d{4}-\d{2}-\d{2}([T ]\d{2}:\d{2}(:\d{2}(\.\d+)?)?)?(Z|[+-]\d{2}:?\d{2})?$"
)
CATEGORY_MAX_LEVELS = 200  # common practice, no source: beyond this a string column stays text
CATEGORY_MAX_SHARE = 0.5  # ...or when more than half of its values are distinct
# A text column whose values are ISO dates but for at most this share (and at least
# DATE_MIN_VALUES of them parse) is a date column with a few bad entries: they are read as
# missing and counted (common practice, no source).
DATE_MAX_BAD_SHARE = 0.01
DATE_MIN_VALUES = 50
UNPARSED_DATES = "featureaudit_unparsed_dates"  # frame.attrs key: column -> (count, example)
ENCODING_HINT = "pass --encoding with the file's encoding, e.g. --encoding latin-1 or cp1252"
_BOMS = (
    (codecs.BOM_UTF8, "utf-8-sig"),
    (codecs.BOM_UTF16_LE, "utf-16"),
    (codecs.BOM_UTF16_BE, "utf-16"),
)


def check_encoding(encoding: str | None) -> str | None:
    """The codec name of ``--encoding``, or a :class:`SettingError` naming the flag."""
    if encoding is None:
        return None
    try:
        return codecs.lookup(str(encoding)).name
    except LookupError as exc:
        raise SettingError(
            f"--encoding {encoding!r} is not a text encoding Python knows; pass e.g. "
            "--encoding latin-1, cp1252 or utf-16."
        ) from exc


def detect_encoding(head: bytes) -> str | None:
    """The encoding a byte-order mark announces (UTF-8 or UTF-16), else None."""
    for bom, name in _BOMS:
        if head.startswith(bom):
            return name
    return None


def decode_text(raw: bytes, *, what: str, encoding: str | None = None) -> str:
    """Text of a whole file: its BOM's encoding, else UTF-8, else ``encoding``, else an error."""
    bom = detect_encoding(raw[:4])
    if bom is not None:
        try:
            return raw.decode(bom)
        except UnicodeDecodeError as exc:
            raise InputFileError(
                f"{what} starts with a {bom} byte-order mark but is not {bom} text "
                f"({exc.reason} at byte {exc.start}); save it again as UTF-8."
            ) from exc
    try:
        return raw.decode("utf-8")
    except UnicodeDecodeError as exc:
        if encoding in (None, "utf-8"):
            raise InputFileError(
                f"{what} is not UTF-8 text (byte {raw[exc.start]:#04x} at position "
                f"{exc.start}); {ENCODING_HINT}."
            ) from exc
    try:
        return raw.decode(encoding)
    except UnicodeDecodeError as exc:
        raise InputFileError(
            f"{what} is neither UTF-8 nor {encoding} text ({exc.reason} at byte "
            f"{exc.start}); {ENCODING_HINT}."
        ) from exc


def read_table(path: str | os.PathLike[str], *, encoding: str | None = None) -> pd.DataFrame:
    """Read one table file or a folder of Parquet files into a normalised DataFrame.

    CSV/TSV text is read as its byte-order mark says (UTF-8, UTF-16), else as UTF-8, else
    as ``encoding`` (the ``--encoding`` flag); otherwise one error naming the flag.
    """
    p = Path(path)
    encoding = check_encoding(encoding)
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
            table = _read_parts(files, p)
        else:
            table = _read_file(p, encoding)
    except (InputFileError, SettingError):
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


def check_parquet_parts(files: list[Path], folder: Path) -> list[pa.Schema]:
    """The schemas of a folder's Parquet parts, once every part is known to be readable, to
    hold unique column names, the same columns as the first part, and types that can meet
    them; otherwise an error that names the part and the column."""
    import pyarrow.parquet as pq

    schemas = []
    for f in files:
        try:
            schema = pq.read_schema(f)
        except (pa.ArrowException, OSError) as exc:
            first = str(exc).strip().splitlines()[0] if str(exc).strip() else type(exc).__name__
            raise InputFileError(
                f"cannot read Parquet part {str(f)!r} of {str(folder)!r}: {first}. Replace or "
                "remove that part."
            ) from exc
        dupes = [n for n, c in Counter(schema.names).items() if c > 1]
        if dupes:
            raise InputFileError(
                f"Parquet part {str(f)!r} has duplicate column names {dupes}; rename them so "
                "every column name is unique."
            )
        schemas.append(schema)
    lead, base = files[0], schemas[0]
    for f, schema in zip(files[1:], schemas[1:], strict=True):
        lacks = [n for n in base.names if n not in schema.names]
        extra = [n for n in schema.names if n not in base.names]
        if lacks or extra:
            what = f"lacks column {lacks[0]!r}" if lacks else f"has column {extra[0]!r}"
            raise InputFileError(
                f"Parquet part {str(f)!r} {what} that {lead.name!r} "
                f"{'has' if lacks else 'lacks'}; give every part of {str(folder)!r} the same "
                "columns."
            )
        for field in schema:
            if not _types_meet(base.field(field.name).type, field.type):
                raise InputFileError(
                    f"Parquet part {str(f)!r} stores column {field.name!r} as {field.type}, "
                    f"but {lead.name!r} stores it as {base.field(field.name).type}; write "
                    "every part with the same types."
                )
    return schemas


def _types_meet(a: pa.DataType, b: pa.DataType) -> bool:
    """Can two parts' types of one column be read as one (permissive promotion, categories
    read as their values)?"""
    plain = [t.value_type if pa.types.is_dictionary(t) else t for t in (a, b)]
    for pair in ((a, b), tuple(plain)):
        try:
            pa.unify_schemas(
                [pa.schema([("c", pair[0])]), pa.schema([("c", pair[1])])],
                promote_options="permissive",
            )
            return True
        except (pa.ArrowInvalid, pa.ArrowTypeError, pa.ArrowNotImplementedError):
            continue
    return False


def _read_parts(files: list[Path], folder: Path) -> pa.Table:
    """A folder of Parquet parts read as one table (the parts checked first)."""
    import pyarrow.parquet as pq

    check_parquet_parts(files, folder)
    tables = []
    for f in files:
        try:
            tables.append(pq.read_table(f, pre_buffer=False))
        except (pa.ArrowException, OSError) as exc:
            first = str(exc).strip().splitlines()[0] if str(exc).strip() else type(exc).__name__
            raise InputFileError(
                f"cannot read Parquet part {str(f)!r} of {str(folder)!r}: {first}. Replace or "
                "remove that part."
            ) from exc
    columns = tables[0].column_names
    tables = [_plain_categories(t).select(columns) for t in tables]
    return pa.concat_tables(tables, promote_options="permissive")


def _plain_categories(table: pa.Table) -> pa.Table:
    """Dictionary-encoded columns (pandas categories) as their values, so parts that store a
    column as categories in one and as text in another concatenate."""
    for i, field in enumerate(table.schema):
        if pa.types.is_dictionary(field.type):
            table = table.set_column(i, field.name, table.column(i).cast(field.type.value_type))
    return table


def _read_file(p: Path, encoding: str | None = None) -> pa.Table:
    suffix = p.suffix.lower()
    if suffix in (".csv", ".tsv"):
        if p.stat().st_size == 0:
            raise InputFileError(f"table {str(p)!r} is empty; pass a table with a header row.")
        with p.open("rb") as fh:
            bom = detect_encoding(fh.read(4))
        if bom is not None:
            return _read_csv(p, suffix, bom)
        _check_named_encoding(p, encoding)
        try:
            return _read_csv(p, suffix, "utf-8")
        except _NotUtf8 as exc:
            if encoding in (None, "utf-8"):
                raise InputFileError(
                    f"table {str(p)!r} is not UTF-8 text ({exc}); {ENCODING_HINT}."
                ) from None
        try:
            return _read_csv(p, suffix, encoding)
        except _NotUtf8 as exc:
            raise InputFileError(
                f"table {str(p)!r} is neither UTF-8 nor {encoding} text ({exc}); {ENCODING_HINT}."
            ) from None
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


ENCODING_HEAD = 1 << 16  # bytes of a CSV compared under UTF-8 and the encoding named


def _check_named_encoding(p: Path, encoding: str | None) -> None:
    """A UTF-8 table is read as UTF-8; when ``--encoding`` names an encoding that reads its
    first bytes as other text (``utf-16`` for a UTF-8 file), the flag is wrong for this file
    and is said so rather than ignored. An ASCII file reads alike in latin-1: no complaint."""
    if encoding is None or encoding in ("utf-8", "utf-8-sig"):
        return
    with p.open("rb") as fh:
        head = fh.read(ENCODING_HEAD)
    try:
        as_utf8 = codecs.getincrementaldecoder("utf-8")().decode(head, final=False)
    except UnicodeDecodeError:
        return  # not UTF-8: the encoding named is the one to use
    try:
        named = codecs.getincrementaldecoder(encoding)(errors="replace")
        as_named: str | None = named.decode(head, final=False)
    except UnicodeError:  # utf-16 without a byte-order mark, for one
        as_named = None
    if as_named != as_utf8:
        raise InputFileError(
            f"table {str(p)!r} is UTF-8 text, which --encoding {encoding} reads as other text; "
            "drop --encoding (UTF-8 is read without it), or pass the encoding the file is in."
        )


class _NotUtf8(Exception):
    """The bytes of a CSV are not text in the encoding tried."""


def _read_csv(p: Path, suffix: str, encoding: str) -> pa.Table:
    """One CSV read in ``encoding``; :class:`_NotUtf8` when its bytes are not that text."""
    import pyarrow.csv as pcsv

    sep = "\t" if suffix == ".tsv" else ","
    try:
        _check_header(p, sep, encoding)
    except UnicodeDecodeError as exc:
        raise _NotUtf8(f"byte {exc.object[exc.start]:#04x} in the header row") from exc
    # pyarrow reads UTF-8 itself and transcodes any other encoding through Python's codecs
    native = encoding in ("utf-8", "utf-8-sig")  # pyarrow's own reader skips a UTF-8 BOM
    read_options = pcsv.ReadOptions(encoding="utf8" if native else encoding)
    try:
        table = pcsv.read_csv(
            p,
            read_options=read_options,
            parse_options=pcsv.ParseOptions(delimiter=sep),
            convert_options=pcsv.ConvertOptions(
                timestamp_parsers=[],
                strings_can_be_null=True,
                null_values=["", "NA", "N/A", "NaN", "nan", "null", "NULL", "None"],
            ),
        )
    except UnicodeDecodeError as exc:
        raise _NotUtf8(f"{exc.reason} at byte {exc.start}") from exc
    # a CSV column that is not valid text comes back as binary
    binary = [f.name for f in table.schema if pa.types.is_binary(f.type)]
    if binary:
        raise _NotUtf8(f"column {binary[0]!r} holds bytes that are not {encoding} text")
    return table


def _check_header(p: Path, sep: str, encoding: str = "utf-8") -> None:
    """Reject duplicate header names before pyarrow silently keeps both."""
    codec = "utf-8-sig" if encoding in ("utf-8", "utf-8-sig") else encoding
    with p.open("r", encoding=codec, newline="") as fh:
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
    table = _binary_as_text(table)
    # split_blocks + self_destruct free each Arrow column as it is converted: peak memory
    # stays near one copy of the table instead of two.
    return table.to_pandas(split_blocks=True, self_destruct=True)


def _binary_as_text(table: pa.Table) -> pa.Table:
    """Binary columns (Parquet ``binary``) as text: UTF-8 text when every value is, else each
    value's bytes in hexadecimal (an identifier or hash stays one, and can be audited)."""
    for i, field in enumerate(table.schema):
        kind = field.type
        if not (
            pa.types.is_binary(kind)
            or pa.types.is_large_binary(kind)
            or pa.types.is_fixed_size_binary(kind)
        ):
            continue
        column = table.column(i)
        try:
            text = column.cast(pa.large_binary()).cast(pa.large_string())
            text.validate(full=True)
        except (pa.ArrowInvalid, pa.ArrowNotImplementedError):
            values = column.to_pylist()
            text = pa.chunked_array(
                [pa.array([None if v is None else v.hex() for v in values], pa.large_string())]
            )
        table = table.set_column(i, field.name, text)
    return table


def as_frame(data: object, *, what: str = "table", encoding: str | None = None) -> pd.DataFrame:
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
        return read_table(data, encoding=encoding)
    raise InputFileError(
        f"{what} must be a file path, a pandas.DataFrame or a pyarrow.Table; "
        f"got {type(data).__name__}."
    )


def normalise_frame(frame: pd.DataFrame, *, source: str) -> pd.DataFrame:
    """Give every column one usable dtype: datetimes parsed, strings as text or categoricals.

    Named index levels (a pyarrow table written from ``df.set_index(...)`` keeps its key
    there) become ordinary columns; an unnamed index is only a row position and is dropped.
    Date columns with a few values that are not dates keep their dates; the bad values are
    read as missing and counted in ``frame.attrs[UNPARSED_DATES]``.
    """
    frame = _index_as_columns(frame, source=source)
    names = [str(c) for c in frame.columns]
    clashes = [n for n, c in Counter(names).items() if c > 1]
    if clashes:
        originals = [repr(c) for c in frame.columns if str(c) == clashes[0]]
        raise InputFileError(
            f"{source} has columns {' and '.join(originals)}, which both read as column "
            f"{clashes[0]!r}; rename one so every column name is unique as text."
        )
    frame.columns = names
    frame = frame.reset_index(drop=True)
    out = {}
    unparsed: dict[str, tuple[int, str]] = {}
    for i, name in enumerate(frame.columns):
        column = frame.iloc[:, i]
        out[name], bad = _normalise_column(column)
        if bad is not None:
            unparsed[name] = bad
    result = pd.DataFrame(out, index=frame.index, copy=False)
    result.attrs[UNPARSED_DATES] = unparsed
    return result


def _index_as_columns(frame: pd.DataFrame, *, source: str) -> pd.DataFrame:
    named = [n for n in frame.index.names if n is not None]
    if not named:
        return frame
    taken = [n for n in named if n in frame.columns or str(n) in map(str, frame.columns)]
    if taken:
        raise InputFileError(
            f"{source} has index level {taken[0]!r} and a column of the same name; "
            "rename one (or reset the index) so every column name is unique."
        )
    keep = [i for i, n in enumerate(frame.index.names) if n is not None]
    drop = [i for i, n in enumerate(frame.index.names) if n is None]
    if drop:
        frame = frame.reset_index(level=drop, drop=True)
    return frame.reset_index(level=None if not drop else list(range(len(keep))))


def _normalise_column(s: pd.Series) -> tuple[pd.Series, tuple[int, str] | None]:
    if isinstance(s.dtype, pd.CategoricalDtype):
        return s, None
    if pd.api.types.is_bool_dtype(s.dtype):
        return s, None
    if pd.api.types.is_numeric_dtype(s.dtype) or pd.api.types.is_datetime64_any_dtype(s.dtype):
        return s, None
    if isinstance(s.dtype, pd.ArrowDtype):
        s = s.astype(object)
    values = s.dropna()
    if values.empty:
        return s.astype("float64"), None
    if not all(isinstance(v, str) for v in values.iloc[:1000]):
        values = values.astype(str)
        s = s.where(s.isna(), s.astype(str))
    as_text = values.astype(str)
    is_iso = as_text.str.match(_ISO_DATE)
    n_bad = int((~is_iso).sum())
    if n_bad == 0 or (
        int(is_iso.sum()) >= DATE_MIN_VALUES and n_bad <= DATE_MAX_BAD_SHARE * len(values)
    ):
        if n_bad == 0:
            parsed = _parse_iso(s)
            if parsed is not None:
                return parsed, None
        else:
            bad_mask = pd.Series(False, index=s.index)
            bad_mask[values.index[~is_iso.to_numpy()]] = True
            parsed = _parse_iso(s.where(~bad_mask, None))
        if parsed is not None:
            examples = sorted(set(as_text[~is_iso.to_numpy()]))
            return parsed, (n_bad, examples[0])
    n_levels = as_text.nunique()
    if n_levels <= CATEGORY_MAX_LEVELS and n_levels <= max(2, CATEGORY_MAX_SHARE * len(values)):
        return s.astype("category"), None
    return s.astype(object), None


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
        # microseconds hold years far outside pandas' nanosecond range (1677-2262)
        values = (
            s.to_numpy(dtype="datetime64[us]")
            if getattr(s.dt, "tz", None) is None
            else s.dt.tz_convert("UTC").dt.tz_localize(None).to_numpy(dtype="datetime64[us]")
        )
        out = values.astype("int64").astype("float64") / 1e6
        out[np.isnat(values)] = np.nan
        return out
    if s.dtype == np.float64:
        return s.to_numpy()
    if pd.api.types.is_numeric_dtype(s.dtype):
        return pd.to_numeric(s, errors="coerce").astype("float64").to_numpy()
    return None
