"""findings.sarif: the audit's findings as SARIF 2.1.0, so that code-scanning dashboards show
data findings beside code findings.

One result per finding at ``low`` or above: a column at its row of the data dictionary when
the dictionary names it, else at the table file; a split finding at the table file; a
training-code finding at its file and line. Accepted findings are kept and marked (SARIF's
``suppressions``), as the dossier keeps them.
"""

from __future__ import annotations

from pathlib import Path
from typing import Any

from featureaudit.vocab.levels import Level

__all__ = ["sarif_document", "MEANINGS"]

MEANINGS = {  # the contract's words for each kind
    "target_proxy": "The column carries the outcome itself, or something only known because of it.",
    "recorded_after_cutoff": "The column's value is not available at the moment of prediction.",
    "fit_on_all_rows": "The column was scaled, imputed, capped or encoded with statistics that "
    "include held-out rows.",
    "row_order_tells_target": "The row order or a row identifier predicts the target.",
    "duplicate_rows_across_split": "Held-out rows have exact or near copies among the "
    "training rows.",
    "shared_entities_across_split": "The same entity has rows on both sides of the split.",
    "time_overlap_across_split": "Held-out rows are not later than the training rows in time.",
    "split_shift": "A model tells held-out rows from training rows (adversarial validation).",
    "computed_from_later_rows": "The value at a row is computed from rows of the same entity "
    "that come after the row's moment of prediction, or from the row's own outcome.",
}
_LEVEL = {"critical": "error", "high": "error", "medium": "warning", "low": "note"}


def _uri(path: str | None) -> str:
    return Path(path).as_posix() if path else "table"


def _location(uri: str, line: int | None = None) -> dict[str, Any]:
    physical: dict[str, Any] = {"artifactLocation": {"uri": uri}}
    if line:
        physical["region"] = {"startLine": int(line)}
    return {"physicalLocation": physical}


def _result(rule: str, level: str, text: str, where: dict, props: dict, accepted: Any) -> dict:
    out = {
        "ruleId": rule,
        "level": _LEVEL[level],
        "message": {"text": text},
        "locations": [where],
        "properties": {"featureauditLevel": level, **props},
    }
    if accepted:
        reason = accepted.get("reason") if isinstance(accepted, dict) else None
        out["suppressions"] = [
            {"kind": "external", "justification": str(reason or "accepted after review")}
        ]
    return out


def _shown(level: str) -> bool:
    return Level.parse(level or "none") >= Level.LOW


def sarif_document(
    doc: dict[str, Any], *, table_uri: str | None = None, dictionary_uri: str | None = None
) -> dict[str, Any]:
    """The SARIF 2.1.0 log of one audit (``doc``: the findings.json document); ``table_uri``
    and ``dictionary_uri`` are the paths as given (default: the names the findings record)."""
    from featureaudit import __version__
    from featureaudit.judge.remedy import remedy_words

    ds = doc.get("dataset") or {}
    dictionary = ds.get("dictionary") or {}
    table = _uri(table_uri or ds.get("source"))
    dict_uri = dictionary_uri or dictionary.get("source")
    lines = dictionary.get("lines") or {}
    results = []
    for c in doc.get("columns", []):
        if not _shown(c.get("level")):
            continue
        line = lines.get(c["column"]) if dict_uri else None
        where = _location(_uri(dict_uri), line) if line else _location(table)
        kind = (c.get("kinds") or ["target_proxy"])[0]
        text = (
            f"column {c['column']!r}: {c.get('summary', '')}. Fix: {remedy_words(c.get('remedy'))}."
        )
        props = {"column": c["column"], "kinds": c.get("kinds"), "score": c.get("score")}
        results.append(_result(kind, c["level"], text, where, props, c.get("accepted")))
    for f in doc.get("dataset_findings", []):
        if not _shown(f.get("level")):
            continue
        text = f"split: {f.get('summary', '')}. Fix: {remedy_words(f.get('remedy'))}."
        props = {"partitions": f.get("partitions"), "statistic": f.get("statistic")}
        results.append(
            _result(f["kind"], f["level"], text, _location(table), props, f.get("accepted"))
        )
    for f in doc.get("code_findings") or []:
        if not _shown(f.get("level")):
            continue
        where = _location(_uri(f.get("file")), f.get("line"))
        text = f"training code: {f.get('summary', '')}"
        results.append(_result(f["kind"], f["level"], text, where, {"cell": f.get("cell")}, None))
    ids = list(dict.fromkeys(r["ruleId"] for r in results))
    for r in results:
        r["ruleIndex"] = ids.index(r["ruleId"])
    rules = [
        {
            "id": k,
            "name": "".join(w.title() for w in k.split("_")),
            "shortDescription": {"text": MEANINGS.get(k, k.replace("_", " "))},
        }
        for k in ids
    ]
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
