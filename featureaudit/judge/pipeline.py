"""Run the registered probes on an audit table and rank what they found."""

from __future__ import annotations

import sys
import time
from collections.abc import Iterable
from typing import TYPE_CHECKING

import numpy as np

from featureaudit._version import __version__
from featureaudit.errors import FeatureAuditError, ProbeFailed, TooFewRows
from featureaudit.judge.findings import Findings, build_document
from featureaudit.judge.ranker import rank
from featureaudit.kit.registry import Probe, registered, thresholds_dict
from featureaudit.load.settings import Settings, check_counts
from featureaudit.load.table import AuditTable
from featureaudit.load.threads import limited_blas
from featureaudit.vocab.evidence import Evidence, Skip

if TYPE_CHECKING:
    from featureaudit.code.audit import CodeAudit

__all__ = ["run_audit", "capability_skip", "MIN_ROWS", "NO_TARGET"]

# common practice, no source: with fewer rows no part can be held out and compared
MIN_ROWS = 3


def run_audit(
    table: AuditTable,
    settings: Settings,
    *,
    probes: Iterable[str] | None = None,
    progress: bool | None = None,
    code: CodeAudit | None = None,
) -> Findings:
    """Run each registered probe (or those named), rank the evidence and build the findings.

    A probe that raises anything but a :class:`FeatureAuditError` is a bug: the audit stops
    with :class:`ProbeFailed`, so no run reports findings with a probe missing.
    """
    if table.n_rows < MIN_ROWS:
        raise TooFewRows(
            f"table {table.source!r} has {table.n_rows} row{'s' * (table.n_rows != 1)}: too few "
            f"rows to audit (at least {MIN_ROWS} are needed); pass the whole table."
        )
    check_counts(settings, rows=_labelled_training_rows(table), source=table.source)
    available = registered()
    names = list(available) if probes is None else list(probes)
    unknown = [n for n in names if n not in available]
    if unknown:
        raise FeatureAuditError(f"unknown probes {unknown}; known probes are {sorted(available)}.")
    show = sys.stderr.isatty() if progress is None else progress
    evidence: list[Evidence] = []
    skipped: list[Skip] = []
    warnings = list(table.warnings)
    from featureaudit.judge.timing_gaps import timing_gap_warning

    warnings.extend(timing_gap_warning(table))
    timings: dict[str, float] = {}
    for i, name in enumerate(names, start=1):
        if show:
            print(f"[{i}/{len(names)}] {name} …", file=sys.stderr, flush=True)
        gate = capability_skip(available[name], table)
        if gate is not None:
            skipped.append(gate)
            continue
        found, skips = _run_probe(available[name], table, settings, timings)
        evidence.extend(found)
        skipped.extend(skips)
    evidence.extend(_audit_pairs(table, settings, names, available, timings))
    if code is not None:  # the training code's findings on named columns join their evidence
        from featureaudit.code.join import code_evidence

        evidence.extend(code_evidence(code, table.id_columns + table.features))
    verdicts, dataset_findings = rank(table, evidence)
    dataset = {
        "source": table.source,
        "rows": table.n_rows,
        "train_rows": table.train_rows,
        "heldout_rows": table.heldout_rows,
        "columns": int(table.frame.shape[1]),
        "target": table.target,
        "task": table.task,
        "split": table.split,
        "label_time": table.label_time_column,
        "cutoff": table.cutoff_source,
        "entity": table.entity,
        "audited_columns": len(verdicts),
        "partitions": table.partitions or {"all rows": table.n_rows},
        "folds": _fold_count(table),
        "dictionary": _dictionary_coverage(table),
    }
    columns = [v.to_dict() for v in verdicts]
    pair = _compared_pair(table)
    split_findings = [_with_pair(e.to_dict(), pair) for e in dataset_findings]
    for c in columns:
        c.setdefault("accepted", None)
    # after the ranker: remedies and measured impact (never change what a probe measured)
    impact_block, impact_seconds = _after_rank(table, settings, columns, split_findings, warnings)
    timings["impact"] = impact_seconds
    findings = build_document(
        tool_version=__version__,
        dataset=dataset,
        settings={
            **settings.to_dict(),
            "probes": names,
            "probe_seconds": timings,
            "thresholds": {n: thresholds_dict(available[n].thresholds) for n in names},
            "methods": {n: available[n].describe(settings) for n in names},
            "engine": "memory",
            "sample_rows": min(settings.reference_rows, table.n_rows),
        },
        columns=columns,
        dataset_findings=split_findings,
        skipped=[s.to_dict() for s in skipped],
        warnings=warnings,
    )
    findings.document["impact"] = impact_block
    if code is not None:
        from featureaudit.code.join import code_entries

        findings.document["code_findings"] = code_entries(code)
        findings.document["settings"]["code_files"] = [str(f["file"]) for f in code.files]
    return findings


_FOLD_NOTE = "; this biases the cross-validated score, not the test score"


def _run_probe(
    probe: type[Probe], table: AuditTable, settings: Settings, timings: dict[str, float]
) -> tuple[list[Evidence], list[Skip]]:
    """Run one probe on one table (its time added to ``timings``). Anything but a
    :class:`FeatureAuditError` is a bug: :class:`ProbeFailed`, so no run reports findings with
    a probe missing."""
    start = time.perf_counter()
    try:
        with limited_blas():  # per-column pools and model fits set their own threads
            found, skips = probe().run(table, settings)
    except FeatureAuditError:
        raise
    except Exception as exc:
        raise ProbeFailed(probe.name, exc) from exc
    timings[probe.name] = round(timings.get(probe.name, 0.0) + time.perf_counter() - start, 3)
    return found, skips


def _audit_pairs(
    table: AuditTable,
    settings: Settings,
    names: list[str],
    available: dict,
    timings: dict[str, float],
) -> list[Evidence]:
    """Run the side-comparing probes on each further pair (each partition, each fold) and
    tag what they found with the pair; nothing when the table is a single pair."""
    from dataclasses import replace

    from featureaudit.kit.registry import PAIRS
    from featureaudit.kit.splits import pair_views
    from featureaudit.vocab.kinds import PAIR_KINDS

    # What a pair's view contributes: the kinds the kinds table judges per pair (the findings
    # about the two sides, and fits on all rows). Everything else (a column's own power, its
    # timing) is the same on every pair and comes from the run over the whole table.
    pairs = {
        pair: tuple(n for n in names if pair in available[n].capabilities.pairs) for pair in PAIRS
    }
    out: list[Evidence] = []
    for view in pair_views(table, pairs):
        for name in view.probes:
            if capability_skip(available[name], view.table) is not None:
                continue
            found, _ = _run_probe(available[name], view.table, settings, timings)
            label = f" ({view.sides[0]} vs {view.sides[1]})"
            for e in found:
                if e.kind not in PAIR_KINDS or (e.column is not None and e.rank < 1):
                    continue
                summary = (e.summary or e.statistic) + label + (_FOLD_NOTE if view.fold else "")
                detail = {**e.detail, "partitions": list(view.sides)}
                if view.fold:
                    detail["biases"] = "cross-validated score"
                out.append(replace(e, summary=summary, detail=detail))
    return out


NO_TARGET = "no target given: pass --target or give a column the role target in the dictionary"


def capability_skip(probe: type[Probe], table: AuditTable) -> Skip | None:
    """Why a probe cannot run on this table by what it declares (it needs a target the audit
    lacks, or every row of a table of which the audit holds a sample), else ``None``."""
    caps = probe.capabilities
    if caps.needs_target and (table.target is None or table.y is None):
        return Skip(probe.name, NO_TARGET)
    sampled = table.population_rows is not None and table.population_rows > table.n_rows
    if caps.needs_every_row and sampled:
        return Skip(probe.name, f"not run on a sample: {caps.needs_every_row}")
    return None


def _dictionary_coverage(table: AuditTable) -> dict | None:
    """The dictionary's file, the line of each column it names (findings.sarif points there)
    and the audited columns it does not name (``diff`` reports coverage)."""
    d = table.dictionary
    if d is None:
        return None
    audited = table.id_columns + table.features
    return {
        "source": d.source,
        "lines": {c: e.line for c, e in d.entries.items() if c in table.frame.columns},
        "audited_not_covered": [c for c in audited if c not in d.entries],
    }


def _fold_count(table: AuditTable) -> int | None:
    if table.folds is None:
        return None
    train = table.folds != ""
    return int(len(set(table.folds[train].tolist())))


def _with_pair(finding: dict, pair: list[str]) -> dict:
    """A dataset finding with its ``partitions``: the pair its probe ran on."""
    detail = dict(finding.get("detail") or {})
    own = detail.pop("partitions", None)
    return {**finding, "detail": detail, "partitions": list(own) if own else pair}


def _compared_pair(table: AuditTable) -> list[str]:
    """The two sides a split finding compares: training against the held-out partition(s),
    or the two parts of the split the probes simulate when there is none."""
    if table.heldout is None or not table.partitions:
        return ["simulated training part", "simulated held-out part"]
    train, *held = table.partitions
    return [train, "+".join(held)]


def _after_rank(
    table: AuditTable,
    settings: Settings,
    columns: list[dict],
    found: list[dict],
    warnings: list[str],
) -> tuple[dict | None, float]:
    """Set each finding's ``remedy`` and each column's ``impact``; return the impact block."""
    from featureaudit.judge.impact import measure_impact
    from featureaudit.judge.remedy import column_remedy, dataset_remedy
    from featureaudit.vocab.evidence import clean_json

    start = time.perf_counter()
    for c in columns:
        c["remedy"] = column_remedy(c)
    for f in found:
        f["remedy"] = dataset_remedy(f)
    try:
        block, per_column = measure_impact(table, settings, columns, found)
    except Exception as exc:  # noqa: BLE001 — impact is an addition; the findings stand
        warnings.append(f"impact was not measured: {type(exc).__name__}: {exc}")
        block, per_column = None, {}
    for c in columns:
        c["impact"] = clean_json(per_column.get(c["column"]))
    return clean_json(block), round(time.perf_counter() - start, 3)


def _labelled_training_rows(table: AuditTable) -> int:
    """The rows the out-of-fold scores split into folds: training rows with a target value
    (every training row when there is no target)."""
    train = np.ones(table.n_rows, dtype=bool) if table.heldout is None else ~table.heldout
    return int((train & table.labelled).sum()) if table.y is not None else int(train.sum())
