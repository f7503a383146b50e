"""Run the registered probes on an audit table and rank what they found."""

from __future__ import annotations

import sys
import time
from collections.abc import Iterable

from featureaudit import __version__
from featureaudit.errors import FeatureAuditError, ProbeFailed
from featureaudit.evidence import Evidence, Skip
from featureaudit.findings import Findings, build_document
from featureaudit.ranker import rank
from featureaudit.registry import registered, thresholds_dict
from featureaudit.settings import Settings
from featureaudit.table import AuditTable

__all__ = ["run_audit"]


def run_audit(
    table: AuditTable,
    settings: Settings,
    *,
    probes: Iterable[str] | None = None,
    progress: bool | None = None,
) -> Findings:
    """Run each registered probe (or those named), rank the evidence and build the findings.

    A probe that raises anything but a :class:`FeatureAuditError` is a bug: the audit stops
    with :class:`ProbeFailed`, so no run reports findings with a probe missing.
    """
    available = registered()
    names = list(available) if probes is None else list(probes)
    unknown = [n for n in names if n not in available]
    if unknown:
        raise FeatureAuditError(f"unknown probes {unknown}; known probes are {sorted(available)}.")
    show = sys.stderr.isatty() if progress is None else progress
    evidence: list[Evidence] = []
    skipped: list[Skip] = []
    warnings = list(table.warnings)
    from featureaudit.timing_gaps import timing_gap_warning

    warnings.extend(timing_gap_warning(table))
    timings: dict[str, float] = {}
    for i, name in enumerate(names, start=1):
        if show:
            print(f"[{i}/{len(names)}] {name} …", file=sys.stderr, flush=True)
        start = time.perf_counter()
        try:
            found, skips = available[name]().run(table, settings)
        except FeatureAuditError:
            raise
        except Exception as exc:
            raise ProbeFailed(name, exc) from exc
        timings[name] = round(time.perf_counter() - start, 3)
        evidence.extend(found)
        skipped.extend(skips)
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
        "folds": None,
    }
    columns = [v.to_dict() for v in verdicts]
    pair = _compared_pair(table)
    split_findings = [{**e.to_dict(), "partitions": pair} for e in dataset_findings]
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
    return findings


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
    from featureaudit.evidence import clean_json
    from featureaudit.impact import measure_impact
    from featureaudit.remedy import column_remedy, dataset_remedy

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
