"""Render the report files (dossier.html, summary.md, droplist.txt) from a findings document."""

from __future__ import annotations

import re
from functools import lru_cache
from typing import Any

import jinja2
from markupsafe import Markup, escape

from featureaudit.findings import Findings, droplist, refit_list
from featureaudit.levels import Level
from featureaudit.markdown import md_code, md_text
from featureaudit.names import quote_name

__all__ = ["render_all", "render_dossier", "render_summary", "CAUTION", "verdict_line"]

CAUTION = (
    "An audit finds evidence, not proof: a suspect may be legitimate, and a clean audit "
    "does not prove that the data is free of leakage. Models that affect people (credit, "
    "health, employment) still go through the organisation's review and the rules that "
    "apply to them."
)
_CONTROL = re.compile(r"[\x00-\x08\x0b\x0c\x0e-\x1f\x7f]")


_BREAK_AFTER = re.compile(r"([_./\\-]+)")


def breakable(value: Any) -> Markup:
    """A column or file name for HTML: escaped, control characters shown, and a line-break
    opportunity (``<wbr>``) after each ``_ . / \\ -``, so a long name wraps between its
    words, never inside one (on screen and in print)."""
    text = str(escape(_visible(value)))
    return Markup(_BREAK_AFTER.sub(r"\1<wbr>", text))


def _visible(value: Any) -> str:
    """Control characters shown as ``\\xNN`` so they cannot hide or break a line."""
    return _CONTROL.sub(lambda m: f"\\x{ord(m.group()):02x}", "" if value is None else str(value))


@lru_cache(maxsize=1)
def _env() -> jinja2.Environment:
    env = jinja2.Environment(
        loader=jinja2.PackageLoader("featureaudit.reports", "templates"),
        autoescape=jinja2.select_autoescape(
            enabled_extensions=("html.j2",), disabled_extensions=("md.j2",), default=True
        ),
        undefined=jinja2.ChainableUndefined,
        trim_blocks=True,
        lstrip_blocks=True,
    )
    env.filters["visible"] = _visible
    env.filters["fmt"] = _fmt
    env.filters["md"] = _md
    env.filters["text"] = md_text
    env.filters["name"] = breakable
    env.globals["code"] = md_code
    env.filters["words"] = statistic_words
    from featureaudit import charts

    for name in charts.__all__:
        env.globals[name] = getattr(charts, name)
    env.globals["rank"] = {lv.label: int(lv) for lv in Level}
    from featureaudit.remedy import remedy_words

    env.globals.update(
        impact_line=impact_line, impact_words=impact_words, remedy_words=remedy_words
    )
    return env


def _md(value: Any) -> str:
    """Text for a Markdown table cell: visible, no HTML, no cell or code breaks."""
    text = _visible(value).replace("&", "&amp;").replace("<", "&lt;").replace(">", "&gt;")
    return text.replace("|", "\\|").replace("`", "'").replace("\n", " ")


def _fmt(value: Any) -> str:
    if value is None:
        return "–"
    if isinstance(value, float):
        return f"{value:.3g}" if abs(value) < 1e4 else f"{value:,.0f}"
    return _visible(value)


METRIC_NAMES = {"auc": "AUC", "macro_auc": "macro AUC", "r2": "R²"}


def impact_line(doc: dict[str, Any]) -> str:
    """The headline: "validation AUC 0.97 as given → 0.90 (0.88–0.92) with the remedies
    applied; 0.84 without every suspect", or "" when impact was not measured."""
    block = doc.get("impact")
    if not block:
        return ""
    name = METRIC_NAMES.get(block["metric"], "score")
    rem = block.get("remedied")
    head = f"validation {name} {block['as_given']:.2f} as given"
    if rem:
        head += f" → {rem['value']:.2f}{_ci(rem.get('ci95'))} with the remedies applied"
    if not block.get("suspects_removed"):
        return head + ("" if rem else "; no suspect at high or above")
    without = f"{block['without_suspects']:.2f}{_ci(block.get('ci95'))}"
    if rem:
        return f"{head} ({without} with every suspect removed, refit columns too)"
    return f"{head}; {without} without the suspects"


def _ci(ci: Any) -> str:
    lo, hi = (ci or [None, None])[:2]
    return f" ({lo:.2f}–{hi:.2f})" if lo is not None and hi is not None else ""


def undecided(doc: dict[str, Any]) -> list[dict[str, Any]]:
    """Checks that ran on a column but could not judge it ("cannot tell"): too few values,
    or both fits explain it. Shown apart from levels, never as "none"."""
    out = []
    for c in doc.get("columns", []):
        for e in c.get("evidence", []):
            d = e.get("detail") or {}
            if d.get("fitted_on") == "cannot tell" and d.get("checked") != []:
                out.append(
                    {"column": c["column"], "probe": e.get("probe"), "summary": e.get("summary")}
                )
    return out


def code_refs(doc: dict[str, Any]) -> dict[str, str]:
    """Per column, its training-code findings in a few words (they are stated in full once,
    in the training-code section)."""
    refs: dict[str, list[str]] = {}
    for c in doc.get("columns", []):
        for e in c.get("evidence", []):
            d = e.get("detail") or {}
            if "code_kind" in d:
                where = f"{d.get('file')} line {d.get('line')}"
                refs.setdefault(c["column"], []).append(
                    f"{str(d['code_kind']).replace('_', ' ')} at {where}"
                )
    return {k: "; ".join(dict.fromkeys(v)) for k, v in refs.items()}


def impact_words(entry: dict[str, Any] | None, negligible: float = 0.01) -> str:
    """A column's or finding's measured effect in words; negligible ones say so."""
    if not entry or entry.get("change") is None:
        return "not measured"
    change = float(entry["change"])
    lo, hi = (entry.get("ci95") or [None, None])[:2]
    if abs(change) < negligible and (hi is None or hi < negligible):
        beyond = entry.get("change_beyond_other_suspects")
        if beyond is not None and float(beyond) >= negligible:
            # short enough for the ranked table's cell; its interval is in findings.json
            return f"≈0 alone; {-float(beyond):+.3f} with the others out"
        return "negligible"
    # shown as the score's change when the column is removed: the sign of the interval too
    ci = f" ({-hi:+.3f} to {-lo:+.3f})" if lo is not None and hi is not None else ""
    return f"{-change:+.3f}{ci}"


def verdict_line(findings: Findings) -> str:
    """One plain sentence: how many suspects at which levels; the parts add up to the whole,
    and reviewed (accepted) ones are counted apart."""
    counts: dict[str, int] = {}
    accepted = 0
    code = findings.document.get("code_findings") or []
    for item in [*findings.columns, *findings.dataset_findings, *code]:
        if item.get("accepted") and Level.parse(item["level"]) >= Level.MEDIUM:
            accepted += 1
            continue
        counts[item["level"]] = counts.get(item["level"], 0) + 1
    serious = counts.get("critical", 0) + counts.get("high", 0)
    reviewed = (
        f" {accepted} more {'was' if accepted == 1 else 'were'} accepted after review and "
        "not counted."
        if accepted
        else ""
    )
    if serious == 0:
        return (
            "No column or split finding reached level high. Review the medium ones, "
            f"and remember what the audit cannot see.{reviewed}"
        )
    parts = [f"{counts[k]} {k}" for k in ("critical", "high") if counts.get(k)]
    in_code = sum(Level.parse(f.get("level", "none")) >= Level.HIGH for f in code)
    if in_code:
        parts.append(f"{in_code} of them in the training code")
    medium = f"; {counts['medium']} more at medium" if counts.get("medium") else ""
    return (
        f"{serious} finding{'s' if serious != 1 else ''} at level high or above "
        f"({', '.join(parts)}){medium}. Resolve them before trusting validation scores."
        f"{reviewed}"
    )


STATISTIC_WORDS = {
    "oof_auc": "out-of-fold AUC of the column alone",
    "oof_macro_auc": "out-of-fold macro AUC of the column alone",
    "oof_r2": "out-of-fold R² of the column alone",
    "row_position_oof_auc": "out-of-fold AUC of the row position alone",
    "determinism_given_target": "share of the column's entropy the target accounts for",
    "target_share_beyond_peers": "target power beyond what the other columns explain",
    "share_after_cutoff": "share of rows known after the cutoff",
    "heldout_share_before_train_end": "share of held-out rows earlier than the end of training",
    "heldout_share_with_twin": "share of held-out rows with a training copy",
    "heldout_row_share_with_shared_entity": "share of held-out rows whose entity is in training",
    "adversarial_auc": "AUC of a model telling held-out from training rows",
    "fingerprint_checks": "checks matching a statistic fitted on all rows",
    "imputed_minus_training_mean": "fill value minus the training-row mean",
    "imputed_minus_training_median": "fill value minus the training-row median",
    "training_rows_mean": "mean over the training rows",
}
CARD_FLOOR = Level.MEDIUM  # a full card from this level up; lower levels share one table
MAX_CARDS = 60  # evidence cards beyond this many suspects stay in the ranked table


def statistic_words(name: str) -> str:
    """A statistic's name in words (the machine name is shown beside it, in small print)."""
    return STATISTIC_WORDS.get(name, str(name).replace("_", " "))


def undocumented_timing(doc: dict[str, Any]) -> list[str]:
    """Features named in the "timing not documented" warning, if the audit gave one."""
    for w in doc.get("warnings", []):
        if str(w).startswith(TIMING_NOTE):
            return [n.strip() for n in str(w)[len(TIMING_NOTE) :].split(";")[0].split(",")]
    return []


TIMING_NOTE = "timing not documented: "  # the prefix featureaudit.timing_gaps writes


def render_dossier(findings: Findings, *, history: list[Findings] | None = None) -> str:
    from featureaudit.history import marks, series, trend_svg

    doc = findings.document
    runs = [*(history or []), findings]
    trends = series(runs) if len(runs) > 1 else {}
    changed = marks(history[-1] if history else None, findings)
    floor = int(CARD_FLOOR)
    ranked = [c for c in doc["columns"] if Level.parse(c["level"]) >= floor]
    return (
        _env()
        .get_template("dossier.html.j2")
        .render(
            doc=doc,
            verdict=verdict_line(findings),
            caution=CAUTION,
            ranked=ranked,
            cards=ranked[:MAX_CARDS],
            lows=[c for c in doc["columns"] if c["level"] == "low"],
            clean=[c for c in doc["columns"] if c["level"] == "none"],
            splits=[f for f in doc["dataset_findings"] if f["level"] != "none"],
            quiet_splits=[f for f in doc["dataset_findings"] if f["level"] == "none"],
            drops=droplist(findings, "high"),
            refits=refit_list(findings),
            split_groups=split_groups([f for f in doc["dataset_findings"] if f["level"] != "none"]),
            methods=list(doc.get("settings", {}).get("methods", {}).items()),
            trend={n: trend_svg(p) for n, p in trends.items()},
            runs=len(runs),
            marks=changed,
            undocumented=[n for n in undocumented_timing(doc) if n not in _timed(doc)],
            code_refs=code_refs(doc),
            code_ids=_code_ids(doc),
            warnings=[w for w in doc.get("warnings", []) if not str(w).startswith(TIMING_NOTE)],
        )
    )


def render_summary(findings: Findings) -> str:
    doc = findings.document
    return (
        _env()
        .get_template("summary.md.j2")
        .render(
            doc=doc,
            verdict=verdict_line(findings),
            caution=CAUTION,
            suspects=[c for c in doc["columns"] if c["level"] in ("critical", "high", "medium")][
                :20
            ],
            drops=droplist(findings, "high"),
            refits=refit_list(findings),
            split_findings=[f for f in doc["dataset_findings"] if f["level"] != "none"],
            code_refs=code_refs(doc),
            undecided=undecided(doc),
        )
    )


def split_groups(found: list[dict[str, Any]]) -> list[tuple[str, list[dict[str, Any]]]]:
    """Split findings grouped by the pair they compare, each group in the findings' order,
    groups in the order their first finding appears (the most severe first)."""
    groups: dict[str, list[dict[str, Any]]] = {}
    for f in found:
        pair = f.get("partitions") or []
        groups.setdefault(" vs ".join(str(p) for p in pair), []).append(f)
    return list(groups.items())


def _timed(doc: dict[str, Any]) -> set[str]:
    """Columns the timing checks judged anyway (from their values or the cutoff): the
    "timing not documented" note does not name them."""
    return {
        c["column"]
        for c in doc["columns"]
        if any(
            e.get("kind") == "recorded_after_cutoff" and e.get("level") != "none"
            for e in c.get("evidence", [])
        )
    }


def _code_ids(doc: dict[str, Any]) -> dict[str, int]:
    """``file:line:kind`` of each training-code finding -> its card's number (1-based)."""
    return {
        f"{f.get('file')}:{f.get('line')}:{f.get('kind')}": i
        for i, f in enumerate(doc.get("code_findings") or [], start=1)
    }


def render_all(findings: Findings, *, history: list[Findings] | None = None) -> dict[str, str]:
    """Every file of a report, rendered in memory so they can be written together;
    ``history`` holds the earlier runs, oldest first, for the dossier's trends."""
    drops = droplist(findings, "high")
    return {
        "findings.json": findings.to_json(),
        "droplist.txt": "".join(f"{quote_name(c)}\n" for c in drops),
        "summary.md": render_summary(findings),
        "dossier.html": render_dossier(findings, history=history),
    }
