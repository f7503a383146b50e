"""Per-entity statistics over every period, as evidence: standardisation within each entity
over all its periods, and whole-history aggregates of another column."""

from __future__ import annotations

import numpy as np
import pandas as pd

from featureaudit.load.table import AuditTable
from featureaudit.probes.lineage._aggregates import aggregate_figures, constant_within
from featureaudit.probes.lineage._kit import LATER, make_evidence
from featureaudit.probes.lineage._rules import AGGREGATE_RULES, SCALE_RULES, decide
from featureaudit.probes.lineage._scaled import scale_figures
from featureaudit.probes.lineage._sequence import sequence
from featureaudit.probes.lineage._thresholds import THRESHOLDS
from featureaudit.probes.lineage._words import scale_sentence
from featureaudit.vocab.evidence import Evidence
from featureaudit.vocab.levels import Level

__all__ = ["scaling_evidence", "aggregate_evidence"]


def scaling_evidence(table: AuditTable, numbers: dict[str, np.ndarray]) -> list[Evidence]:
    if table.entity is None:
        return []
    seq, _ = sequence(table)
    split = table.heldout is not None and table.heldout_rows > 0
    if seq is None and not split:
        return []
    codes, _ = pd.factorize(table.frame[table.entity], sort=True, use_na_sentinel=True)
    train = ~table.heldout if split and table.heldout is not None else None
    order = seq.source if seq is not None else "the split"
    th, out = THRESHOLDS, []
    for name, values in numbers.items():
        f = scale_figures(codes, values, train, th.min_entity_rows)
        if f is None or f.holds_all < th.entity_share and f.holds_train < th.entity_share:
            continue
        rule = decide(SCALE_RULES, f, th)
        text = scale_sentence(f, table.entity, order)
        kinds = [LATER, "fit_on_all_rows"] if f.split and rule.level >= Level.HIGH else [LATER]
        detail = {"entities": f.entities, "holds_train": f.holds_train, "shift": f.shift}
        out += [
            make_evidence(name, k, rule, "entity_share_scaled", f.holds_all, th.entity_share,
                      text, f.holds_all, detail)
            for k in kinds
        ]  # fmt: skip
    return out


def aggregate_evidence(table: AuditTable, numbers: dict[str, np.ndarray]) -> list[Evidence]:
    """Columns constant within entities that equal a whole-history aggregate of another."""
    if table.entity is None:
        return []
    seq, _ = sequence(table)
    split = table.heldout is not None and table.heldout_rows > 0
    if seq is None and not split:
        return []
    codes, _ = pd.factorize(table.frame[table.entity], sort=True, use_na_sentinel=True)
    train = ~table.heldout if split and table.heldout is not None else None
    th, out = THRESHOLDS, []
    for name, x in numbers.items():
        if not constant_within(codes, x):
            continue
        others = {k: v for k, v in numbers.items() if k != name}
        f = aggregate_figures(codes, x, others, train, th)
        if f is None:
            continue
        rule = decide(AGGREGATE_RULES, f, th)
        where = "held-out periods included" if f.split else "later periods included"
        if rule.level < Level.HIGH:
            where = "over its training periods only"
        text = (
            f"equals each {table.entity!r}'s {f.stat} of {f.source!r} over all its periods "
            f"({where}; r² {1 - f.u_all:.4f} over {f.entities} entities"
            + (f", over the training periods r² {1 - f.u_train:.4f})" if f.split else ")")
        )
        kinds = [LATER, "fit_on_all_rows"] if f.split and rule.level >= Level.HIGH else [LATER]
        detail = {"source": f.source, "statistic": f.stat, "r2_train": 1 - f.u_train}
        out += [
            make_evidence(name, k, rule, "entity_aggregate_r2", 1 - f.u_all, 1 - th.exact,
                          text, 1 - f.u_all, detail)
            for k in kinds
        ]  # fmt: skip
    return out
