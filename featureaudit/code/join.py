"""``scan --code``: read the training code once, and turn its findings on named columns into
column evidence, so that a scaler fitted before the split on column X joins X's verdict."""

from __future__ import annotations

import os
from collections.abc import Sequence
from pathlib import Path
from typing import Any

from featureaudit.code.audit import CodeAudit, audit_code
from featureaudit.code.rules import Finding
from featureaudit.errors import InputFileError
from featureaudit.vocab.evidence import Evidence

__all__ = ["COLUMN_KINDS", "read_code", "code_evidence", "code_entries"]

# code kinds that change a column's values with statistics of held-out rows, and the table
# kind they are; selection, test reuse and resampling concern the model, not one column
COLUMN_KINDS = {"fit_before_split": "fit_on_all_rows", "fit_on_heldout": "fit_on_all_rows"}
SEVERITY = 0.5  # a code finding sits mid-band in its level: common practice, no source


def read_code(paths: Sequence[str | os.PathLike[str]]) -> CodeAudit:
    """Audit the scripts and notebooks given to ``scan --code``.

    Unlike ``featureaudit code`` (which audits what it can and exits 2), a scan stops before
    any work when a code file cannot be read, so no report is written from a partial audit.
    """
    result = audit_code([Path(p) for p in paths])
    if result.errors:
        raise InputFileError(f"--code: {result.errors[0]}")
    return result


def code_evidence(result: CodeAudit, columns: list[str]) -> list[Evidence]:
    """One piece of evidence per (finding, column) for the audited columns a finding names."""
    known = set(columns)
    out: list[Evidence] = []
    for f in result.findings:
        kind = COLUMN_KINDS.get(f.kind)
        if kind is None:
            continue
        for col in dict.fromkeys(f.columns):
            if col in known:
                out.append(_evidence(f, col, kind))
    return out


def _evidence(f: Finding, column: str, kind: str) -> Evidence:
    where = f"{f.file}:{f.line}" + (f" (cell {f.cell})" if f.cell else "")
    return Evidence(
        probe="code",
        kind=kind,
        statistic="code_finding",
        value=None,
        threshold=None,
        level=f.level,
        column=column,
        summary=f"training code {where}: {f.summary}",
        severity=SEVERITY,
        detail={
            "file": f.file,
            "line": f.line,
            "cell": f.cell,
            "code_kind": f.kind,
            "code": f.code,
            "flow": f.flow,
            "remedy_words": f.remedy,
        },
    )


def code_entries(result: CodeAudit | None) -> list[dict[str, Any]]:
    """The ``code_findings`` of findings.json: the entries of ``code-findings.json``."""
    return [] if result is None else [f.to_dict() for f in result.findings]
