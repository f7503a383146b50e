"""The audit table: the frame with its roles, target and task, split, times and entity.

Built once at the public edge (:func:`build_table`); probes only read it. Flags win over
the dictionary, and every column that a flag or the dictionary names is checked here.
"""

from __future__ import annotations

import os
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import numpy as np
import pandas as pd

from featureaudit.dictionary import DataDictionary, guess_role, parse_dictionary, read_dictionary
from featureaudit.durations import parse_duration
from featureaudit.errors import (
    ColumnNotFound,
    DictionaryError,
    InputFileError,
    SettingError,
    TargetError,
)
from featureaudit.inputs import Inputs
from featureaudit.io import UNPARSED_DATES, as_frame, normalise_frame
from featureaudit.ordering import order_ranks
from featureaudit.times import as_datetime

__all__ = ["AuditTable", "build_table", "infer_task"]

NON_FEATURE_ROLES = (
    "target",
    "label_time",
    "cutoff_time",
    "split",
    "weight",
    "ignore",
    "entity",
    "order",
)
FEW_CLASSES = 20  # common practice, no source: an integer target with at most 20 values is a label
# common practice, no source: a target needs as many labelled rows as a table needs rows
# (pipeline.MIN_ROWS); with fewer no fold holds a labelled row to score
MIN_LABELLED = 3


@dataclass
class AuditTable:
    """Everything a probe reads. Arrays are aligned with ``frame``'s rows (0..n-1)."""

    frame: pd.DataFrame
    source: str
    roles: dict[str, str]
    features: list[str]
    id_columns: list[str]
    target: str | None = None
    task: str | None = None
    y: np.ndarray | None = None  # codes 0..K-1 (classes) or floats; NaN/-1 = unlabelled
    classes: list[str] = field(default_factory=list)
    heldout: np.ndarray | None = None  # bool per row; None when audited as one pool
    split: str = "none"
    label_time: pd.Series | None = None
    cutoff_time: pd.Series | None = None
    label_time_column: str | None = None
    cutoff_source: str | None = None  # "column:X", "horizon:30 days", "label time"
    horizon: pd.Timedelta | None = None  # --horizon, kept for durations compared without times
    entity: str | None = None
    # --order (or role order): dense ranks of a sortable column, NaN where missing
    order: np.ndarray | None = None
    order_column: str | None = None
    dictionary: DataDictionary | None = None
    warnings: list[str] = field(default_factory=list)
    target_problem: str | None = None  # why target-based probes cannot run
    partitions: dict[str, int] = field(default_factory=dict)  # rows per partition (schema 2)
    # date columns with a few values that are not dates: column -> (count, an example)
    unparsed_dates: dict[str, tuple[int, str]] = field(default_factory=dict)
    partition_of: np.ndarray | None = None  # partition name per row (str); None as one pool
    folds: np.ndarray | None = None  # CV fold name per row (str), "" on held-out rows
    fold_column: str | None = None
    # rows of the whole table when ``frame`` is the stream or dask engine's sample of it
    # (keyed by row content, so exact copies stay together); None when frame is the table
    population_rows: int | None = None

    @property
    def n_rows(self) -> int:
        return len(self.frame)

    @property
    def labelled(self) -> np.ndarray:
        """Rows with a known target."""
        if self.y is None:
            return np.zeros(self.n_rows, dtype=bool)
        if self.task == "numeric":
            return ~np.isnan(self.y)
        return self.y >= 0

    @property
    def train_rows(self) -> int:
        return int(self.n_rows if self.heldout is None else (~self.heldout).sum())

    @property
    def heldout_rows(self) -> int:
        return 0 if self.heldout is None else int(self.heldout.sum())


def build_table(data: object, inputs: Inputs | None = None, **given: Any) -> AuditTable:
    """Load and validate every input into an :class:`AuditTable` (raises on bad input).

    The inputs are an :class:`Inputs` or its fields as keywords (checked on creation).
    """
    spec = (inputs or Inputs()).replace(**given) if given else (inputs or Inputs())
    test, split_column, target, task = spec.test, spec.split_column, spec.target, spec.task
    train_value = spec.train_value if spec.train_value is not None else "train"
    dictionary, label_time, cutoff_time = spec.dictionary, spec.label_time, spec.cutoff_time
    horizon, entity, source = spec.horizon, spec.entity, spec.source
    order = spec.order
    encoding, normalise_labels = spec.encoding, bool(spec.normalise_labels)
    fold_column = spec.fold_column
    src = source or (Path(data).name if isinstance(data, (str, os.PathLike)) else "DataFrame")
    frame = as_frame(data, what=src, encoding=encoding)
    if len(frame) == 0:
        raise TargetError(f"table {src!r} has no rows; pass a table with data rows.")
    warnings: list[str] = []

    ddict = _dictionary(dictionary, encoding)
    heldout = None
    split_desc = "none"
    partitions: dict[str, int] = {}
    partition_of: np.ndarray | None = None
    if test is not None:
        tsrc = Path(test).name if isinstance(test, (str, os.PathLike)) else "held-out DataFrame"
        frame, heldout = _append_test(
            frame,
            as_frame(test, what=tsrc, encoding=encoding),
            src,
            tsrc,
            target,
            ddict,
            warnings,
            task,
        )
        split_desc = f"test:{tsrc}"
        partitions = {"train": int((~heldout).sum()), "test": int(heldout.sum())}
        partition_of = np.where(heldout, "test", "train").astype(object)

    roles = _resolve_roles(frame, ddict, warnings)
    flags = {
        "target": target,
        "split": split_column,
        "label_time": label_time,
        "cutoff_time": cutoff_time,
        "entity": entity,
        "order": order,
    }
    flag_names = {
        "target": "--target",
        "split": "--split-column",
        "label_time": "--label-time",
        "cutoff_time": "--cutoff-time",
        "entity": "--entity",
        "order": "--order",
    }
    chosen = _choose_roles(frame, roles, flags, flag_names, ddict, src)
    _one_role_each(chosen, flags, flag_names, fold_column, ddict)
    if test is not None and chosen["split"] is not None:
        warnings.append(
            f"--test names the held-out rows, so split column {chosen['split']!r} "
            "of the dictionary is not used to split."
        )
        chosen["split"] = None

    if chosen["split"] is not None:
        col = chosen["split"]
        codes, uniques = pd.factorize(frame[col], use_na_sentinel=True)
        names = np.array([str(u) for u in uniques] + [""], dtype=object)
        is_train = (codes >= 0) & (names[codes] == str(train_value))
        if not is_train.any():
            seen = sorted(str(u) for u in uniques)[:10]
            raise SettingError(
                f"no row of split column {col!r} equals --train-value "
                f"{train_value!r}; its values are {seen}. Pass --train-value "
                "with the value that marks training rows."
            )
        if is_train.all():
            warnings.append(
                f"every row of split column {col!r} is a training row; audited as one pool."
            )
        else:
            heldout = ~is_train
            split_desc = f"column:{col}"
            partitions = {str(train_value): int(is_train.sum())}
            held_names = np.where(codes >= 0, names[codes], "(missing)")[heldout]
            _warn_missing_split(codes, col, warnings)
            values, counts = np.unique(held_names.astype(str), return_counts=True)
            partitions.update({str(v): int(c) for v, c in zip(values, counts, strict=True)})
            partition_of = _partition_names(codes, names, is_train, str(train_value))

    table = AuditTable(
        frame=frame,
        source=src,
        roles=roles,
        features=[],
        id_columns=[],
        heldout=heldout,
        split=split_desc,
        dictionary=ddict,
        warnings=warnings,
        entity=chosen["entity"],
        partitions=partitions,
        unparsed_dates=dict(frame.attrs.get(UNPARSED_DATES, {})),
        partition_of=partition_of,
    )
    for name, (count, example) in sorted(table.unparsed_dates.items()):
        rest = int(frame[name].notna().sum())
        warnings.append(
            f"column {name!r}: {count} value{'s are' if count != 1 else ' is'} not a date "
            f"(e.g. {example!r}) and read as missing; the other {rest} are dates."
        )
    if fold_column is not None:
        _set_folds(table, fold_column, src)
    _set_target(table, chosen["target"], task, normalise_labels)
    _set_times(table, chosen["label_time"], chosen["cutoff_time"], horizon)
    if chosen["order"] is not None:
        table.order = order_ranks(frame[chosen["order"]], column=chosen["order"], source=src)
        table.order_column = chosen["order"]
    for name in frame.columns:
        role = roles.get(name, "feature")
        if role == "id":
            table.id_columns.append(name)
        elif role not in NON_FEATURE_ROLES:
            table.features.append(name)
    return table


def _one_role_each(
    chosen: dict[str, str | None],
    flags: dict[str, str | None],
    flag_names: dict[str, str],
    fold_column: str | None,
    ddict: DataDictionary | None,
) -> None:
    """The target cannot also be the split column, the entity or the fold column: a column
    that is the outcome cannot mark the split or group the rows."""
    target = chosen.get("target")
    if target is None:
        return
    others = {r: c for r, c in chosen.items() if r in ("split", "entity")}
    others["fold"] = fold_column
    names = {**flag_names, "fold": "--fold-column"}
    for role, column in others.items():
        if column != target:
            continue

        def said(r: str) -> str:
            if flags.get(r) is not None or r == "fold":
                return names[r]
            return f"role {r} in dictionary {ddict.source if ddict else ''!r}"

        raise SettingError(
            f"column {target!r} is the target ({said('target')}) and also the "
            f"{'split column' if role == 'split' else role} ({said(role)}); a column holds one "
            f"role. Pass {names[role]} with another column, or another --target."
        )


def _choose_roles(
    frame: pd.DataFrame,
    roles: dict[str, str],
    flags: dict[str, str | None],
    flag_names: dict[str, str],
    ddict: DataDictionary | None,
    src: str,
) -> dict[str, str | None]:
    """The column of each role: the flag's (checked to exist), else the dictionary's one
    column with that role; ``roles`` is updated with the choices."""
    chosen: dict[str, str | None] = {}
    for role, value in flags.items():
        if value is not None:
            _require(frame, value, flag_names[role], src)
            chosen[role] = value
        else:
            named = [c for c, r in roles.items() if r == role]
            if len(named) > 1:
                raise SettingError(
                    f"dictionary {ddict.source if ddict else ''!r} gives role "
                    f"{role!r} to {len(named)} columns {named}; keep one or pass "
                    f"{flag_names[role]}."
                )
            chosen[role] = named[0] if named else None
    for role, col in chosen.items():
        if col is not None:
            roles[col] = role
    return chosen


def _dictionary(given: object, encoding: str | None = None) -> DataDictionary | None:
    """A dictionary from a CSV path, a DataFrame with the same headers, or as it is."""
    if isinstance(given, (str, os.PathLike)):
        return read_dictionary(Path(given), encoding=encoding)
    if isinstance(given, pd.DataFrame):
        text = given.astype(object).where(given.notna(), "").to_csv(index=False)
        return parse_dictionary(text, source="DataFrame dictionary")
    return given  # type: ignore[return-value]


def _warn_missing_split(codes: np.ndarray, col: str, warnings: list[str]) -> None:
    """Rows without a split value are held out; say how many, since it is easy to miss."""
    if (missing := int((codes < 0).sum())) > 0:
        warnings.append(
            f"{missing} rows of split column {col!r} have no value; they are held out as "
            "partition '(missing)'. Fill the column if they are training rows."
        )


def _require(frame: pd.DataFrame, column: str, flag: str, src: str) -> None:
    if column not in frame.columns:
        shown = ", ".join(list(frame.columns)[:30]) + (" …" if frame.shape[1] > 30 else "")
        raise ColumnNotFound(
            f"{flag} column {column!r} is not in {src}; columns are: {shown}. "
            f"Pass {flag} with one of them."
        )


def _append_test(
    frame: pd.DataFrame,
    test: pd.DataFrame,
    src: str,
    tsrc: str,
    target: str | None,
    ddict: DataDictionary | None,
    warnings: list[str],
    task: str | None = None,
) -> tuple[pd.DataFrame, np.ndarray]:
    if len(test) == 0:
        raise InputFileError(
            f"held-out table {tsrc!r} has no rows; pass a held-out table with "
            "rows, or leave --test out to audit the table as one pool."
        )
    targets = {target} if target else set()
    if ddict is not None:
        targets |= set(ddict.columns_with_role("target"))
    missing = [c for c in frame.columns if c not in test.columns and c not in targets]
    if missing:
        raise ColumnNotFound(
            f"held-out table {tsrc!r} lacks columns {missing[:10]} that {src} "
            "has; pass a held-out table with the same columns (its target may "
            "be absent)."
        )
    extra = [c for c in test.columns if c not in frame.columns]
    if extra:
        warnings.append(
            f"held-out table {tsrc!r} has columns {extra[:10]} that {src} lacks; "
            "they are not audited."
        )
    test = test[[c for c in frame.columns if c in test.columns]]
    for name in sorted(targets):
        if name in frame.columns and name in test.columns and task != "numeric":
            _same_coding(frame[name], test[name], name, src, tsrc)
    both = pd.concat([_plain(frame), _plain(test)], ignore_index=True)
    heldout = np.r_[np.zeros(len(frame), bool), np.ones(len(test), bool)]
    return normalise_frame(both, source=src), heldout


def _same_coding(train: pd.Series, held: pd.Series, name: str, src: str, tsrc: str) -> None:
    """Reject a held-out target written in other labels than training's (pos/neg vs 0/1).

    Two numeric targets are compared only when both look like class codes (few whole
    values); text labels are compared ignoring case and surrounding spaces.
    """
    a, b = train.dropna(), held.dropna()
    if a.empty or b.empty:
        return
    numeric_a, numeric_b = (_is_number(x) for x in (a, b))
    if numeric_a and numeric_b:
        if not (_few_codes(a) and _few_codes(b)):
            return
        overlap = bool(set(a.astype("float64")) & set(b.astype("float64")))
    elif numeric_a != numeric_b:
        overlap = False
    else:
        overlap = bool(set(_label_keys(a)) & set(_label_keys(b)))
    if not overlap:
        numbers = " (or, if it is a quantity, pass --task numeric)" if numeric_a else ""
        raise TargetError(
            f"target {name!r} is coded differently in {src} ({_coding(a)}) and in held-out "
            f"table {tsrc!r} ({_coding(b)}); recode one so both use the same labels{numbers}."
        )


def _is_number(s: pd.Series) -> bool:
    return pd.api.types.is_numeric_dtype(s.dtype) and not pd.api.types.is_bool_dtype(s.dtype)


def _few_codes(s: pd.Series) -> bool:
    values = s.astype("float64")
    return bool(values.nunique() <= FEW_CLASSES and np.all(values == np.round(values)))


def _label_keys(s: pd.Series) -> list[str]:
    return [str(v).strip().casefold() for v in pd.unique(s.astype(object))]


def _coding(s: pd.Series) -> str:
    values = sorted({str(v) for v in pd.unique(s.astype(object))}, key=_natural)
    return ", ".join(values[:6]) + (f", … {len(values)} values" if len(values) > 6 else "")


def _plain(frame: pd.DataFrame) -> pd.DataFrame:
    """Categoricals back to values so two tables with different levels concatenate cleanly."""
    out = frame.copy()
    for c in out.columns:
        if isinstance(out[c].dtype, pd.CategoricalDtype):
            out[c] = out[c].astype(object)
    return out


def _resolve_roles(
    frame: pd.DataFrame, ddict: DataDictionary | None, warnings: list[str]
) -> dict[str, str]:
    roles: dict[str, str] = {}
    if ddict is not None:
        for name, entry in ddict.entries.items():
            if name not in frame.columns:
                warnings.append(
                    f"dictionary {ddict.source!r} line {entry.line} names column "
                    f"{name!r}, which the table lacks; the line is ignored."
                )
                continue
            roles[name] = entry.role
            if entry.known_at_column:
                _check_known_at_column(frame, ddict, entry)
    for name in frame.columns:
        if name not in roles and guess_role(frame[name], name) == "id":
            roles[name] = "id"
    return roles


def _check_known_at_column(frame: pd.DataFrame, ddict: DataDictionary, entry: Any) -> None:
    """A ``known_at`` that is not a duration must name a datetime column of the table; else
    an error naming the file, the line and the value (the contract's malformed known_at)."""
    where = f"dictionary {ddict.source!r} line {entry.line}: known_at {entry.known_at!r} of column"
    fix = "write a duration such as -30d, a datetime column's name, or leave it blank."
    named = entry.known_at_column
    if named not in frame.columns:
        raise DictionaryError(
            f"{where} {entry.column!r} is not a column of the table nor a duration; {fix}"
        )
    try:
        as_datetime(frame[named], column=named, what="known_at column")
    except SettingError as exc:
        raise DictionaryError(
            f"{where} {entry.column!r} names column {named!r}, which is not a datetime "
            f"column ({str(exc).split(';')[0]}); {fix}"
        ) from None


def infer_task(values: pd.Series) -> str:
    """binary, multiclass or numeric, as the contract says (integers with few values are labels)."""
    present = values.dropna()
    n_unique = present.nunique()
    if pd.api.types.is_bool_dtype(values.dtype) or n_unique <= 2:
        return "binary"
    if pd.api.types.is_numeric_dtype(values.dtype):
        as_float = present.astype("float64")
        integral = bool(np.all(np.isclose(as_float, np.round(as_float))))
        return "multiclass" if integral and n_unique <= FEW_CLASSES else "numeric"
    return "multiclass"


def _set_target(
    table: AuditTable, target: str | None, task: str | None, normalise_labels: bool = False
) -> None:
    if target is None:
        return
    s = table.frame[target]
    if pd.api.types.is_datetime64_any_dtype(s.dtype):
        raise TargetError(
            f"target column {target!r} of {table.source} holds dates: a datetime cannot be "
            "a target; did you mean --label-time? Pass --target with the outcome column."
        )
    s = _finite_target(table, s, target)
    present = s.dropna()
    if present.empty:
        raise TargetError(
            f"target column {target!r} of {table.source} has no values; pass "
            "--target with a column that holds the outcome."
        )
    _enough_labelled(table, target, len(present))
    if not _is_number(s) and not pd.api.types.is_bool_dtype(s.dtype):
        s = _label_variants(table, s, target, normalise_labels)
        present = s.dropna()
    table.target = target
    table.task = task or infer_task(s)
    if task == "multiclass":
        _classes_not_quantities(present, target)
    if table.task == "numeric":
        if not pd.api.types.is_numeric_dtype(s.dtype) or pd.api.types.is_bool_dtype(s.dtype):
            raise TargetError(
                f"target column {target!r} is not numeric, so --task numeric cannot "
                "apply; drop --task or pass binary or multiclass."
            )
        table.y = pd.to_numeric(s, errors="coerce").astype("float64").to_numpy()
    else:
        codes, uniques = pd.factorize(s, use_na_sentinel=True)
        names = [str(u) for u in uniques]
        classes = sorted(set(names), key=_natural)
        lookup = {c: i for i, c in enumerate(classes)}
        remap = np.array([lookup[n] for n in names] + [-1], dtype=np.int64)
        table.y = remap[codes]  # code -1 (missing) picks the trailing -1
        table.classes = classes
        if table.task == "binary" and len(classes) > 2:
            hint = (
                " or --normalise-labels to merge labels that differ only in case or spaces"
                if _has_variants(present)
                else ""
            )
            raise TargetError(
                f"target column {target!r} has {len(classes)} values, so --task "
                f"binary cannot apply; pass --task multiclass{hint}."
            )
    if present.nunique() < 2:
        only = present.iloc[0]
        shown = only.item() if isinstance(only, np.generic) else only
        table.target_problem = (
            f"target {target!r} has a single value ({shown!r}) in the labelled rows"
        )
        table.warnings.append(table.target_problem + "; probes that need the target are skipped.")


def _enough_labelled(table: AuditTable, target: str, labelled: int) -> None:
    """A target with values in fewer than MIN_LABELLED rows of a table that has that many
    is its own error, not a single-value warning."""
    rows = table.n_rows
    if labelled < MIN_LABELLED <= rows:
        raise TargetError(
            f"target column {target!r} of {table.source} has values in {labelled} of {rows} "
            f"rows: too few labelled rows to audit (at least {MIN_LABELLED} are needed); label "
            "more rows, or leave --target out to audit the split alone."
        )


def _classes_not_quantities(present: pd.Series, target: str) -> None:
    """--task multiclass on a target of non-whole numbers would make each value a class."""
    if not _is_number(present) or pd.api.types.is_bool_dtype(present.dtype):
        return
    values = present.astype("float64").to_numpy()
    fractional = ~np.isclose(values, np.round(values))
    if fractional.any():
        example = float(values[fractional][0])
        raise TargetError(
            f"target column {target!r} holds non-whole numbers (e.g. {example:g}), so --task "
            f"multiclass would make {present.nunique()} classes of them; pass --task numeric, "
            "or drop --task."
        )


def _finite_target(table: AuditTable, s: pd.Series, target: str) -> pd.Series:
    """inf and -inf in a numeric target are unlabelled rows, counted in a warning."""
    if not _is_number(s):
        return s
    values = pd.to_numeric(s, errors="coerce").astype("float64")
    infinite = np.isinf(values.to_numpy())
    missing = values.isna().to_numpy().copy()
    if table.heldout is not None:
        missing &= ~table.heldout  # held-out rows may leave the target out by design
    if infinite.any():
        table.warnings.append(
            f"target {target!r} has {int(infinite.sum() + missing.sum())} rows without a "
            f"finite value ({int(infinite.sum())} inf or -inf, {int(missing.sum())} missing); "
            "they are treated as unlabelled."
        )
        return values.where(~infinite, np.nan)
    return s


def _has_variants(present: pd.Series) -> bool:
    raw = {str(v) for v in pd.unique(present.astype(object))}
    return len({v.strip().casefold() for v in raw}) < len(raw)


def _label_variants(table: AuditTable, s: pd.Series, target: str, normalise: bool) -> pd.Series:
    """Labels that differ only in case or surrounding spaces: warn, merge only when told.

    Merged labels take the spelling most rows use (ties: the first in sorted order), so the
    result never depends on the order of the rows.
    """
    present = s.dropna().astype(str)
    counts = present.value_counts()
    groups: dict[str, list[tuple[int, str]]] = {}
    for label, n in counts.items():
        groups.setdefault(str(label).strip().casefold(), []).append((-int(n), str(label)))
    merged = {k: sorted(v) for k, v in groups.items() if len(v) > 1}
    if not merged:
        return s
    examples = "; ".join(
        ", ".join(repr(lab) for _, lab in v) for _, v in sorted(merged.items())[:3]
    )
    if not normalise:
        table.warnings.append(
            f"target {target!r} has labels that differ only in case or spaces ({examples}); "
            "they are kept as separate classes. Pass --normalise-labels to merge them."
        )
        return s
    canonical = {lab: v[0][1].strip() for v in merged.values() for _, lab in v}
    table.warnings.append(
        f"target {target!r}: labels that differ only in case or spaces were merged "
        f"(--normalise-labels): {examples}."
    )
    text = s.astype(object).where(s.isna(), s.astype(str))
    return text.map(lambda v: canonical.get(v, v) if isinstance(v, str) else v)


def _natural(text: str) -> tuple[int, float, str]:
    try:
        return (0, float(text), text)
    except ValueError:
        return (1, 0.0, text)


def _set_times(
    table: AuditTable, label: str | None, cutoff: str | None, horizon: str | None
) -> None:
    if label is not None:
        table.label_time = as_datetime(table.frame[label], column=label, what="label time")
        table.label_time_column = label
    if cutoff is not None:
        table.cutoff_time = as_datetime(table.frame[cutoff], column=cutoff, what="cutoff time")
        table.cutoff_source = f"column:{cutoff}"
    elif horizon is not None:
        delta = parse_duration(horizon, what="--horizon")
        if delta < pd.Timedelta(0):
            raise SettingError(
                f"--horizon {horizon!r} is negative: the cutoff (label time minus the horizon) "
                "would come after the label time; pass a duration of 0d or more, e.g. 30d."
            )
        table.horizon = delta
        if table.label_time is None and _has_relative_known_at(table):
            table.cutoff_source = f"horizon:{horizon}"  # durations are compared with -horizon
            return
        if table.label_time is None:
            raise SettingError(
                "--horizon needs a label time to count back from; pass "
                "--label-time or give a column the role label_time."
            )
        try:
            table.cutoff_time = table.label_time - delta
        except (OverflowError, pd.errors.OutOfBoundsDatetime) as exc:
            raise SettingError(
                f"--horizon {horizon!r} puts the cutoff outside the dates a table can "
                "hold; pass a shorter --horizon."
            ) from exc
        table.cutoff_source = f"horizon:{horizon}"
    elif table.label_time is not None:
        table.cutoff_time = table.label_time
        table.cutoff_source = "label time"


def _has_relative_known_at(table: AuditTable) -> bool:
    """Does the dictionary give some feature a known_at relative to the label time?"""
    return table.dictionary is not None and any(
        e.known_at_offset is not None
        for c, e in table.dictionary.entries.items()
        if c in table.frame.columns
    )


def _partition_names(
    codes: np.ndarray, names: np.ndarray, is_train: np.ndarray, train_value: str
) -> np.ndarray:
    """Each row's partition: the training value, or its own held-out value ("(missing)").
    One label per split value, indexed by the codes (a training row's value is the training
    value itself); code -1 takes the last label."""
    labels = np.array([*(str(n) for n in names[:-1]), "(missing)"], dtype=object)
    out = labels[codes]
    out[is_train] = train_value
    return out


def _set_folds(table: AuditTable, column: str, src: str) -> None:
    """Read --fold-column: each training row's CV fold (any values, at least two folds)."""
    _require(table.frame, column, "--fold-column", src)
    if table.roles.get(column) in ("target", "split", "entity", "label_time", "cutoff_time"):
        raise SettingError(
            f"--fold-column {column!r} already has the role {table.roles[column]!r}; "
            "pass a column that holds only the CV fold of each training row."
        )
    train = np.ones(table.n_rows, bool) if table.heldout is None else ~table.heldout
    values = table.frame[column]
    missing = train & values.isna().to_numpy()
    if missing.any():
        raise SettingError(
            f"--fold-column {column!r} is blank on {int(missing.sum())} training rows; "
            "give every training row its fold."
        )
    names = _fold_names(values)
    folds = np.where(train, names, "").astype(object)
    n_folds = np.unique(folds[train].astype(str)).size
    if n_folds < 2:
        raise SettingError(
            f"--fold-column {column!r} has {n_folds} fold on the training rows; "
            "pass a column with at least two folds."
        )
    table.folds = folds
    table.fold_column = column
    table.roles[column] = "split"


def _fold_names(values: pd.Series) -> np.ndarray:
    """Fold values as text; whole numbers stored as floats (blank held-out rows) print as
    integers, so fold 2 is "fold 2", not "fold 2.0"."""
    if pd.api.types.is_float_dtype(values.dtype):
        v = values.to_numpy(dtype="float64")
        finite = np.isfinite(v)
        if np.all(v[finite] == np.round(v[finite])):
            text = np.array([str(int(x)) if f else "" for x, f in zip(v, finite, strict=True)])
            return text.astype(object)
    return values.astype(str).to_numpy(dtype=object)
