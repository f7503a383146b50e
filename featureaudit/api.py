"""The Python door: ``audit()`` and the result object it returns."""

from __future__ import annotations

import html
import os
from collections.abc import Sequence
from pathlib import Path
from typing import Any

import pandas as pd

from featureaudit.dictionary import DataDictionary
from featureaudit.doors import python_words
from featureaudit.engines import resolve_engine
from featureaudit.errors import SettingError
from featureaudit.findings import Findings, droplist, refit_list
from featureaudit.inputs import Inputs, shown
from featureaudit.pipeline import run_audit
from featureaudit.report import render_all
from featureaudit.settings import Settings, check_level
from featureaudit.table import build_table
from featureaudit.writer import write_files

__all__ = ["audit", "AuditResult"]


class AuditResult:
    """The findings of one audit, as a table, a list of suspects, and files on demand."""

    def __init__(self, findings: Findings) -> None:
        self.findings = findings

    @property
    def document(self) -> dict[str, Any]:
        """The findings.json document as a dict."""
        return self.findings.document

    @property
    def columns(self) -> pd.DataFrame:
        """One row per audited column, most suspect first, with the JSON's fields."""
        rows = self.findings.columns
        return pd.DataFrame(
            rows,
            columns=[
                "column",
                "score",
                "level",
                "kinds",
                "summary",
                "role",
                "description",
                "evidence",
            ],
        )

    @property
    def dataset_findings(self) -> pd.DataFrame:
        return pd.DataFrame(
            self.findings.dataset_findings,
            columns=[
                "probe",
                "kind",
                "statistic",
                "value",
                "threshold",
                "level",
                "summary",
                "detail",
            ],
        )

    def suspects(self, at_least: str = "high") -> list[str]:
        """Every column at level ``at_least`` or above, most suspect first, whatever its
        remedy: columns to drop *and* columns to refit, accepted ones included. For what to
        do with them, see :meth:`droplist` and :meth:`refit_list`."""
        level = check_level(at_least, flag="at_least")
        return droplist(self.findings, level, refit=True, accepted=True)

    def droplist(self, at_least: str = "high") -> list[str]:
        """Columns whose remedy is ``drop``, at ``at_least`` or above and not accepted after
        review, most suspect first: the lines of ``droplist.txt``."""
        level = check_level(at_least, flag="at_least")
        return droplist(self.findings, level)

    def refit_list(self) -> list[str]:
        """Columns to keep but refit on the training rows (remedy ``refit_on_training_rows``),
        most suspect first; accepted ones are left out."""
        return refit_list(self.findings)

    @property
    def impact(self) -> dict[str, Any] | None:
        """The ``impact`` block: the validation score as given, with the remedies applied
        (``remedied``), without the suspects, and per finding; ``None`` when not measured."""
        return self.document.get("impact")

    def write(
        self,
        out: str | os.PathLike[str] = "featureaudit-report",
        *,
        history: list[Findings] | None = None,
    ) -> list[Path]:
        """Write dossier.html, findings.json, droplist.txt and summary.md into ``out``;
        ``history`` (earlier runs, oldest first) adds each suspect's trend to the dossier."""
        _check_history(history)
        return write_files(out, render_all(self.findings, history=history))

    def __repr__(self) -> str:
        d = self.document["dataset"]
        return (
            f"<AuditResult {d['source']}: {d['rows']} rows, {len(self.findings.columns)} "
            f"columns audited, suspects at high+: {self.suspects('high')[:5]}>"
        )

    def _repr_html_(self) -> str:
        rows = [c for c in self.findings.columns if c["level"] != "none"][:25]
        body = "".join(
            f"<tr><td>{html.escape(c['level'])}</td><td>{c['score']:.2f}</td>"
            f"<td><code>{html.escape(str(c['column']))}</code></td>"
            f"<td>{html.escape(', '.join(c['kinds']))}</td>"
            f"<td>{html.escape(str(c['summary']))}</td></tr>"
            for c in rows
        )
        dataset = "".join(
            f"<li>{html.escape(f['level'])}: {html.escape(f['kind'])}: "
            f"{html.escape(str(f['summary']))}</li>"
            for f in self.findings.dataset_findings
            if f["level"] != "none"
        )
        clean = len(self.findings.columns) - len(rows)
        d = self.document["dataset"]
        return (
            f"<div><strong>featureaudit</strong>: {html.escape(str(d['source']))}, "
            f"{d['rows']} rows, target <code>{html.escape(str(d['target']))}</code>"
            f"<table><thead><tr><th>level</th><th>score</th><th>column</th><th>kinds</th>"
            f"<th>summary</th></tr></thead><tbody>{body}</tbody></table>"
            f"<p>{clean} more columns without findings shown.</p>"
            + (f"<ul>{dataset}</ul>" if dataset else "")
            + "</div>"
        )


def audit(
    data: object,
    *,
    target: str | None = None,
    test: object | None = None,
    split_column: str | None = None,
    train_value: str | None = None,
    task: str | None = None,
    dictionary: str | os.PathLike[str] | DataDictionary | pd.DataFrame | None = None,
    label_time: str | None = None,
    cutoff_time: str | None = None,
    horizon: str | None = None,
    entity: str | None = None,
    order: str | None = None,
    fold_column: str | None = None,
    seed: int | None = None,
    probes: list[str] | None = None,
    settings: Settings | None = None,
    source: str | None = None,
    code: Sequence[str | os.PathLike[str]] | None = None,
    encoding: str | None = None,
    normalise_labels: bool = False,
    engine: str | None = None,
    sample_rows: int | None = None,
    progress: bool | None = None,
    scheduler: str | None = None,
) -> AuditResult:
    """Audit a table (and its held-out rows) for target leakage.

    Parameters
    ----------
    data : path, pandas.DataFrame or pyarrow.Table
        The table; with ``split_column`` it holds both sides of the split.
    target : str, optional
        The outcome column (or the dictionary row with role ``target``).
    test : path, DataFrame or pyarrow.Table, optional
        Held-out rows with the same columns; their target may be absent.
    split_column, train_value : str
        Rows whose ``split_column`` equals ``train_value`` (default ``"train"``) are training.
    task : {"binary", "multiclass", "numeric"}, optional
        Overrides the inferred task.
    dictionary : path, DataFrame or DataDictionary, optional
        The data dictionary: a CSV path, or a DataFrame with the same headers (roles,
        ``known_at``, descriptions).
    label_time, cutoff_time, horizon, entity : str, optional
        As the scan flags of the same names.
    order : str, optional
        A sortable column (period number, date, sequence) that orders each entity's rows when
        no label or cutoff time does (dictionary role ``order``).
    fold_column : str, optional
        The cross-validation fold of each training row; each fold is audited against the
        other training rows.
    seed : int, optional
        Seeds every sample and fold, so the same inputs give the same findings (default
        ``settings.seed``, else 0). Any whole number; one outside [0, 2**31 - 1) is mapped
        into it.
    settings : Settings, optional
        Probe settings (folds, bins, ...). ``seed``, ``engine`` and ``sample_rows`` are
        settings too: given both here and in ``settings`` with other values, they are an
        error rather than one silently winning.
    code : list of paths, optional
        Training scripts or notebooks, audited as by ``featureaudit code``; their findings
        go into ``code_findings`` and, on named columns, into those columns' evidence.
    encoding : str, optional
        Encoding of text files that are neither UTF-8 nor marked by a byte-order mark.
    normalise_labels : bool, default False
        Merge class labels that differ only in case or surrounding spaces.
    engine : {"auto", "memory", "stream", "dask"}, optional
        Overrides ``settings.engine``; ``stream`` reads Parquet in bounded memory.
    sample_rows : int, optional
        Overrides ``settings.sample_rows``, the seeded sample the stream engine audits.
    progress : bool, optional
        Progress on stderr; default when stderr is a terminal.
    scheduler : str, optional
        Address of a Dask scheduler for ``engine="dask"``; without it a local cluster.

    Returns
    -------
    AuditResult

    Raises
    ------
    FeatureAuditError
        On bad input, with a message that names the file, column or argument, before any
        work starts; a bad argument value or type is a ``SettingError``, which is also a
        ``ValueError`` and a ``TypeError``.

    Examples
    --------
    >>> import featureaudit as fa                                   # doctest: +SKIP
    >>> result = fa.audit("invoices.csv", target="late_over_30d")   # doctest: +SKIP
    >>> result.suspects("high")                                     # doctest: +SKIP
    """
    data, columns = _text_column_names(data, locals())
    with python_words():
        return _audit(data, columns, seed, probes, settings, engine, sample_rows, progress)


def _audit(
    data: object,
    given: dict[str, Any],
    seed: object,
    probes: list[str] | None,
    settings: Settings | None,
    engine: str | None,
    sample_rows: int | None,
    progress: bool | None,
) -> AuditResult:
    """The body of :func:`audit`: check every argument, then run the engine that fits."""
    names = ("test", "split_column", "train_value", "target", "task", "dictionary",
             "label_time", "cutoff_time", "horizon", "entity", "order", "source", "encoding",
             "fold_column", "scheduler")  # fmt: skip
    inputs = Inputs(
        **{k: given[k] for k in names},
        code=given["code"] or None,
        normalise_labels=given["normalise_labels"] or None,
    )
    chosen = _settings(settings, seed=seed, engine=engine, sample_rows=sample_rows)
    _check_probes(probes)
    if inputs.scheduler is not None and chosen.engine != "dask":
        raise SettingError(
            f"--scheduler {inputs.scheduler!r} names a Dask cluster, which only --engine dask "
            f"uses (the engine is {chosen.engine!r}); pass --engine dask too, or drop --scheduler."
        )
    code_result = None
    if inputs.code:  # read first: an unreadable file stops the audit before any table work
        from featureaudit.code.join import read_code

        paths = inputs.code
        code_result = read_code([paths] if isinstance(paths, str | os.PathLike) else list(paths))
    engine_name = resolve_engine(chosen.engine, data, inputs.test)
    if engine_name in ("stream", "dask"):
        from featureaudit.engines.run import run_stream

        build = {
            k: v
            for k, v in inputs.table_inputs().items()
            if v is not None and k not in ("code", "scheduler")
        }
        return AuditResult(
            run_stream(data, build, chosen, probes, progress, engine_name, inputs.scheduler)
        )
    table = build_table(data, inputs)
    return AuditResult(run_audit(table, chosen, probes=probes, progress=progress, code=code_result))


_COLUMN_ARGUMENTS = ("target", "split_column", "label_time", "cutoff_time", "entity", "fold_column")


def _text_column_names(data: object, given: dict[str, Any]) -> tuple[object, dict[str, Any]]:
    """A DataFrame whose column names are not text (whole numbers from a NumPy array) is read
    with its names as text, and said so in a warning; column arguments given as such a name
    (``target=3``) are taken as its text (``"3"``)."""
    import numbers
    import warnings

    given = dict(given)
    if not isinstance(data, pd.DataFrame) or all(isinstance(c, str) for c in data.columns):
        return data, given
    odd = [c for c in data.columns if not isinstance(c, str)]
    whole = all(isinstance(c, numbers.Integral) and not isinstance(c, bool) for c in odd)
    names = set(odd)
    for key in _COLUMN_ARGUMENTS:
        value = given.get(key)
        if not isinstance(value, str | bool) and value in names:
            given[key] = str(value)
    listed = ", ".join(repr(c) for c in odd[:5]) + (", …" if len(odd) > 5 else "")
    kind = "whole numbers" if whole else "not text"
    warnings.warn(
        f"the DataFrame's column names {listed} are {kind}; they are read as text "
        f"({', '.join(repr(str(c)) for c in odd[:3])}…) and reported that way.",
        UserWarning,
        stacklevel=3,
    )
    return data, given


def _check_probes(probes: object) -> None:
    """``probes``: None (every registered probe) or a non-empty list of probe names."""
    if probes is None:
        return
    if isinstance(probes, str) or not isinstance(probes, list | tuple):
        raise SettingError(f"probes must be a list of probe names; got {shown(probes)}.")
    if not all(isinstance(p, str) for p in probes):
        raise SettingError(f"probes must be a list of probe names; got {shown(probes)}.")
    if not probes:
        from featureaudit.registry import registered

        raise SettingError(
            "probes=[] would run no probe and report nothing; pass None for every probe, or "
            f"name some of {sorted(registered())}."
        )


def _check_history(history: object) -> None:
    """``write(history=...)``: None or a list of earlier runs' Findings, oldest first."""
    if history is None:
        return
    if isinstance(history, list | tuple) and all(isinstance(h, Findings) for h in history):
        return
    raise SettingError(
        "history must be a list of earlier runs' Findings, oldest first (e.g. [run.findings "
        "for run in featureaudit.history.load_runs(folder)]); got "
        f"{shown(history)} ({type(history).__name__})."
    )


def _settings(settings: object, **given: object) -> Settings:
    """The settings to run with: ``settings`` (or the defaults) with the settings given as
    keywords (``seed``, ``engine``, ``sample_rows``) put in; a keyword that disagrees with
    the same field of ``settings`` is an error, never silently overruled."""
    if settings is not None and not isinstance(settings, Settings):
        raise SettingError(
            f"settings must be a featureaudit.settings.Settings; got a "
            f"{type(settings).__name__} ({settings!r:.80}). Pass Settings(**values)."
        )
    over = {k: v for k, v in given.items() if v is not None}
    if settings is None:
        return Settings(**over)  # type: ignore[arg-type]  # checked by Settings
    asked = Settings(**over)  # type: ignore[arg-type]  # checked (and seeds mapped) here
    clash = {k: v for k, v in over.items() if getattr(asked, k) != getattr(settings, k)}
    if clash:
        said = ", ".join(
            f"{k}={v!r} and settings.{k}={getattr(settings, k)!r}" for k, v in clash.items()
        )
        raise SettingError(f"audit() got {said}; they disagree. Pass each once.")
    return settings
