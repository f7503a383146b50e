"""The ``twins`` probe: the same rows, near copies, or the same entities on both sides of a split.

A held-out row with a copy among the training rows is not unseen: a model that memorises
scores it well, and validation overstates what it will do on new rows. Exact copies are
found by hashing the feature columns; near copies by banded hashing of robustly scaled
numbers (categories must match) and verified by distance, with the distance below which
two rows count as copies calibrated on the data's own training-to-training nearest
neighbours. Without a split, copies within the table would cross any random split.

Levels for the share of held-out rows with a twin (exact or near): 1.5 % is high, 10 %
critical, 0.5 % medium. De-duplicating 3.3 % of CIFAR-10's test images lowered accuracy by
9–14 % relative (Barz & Denzler 2020), so a few per cent is material. With fewer than five
twin rows, or when twins agree on the target no more than chance, the level drops one
step; when the columns take so few values that independence alone explains a quarter of
the copies, two steps (statsmodels' ``fair`` survey data: 13 % expected against 38 % seen;
correlated answers make natural copies commoner than independence predicts). Entities on
both sides: 10 % of held-out rows is high, 50 % critical (common practice, no source);
record-wise splits of subject data overstate accuracy (Saeb et al. 2016).
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from featureaudit.evidence import Evidence, Skip
from featureaudit.levels import Level
from featureaudit.probes.twins._nearcopy import near_copies, row_labels
from featureaudit.probes.twins.hashing import column_codes, member, row_hashes
from featureaudit.registry import Probe, ProbeOutput, register
from featureaudit.settings import Settings
from featureaudit.table import AuditTable

COPY_LEVELS = (("critical", 0.10), ("high", 0.015), ("medium", 0.005))
ENTITY_LEVELS = (("critical", 0.5), ("high", 0.10), ("medium", 0.02))
MIN_TWINS = 5
NATURAL_RATIO = 0.25  # copies count as natural when independence alone explains a quarter


def _level(share: float, levels: tuple) -> str:
    for name, floor in levels:
        if share >= floor:
            return name
    return "low" if share > 0 else "none"


def _down(level: str) -> str:
    return Level.parse(level).down().label


@register
class Twins(Probe):
    """Exact and near copies of training rows among held-out rows, and entities on both sides
    of the split. Thresholds: see the module docstring."""

    name = "twins"
    scope = "table"
    kinds = ("duplicate_rows_across_split", "shared_entities_across_split")

    def run(self, table: AuditTable, settings: Settings) -> ProbeOutput:
        evidence: list[Evidence] = []
        skipped: list[Skip] = []
        rng = np.random.default_rng(settings.seed)
        simulated = table.heldout is None
        heldout = table.heldout if not simulated else rng.random(table.n_rows) < 0.2
        cols = [c for c in table.features if table.frame[c].notna().any()]
        if not cols:
            skipped.append(Skip(self.name, "no feature column has values"))
        elif simulated:
            evidence.append(self._within(table, cols, settings))
        else:
            evidence.append(self._across(table, cols, heldout, rng, settings))
        if table.entity is not None:
            evidence.append(self._entities(table, heldout, simulated))
        return evidence, skipped

    def _within(self, table: AuditTable, cols: list[str], settings: Settings) -> Evidence:
        h = row_hashes(table.frame, cols, settings.n_jobs)
        dup = pd.Series(h).duplicated(keep=False).to_numpy()
        share = float(dup.mean())
        level = _level(share, COPY_LEVELS)
        if dup.sum() < MIN_TWINS and level != "none":
            level = _down(level)
        natural = _natural_share(table, cols, table.n_rows - 1) if share else 0.0
        if share and natural >= NATURAL_RATIO * share:
            level = _down(_down(level))
        detail = {"rows_with_copy": int(dup.sum()), "rows": table.n_rows,
                  "expected_share_if_columns_independent": natural,
                  "extra_copies": int(pd.Series(h).duplicated().sum()), "columns": len(cols),
                  "examples": _pairs(table, h, dup, _first_row(h, dup)), "simulated_split": True}
        return Evidence(self.name, "duplicate_rows_across_split", "share_rows_with_copy", share,
                        COPY_LEVELS[1][1], level,
                        summary=(f"{share:.1%} of rows have an exact copy in the table: a random "
                                 "split would put copies on both sides") if share else
                        "no two rows are exact copies", severity=min(1.0, share * 5),
                        detail=detail)

    def _across(self, table: AuditTable, cols: list[str], heldout: np.ndarray,
                rng: np.random.Generator, settings: Settings) -> Evidence:
        train = ~heldout
        h = row_hashes(table.frame, cols, settings.n_jobs)
        exact = np.zeros(table.n_rows, dtype=bool)
        exact[heldout] = member(h[heldout], h[train])
        near, calib = near_copies(table, cols, heldout, exact, rng)
        twin = exact | near
        n_held = int(heldout.sum())
        near_rows = float((near & ~exact).sum()) / calib["searched_share"]   # sampled search
        share_exact = float(exact.sum() / n_held)
        share = float((exact.sum() + near_rows) / n_held)
        first_train = _first_row(h, train)
        agree, base = _agreement(table, h, exact, train, first_train)
        level = _level(share, COPY_LEVELS)
        notes = []
        if exact.sum() + near_rows < MIN_TWINS and level != "none":
            level, _ = _down(level), notes.append(f"only {int(twin.sum())} twin rows")
        if agree is not None and base is not None and exact.sum() >= MIN_TWINS \
                and agree <= base + 0.05 and level != "none":
            level, _ = _down(level), notes.append("twins agree on the target no more than chance")
        natural = _natural_share(table, cols, int(train.sum())) if exact.any() else 0.0
        if exact.any() and natural >= NATURAL_RATIO * share_exact and level != "none":
            level = _down(_down(level))
            notes.append(f"the columns take few distinct values: {natural:.1%} of rows would "
                         "have a copy by chance, so most copies look natural")
        detail = {"heldout_rows": n_held, "heldout_rows_with_exact_twin": int(exact.sum()),
                  "heldout_rows_with_near_twin": int(round(near_rows)),
                  "share_exact": share_exact, "share_near": near_rows / n_held,
                  "label_agreement": agree, "label_agreement_by_chance": base,
                  "examples": _pairs(table, h, exact, first_train),
                  "near_examples": calib.pop("pairs"),
                  "calibration": calib, "columns": len(cols), "notes": notes,
                  "expected_share_if_columns_independent": natural}
        text = (f"{share:.1%} of held-out rows have a copy among the training rows "
                f"({share_exact:.1%} exact)") if share else \
            "no held-out row has an exact or near copy among the training rows"
        if agree is not None and exact.any():
            text += f"; copies share the target {agree:.0%} of the time (chance {base:.0%})"
        return Evidence(self.name, "duplicate_rows_across_split", "heldout_share_with_twin",
                        share, COPY_LEVELS[1][1], level, summary=text,
                        severity=min(1.0, share * 5), detail=detail)

    def _entities(self, table: AuditTable, heldout: np.ndarray, simulated: bool) -> Evidence:
        assert table.entity is not None
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
        level = _level(share_rows, ENTITY_LEVELS)
        if simulated:
            level = "low" if level != "none" else "none"
        examples = [str(v) for v in pd.unique(table.frame[table.entity][shared_rows])[:5]]
        lead = "under a random 80/20 split, " if simulated else ""
        summary = (f"{lead}{share_ent:.0%} of held-out {table.entity} values also have training "
                   f"rows; they hold {share_rows:.0%} of held-out rows") if share_rows else \
            f"no {table.entity} has rows on both sides of the split"
        return Evidence(
            self.name, "shared_entities_across_split", "heldout_row_share_with_shared_entity",
            share_rows, ENTITY_LEVELS[1][1], level, summary=summary,
            severity=min(1.0, share_rows), detail={
                "entity": table.entity, "heldout_entities": int(held_entities.size),
                "shared_entities": int(len(shared_entities)), "share_entities": share_ent,
                "share_heldout_rows": share_rows, "rows_missing_entity": int((~ok).sum()),
                "examples": examples, "simulated_split": simulated})


def _natural_share(table: AuditTable, cols: list[str], partners: int, sample: int = 20_000
                   ) -> float:
    """Share of rows expected to have an exact copy among ``partners`` others if the columns
    were independent, from each column's collision probability (unbiased on a sample). Data
    whose columns take few values has copies by nature, not by a pipeline mistake."""
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


def _agreement(table: AuditTable, h: np.ndarray, exact: np.ndarray, train: np.ndarray,
               first_train: pd.Series) -> tuple[float | None, float | None]:
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
        rng = np.random.default_rng(0)
        other = rng.choice(t_idx, rows.size)
        return agree, float(np.mean(np.abs(y[rows] - y[other]) <= tol))
    share = np.bincount(y[labelled], minlength=len(table.classes)) / labelled.sum()
    return float(np.mean(y[rows] == y[match])), float(np.sum(share ** 2))


def _first_row(h: np.ndarray, mask: np.ndarray) -> pd.Series:
    """The first row under ``mask`` for each row hash: hash -> row position."""
    idx = np.flatnonzero(mask)
    first = pd.Series(idx, index=h[idx])
    return first[~first.index.duplicated()]


def _pairs(table: AuditTable, h: np.ndarray, rows: np.ndarray, first: pd.Series,
           k: int = 5) -> list[list[str]]:
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
