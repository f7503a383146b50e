"""The ``solo`` probe: what each column, alone and strictly out of fold, says about the target.

Each column is coded into bins (quantiles of numbers and datetimes, categories, a bin for
missing values) and every row is scored by its bin's target statistics computed on the
other folds, so a high-cardinality column cannot memorise the target. Power alone cannot
tell a leak from a strong honest feature, so three more figures decide the level:

- ``share``: how much of what a column's peers leave unexplained in it the target
  explains (``_peers``). On scikit-learn's breast-cancer data a copy of the target with
  5 % of labels flipped reaches 0.49 and no honest column more than 0.05 (measured;
  ``tests/probes/test_solo.py``); the levels of ``SHARE`` sit between, and were checked
  on wine, diabetes and the demo scenario;
- ``reference``: an out-of-fold LightGBM on the columns that are not suspects; a column
  that alone matches what all of them reach together is suspect;
- near-determinism: an out-of-fold Gini of 0.98 (AUC 0.99) or R² of 0.98 alone is
  critical (common practice, no source: honest tabular features rarely reach it).

Identifiers and the row position are audited for ``row_order_tells_target``: they have no
business predicting anything, so the level follows the effect size and a z-test against
the Mann–Whitney null (z ≥ 4 for high; common practice for many parallel tests).
"""

from __future__ import annotations

import numpy as np

from featureaudit.evidence import Evidence, Skip
from featureaudit.io import numeric_view
from featureaudit.levels import Level
from featureaudit.oof import CellScore, Target, make_target, score_bins
from featureaudit.probes.solo._detail import common_detail
from featureaudit.probes.solo._peers import (
    PeerInput,
    dependence_shares,
    normal_scores,
    reference_power,
)
from featureaudit.registry import Probe, ProbeOutput, register
from featureaudit.settings import Settings
from featureaudit.stats import Bins, bin_codes
from featureaudit.table import AuditTable
from featureaudit.threads import column_map

SHARE = {"critical": 0.35, "high": 0.20, "medium": 0.10, "low": 0.05}
SHARE_POWER = {"critical": 0.5, "high": 0.3, "medium": 0.2, "low": 0.1}
DETERMINISTIC = 0.98       # power alone that is critical
FUNCTION_OF_TARGET = {"critical": (0.7, 0.8), "high": (0.5, 0.5)}  # (Theil's U, power)
STRONG_ALONE = 0.8         # power alone that is worth a look (low) even when explained
MATCH_MARGIN = 0.02        # alone within this of all the other columns together
MIN_PEERS = 3              # fewer peers than this cannot tell a leak from a strong feature
BEYOND_MAX = 0.10          # an effect of the outcome: peers add at most this beyond the target
PEER_SIGNAL = 0.08         # under that reading the peers must explain this much of the column
MISSING_AS_ENCODING = 0.01  # numeric columns missing this often enter the peer test encoded
MAX_REFERENCE = 200        # columns in the reference model of a wide table
ORDER_POWER = {"critical": 0.6, "high": 0.2, "medium": 0.1}
ORDER_Z = {"high": 4.0, "medium": 3.0, "low": 2.0}


@register
class Solo(Probe):
    """Each column alone, out of fold: target proxies, and identifiers or row order that tell
    the target. Thresholds: see the module docstring."""

    name = "solo"
    scope = "column"
    kinds = ("target_proxy", "row_order_tells_target")

    def run(self, table: AuditTable, settings: Settings) -> ProbeOutput:
        if table.target is None or table.y is None:
            return [], [Skip(self.name, "no target given: pass --target or give a column the "
                                        "role target in the dictionary")]
        if table.target_problem:
            return [], [Skip(self.name, table.target_problem)]
        t = make_target(table.y, table.labelled, table.task or "binary",
                        max(len(table.classes), 1), settings.folds, settings.seed)
        if len(t.rows) < 4 * settings.folds:
            return [], [Skip(self.name, f"only {len(t.rows)} labelled rows; at least "
                                        f"{4 * settings.folds} are needed")]
        small = len(t.rows) < settings.min_rows
        skipped: list[Skip] = []
        scores: dict[str, CellScore] = {}
        bins: dict[str, Bins] = {}
        def one(name: str) -> tuple[str, Bins, CellScore | None]:
            b = bin_codes(table.frame[name], settings.bins, order=name in table.id_columns,
                          seed=settings.seed)
            if not (b.codes[t.rows] > 0).any():
                return name, b, None
            score = score_bins(b.codes, b.n_bins, t)
            if not _encoded_in_peer_test(table.frame[name], t):
                b.codes = None          # only encoded columns need their codes again
            return name, b, score

        # numpy releases the GIL in its sorting and searching loops: one thread per CPU
        for name, b, score in column_map(one, table.id_columns + table.features,
                                         settings.n_jobs):
            if score is None:
                skipped.append(Skip(self.name, "no values in the labelled rows", name))
            else:
                bins[name], scores[name] = b, score
        features = [c for c in table.features if c in scores]
        peers, ref = _peer_figures(table, t, features, scores, bins, settings)
        evidence = [_order_evidence(name, scores[name], bins[name], t, small, "identifier")
                    for name in table.id_columns if name in scores]
        evidence += [_proxy_evidence(name, scores[name], bins[name], t, peers.get(name, {}),
                                     ref, small, len(features) - 1) for name in features]
        position = np.minimum(np.arange(table.n_rows) * settings.bins // table.n_rows,
                              settings.bins - 1) + 1
        pos_score = score_bins(position, settings.bins + 1, t)
        pos_bins = Bins(position, ["(none)"] + [f"rows {i * 100 // settings.bins}–"
                                                f"{(i + 1) * 100 // settings.bins}%"
                                                for i in range(settings.bins)], "order")
        row = _order_evidence(None, pos_score, pos_bins, t, small, "row position")
        evidence.append(row)
        return evidence, skipped


def _encoded_in_peer_test(s, t: Target) -> bool:  # noqa: ANN001
    """Whether the peer test represents this column by its out-of-fold encoding."""
    values = numeric_view(s)
    if values is None:
        return True
    return float(np.mean(~np.isfinite(values[t.rows]))) >= MISSING_AS_ENCODING


def _power_text(score: CellScore) -> str:
    label = {"oof_auc": "AUC", "oof_macro_auc": "macro AUC",
             "oof_r2": "R² (target's normal scores)"}[score.statistic]
    return f"out-of-fold {label} {score.value:.3f}"


def _order_evidence(name: str | None, score: CellScore, b: Bins, t: Target, small: bool,
                    what: str) -> Evidence:
    if t.task == "numeric":
        z = (score.spearman or 0.0) / score.null_se
    else:
        z = (score.value - 0.5) / score.null_se if score.null_se > 0 else 0.0
    level = "none"
    if z >= ORDER_Z["low"]:
        level = "low"
    if z >= ORDER_Z["medium"] and score.power >= ORDER_POWER["medium"]:
        level = "medium"
    if z >= ORDER_Z["high"] and score.power >= ORDER_POWER["high"]:
        level = "critical" if score.power >= ORDER_POWER["critical"] else "high"
    if small and level in ("high", "critical"):
        level = "medium"
    detail = {**common_detail(score, b, t), "z": z, "what": what}
    text = (f"the {what} alone predicts the target ({_power_text(score)}, z = {z:.1f})"
            if level != "none" else f"the {what} carries no order signal ({_power_text(score)})")
    return Evidence("solo", "row_order_tells_target",
                    score.statistic if name else f"row_position_{score.statistic}",
                    score.value, _threshold(t, ORDER_POWER["high"]), level, column=name,
                    summary=text + (" (small sample)" if small and level != "none" else ""),
                    severity=min(1.0, score.power), detail=detail)


def _threshold(t: Target, power: float) -> float:
    return power if t.task == "numeric" else (1 + power) / 2


def _proxy_evidence(name: str, score: CellScore, b: Bins, t: Target, peer: dict,
                    ref: dict, small: bool, n_peers: int) -> Evidence:
    power = score.power
    share = peer.get("share")
    typical = peer.get("typical_share") or 0.0
    others = peer.get("others_power", ref.get("power"))
    enough_peers = n_peers >= MIN_PEERS and share is not None
    beyond = peer.get("peers_beyond_target")
    effect_like = beyond is not None and beyond <= BEYOND_MAX
    expected = (peer.get("r2_target") or 0.0) * (peer.get("target_r2_on_peers") or 0.0)
    tellable = expected >= PEER_SIGNAL
    level, statistic, value, threshold, why = "none", score.statistic, score.value, \
        _threshold(t, SHARE_POWER["high"]), "explained"
    for lv in ("low", "medium", "high", "critical"):
        if enough_peers and share >= typical + SHARE[lv] and power >= SHARE_POWER[lv]:
            level, why = lv, "share"
    if why == "share" and level in ("high", "critical") and not (effect_like and tellable):
        level, why = "medium", "share_untold"
    if power >= STRONG_ALONE and Level.parse(level) < Level.LOW:
        level, why = "low", "strong"
    if (enough_peers and others is not None and power >= 0.6 and power >= others - MATCH_MARGIN
            and effect_like and tellable and Level.parse(level) < Level.HIGH):
        level, why = "high", "match"
    for lv in ("high", "critical"):
        u_min, p_min = FUNCTION_OF_TARGET[lv]
        if (score.determinism >= u_min and power >= p_min
                and Level.parse(level) <= Level.parse(lv)):
            level, why = lv, "function"
    if power >= DETERMINISTIC:
        explained = enough_peers and not effect_like and share < typical + SHARE["low"]
        level, why = ("high" if explained else "critical"), "deterministic"
    if small and level in ("high", "critical"):
        level = "medium"
    if not enough_peers and level in ("high", "critical") and why not in ("deterministic",
                                                                         "function"):
        level = "medium"
    txt = _power_text(score)
    if why == "share":
        statistic, value, threshold = "target_share_beyond_peers", share, typical + SHARE[level]
        summary = (f"the target explains {share:.0%} of what the other columns leave "
                   f"unexplained in it ({txt}): it looks caused by the outcome")
    elif why == "share_untold":
        statistic, value, threshold = "target_share_beyond_peers", share, typical + SHARE["high"]
        reason = ("the other columns explain it beyond the target, as they would an honest "
                  "feature" if not effect_like else "the other columns say too little about "
                  "the target to tell an effect of the outcome from a strong cause")
        summary = (f"the target explains {share:.0%} of what the other columns leave "
                   f"unexplained in it ({txt}), but {reason}")
    elif why == "deterministic":
        threshold = _threshold(t, DETERMINISTIC)
        summary = f"alone predicts the target almost exactly ({txt})"
    elif why == "function":
        statistic, value = "determinism_given_target", score.determinism
        threshold = FUNCTION_OF_TARGET[level][0]
        summary = (f"is almost a function of the target: the target accounts for "
                   f"{score.determinism:.0%} of its entropy ({txt})")
    elif why == "match":
        threshold = _threshold(t, others - MATCH_MARGIN)
        summary = (f"alone ({txt}) matches all the other columns together "
                   f"({_threshold(t, others):.3f})")
    else:
        share_txt = f"; the target adds {share:.0%} beyond its peers" if share is not None else ""
        summary = f"{txt}{share_txt}" + (", so it is explained by other columns"
                                         if why == "strong" else "")
    if small and level != "none":
        summary += f" (small sample: {len(t.rows)} labelled rows)"
    if not enough_peers and level != "none" and why not in ("deterministic", "function"):
        summary += " (too few other columns to compare with)"
    detail = {**common_detail(score, b, t), "share_beyond_peers": share, "typical_share": typical,
              "r2_on_peers": peer.get("r2_peers"), "r2_on_peers_and_target":
              peer.get("r2_peers_target"), "r2_on_target": peer.get("r2_target"),
              "peers_beyond_target": beyond, "target_r2_on_peers": peer.get("target_r2_on_peers"),
              "expected_r2_on_peers_if_effect": expected, "peers": peer.get("peers"),
              "reference_power": others, "reference_rows": ref.get("rows"),
              "reference_columns": ref.get("columns"), "decided_by": why}
    severity = 0.5 * power + 0.5 * min(1.0, (share or 0.0) / 0.5)
    return Evidence("solo", "target_proxy", statistic, value, threshold, level, column=name,
                    summary=summary, severity=severity, detail=detail)


def _peer_figures(table: AuditTable, t: Target, features: list[str],
                  scores: dict[str, CellScore], bins: dict[str, Bins], settings: Settings
                  ) -> tuple[dict[str, dict], dict]:
    """Dependence shares and reference-model power on a seeded, stratified sample."""
    if len(features) < 2:
        return {}, {}
    rng = np.random.default_rng(settings.seed + 1)
    n = len(t.rows)
    take = min(n, settings.reference_rows)
    if take < n and t.task != "numeric":
        pick = np.concatenate([rng.choice(np.flatnonzero(t.y == k),
                                          max(1, round(take * float(np.mean(t.y == k)))),
                                          replace=False) for k in range(t.n_classes)
                               if (t.y == k).any()])
    else:
        pick = rng.choice(n, take, replace=False) if take < n else np.arange(n)
    pick = np.sort(pick)
    cols, trees = [], []
    for name in features:
        if bins[name].codes is None:     # run() kept codes only for encoded columns
            raw = normal_scores(numeric_view(table.frame[name])[t.rows][pick])
        else:
            pred = scores[name].row_scores(t, bins[name].codes)[pick]
            if pred.ndim == 2:
                pred = pred[:, int(np.argmax(pred.var(axis=0)))] if t.n_classes > 2 else pred[:, 1]
            raw = pred.astype(np.float64)
        mu, sd = np.nanmean(raw) if np.isfinite(raw).any() else 0.0, np.nanstd(raw)
        z = (raw - mu) / sd if sd > 0 else np.zeros_like(raw)
        trees.append(z)
        cols.append(np.nan_to_num(z, nan=0.0))
    y = t.y[pick]
    if t.task == "numeric":
        y_block = normal_scores(y)[:, None]
    else:
        y_block = np.stack([(y == k).astype(float) for k in range(max(1, t.n_classes - 1))], 1)
    power = np.array([scores[c].power for c in features])
    inp = PeerInput(features, np.column_stack(cols), np.column_stack(trees), y_block, y, power)
    shares = dependence_shares(inp, flag_share=SHARE["high"], flag_power=SHARE_POWER["high"],
                               min_power=0.0, flag_beyond=BEYOND_MAX)
    flagged = {c for c, v in shares.items() if v["flag_round"] is not None}
    keep = np.array([i for i in np.argsort(-power) if features[i] not in flagged][:MAX_REFERENCE],
                    dtype=np.int64)   # the strongest non-suspect columns serve as reference
    ref = {"power": reference_power(inp, keep, t.task, t.n_classes, settings.seed,
                                     n_jobs=settings.n_jobs),
           "rows": int(take), "columns": int(keep.size)}
    strong = [i for i in np.argsort(-power) if features[i] not in flagged and power[i] >= 0.6][:2]
    for i in strong:
        rest = keep[keep != i]
        shares[features[i]]["others_power"] = reference_power(inp, rest, t.task, t.n_classes,
                                                              settings.seed,
                                                              n_jobs=settings.n_jobs)
    return shares, ref
