"""Judge the events of one file's data flow and audit a list of paths."""

from __future__ import annotations

from dataclasses import dataclass, field
from pathlib import Path

from featureaudit.code.flow import ALL, HELDOUT, TEST, Event, Flow
from featureaudit.code.parse import Unit, read_units
from featureaudit.code.rules import SUPERVISED_TRANSFORMERS, Finding
from featureaudit.errors import InputFileError

__all__ = ["CodeAudit", "audit_code", "audit_file"]

_ENCODERS = {"OneHotEncoder", "OrdinalEncoder"}


def _flow_text(ev: Event, tail: str) -> str:
    return " → ".join([*ev.trail, tail])


def _where(unit: Unit, line: int) -> str:
    return f"line {line}" + (f" of cell {unit.cell}" if unit.cell else "")


def judge(flow: Flow) -> list[Finding]:
    """Turn the recorded events into findings (needs the whole file: a later split counts)."""
    split = flow.splits[0] if flow.splits else None
    split_text = f"split by {split[2]} at {_where(split[0], split[1])}" if split else ""
    out: list[Finding] = []

    def add(ev: Event, kind: str, variant: str, summary: str, tail: str) -> None:
        out.append(
            Finding(
                ev.unit.file,
                ev.line,
                ev.unit.cell,
                kind,
                variant,
                summary,
                ev.unit.line(ev.line),
                _flow_text(ev, tail),
                ev.columns,
            )
        )

    for ev in flow.events:
        if ev.what == "fit" and ev.family in ("transformer", "selector", "sampler", "search"):
            if ev.role == ALL and split:
                if ev.family == "sampler":
                    add(
                        ev,
                        "oversampled_before_split",
                        "resample",
                        f"{ev.cls} makes synthetic rows from all rows before the {split_text}",
                        f"{ev.cls}.{ev.extra['method']}; {split_text}",
                    )
                elif ev.family == "selector":
                    add(
                        ev,
                        "selection_on_all_rows",
                        "features",
                        f"{ev.cls} chooses features on all rows, held-out rows included "
                        f"({split_text})",
                        f"{ev.cls}.{ev.extra['method']}; {split_text}",
                    )
                elif ev.family == "search":
                    if any(
                        s[2] not in ("cross_val_score", "cross_validate", "cross_val_predict")
                        and s[2] != ev.cls
                        for s in flow.splits
                    ):
                        add(
                            ev,
                            "selection_on_all_rows",
                            "search",
                            f"{ev.cls} tunes hyper-parameters on all rows, held-out rows "
                            f"included ({split_text})",
                            f"{ev.cls}.fit; {split_text}",
                        )
                else:
                    variant = (
                        "supervised"
                        if ev.cls in SUPERVISED_TRANSFORMERS
                        else "encoder"
                        if ev.cls in _ENCODERS
                        else "unsupervised"
                    )
                    add(
                        ev,
                        "fit_before_split",
                        variant,
                        f"{ev.cls} is fitted on all rows before the {split_text}",
                        f"{ev.cls}.{ev.extra['method']}; {split_text}",
                    )
            elif ev.role in HELDOUT:
                add(
                    ev,
                    "fit_on_heldout",
                    "fit",
                    f"{ev.cls}.{ev.extra['method']} is called on held-out ({ev.role}) rows",
                    f"{ev.cls}.{ev.extra['method']}",
                )
        elif ev.what == "fit" and ev.family is None and ev.role in HELDOUT:
            add(
                ev,
                "fit_on_heldout",
                "fit",
                f"the model {ev.cls} is fitted on held-out ({ev.role}) rows",
                f"{ev.cls}.{ev.extra['method']}",
            )
        elif ev.what == "resample" and ev.role == ALL and split:
            add(
                ev,
                "oversampled_before_split",
                "resample",
                f"{ev.cls} duplicates rows drawn from all rows before the {split_text}",
                f"{ev.cls}; {split_text}",
            )
        elif ev.what in ("select_func", "corr") and ev.role == ALL and split and ev.supervised:
            add(
                ev,
                "selection_on_all_rows",
                "features",
                f"{ev.cls} ranks features against the target on all rows ({split_text})",
                f"{ev.cls}; {split_text}",
            )
        elif ev.what == "stat_use" and split:
            if ev.role == ALL:
                add(
                    ev,
                    "fit_before_split",
                    "pandas",
                    "a statistic of all rows (held-out rows "
                    f"included) fills, scales or clips the data ({split_text})",
                    f"statistic applied at {_where(ev.unit, ev.line)}",
                )
            elif ev.role in HELDOUT:
                add(
                    ev,
                    "fit_on_heldout",
                    "pandas",
                    f"a statistic of held-out ({ev.role}) rows fills, scales or clips the data",
                    "statistic of held-out rows applied",
                )
        elif ev.what == "eval_set":
            add(
                ev,
                "test_reused",
                "early_stopping",
                f"{ev.cls} early-stops on the test set, which then reports the score",
                "eval_set=[(X_test, y_test)]",
            )
    scored = [ev for ev in flow.events if ev.what == "score" and ev.role == TEST]
    scored += [ev for ev in flow.metric_events if ev.role == TEST]
    for ev in scored:
        if ev.loop is not None and (ev.loop in flow.loop_selects or flow.selecting_calls):
            add(
                ev,
                "test_reused",
                "loop",
                "the test set scores candidates in a loop that "
                "picks the best, so its score is no longer an untouched estimate",
                "score on test rows inside a selection loop",
            )
    uniq: dict[tuple[object, ...], Finding] = {}
    for f in out:
        uniq.setdefault(f.key(), f)
    return sorted(uniq.values(), key=lambda f: (f.file, f.cell or 0, f.line, f.kind))


def audit_file(path: str | Path) -> tuple[list[Finding], int]:
    """Findings of one script or notebook and how many units (cells) it had."""
    units = read_units(path)
    flow = Flow()
    flow.run(units)
    return judge(flow), len(units)


@dataclass
class CodeAudit:
    """The result of auditing some paths: findings, and the files that could not be read."""

    findings: list[Finding] = field(default_factory=list)
    files: list[dict[str, object]] = field(default_factory=list)
    errors: list[str] = field(default_factory=list)


def audit_code(paths: list[str | Path]) -> CodeAudit:
    """Audit every script and notebook in ``paths`` (folders are searched for ``*.py`` and
    ``*.ipynb``); an unreadable file is recorded in ``errors`` and the others still audited."""
    result = CodeAudit()
    for path in _expand(paths):
        try:
            found, units = audit_file(path)
        except InputFileError as exc:
            result.errors.append(str(exc))
            result.files.append({"file": str(path), "units": 0, "error": str(exc)})
            continue
        result.findings.extend(found)
        result.files.append(
            {
                "file": str(path),
                "units": units,
                "error": None,
                "notebook": str(path).lower().endswith(".ipynb"),
            }
        )
    return result


def _expand(paths: list[str | Path]) -> list[Path]:
    out: list[Path] = []
    for p in map(Path, paths):
        if p.is_dir():
            out += sorted(
                q
                for q in p.rglob("*")
                if q.suffix in (".py", ".ipynb") and ".ipynb_checkpoints" not in q.parts
            )
        else:
            out.append(p)
    return out
