"""Judge the events of one file's data flow and audit a list of paths."""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass, field
from pathlib import Path

from featureaudit.code.flow import Flow, analyse
from featureaudit.code.parse import Unit, read_units
from featureaudit.code.rules import SUPERVISED_TRANSFORMERS, Finding
from featureaudit.code.values import HELDOUT, TEST, Event, Split
from featureaudit.errors import InputFileError

__all__ = ["CodeAudit", "RULES", "audit_code", "audit_file", "judge"]

_ENCODERS = {"OneHotEncoder", "OrdinalEncoder"}


def _where(unit: Unit, line: int) -> str:
    return f"line {line}" + (f" of cell {unit.cell}" if unit.cell else "")


@dataclass
class Context:
    """What the rules read besides the event: the file's splits and what reached a model."""

    flow: Flow

    def split_of(self, ev: Event, *, cv: str) -> Split | None:
        """A split that divides rows the event's fit saw. ``cv`` says which splits count:
        "all"; "none" (no cross-validation folds); "primary" (only splits of rows never split
        before: folds or a validation slice carved from a training part leave the test rows
        untouched by an unsupervised scaler)."""
        if not ev.prov or ev.role in HELDOUT:
            return None
        for s in self.flow.splits:
            if s.key and len({x.side for x in self.flow.splits if x.key == s.key}) < 2:
                continue  # one positional slice alone (a preview) divides nothing
            if (s.cv and cv == "none") or (cv == "primary" and len(s.prov) > 1):
                continue
            if not s.cv and not self.used(s):
                continue
            if s.covers(ev.prov):
                return s
        return None

    def used(self, s: Split) -> bool:
        """Is a model trained on a side of this split? When the file trains models, a split
        none of them uses (a leftover) is not the one the evaluation rests on; when it trains
        none, every split counts."""
        models = self.flow.model_provs
        n = len(s.prov)
        return not models or any(len(p) > n and p[:n] == s.prov for p in models)

    def reached(self, index: int) -> bool:
        return index in self.flow.reached


Rule = Callable[[Context, int, Event], Finding | None]


def _finding(
    ev: Event, kind: str, variant: str, summary: str, tail: str, reached: bool = True
) -> Finding:
    return Finding(
        ev.unit.file,
        ev.line,
        ev.unit.cell,
        kind,
        variant,
        summary,
        ev.unit.line(ev.line),
        " → ".join([*ev.trail, tail]),
        ev.columns,
        reached,
    )


def _split_text(s: Split) -> str:
    return f"split by {s.how} at {_where(s.unit, s.line)}"


def rule_sampler(ctx: Context, i: int, ev: Event) -> Finding | None:
    """A sampler fitted on rows a later split (or fold loop) divides made synthetic rows from
    rows that are then held out."""
    if ev.what != "fit" or ev.family != "sampler":
        return None
    s = ctx.split_of(ev, cv="all")
    if s is None:
        return None
    text = _split_text(s)
    return _finding(
        ev,
        "oversampled_before_split",
        "resample",
        f"{ev.cls} makes synthetic rows from all rows before the {text}",
        f"{ev.cls}.{ev.extra['method']}; {text}",
    )


def rule_resample(ctx: Context, i: int, ev: Event) -> Finding | None:
    """Rows duplicated by drawing with replacement before a split land on both sides."""
    if ev.what != "resample":
        return None
    s = ctx.split_of(ev, cv="all")
    if s is None:
        return None
    text = _split_text(s)
    return _finding(
        ev,
        "oversampled_before_split",
        "resample",
        f"{ev.cls} duplicates rows drawn from all rows before the {text}",
        f"{ev.cls}; {text}",
    )


def rule_selector(ctx: Context, i: int, ev: Event) -> Finding | None:
    """A feature selector fitted with the targets of rows a later split holds out."""
    if ev.what != "fit" or ev.family != "selector":
        return None
    s = ctx.split_of(ev, cv="all")
    if s is None:
        return None
    text = _split_text(s)
    return _finding(
        ev,
        "selection_on_all_rows",
        "features",
        f"{ev.cls} chooses features on all rows, held-out rows included ({text})",
        f"{ev.cls}.{ev.extra['method']}; {text}",
        ctx.reached(i),
    )


def rule_search(ctx: Context, i: int, ev: Event) -> Finding | None:
    """A hyper-parameter search fitted on rows a later train/test split holds out (its own
    folds do not count)."""
    if ev.what != "fit" or ev.family != "search":
        return None
    s = ctx.split_of(ev, cv="none")
    if s is None:
        return None
    text = _split_text(s)
    return _finding(
        ev,
        "selection_on_all_rows",
        "search",
        f"{ev.cls} tunes hyper-parameters on all rows, held-out rows included ({text})",
        f"{ev.cls}.fit; {text}",
    )


def rule_transformer(ctx: Context, i: int, ev: Event) -> Finding | None:
    """A scaler, imputer, encoder or decomposition fitted on rows a later split divides."""
    if ev.what != "fit" or ev.family != "transformer":
        return None
    s = ctx.split_of(ev, cv="primary")
    if s is None:
        return None
    text = _split_text(s)
    variant = (
        "supervised"
        if ev.cls in SUPERVISED_TRANSFORMERS
        else "encoder"
        if ev.cls in _ENCODERS
        else "unsupervised"
    )
    return _finding(
        ev,
        "fit_before_split",
        variant,
        f"{ev.cls} is fitted on all rows before the {text}",
        f"{ev.cls}.{ev.extra['method']}; {text}",
        ctx.reached(i),
    )


def rule_statistic(ctx: Context, i: int, ev: Event) -> Finding | None:
    """A pandas/numpy statistic of rows a later split divides, applied to the data."""
    if ev.what != "stat_use":
        return None
    grouped = ev.extra.get("grouped")
    if grouped is not None and not set(grouped) & ctx.flow.targets:
        return None  # a count or mean of a feature per group: common practice, no source
    s = ctx.split_of(ev, cv="primary")
    if s is None:
        return None
    text = _split_text(s)
    return _finding(
        ev,
        "fit_before_split",
        "pandas",
        f"a statistic of all rows (held-out rows included) fills, scales or clips the data "
        f"({text})",
        f"statistic applied at {_where(ev.unit, ev.line)}",
        ctx.reached(i),
    )


def rule_fit_heldout(ctx: Context, i: int, ev: Event) -> Finding | None:
    """Any fit (preprocessing or model) on held-out rows."""
    if ev.what != "fit" or ev.role not in HELDOUT or ev.family in ("harmless", "splitter"):
        return None
    what = f"{ev.cls}.{ev.extra['method']}"
    summary = (
        f"the model {ev.cls} is fitted on held-out ({ev.role}) rows"
        if ev.family is None
        else f"{what} is called on held-out ({ev.role}) rows"
    )
    return _finding(ev, "fit_on_heldout", "fit", summary, what)


def rule_statistic_heldout(ctx: Context, i: int, ev: Event) -> Finding | None:
    """A statistic of held-out rows applied to the data (they describe themselves)."""
    if ev.what != "stat_use" or ev.role not in HELDOUT:
        return None
    return _finding(
        ev,
        "fit_on_heldout",
        "pandas",
        f"a statistic of held-out ({ev.role}) rows fills, scales or clips the data",
        "statistic of held-out rows applied",
    )


def rule_correlation(ctx: Context, i: int, ev: Event) -> Finding | None:
    """Columns chosen by their correlation on all rows, when the chosen columns reach the
    model (a heatmap that chooses nothing is looking, not choosing)."""
    if ev.what != "corr" or i not in ctx.flow.applied:
        return None
    s = ctx.split_of(ev, cv="all")
    if s is None:
        return None
    text = _split_text(s)
    return _finding(
        ev,
        "selection_on_all_rows",
        "features",
        f"{ev.cls} ranks features against the target on all rows ({text})",
        f"{ev.cls}; {text}",
        ctx.reached(i),
    )


def rule_score_function(ctx: Context, i: int, ev: Event) -> Finding | None:
    """A univariate score function (``f_classif(X, y)``) on rows a later split divides."""
    if ev.what != "select_func":
        return None
    s = ctx.split_of(ev, cv="all")
    if s is None:
        return None
    text = _split_text(s)
    return _finding(
        ev,
        "selection_on_all_rows",
        "features",
        f"{ev.cls} ranks features against the target on all rows ({text})",
        f"{ev.cls}; {text}",
    )


def rule_early_stop(ctx: Context, i: int, ev: Event) -> Finding | None:
    """Early stopping or a best-model checkpoint watching the test rows."""
    if ev.what != "early_stop":
        return None
    return _finding(
        ev,
        "test_reused",
        "early_stopping",
        f"{ev.cls} early-stops on the test set, which then reports the score",
        "early stopping watches (X_test, y_test)",
    )


def rule_test_choice(ctx: Context, i: int, ev: Event) -> Finding | None:
    """A test score inside a loop (or a key function) that picks the best candidate."""
    if ev.what != "score" or ev.role != TEST or ev.loop not in ctx.flow.loop_selects:
        return None
    return _finding(
        ev,
        "test_reused",
        "loop",
        "the test set scores candidates in a loop that picks the best, so its score is no "
        "longer an untouched estimate",
        "score on test rows inside a selection loop",
    )


RULES: list[Rule] = [
    rule_sampler,
    rule_resample,
    rule_selector,
    rule_search,
    rule_transformer,
    rule_statistic,
    rule_fit_heldout,
    rule_statistic_heldout,
    rule_correlation,
    rule_score_function,
    rule_early_stop,
    rule_test_choice,
]


def judge(flow: Flow) -> list[Finding]:
    """Turn the recorded events into findings (needs the whole file: a later split counts);
    one finding per line and kind, the highest level kept."""
    ctx = Context(flow)
    best: dict[tuple[object, ...], Finding] = {}
    for i, ev in enumerate(flow.events):
        for rule in RULES:
            f = rule(ctx, i, ev)
            if f is not None and (f.key() not in best or f.level > best[f.key()].level):
                best[f.key()] = f
    return sorted(best.values(), key=lambda f: (f.file, f.cell or 0, f.line, f.kind))


def audit_file(path: str | Path) -> tuple[list[Finding], int]:
    """Findings of one script or notebook and how many units (cells) it had."""
    units = read_units(path)
    return judge(analyse(units)), len(units)


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
