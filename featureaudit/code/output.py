"""Write the code audit: text lines, ``code-findings.json`` (``featureaudit.code/1``) and SARIF
2.1.0 (``code-findings.sarif``) for code-scanning tools."""

from __future__ import annotations

import json
import os
import tempfile
from datetime import UTC, datetime
from pathlib import Path
from typing import Any

from featureaudit._version import __version__
from featureaudit.code.audit import CodeAudit
from featureaudit.code.rules import KINDS, REMEDY
from featureaudit.errors import SettingError
from featureaudit.levels import Level

__all__ = ["SCHEMA", "check_out", "document", "sarif", "text_lines", "write_outputs"]

SCHEMA = "featureaudit.code/1"
_SARIF_LEVEL = {
    Level.CRITICAL: "error",
    Level.HIGH: "error",
    Level.MEDIUM: "warning",
    Level.LOW: "note",
    Level.NONE: "none",
}
NOTE = (
    "notebook cells are read in file order; the order they were run in may differ, and "
    "line numbers count from the top of each cell"
)


def document(result: CodeAudit) -> dict[str, Any]:
    """The ``code-findings.json`` document."""
    return {
        "schema": SCHEMA,
        "tool_version": __version__,
        "created": datetime.now(UTC).strftime("%Y-%m-%dT%H:%M:%SZ"),
        "files": result.files,
        "notes": [NOTE],
        "findings": [f.to_dict() for f in result.findings],
        "errors": result.errors,
    }


def sarif(result: CodeAudit) -> dict[str, Any]:
    """The findings as one SARIF 2.1.0 run (one rule per kind)."""
    ids = list(KINDS)
    rules = [
        {
            "id": k,
            "name": k,
            "shortDescription": {"text": KINDS[k]},
            "help": {
                "text": "; or ".join(v for key, v in REMEDY.items() if key.split("/")[0] == k)
            },
        }
        for k in ids
    ]
    results = []
    for f in result.findings:
        region: dict[str, Any] = {"startLine": f.line, "snippet": {"text": f.code}}
        message = f.summary + (f" (cell {f.cell})" if f.cell else "") + f". Fix: {f.remedy}."
        results.append(
            {
                "ruleId": f.kind,
                "ruleIndex": ids.index(f.kind),
                "level": _SARIF_LEVEL[f.level],
                "message": {"text": message},
                "locations": [
                    {
                        "physicalLocation": {
                            "artifactLocation": {"uri": Path(f.file).as_posix()},
                            "region": region,
                        }
                    }
                ],
                "properties": {"cell": f.cell, "featureauditLevel": f.level.label, "flow": f.flow},
            }
        )
    return {
        "$schema": "https://json.schemastore.org/sarif-2.1.0.json",
        "version": "2.1.0",
        "runs": [
            {
                "tool": {
                    "driver": {"name": "featureaudit", "version": __version__, "rules": rules}
                },
                "results": results,
            }
        ],
    }


def text_lines(result: CodeAudit) -> list[str]:
    """One block per finding, for stdout."""
    lines = []
    for f in result.findings:
        where = f"{f.file}:{f.line}" + (f" (cell {f.cell})" if f.cell else "")
        lines += [
            f"{where}: {f.level.label} {f.kind}: {f.summary}",
            f"    {f.code}",
            f"    flow: {f.flow}",
            f"    fix: {f.remedy}",
        ]
    readable = sum(1 for x in result.files if not x.get("error"))
    lines.append(f"{len(result.findings)} finding(s) in {readable} file(s)")
    return lines


def _write(path: Path, text: str) -> None:
    """Whole or not at all: write a temporary file beside it, then rename."""
    fd, tmp = tempfile.mkstemp(dir=path.parent, prefix=f".{path.name}.")
    with os.fdopen(fd, "w", encoding="utf-8") as fh:
        fh.write(text)
    os.replace(tmp, path)


def check_out(out: Path) -> None:
    """Make sure ``--out`` is a folder we can write into, before any work (one clear line)."""
    if out.exists() and not out.is_dir():
        raise SettingError(f"--out {out}: is a file, not a folder; name a folder for the results.")
    try:
        out.mkdir(parents=True, exist_ok=True)
        fd, probe = tempfile.mkstemp(dir=out, prefix=".featureaudit-write-check.")
        os.close(fd)
        os.remove(probe)
    except OSError as exc:
        raise SettingError(
            f"--out {out}: cannot write there ({exc.strerror or exc}); name a folder you can "
            "write to."
        ) from exc


def write_outputs(result: CodeAudit, out: Path, *, with_sarif: bool) -> list[Path]:
    """Write code-findings.json (always) and code-findings.sarif (``with_sarif``) into ``out``."""
    out.mkdir(parents=True, exist_ok=True)
    written = [out / "code-findings.json"]
    _write(written[0], json.dumps(document(result), indent=2, ensure_ascii=False) + "\n")
    if with_sarif:
        written.append(out / "code-findings.sarif")
        _write(written[1], json.dumps(sarif(result), indent=2, ensure_ascii=False) + "\n")
    return written
