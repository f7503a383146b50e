"""The ``lineage`` probe: features that a pipeline computed with rows it should not have seen.

Four readings, each decided by an ordered rule table (``_rules``) on figures measured here:

- windows (``_windows``): with an order within entities, a numeric column matched exactly by
  a window of the target that reaches the row's label or a later period (a rolling mean
  that includes the label, a count that includes the outcome, a lead used as a lag) and by
  no window that ends before it;
- per-entity standardisation (``_scaled``): mean 0 and SD 1 within every entity over all
  its periods (held-out ones included), not over its training periods;
- group means of the target (``_groups``): a column constant within the groups of another
  column that equals their target mean in sample; leave-one-out means told apart, and
  cross-fitted ones clean;
- free text (``_text``): words and phrases out of fold, and the phrases of one outcome.

Thresholds: :class:`LineageThresholds` (each with its source). On a sample of the table
(stream and dask engines) the probe does not judge: windows and entity statistics need
every row of an entity.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from featureaudit.kit.registry import Capabilities, Probe, ProbeOutput, register
from featureaudit.kit.sample import content_keys
from featureaudit.load.io import numeric_view
from featureaudit.load.settings import Settings
from featureaudit.load.table import AuditTable
from featureaudit.probes.lineage._entity import aggregate_evidence, scaling_evidence
from featureaudit.probes.lineage._groups import group_figures, grouping_codes
from featureaudit.probes.lineage._kit import LATER, NAME, make_evidence
from featureaudit.probes.lineage._rules import (
    GROUP_RULES,
    WINDOW_RULES,
    Rule,
    decide,
)
from featureaudit.probes.lineage._sequence import sequence
from featureaudit.probes.lineage._text import text_evidence
from featureaudit.probes.lineage._thresholds import THRESHOLDS, LineageThresholds
from featureaudit.probes.lineage._windows import target_windows, window_figures
from featureaudit.probes.lineage._words import (
    group_sentence,
    honest_window_sentence,
    window_sentence,
)
from featureaudit.vocab.evidence import Evidence, Skip
from featureaudit.vocab.levels import Level

__all__ = ["Lineage", "LineageThresholds"]

MAX_PAIRS = 400  # column x grouping pairs examined (cost bound)
SAMPLED = (
    "windows and per-entity statistics need every row of an entity; audit the table with "
    "--engine memory"
)


@register
class Lineage(Probe):
    """Features computed from later rows or from the row's own outcome: windows of the target
    that reach the label, leads used as lags, per-entity standardisation over every period,
    in-sample group means of the target and free-text notes written from the outcome.
    Thresholds: :class:`LineageThresholds`; method: the module docstring."""

    name = NAME
    scope = "column"
    kinds = (LATER, "target_proxy", "fit_on_all_rows")
    thresholds = THRESHOLDS
    # what it reports as a target proxy or a fit on all rows is still a feature to rebuild
    # from earlier rows (a window that stops before the label, a cross-fitted group mean)
    capabilities = Capabilities(
        needs_target=True,
        needs_every_row=SAMPLED,
        remedies={
            "target_proxy": "recompute_before_cutoff",
            "fit_on_all_rows": "recompute_before_cutoff",
        },
    )

    @classmethod
    def describe(cls, settings: Settings) -> str:
        th = cls.thresholds
        return (
            "With an order within entities (cutoff time, label time or --order), each "
            "numeric column is matched against the target's mean over windows ending from "
            f"{th.max_lag} periods before the row to {th.max_lead} after, 1 to "
            f"{th.max_width} periods wide, and expanding windows; a window that reaches the "
            f"label or later and leaves at most {th.exact:g} of the column unexplained, "
            f"and at most {th.ratio:g} of what the best earlier window leaves, is high "
            f"({th.close:g} and {th.ratio_medium:g}: medium). Mean 0 and SD 1 within "
            f"{th.entity_share:.0%} of entities over all their periods but not over their "
            "training periods (or over the whole history without a split) is high. A column "
            f"constant within at least {th.min_groups} groups of another column that equals "
            "their in-sample target mean (also shrunk) is high when a content-chosen half "
            f"of the rows explains {1 / th.ratio:g} times less; leave-one-out means are "
            "high as target proxies; cross-fitted ones are clean. Free text (values at "
            f"least {th.text_distinct:.0%} distinct, three words or more) is read with "
            f"scikit-learn's CountVectorizer out of {settings.folds} content-chosen folds: "
            f"AUC at least {th.auc_floor:g} (R² {th.r2_floor:g}), and added to the other "
            f"columns removing {th.gain_high:.0%} of the error they leave, with phrases of "
            f"one outcome (in {th.phrase_min_docs}+ rows, binomial chance below "
            f"{th.phrase_alpha:g} after Bonferroni) covering {th.coverage:.0%} of rows, is high. "
            f"A check needs {th.min_rows} rows with a target, groups of {th.min_group_rows} rows "
            f"and entities of {th.min_entity_rows} periods."
        )

    def run(self, table: AuditTable, settings: Settings) -> ProbeOutput:
        if table.target is None or table.y is None or table.target_problem:
            return [], [Skip(NAME, table.target_problem or "no target given: pass --target")]
        evidence: list[Evidence] = []
        skipped: list[Skip] = []
        numbers = _numeric_columns(table)
        y = _target_values(table)
        if y is not None:
            evidence += _windows(table, numbers, y, skipped)
            evidence += scaling_evidence(table, numbers)
            evidence += aggregate_evidence(table, numbers)
            evidence += _group_means(table, numbers, y, settings)
        else:
            skipped.append(Skip(NAME, "windows and group means need a binary or numeric target"))
        evidence += text_evidence(table, settings)
        return evidence, skipped


def _numeric_columns(table: AuditTable) -> dict[str, np.ndarray]:
    out: dict[str, np.ndarray] = {}
    for name in table.features:
        s = table.frame[name]
        if pd.api.types.is_bool_dtype(s.dtype) or pd.api.types.is_datetime64_any_dtype(s.dtype):
            continue
        values = numeric_view(s)
        if values is not None and np.unique(values[np.isfinite(values)]).size > 2:
            out[name] = values
    return out


def _target_values(table: AuditTable) -> np.ndarray | None:
    assert table.y is not None
    if table.task == "numeric":
        return table.y.astype("float64")
    if table.task == "binary":
        return np.where(table.labelled, table.y, np.nan).astype("float64")
    return None


def _windows(
    table: AuditTable, numbers: dict[str, np.ndarray], y: np.ndarray, skipped: list[Skip]
) -> list[Evidence]:
    seq, why = sequence(table)
    if seq is None:
        skipped.append(Skip(NAME, why))
        return []
    th, target = THRESHOLDS, str(table.target)
    windows = target_windows(seq, y, th)
    out: list[Evidence] = []
    for name, values in numbers.items():
        f = window_figures(values[seq.rows], windows, th, seq.group if table.entity else None)
        if f is None:
            continue
        rule = decide(WINDOW_RULES, f, th)
        detail = {
            "window": f.later.to_dict(),
            "earlier_window": f.earlier.to_dict() if f.earlier else None,
            "r2_earlier": 1 - f.u_earlier,
            "order": seq.source,
        }
        severity = 1 - f.u_later / max(th.ratio * f.u_earlier, 1e-300)
        if rule.level >= Level.MEDIUM:
            text = window_sentence(f, target, seq.source)
            kinds = [LATER, "target_proxy"] if f.later.holds_label else [LATER]
            out += [
                make_evidence(name, k, rule, "later_window_r2", 1 - f.u_later, 1 - th.exact,
                          text, severity, detail)
                for k in kinds
            ]  # fmt: skip
        elif f.u_earlier <= th.exact:
            text = honest_window_sentence(f, target)
            out.append(
                make_evidence(name, LATER, rule, "later_window_r2", 1 - f.u_later, 1 - th.exact,
                          text, 0.0, {**detail, "explains": ["target_proxy"]})
            )  # fmt: skip
    return out


_VARIANT_WORDS = {
    "in_sample": "a target encoding fitted in sample, so each row carries its own outcome",
    "leave_one_out": "within a group it falls as the row's own outcome rises, so the row's "
    "outcome can be read back from it",
}


def _groupings(table: AuditTable) -> dict[str, tuple[np.ndarray, np.ndarray]]:
    names = ([table.entity] if table.entity else []) + list(table.features)
    out: dict[str, tuple[np.ndarray, np.ndarray]] = {}
    for name in dict.fromkeys(names):
        codes = grouping_codes(table.frame[name], table.n_rows, THRESHOLDS)
        if codes is not None:
            _, uniques = pd.factorize(table.frame[name], sort=True, use_na_sentinel=True)
            out[name] = (codes, np.asarray(uniques, dtype=object))
    return out


def _group_means(
    table: AuditTable, numbers: dict[str, np.ndarray], y: np.ndarray, settings: Settings
) -> list[Evidence]:
    th, target, out = THRESHOLDS, str(table.target), []
    labelled = table.labelled
    scopes = {"all labelled rows": labelled}
    if table.heldout is not None and (labelled & table.heldout).any():
        scopes["training rows"] = labelled & ~table.heldout
    keys = content_keys(table.frame, [target, *table.features], settings.seed + 7919)
    half = (keys & np.uint64(1)) == 0
    groupings = _groupings(table) if numbers else {}
    pairs = [(x, g) for x in numbers for g in groupings if g != x][:MAX_PAIRS]
    for x_name, g_name in pairs:
        codes, labels = groupings[g_name]
        f = group_figures(codes, numbers[x_name], np.nan_to_num(y), scopes, half, th)
        if f is None:
            continue
        rule = decide(GROUP_RULES, f, th)
        f = type(f)(**{**f.__dict__, "means": {str(labels[int(k)]): v for k, v in f.means.items()}})
        text = group_sentence(f, g_name, target, _VARIANT_WORDS.get(f.variant, ""))
        detail = {"group": g_name, "variant": f.variant, "scope": f.scope, "groups": f.groups,
                  "r2_half": 1 - f.u_half, "shrink": f.shrink, "means": f.means}  # fmt: skip
        out += [
            make_evidence(x_name, k, rule, "group_mean_r2", 1 - f.u_fit, 1 - th.exact, text,
                      1 - f.u_fit, detail)
            for k in _group_kinds(f.variant, f.scope, rule, len(scopes) > 1)
        ]  # fmt: skip
    return out


def _group_kinds(variant: str, scope: str, rule: Rule, split: bool) -> list[str]:
    if variant == "leave_one_out":
        return ["target_proxy"]
    if rule.level < Level.MEDIUM:
        return [LATER]
    return [LATER, "fit_on_all_rows" if split and scope == "all labelled rows" else "target_proxy"]
