"""The ``solo`` probe: what each column, alone and strictly out of fold, says about the target.

Each column is coded into bins (quantiles of numbers and datetimes, categories, a bin for
missing values) and every row is scored by its bin's target statistics computed on the
other folds, so a high-cardinality column cannot memorise the target. Power alone cannot
tell a leak from a strong honest feature, so three more figures decide the level:

- ``share``: how much of what a column's peers leave unexplained in it the target
  explains (``_peers``); a numeric target enters as its normal scores with three hinges
  and steps at its deciles, so a curved or stepped tie to it (a noisy copy of a skewed
  count, a count that differs above the median) counts as the target's. On
  scikit-learn's breast-cancer data a copy of the target with 5 % of labels flipped
  reaches 0.49 and no honest column more than 0.05 (measured;
  ``tests/probes/test_solo.py``); the share floors of ``SoloThresholds`` sit between,
  and were checked on wine, diabetes and the demo scenario;
- ``reference``: an out-of-fold LightGBM on the columns that are not suspects; a column
  that alone matches what all of them reach together is suspect;
- near-determinism: an out-of-fold Gini of 0.98 (AUC 0.99) or R² of 0.98 alone is
  critical (common practice, no source: honest tabular features rarely reach it);
- ``unique_lift``: what the column adds to the rest of the table. For the suspects (the
  columns that a large lift would raise to high) and the strongest columns, at most
  ``lift_columns`` of them, the reference model is fitted on the other columns without
  and with the column, the other suspects left out of both, so two leaks cannot clear
  each other. A leak matters through what it adds: "almost a function of the target"
  alone is no leak when the lift is nil (an honest site code the class nearly fixes).
  Where the rest leaves under one row of the smallest class misranked, a lift cannot be
  measured: then a near-function needs a share that stands out, or near-identity with the
  target (U ≥ 0.7 with power 0.8) to stay at high;
- calibration: each share is placed among the same share of the table's other columns
  (robust z on the log residual-variance scale), so a share 20 times the typical one
  is high even under a fixed floor, and one that does not stand out is not;
- presence: one bin alone (the missing values, or one pile such as the zeros) that tells
  the two classes apart, with a large unique lift, is high: a value filled in only
  when the outcome happened.

Evidence ``detail["unique_lift"]`` (also read for a column's impact) is ``{"value",
"low", "high", "statistic", "folds", "error_without", "error_with", "without"}``:
``value`` is 1 − error_with / error_without on the pooled out-of-fold predictions of the
seeded reference model (error = 1 − AUC, macro one-vs-rest for several classes, or
1 − R²; ``statistic`` says which), ``low`` and ``high`` the smallest and largest of the
same ratio per fold (``folds`` of them, the same folds in both fits), ``without`` the
other suspects left out of both fits. Columns that were not examined carry ``None``.

The level is read from a declared table of named rules (``_rules.RULES``: name, level,
condition on the figures, the figure shown and the sentence), first match wins, then caps
(a small sample, too few peers) lower it; ``detail["decided_by"]`` names the rule. Issue 24's
classes are rules of their own: ``fellow_of_leak`` (two near-perfect leaks that explain each
other: a strong column that a suspect found at high explains beyond the target more than
its other peers do is that suspect's fellow, left out of its lift, and high itself with a
large lift), ``share_untellable`` (a large lift beside peers that tell nothing of the target
cannot tell cause from effect: medium), ``target_function_of_column`` (every value of a
coded column belongs to one class and it is finer than the target: a lookup, medium).

Identifiers and the row position are audited for ``row_order_tells_target``: they have no
business predicting anything, so the level follows the effect size and a z-test against
the Mann–Whitney null (z ≥ 4 for high; common practice for many parallel tests). An
identifier stays at high only when it adds to the features: at most medium when its order
follows a feature that predicts as well (ids numbered after a sort) or when the reference
model gains nothing from it (unique lift under ``lift_nil``). The row position is no input
of any model, so the order a file is stored in is at most medium, and low once a split is
given (it can bias only splits or folds cut by position), unless the file is stored in the
order of an identifier found at high: then the two findings agree (the order reaches a
model through that column). On the clean-splits bench
(``benchmarks/clean_splits.py``, 9 honest tables, 3 seeds) these caps took identifiers and
row position at high from 7 and 13 of 22 runs to 0.
"""

from __future__ import annotations

from dataclasses import dataclass, replace
from typing import Any

import numpy as np
from scipy.special import ndtri
from scipy.stats import norm

from featureaudit.kit.oof import CellScore, Target, make_target, score_bins
from featureaudit.kit.registry import Capabilities, Probe, ProbeOutput, register
from featureaudit.kit.sample import content_keys, order_keys
from featureaudit.kit.stats import Bins, bin_codes
from featureaudit.load.io import numeric_view
from featureaudit.load.settings import Settings
from featureaudit.load.table import AuditTable
from featureaudit.load.threads import column_map
from featureaudit.probes.solo._detail import common_detail
from featureaudit.probes.solo._order import (
    followed_feature,
    order_values,
    stored_in_order,
    within_partition_order,
)
from featureaudit.probes.solo._peers import (
    PeerInput,
    RefFit,
    beyond_target,
    dependence_shares,
    normal_scores,
    reference_fit,
    unique_lift,
)
from featureaudit.probes.solo._rules import Rule, decide, facts
from featureaudit.probes.solo._thresholds import (
    EDGE_ROWS,
    THRESHOLDS,
    ProxyFigures,
    SoloThresholds,
    measurable,
)
from featureaudit.vocab.evidence import Evidence, Skip
from featureaudit.vocab.levels import Level


def decide_proxy(f: ProxyFigures, th: SoloThresholds = THRESHOLDS) -> tuple[Level, str]:
    """The level of a ``target_proxy`` and the name of the rule that set it (a pure function:
    the first rule of ``RULES`` whose condition holds, lowered by ``CAPS``)."""
    level, rule = decide(facts(f, th))
    return level, rule.name


def decide_order(z: float, power: float, small: bool, th: SoloThresholds = THRESHOLDS) -> Level:
    """The level of ``row_order_tells_target`` from its z and power (a pure function)."""
    level = Level.NONE
    if z >= th.order(th.order_z, Level.LOW):
        level = Level.LOW
    if z >= th.order(th.order_z, Level.MEDIUM) and power >= th.order(th.order_power, Level.MEDIUM):
        level = Level.MEDIUM
    if z >= th.order(th.order_z, Level.HIGH) and power >= th.order(th.order_power, Level.HIGH):
        critical = power >= th.order(th.order_power, Level.CRITICAL)
        level = Level.CRITICAL if critical else Level.HIGH
    if small and level >= Level.HIGH:
        level = Level.MEDIUM
    return level


@register
class Solo(Probe):
    """Each column alone, out of fold: target proxies, and identifiers or row order that tell
    the target. Thresholds: see the module docstring."""

    name = "solo"
    scope = "column"
    kinds = ("target_proxy", "row_order_tells_target")
    thresholds = THRESHOLDS
    capabilities = Capabilities(needs_target=True)

    @classmethod
    def describe(cls, settings: Settings) -> str:
        """The method and its thresholds in one paragraph, with the settings in force."""
        th = cls.thresholds
        shares = ", ".join(
            f"{lv.label} from the typical share + {f:g} with power {th.share_min_power(lv):g}"
            for lv, f in reversed(th.share_floors)
        )
        func = ", ".join(
            f"{lv.label} from U {u:g} with power {p:g}"
            for lv, u, p in sorted(th.function_of_target)
        )
        order = ", ".join(f"{lv.label} from z {z:g}" for lv, z in reversed(th.order_z))
        return (
            f"Each column alone, strictly out of fold ({settings.folds} folds, numbers in "
            f"{settings.bins} quantile bins, categories as they are, a bin for missing "
            f"values): its power is the Gini of its AUC or its R². The share of what its "
            f"peers leave unexplained in it that the target explains (on a seeded sample of "
            f"at most {settings.reference_rows} rows, at least {th.min_peers} peers) sets "
            f"the level: {shares}; high needs the peers to add at most {th.beyond_max:g} "
            f"beyond the target and to explain {th.peer_signal:g} of the column, or the "
            f"table's other columns to be explained by theirs {th.table_beyond:g} beyond "
            f"it (median). A column "
            f"alone within {th.match_margin:g} of an out-of-fold LightGBM on the other "
            f"columns (power {th.match_power:g} or more) is high; almost a function of the "
            f"target (Theil's U): {func}; power {th.deterministic:g} alone is critical. "
            f"A share reaches high only {th.share_z_high:g} robust z above the table's other "
            f"shares (on the log residual-variance scale), and then even under the fixed "
            f"floor. For at most {th.lift_columns} suspects or strong columns the unique lift "
            f"is measured: the relative reduction of 1 − AUC (or 1 − R²) when the column "
            f"joins the other columns (other suspects left out) in the same reference model, "
            f"with its range over the folds; under {th.lift_nil:g} it is nil and holds "
            f"determinism at low and other rules at medium. A near-function of the target "
            f"stays at high only with a lift of {th.lift_large:g} or more or a share standing "
            f"out at z {th.share_z_function:g}; where the lift cannot be measured, only the "
            f"critical figures of determinism hold it at high. When the others already reach an "
            f"error under {th.lift_error_floor:g} (or under {th.lift_error_rows:g} rows of the "
            f"smallest class wholly misranked) it cannot be measured. One bin alone (missing "
            f"values or one pile) separating the classes by {th.presence_power:g} with a lift "
            f"of {th.lift_large:g} or more is high. "
            f"A large lift, or a table whose peers are explained beyond the target, tells an "
            f"effect of the outcome from a cause only where the other columns tell the "
            f"target (the column's R² on the target times their power at least "
            f"{th.peer_signal:g}); otherwise a strong share is medium. A column of power "
            f"{th.strong_alone:g} that alone matches the rest (within {th.match_margin:g}) "
            f"and explains a suspect found at high beyond the target more than its other "
            f"peers do is that suspect's fellow, left out of its lift, and high with a lift "
            f"of {th.lift_large:g}. A column whose every value belongs to one class and that "
            f"has more values than the target has classes is medium: the target is a "
            f"function of it. "
            f"Identifiers and the row position tell the target when the Mann–Whitney z "
            f"reaches {order} (power {th.order(th.order_power, Level.HIGH):g} for high); the "
            f"row position takes the level of an identifier found at high when the file is "
            f"stored in its order. "
            f"Under {settings.min_rows} labelled rows levels stop at medium."
        )

    def run(self, table: AuditTable, settings: Settings) -> ProbeOutput:
        if table.target is None or table.y is None or table.target_problem:
            return [], [Skip(self.name, table.target_problem or "no target values")]
        row_keys = order_keys(table.frame, [table.target, *table.features], settings.seed + 104729)
        t = make_target(
            table.y,
            table.labelled,
            table.task or "binary",
            max(len(table.classes), 1),
            settings.folds,
            settings.seed,
            row_keys,
        )
        if len(t.rows) < 4 * settings.folds:
            return [], [
                Skip(
                    self.name,
                    f"only {len(t.rows)} labelled rows; at least {4 * settings.folds} are needed",
                )
            ]
        small = len(t.rows) < settings.min_rows
        scores, bins, skipped = _score_columns(table, t, settings, row_keys, self.name)
        features = [c for c in table.features if c in scores]
        ids, follows = _identifiers(table, t, scores, bins, features, settings, small)
        lifted = [n for n, f in follows.items() if f is None]
        peers, ref = _peer_figures(table, t, features, scores, bins, settings, small, lifted)
        evidence = [
            _id_capped(ev, follows.get(name), ref.get("identifier_lift", {}).get(name))
            for name, ev in ids.items()
        ]
        evidence += [
            _proxy_evidence(
                name,
                scores[name],
                bins[name],
                t,
                peers.get(name, {}),
                ref,
                small,
                len(features) - 1,
            )
            for name in features
        ]
        row = _position_evidence(table, t, settings, small)
        evidence.append(_position_carried(row, table, evidence))
        return evidence, skipped


def _score_columns(
    table: AuditTable, t: Target, settings: Settings, row_keys: np.ndarray, probe: str
) -> tuple[dict[str, CellScore], dict[str, Bins], list[Skip]]:
    """Every identifier and feature binned and scored out of fold; quantile edges from the
    rows of smallest key (the same rows in any file order)."""
    edge_rows = (
        np.sort(np.argpartition(row_keys, EDGE_ROWS - 1)[:EDGE_ROWS])
        if table.n_rows > EDGE_ROWS
        else None
    )
    skipped: list[Skip] = []
    scores: dict[str, CellScore] = {}
    bins: dict[str, Bins] = {}

    def one(name: str) -> tuple[str, Bins, CellScore | None]:
        b = bin_codes(
            table.frame[name],
            settings.bins,
            order=name in table.id_columns,
            seed=settings.seed,
            sample=EDGE_ROWS,
            pool=edge_rows,
        )
        if not (b.codes[t.rows] > 0).any():
            return name, b, None
        score = score_bins(b.codes, b.n_bins, t)
        if not _encoded_in_peer_test(table.frame[name], t):
            b.codes = None  # type: ignore[assignment]  # only encoded columns keep codes
        return name, b, score

    # numpy releases the GIL in its sorting and searching loops: one thread per CPU
    for name, b, score in column_map(one, table.id_columns + table.features, settings.n_jobs):
        if score is None:
            skipped.append(Skip(probe, "no values in the labelled rows", name))
        else:
            bins[name], scores[name] = b, score
    return scores, bins, skipped


def _identifiers(
    table: AuditTable,
    t: Target,
    scores: dict[str, CellScore],
    bins: dict[str, Bins],
    features: list[str],
    settings: Settings,
    small: bool,
) -> tuple[dict[str, Evidence], dict[str, dict | None]]:
    """The identifiers' order evidence (judged within partitions when high), and for those
    still at high the feature whose order each follows (None: none)."""
    ids = {
        name: _order_evidence(name, scores[name], bins[name], t, small, "identifier")
        for name in table.id_columns
        if name in scores
    }
    for name, ev in list(ids.items()):
        if Level.parse(ev.level) >= Level.HIGH:
            ids[name] = _within_partitions(ev, table, name, t, small, settings)
    follows = {
        name: followed_feature(table, t, name, scores, features, settings.seed)
        for name, ev in ids.items()
        if Level.parse(ev.level) >= Level.HIGH
    }
    return ids, follows


def _position_evidence(table: AuditTable, t: Target, settings: Settings, small: bool) -> Evidence:
    """The row position in ``bins`` equal slices, audited as an identifier and capped."""
    position = (
        np.minimum(np.arange(table.n_rows) * settings.bins // table.n_rows, settings.bins - 1) + 1
    )
    pos_score = score_bins(position, settings.bins + 1, t)
    labels = [
        f"rows {i * 100 // settings.bins}–{(i + 1) * 100 // settings.bins}%"
        for i in range(settings.bins)
    ]
    pos_bins = Bins(position, ["(none)", *labels], "order")
    row = _order_evidence(None, pos_score, pos_bins, t, small, "row position")
    return _position_capped(row, split_given=table.heldout is not None)


def _id_capped(ev: Evidence, follows: dict | None, lift: dict | None) -> Evidence:
    """An identifier at high or above stays there only when it adds to the features: at most
    medium when its order follows a feature that predicts as well, or when the reference
    model on the features gains nothing from it (unique lift under ``lift_nil``); an
    identifier then copies what the inputs say, it does not leak beyond them."""
    if Level.parse(ev.level) < Level.HIGH:
        return ev
    th = THRESHOLDS
    if follows is not None:
        why = (
            f"; issued in the order of {follows['feature']} (Spearman "
            f"{follows['spearman']:.2f} within each partition), which predicts as well: a "
            "copy of that input"
        )
    elif (
        lift is not None
        and measurable(lift["error_without"], lift.get("error_rows"), th)
        and lift["value"] < th.lift_nil
    ):
        why = (
            f"; it adds nothing to the other columns (unique lift {lift['value']:.2f}, "
            f"{lift['low']:.2f} to {lift['high']:.2f} over folds): its order follows them"
        )
    else:
        if lift is None:
            return ev
        return replace(ev, detail={**ev.detail, "unique_lift": lift})
    return replace(
        ev,
        level=Level.MEDIUM,
        detail={
            **ev.detail,
            "follows": follows,
            "unique_lift": lift,
            "level_before_cap": ev.level,
        },
        summary=ev.summary + why,
    )


def _within_partitions(
    ev: Evidence, table: AuditTable, name: str, t: Target, small: bool, settings: Settings
) -> Evidence:
    """An identifier keeps its level only as far as its order tells the target within each
    partition: ids numbered through the training rows and then the held-out ones tell the
    target across the split exactly as far as the split itself differs, which the split
    probes audit; the identifier then carries the within-partition level."""
    ranks = within_partition_order(table, name)
    if ranks is None:
        return ev
    b = bin_codes(ranks, settings.bins, order=True, seed=settings.seed)
    if not (b.codes[t.rows] > 0).any():
        return ev
    within = _order_evidence(name, score_bins(b.codes, b.n_bins, t), b, t, small, "identifier")
    if Level.parse(within.level) >= Level.parse(ev.level):
        return ev
    z = within.detail["z"]
    what = "nothing" if within.level == "none" else "less"
    return replace(
        ev,
        level=within.level,
        detail={**ev.detail, "within_partitions": {"level": within.level, "z": z}},
        summary=f"{ev.summary}; within each partition its order tells {what} (z = {z:.1f}): "
        "it is numbered one partition after another, and the split findings say how the "
        "partitions differ",
    )


def _position_capped(ev: Evidence, split_given: bool) -> Evidence:
    """The row position is no model input: the order a file is stored in matters only to a
    split or folds cut by position, so it is at most medium, and low once a split is given."""
    cap = Level.LOW if split_given else Level.MEDIUM
    if Level.parse(ev.level) <= cap:
        return ev
    return replace(
        ev,
        level=cap,
        detail={**ev.detail, "level_before_cap": ev.level},
        summary=ev.summary
        + "; the file's order, not an input: it biases only splits or folds cut by position"
        + (" (the split given here is not)" if split_given else "; shuffle before cutting"),
    )


def _position_carried(ev: Evidence, table: AuditTable, found: list[Evidence]) -> Evidence:
    """The row position takes the level of an identifier found at high or above when the file
    is stored in that identifier's order: the order then reaches a model through a column it
    reads, and the two findings say the same thing (issue 24, class 8)."""
    carriers = [
        e
        for e in found
        if e.kind == "row_order_tells_target"
        and e.column is not None
        and Level.parse(e.level) >= Level.HIGH
        and Level.parse(e.level) > Level.parse(ev.level)
        and stored_in_order(table.frame[e.column])
    ]
    if not carriers:
        return ev
    top = max(carriers, key=lambda e: Level.parse(e.level))
    return replace(
        ev,
        level=top.level,
        detail={**ev.detail, "carried_by": top.column, "level_before_carried": ev.level},
        summary=f"{ev.summary}; the file is stored in the order of {top.column}, a column found "
        f"at {top.level}: the order reaches a model through it",
    )


def _encoded_in_peer_test(s, t: Target) -> bool:  # noqa: ANN001
    """Whether the peer test represents this column by its out-of-fold encoding."""
    values = numeric_view(s)
    if values is None:
        return True
    return float(np.mean(~np.isfinite(values[t.rows]))) >= THRESHOLDS.missing_as_encoding


def _power_text(score: CellScore) -> str:
    label = {
        "oof_auc": "AUC",
        "oof_macro_auc": "macro AUC",
        "oof_r2": "R² (target's normal scores)",
    }[score.statistic]
    return f"out-of-fold {label} {score.value:.3f}"


def _order_evidence(
    name: str | None, score: CellScore, b: Bins, t: Target, small: bool, what: str
) -> Evidence:
    if t.task == "numeric":
        z = (score.spearman or 0.0) / score.null_se
    else:
        z = (score.value - 0.5) / score.null_se if score.null_se > 0 else 0.0
    level = decide_order(z, score.power, small).label
    detail = {**common_detail(score, b, t), "z": z, "what": what}
    text = (
        f"the {what} alone predicts the target ({_power_text(score)}, z = {z:.1f})"
        if level != "none"
        else f"the {what} carries no order signal ({_power_text(score)})"
    )
    return Evidence(
        "solo",
        "row_order_tells_target",
        score.statistic if name else f"row_position_{score.statistic}",
        score.value,
        _threshold(t, THRESHOLDS.order(THRESHOLDS.order_power, Level.HIGH)),
        level,
        column=name,
        summary=text + (" (small sample)" if small and level != "none" else ""),
        severity=min(1.0, score.power),
        detail=detail,
    )


def _threshold(t: Target, power: float) -> float:
    return power if t.task == "numeric" else (1 + power) / 2


def _proxy_figures(
    score: CellScore,
    t: Target,
    peer: dict,
    ref: dict,
    small: bool,
    n_peers: int,
    lift: dict | None = None,
    kind: str = "",
) -> ProxyFigures:
    """The figures ``decide_proxy`` reads, from the column's score and its peer test."""
    lift = lift if lift is not None else peer.get("unique_lift")
    rest = None
    if lift is not None:  # what the other columns reach without it, as a power
        e = float(lift["error_without"])
        rest = max(0.0, 1.0 - e if t.task == "numeric" else 1.0 - 2.0 * e)
    return ProxyFigures(
        score.power,
        score.determinism,
        peer.get("share"),
        peer.get("typical_share") or 0.0,
        peer.get("others_power", ref.get("power")),
        peer.get("peers_beyond_target"),
        (peer.get("r2_target") or 0.0) * (peer.get("target_r2_on_peers") or 0.0),
        n_peers,
        small,
        share_z=peer.get("share_z"),
        lift=None if lift is None else lift["value"],
        lift_low=0.0 if lift is None else lift["low"],
        lift_high=None if lift is None else lift["high"],
        lift_error=1.0 if lift is None else lift["error_without"],
        lift_error_rows=None if lift is None else lift.get("error_rows"),
        presence=_presence_power(score, t),
        typical_beyond=peer.get("typical_beyond"),
        r2_target=peer.get("r2_target") or 0.0,
        rest_power=rest,
        fellow=bool(peer.get("fellow_of")),
        lookup=_lookup(score, kind, t),
    )


def _lookup(score: CellScore, kind: str, t: Target) -> bool:
    """Whether every value of a coded column belongs to one class and the column is finer
    than the target (more values than classes): the target is then a function of it, as a
    vehicle class is of a model name. Read on the labelled rows' bins, missing values a bin."""
    if t.task == "numeric" or kind not in ("categories", "values"):
        return False
    rows = score.bin_rows > 0
    if int(rows.sum()) <= t.n_classes:
        return False
    stat = np.nan_to_num(score.bin_stat[rows])
    pure = (stat <= 0.0) | (stat >= 1.0) if t.n_classes == 2 else stat >= 1.0
    if not pure.all():
        return False
    # every value pure by chance? Under labels drawn at the class rates p_k a value of n rows
    # is pure with probability sum_k p_k^n (1 for a single row): the lookup must be beyond
    # the z the probe asks for high (a column of singletons is pure and says nothing)
    p = np.bincount(t.y.astype(np.int64), minlength=t.n_classes) / len(t.y)
    p = p[p > 0]
    n = score.bin_rows[rows]
    log_chance = float(np.sum(np.log(np.sum(p[None, :] ** n[:, None], axis=1))))
    z_high = THRESHOLDS.order(THRESHOLDS.order_z, Level.HIGH)
    return log_chance <= float(norm.logsf(z_high))


def _presence_power(score: CellScore, t: Target) -> float:
    """How well one bin alone (the missing values, or one pile such as the zeros) tells the
    two classes apart: the largest |TPR − FPR| of a bin's indicator (binary targets only)."""
    if t.n_classes != 2 or t.task == "numeric":
        return 0.0
    rows = score.bin_rows
    pos = np.nan_to_num(score.bin_stat) * rows
    neg = rows - pos
    n_pos, n_neg = float(pos.sum()), float(neg.sum())
    if n_pos <= 0 or n_neg <= 0:
        return 0.0
    return float(np.max(np.abs(pos / n_pos - neg / n_neg)))


def _shown(rule: Rule, rank: Level, f: ProxyFigures, score: CellScore, t: Target):  # noqa: ANN202
    """The statistic, value and threshold a rule shows on the evidence."""
    th = THRESHOLDS
    if rule.shows == "share" and f.share is not None:
        # the rules that hold a share at its level show that level's floor; the ones that
        # lower a share from high show the high floor it reached
        held = rule.name in ("share_critical", "share_high", "share_medium", "share_low")
        floor = th.share(rank if held else Level.HIGH)
        return "target_share_beyond_peers", f.share, f.typical_share + floor
    if rule.shows == "determinism":
        return (
            "determinism_given_target",
            f.determinism,
            dict((lv, u) for lv, u, _ in th.function_of_target)[rule.level],
        )
    if rule.shows == "match" and f.others_power is not None:
        return score.statistic, score.value, _threshold(t, f.others_power - th.match_margin)
    if rule.name.startswith("deterministic"):
        return score.statistic, score.value, _threshold(t, th.deterministic)
    return score.statistic, score.value, _threshold(t, th.share_min_power(Level.HIGH))


def _says(rule: Rule, f: ProxyFigures, score: CellScore) -> str:
    """The rule's sentence filled with the column's figures."""
    lift = (
        "not measured"
        if f.lift is None
        else f"{f.lift:.2f}, {f.lift_low:.2f} to "
        + (f"{f.lift_high:.2f} over folds" if f.lift_high is not None else "?")
    )
    return rule.says.format(
        txt=_power_text(score),
        share=f.share or 0.0,
        determinism=score.determinism,
        others=(1 + (f.others_power or 0.0)) / 2 if score.statistic != "oof_r2" else f.others_power,
        lift=lift,
    )


def _proxy_evidence(
    name: str,
    score: CellScore,
    b: Bins,
    t: Target,
    peer: dict,
    ref: dict,
    small: bool,
    n_peers: int,
) -> Evidence:
    figures = _proxy_figures(score, t, peer, ref, small, n_peers, kind=b.kind)
    x = facts(figures)
    rank, rule = decide(x)
    statistic, value, threshold = _shown(rule, rule.level, figures, score, t)
    summary = _says(rule, figures, score)
    if small and rank != Level.NONE:
        summary += f" (small sample: {len(t.rows)} labelled rows)"
    if not x.enough_peers and rank != Level.NONE and rule.needs_peers:
        summary += " (too few other columns to compare with)"
    share = figures.share
    detail = {
        **common_detail(score, b, t),
        "share_beyond_peers": share,
        "typical_share": figures.typical_share,
        "r2_on_peers": peer.get("r2_peers"),
        "r2_on_peers_and_target": peer.get("r2_peers_target"),
        "r2_on_target": peer.get("r2_target"),
        "peers_beyond_target": figures.peers_beyond_target,
        "target_r2_on_peers": peer.get("target_r2_on_peers"),
        "expected_r2_on_peers_if_effect": figures.expected_r2_if_effect,
        "peers": peer.get("peers"),
        "reference_power": figures.others_power,
        "reference_rows": ref.get("rows"),
        "reference_columns": ref.get("columns"),
        "decided_by": rule.name,
        "share_z": peer.get("share_z"),
        "typical_peers_beyond_target": figures.typical_beyond,
        "presence_power": figures.presence,
        "unique_lift": peer.get("unique_lift"),
    }
    severity = 0.5 * score.power + 0.5 * min(1.0, (share or 0.0) / 0.5)
    return Evidence(
        "solo",
        "target_proxy",
        statistic,
        value,
        threshold,
        rank.label,
        column=name,
        summary=summary,
        severity=severity,
        detail=detail,
    )


def _sample_rows(
    table: AuditTable, t: Target, features: list[str], settings: Settings
) -> np.ndarray:
    """The reference sample: at most ``reference_rows`` labelled rows of smallest content key
    (per class), in content order (then target: rows tied on the key share their features),
    so the reference's folds and its trees' sums see the same rows in the same order
    whatever the file's order (wine, shuffled: 0.9985 vs 0.9970 reference power flipped a
    noisy copy of the target between medium and high)."""
    n = len(t.rows)
    take = min(n, settings.reference_rows)
    keys = content_keys(table.frame.iloc[t.rows], features, settings.seed + 1)
    pick = np.arange(n)
    if take < n:  # the rows of smallest content key (per class): the file's order plays no part
        groups = (
            [np.arange(n)]
            if t.task == "numeric"
            else [np.flatnonzero(t.y == k) for k in range(t.n_classes)]
        )
        pick = np.sort(
            np.concatenate(
                [
                    g[np.argsort(keys[g], kind="stable")[: max(1, round(take * g.size / n))]]
                    for g in groups
                    if g.size
                ]
            )
        )
    return pick[np.lexsort((t.y[pick], keys[pick]))]


def _sample_column(
    table: AuditTable, t: Target, name: str, score: CellScore, b: Bins, pick: np.ndarray
) -> np.ndarray:
    """One column on the sample, standardised, NaN where missing: its normal scores, or its
    out-of-fold encoding (the most varied class's score for several classes)."""
    if b.codes is None:  # run() kept codes only for encoded columns
        values = numeric_view(table.frame[name])
        assert values is not None  # a column without codes is numeric
        raw = normal_scores(values[t.rows][pick])
    else:
        pred = score.row_scores(t, b.codes)[pick]
        if pred.ndim == 2:
            pred = pred[:, int(np.argmax(pred.var(axis=0)))] if t.n_classes > 2 else pred[:, 1]
        raw = pred.astype(np.float64)
    mu, sd = np.nanmean(raw) if np.isfinite(raw).any() else 0.0, np.nanstd(raw)
    return (raw - mu) / sd if sd > 0 else np.zeros_like(raw)


def _peer_input(
    table: AuditTable,
    t: Target,
    features: list[str],
    scores: dict[str, CellScore],
    bins: dict[str, Bins],
    pick: np.ndarray,
    ids: list[str],
) -> tuple[PeerInput, PeerInput]:
    """The sample's columns and target for the peer test, and the same with the identifiers
    ``ids`` after the features (for the fits only)."""
    trees = [_sample_column(table, t, c, scores[c], bins[c], pick) for c in features]
    cols = [np.nan_to_num(z, nan=0.0) for z in trees]
    y = t.y[pick]
    y_main = 0
    if t.task == "numeric":
        y_block, y_main = _target_basis(normal_scores(y)), 1
    else:
        y_block = np.stack([(y == k).astype(float) for k in range(max(1, t.n_classes - 1))], 1)
    power = np.array([scores[c].power for c in features])
    inp = PeerInput(
        features, np.column_stack(cols), np.column_stack(trees), y_block, y, power, y_main
    )
    if not ids:
        return inp, inp
    extra = [normal_scores(order_values(table.frame[c])[t.rows][pick]) for c in ids]
    extra = [np.nan_to_num((e - np.nanmean(e)) / (np.nanstd(e) or 1.0)) for e in extra]
    with_ids = PeerInput(
        features + ids,
        np.column_stack(cols + extra),
        np.column_stack(trees + extra),
        y_block,
        y,
        np.r_[power, [scores[c].power for c in ids]],
        y_main,
    )
    return inp, with_ids


# the lift that would raise a column most: large, with a rest that tells the target well
_BIG_LIFT = {
    "value": 1.0,
    "low": 1.0,
    "high": 1.0,
    "folds": 0,
    "error_without": THRESHOLDS.lift_error_floor,
}


@dataclass
class _Peers:
    """What the lifts of one audit share: the sample's fits, figures and columns."""

    t: Target
    features: list[str]
    scores: dict[str, CellScore]
    bins: dict[str, Bins]
    shares: dict[str, dict]
    ref: dict
    small: bool
    fits: _Fits
    keep: np.ndarray  # the reference columns, strongest first
    power: np.ndarray
    smallest: int | None

    def figures(self, i: int, lift: dict | None = None) -> ProxyFigures:
        name = self.features[i]
        n_peers = len(self.features) - 1
        score, peer, kind = self.scores[name], self.shares[name], self.bins[name].kind
        return _proxy_figures(score, self.t, peer, self.ref, self.small, n_peers, lift, kind)

    def lift(self, base: np.ndarray, i: int) -> dict:
        return unique_lift(self.fits(base), self.fits(np.r_[base, i]), self.smallest)


def _peer_figures(
    table: AuditTable,
    t: Target,
    features: list[str],
    scores: dict[str, CellScore],
    bins: dict[str, Bins],
    settings: Settings,
    small: bool,
    ids: list[str] | None = None,
) -> tuple[dict[str, dict], dict]:
    """Dependence shares, their place among the table's, the reference model and the unique
    lift of the strongest suspects (and of the identifiers ``ids``), on a seeded, stratified
    sample."""
    if len(features) < 2:
        return {}, {}
    pick = _sample_rows(table, t, features, settings)
    ids = list(ids or ())
    inp, fit_inp = _peer_input(table, t, features, scores, bins, pick, ids)
    shares, flagged = _shares(inp)
    power = inp.power
    keep = np.array(
        [i for i in np.argsort(-power) if features[i] not in flagged][: THRESHOLDS.max_reference],
        dtype=np.int64,
    )  # the reference
    fits = _Fits(fit_inp, t, settings)
    rows = min(len(t.rows), settings.reference_rows)
    ref: dict[str, Any] = {"power": fits(keep).power, "rows": int(rows), "columns": int(keep.size)}
    counts = np.bincount(inp.y_codes.astype(np.int64)) if t.task != "numeric" else np.zeros(0)
    smallest = int(counts[counts > 0].min()) if counts.size else None
    p = _Peers(t, features, scores, bins, shares, ref, small, fits, keep, power, smallest)
    suspects, strong, chosen = _examined(p, flagged)
    left_out = {features[k] for k in suspects} | flagged
    for i in chosen:
        _column_lift(p, i, suspects, strong, left_out)
    if ids:  # identifiers sit after the features in the fits' input
        base = np.array([k for k in keep if k not in suspects], dtype=np.int64)
        lifts = [p.lift(base, len(features) + j) for j in range(len(ids))]
        ref["identifier_lift"] = {
            c: {**lift, **_lift_label(t, left_out)} for c, lift in zip(ids, lifts, strict=True)
        }
    for i in strong:  # what all the other columns reach together, for the match rule
        shares[features[i]]["others_power"] = fits(keep[keep != i]).power
    return shares, ref


def _shares(inp: PeerInput) -> tuple[dict[str, dict], set[str]]:
    """Each column's dependence share, its z among the table's and the table's typical
    ``peers_beyond_target``; and the columns flagged as outcome-caused (left out of the
    reference)."""
    shares = dependence_shares(
        inp,
        flag_share=THRESHOLDS.share(Level.HIGH),
        flag_power=THRESHOLDS.share_min_power(Level.HIGH),
        min_power=0.0,
        flag_beyond=THRESHOLDS.beyond_max,
    )
    _share_z(shares)
    _typical_beyond(shares)
    return shares, {c for c, v in shares.items() if v["flag_round"] is not None}


def _examined(p: _Peers, flagged: set[str]) -> tuple[list[int], list[int], list[int]]:
    """The suspects (the columns a large unique lift would raise to high), the strongest
    unflagged columns (for the match rule), and the ones of either that get a lift, at most
    ``lift_columns``, strongest first."""
    th, power = THRESHOLDS, p.power
    by_power = np.argsort(-power, kind="stable")
    big = [decide_proxy(replace(p.figures(i, _BIG_LIFT), rest_power=None))[0] for i in by_power]
    suspects = [i for i, lv in zip(by_power, big, strict=True) if lv >= Level.HIGH]
    unflagged = [i for i in by_power if p.features[i] not in flagged]
    strong = [i for i in unflagged if power[i] >= th.match_power][: th.strong_reference_fits]
    chosen = [i for i in dict.fromkeys(suspects + strong) if power[i] >= th.lift_power]
    return suspects, strong, chosen[: th.lift_columns]


def _lift_label(t: Target, without: set[str]) -> dict:
    return {"statistic": "1 - R2" if t.task == "numeric" else "1 - AUC", "without": sorted(without)}


def _column_lift(
    p: _Peers, i: int, suspects: list[int], strong: list[int], left_out: set[str]
) -> None:
    """The unique lift of column ``i``: no other suspect, nor a near-perfect fellow of a
    suspect, serves as the peer that explains it away; its fellows are marked when it is
    found at high."""
    base = np.array([k for k in p.keep if k != i and k not in suspects], dtype=np.int64)
    lift = p.lift(base, i)
    fellows: list[int] = []
    if i in suspects and not (lift["value"] >= THRESHOLDS.lift_large and lift["low"] > 0):
        # a suspect a strong column explains away: is that column a near-perfect fellow?
        fellows = _fellows(i, base, strong, suspects, p.power, p.fits)
        base = np.array([k for k in base if k not in fellows], dtype=np.int64)
        lift = p.lift(base, i)
    name = p.features[i]
    without = left_out - {name} | {p.features[k] for k in fellows}
    p.shares[name]["unique_lift"] = {**lift, **_lift_label(p.t, without)}
    if fellows and decide_proxy(p.figures(i))[0] >= Level.HIGH:
        for k in fellows:
            p.shares[p.features[k]]["fellow_of"] = name


def _fellows(
    i: int,
    base: np.ndarray,
    strong: list[int],
    suspects: list[int],
    power: np.ndarray,
    fits: _Fits,
) -> list[int]:
    """The strong columns that alone predict the target as well as the rest of the table
    without them and without the suspect ``i``: near-perfect partners (an amount and its
    share of income), which must not serve as the honest explanation of each other."""
    th = THRESHOLDS
    return [
        k
        for k in strong
        if k != i
        and k not in suspects
        and k in base
        and power[k] >= th.strong_alone
        and power[k] >= fits(base[base != k]).power - th.match_margin
        and _partners(fits.inp, k, i, base)
    ]


def _partners(inp: PeerInput, k: int, i: int, base: np.ndarray) -> bool:
    """Whether column ``k`` explains the suspect ``i`` beyond the target at least as much as
    all of ``i``'s other peers together, and clearly (partial R² × rows, an F statistic with
    one degree of freedom, at least the square of the z the probe asks for high): the two
    carry one thing besides the outcome (a spend and its share of income), not two views of
    the outcome (a travel time and a noisy copy of the choice, independent given it)."""
    alone = beyond_target(inp, i, np.array([k]))
    others = beyond_target(inp, i, base[base != k])
    z_high = THRESHOLDS.order(THRESHOLDS.order_z, Level.HIGH)
    return alone >= others and alone * inp.z.shape[0] >= z_high**2


class _Fits:
    """Reference fits on sets of the sample's columns, each set fitted once."""

    def __init__(self, inp: PeerInput, t: Target, settings: Settings) -> None:
        self.inp, self.t, self.settings = inp, t, settings
        self.done: dict[tuple[int, ...], RefFit] = {}

    def __call__(self, columns: np.ndarray) -> RefFit:
        key = tuple(sorted(int(c) for c in columns))
        if key not in self.done:
            self.done[key] = reference_fit(
                self.inp,
                np.array(key, dtype=np.int64),
                self.t.task,
                self.t.n_classes,
                self.settings.seed,
                n_jobs=self.settings.n_jobs,
            )
        return self.done[key]


def _target_basis(ns: np.ndarray) -> np.ndarray:
    """A numeric target's normal scores, three hinges (knots at −1, 0 and 1) and steps at
    its deciles: a linear fit on them follows a curve or a jump of the target, so a noisy
    copy of a skewed target (star98's counts: the copy's ranks bend against the target's)
    or a count that differs above the median is not taken for a column the peers explain
    beyond the target."""
    hinges = [np.maximum(ns - k, 0.0) for k in (-1.0, 0.0, 1.0)]
    steps = [(ns > k).astype(float) for k in ndtri(np.arange(1, 10) / 10.0)]
    return np.column_stack([ns, *hinges, *steps])


def _typical_beyond(shares: dict[str, dict]) -> None:
    """The median ``peers_beyond_target`` of each column's others: how far this table's peers
    usually explain a column beyond the target (an outcome-caused column sits near 0)."""
    names = [c for c, v in shares.items() if v.get("peers_beyond_target") is not None]
    values = np.array([shares[c]["peers_beyond_target"] for c in names], dtype=float)
    for i, c in enumerate(names):
        others = np.delete(values, i)
        if others.size >= THRESHOLDS.min_peers:
            shares[c]["typical_beyond"] = float(np.median(others))


def _share_z(shares: dict[str, dict]) -> None:
    """Each share's robust z among the other columns' shares (median, scaled MAD), on the
    scale of −log(1 − share), the log of the residual-variance ratio: shares near 1 are far
    apart on it (a column the target explains 91 % of differs from one at 60 %)."""
    th = THRESHOLDS
    names = [c for c, v in shares.items() if v.get("share") is not None]
    values = -np.log(np.maximum(1.0 - np.array([shares[c]["share"] for c in names]), 1e-6))
    for i, c in enumerate(names):
        others = np.delete(values, i)
        if others.size < th.min_peers:
            continue
        med = float(np.median(others))
        scale = max(1.4826 * float(np.median(np.abs(others - med))), th.share_scale_floor)
        shares[c]["share_z"] = (values[i] - med) / scale
