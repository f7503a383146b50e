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
from featureaudit.hashing import column_codes, member, robust_params, row_hashes
from featureaudit.io import numeric_view
from featureaudit.registry import Probe, ProbeOutput, register
from featureaudit.settings import Settings
from featureaudit.table import AuditTable

COPY_LEVELS = (("critical", 0.10), ("high", 0.015), ("medium", 0.005))
ENTITY_LEVELS = (("critical", 0.5), ("high", 0.10), ("medium", 0.02))
MIN_TWINS = 5
NATURAL_RATIO = 0.25  # copies count as natural when independence alone explains a quarter
NEAR_FRACTION = 0.1   # a near copy lies closer than 10 % of the median train-train NN distance
BANDS, BAND_DIMS, CELL = 6, 6, 0.5
MAX_BUCKET = 50       # a band cell shared by more training rows than this is not evidence
LEVELS = ("none", "low", "medium", "high", "critical")


def _level(share: float, levels: tuple) -> str:
    for name, floor in levels:
        if share >= floor:
            return name
    return "low" if share > 0 else "none"


def _down(level: str) -> str:
    return LEVELS[max(0, LEVELS.index(level) - 1)]


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
            evidence.append(self._within(table, cols))
        else:
            evidence.append(self._across(table, cols, heldout, rng, settings))
        if table.entity is not None:
            evidence.append(self._entities(table, heldout, simulated))
        return evidence, skipped

    def _within(self, table: AuditTable, cols: list[str]) -> Evidence:
        h = row_hashes(table.frame, cols)
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
                  "examples": _pairs(table, h, np.ones(table.n_rows, bool),
                                     np.ones(table.n_rows, bool)), "simulated_split": True}
        return Evidence(self.name, "duplicate_rows_across_split", "share_rows_with_copy", share,
                        COPY_LEVELS[1][1], level,
                        summary=(f"{share:.1%} of rows have an exact copy in the table: a random "
                                 "split would put copies on both sides") if share else
                        "no two rows are exact copies", severity=min(1.0, share * 5),
                        detail=detail)

    def _across(self, table: AuditTable, cols: list[str], heldout: np.ndarray,
                rng: np.random.Generator, settings: Settings) -> Evidence:
        train = ~heldout
        h = row_hashes(table.frame, cols)
        exact = np.zeros(table.n_rows, dtype=bool)
        exact[heldout] = member(h[heldout], h[train])
        near, calib = _near_copies(table, cols, heldout, exact, rng)
        twin = exact | near
        n_held = int(heldout.sum())
        near_rows = float((near & ~exact).sum()) / calib["searched_share"]   # sampled search
        share_exact = float(exact.sum() / n_held)
        share = float((exact.sum() + near_rows) / n_held)
        agree, base = _agreement(table, h, exact, train)
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
                  "examples": _pairs(table, h, exact, train), "near_examples": calib.pop("pairs"),
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
        what = "a random 80/20 split would put" if simulated else "the split puts"
        examples = [str(v) for v in pd.unique(table.frame[table.entity][shared_rows])[:5]]
        return Evidence(
            self.name, "shared_entities_across_split", "heldout_row_share_with_shared_entity",
            share_rows, ENTITY_LEVELS[1][1], level,
            summary=(f"{what} {share_ent:.0%} of held-out {table.entity} values on both sides, "
                     f"holding {share_rows:.0%} of held-out rows") if share_rows else
            f"no {table.entity} appears on both sides of the split",
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


def _agreement(table: AuditTable, h: np.ndarray, exact: np.ndarray, train: np.ndarray
               ) -> tuple[float | None, float | None]:
    """How often a held-out twin's target equals its training copy's, and by chance."""
    if table.y is None or not exact.any():
        return None, None
    labelled = table.labelled
    t_idx = np.flatnonzero(train & labelled)
    first = pd.Series(t_idx, index=h[t_idx])
    first = first[~first.index.duplicated()]
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


def _pairs(table: AuditTable, h: np.ndarray, rows: np.ndarray, train: np.ndarray,
           k: int = 5) -> list[list[str]]:
    t_idx = np.flatnonzero(train)
    first = pd.Series(t_idx, index=h[t_idx])
    first = first[~first.index.duplicated()]
    found: list[tuple[int, int]] = []
    for i in np.flatnonzero(rows):
        j = first.get(h[i])
        if j is not None and j != i:
            found.append((int(j), int(i)))
        if len(found) >= k:
            break
    left = _row_labels(table, np.array([a for a, _ in found], dtype=np.int64))
    right = _row_labels(table, np.array([b for _, b in found], dtype=np.int64))
    return [[a, b] for a, b in zip(left, right, strict=True)]


class _Scaled:
    """Numeric columns with robust training-row scales, scaled only where needed."""

    def __init__(self, raw: list[np.ndarray], train: np.ndarray, sample: int = 50_000) -> None:
        self.raw = raw
        t_idx = np.flatnonzero(train)
        rows = t_idx[:: max(1, t_idx.size // sample)]       # evenly spaced training rows
        self.params = [robust_params(v, rows) for v in raw]

    def __len__(self) -> int:
        return len(self.raw)

    def column(self, j: int, rows: np.ndarray | slice = slice(None)) -> np.ndarray:
        med, scale = self.params[j]
        z = (self.raw[j][rows] - med) / scale
        return np.nan_to_num(z, nan=-99.0, posinf=99.0, neginf=-99.0)

    def distance(self, q: np.ndarray, t: np.ndarray) -> np.ndarray:
        """Root mean squared scaled difference over all numeric columns."""
        total = np.zeros(q.size)
        for j in range(len(self.raw)):
            total += (self.column(j, q) - self.column(j, t)) ** 2
        return np.sqrt(total / len(self.raw))


def _near_copies(table: AuditTable, cols: list[str], heldout: np.ndarray, exact: np.ndarray,
                 rng: np.random.Generator) -> tuple[np.ndarray, dict]:
    """Held-out rows with a near copy among training rows (banded hashing, then distance).

    At most 50,000 held-out rows are searched; ``calib["searched_share"]`` says which share
    of the candidates that is, so the caller can scale the count honestly.
    """
    train = ~heldout
    raw, cats = [], []
    for c in cols:
        v = numeric_view(table.frame[c])
        head = v[:2_000] if v is not None else None
        if v is not None and np.unique(head[np.isfinite(head)]).size > 10:
            raw.append(v)
        else:
            cats.append(column_codes(table.frame[c]))
    near = np.zeros(table.n_rows, dtype=bool)
    if not raw:
        return near, {"method": "no continuous columns: exact copies only", "pairs": [],
                      "searched_share": 1.0}
    numeric = _Scaled(raw, train)
    cat_key = np.zeros(table.n_rows, dtype=np.uint64)
    with np.errstate(over="ignore"):
        for c in cats:
            cat_key = cat_key * np.uint64(1099511628211) ^ c
    threshold, calib = _calibrate(numeric, cat_key, train, rng)
    candidates = np.flatnonzero(heldout & ~exact)
    queries = candidates if candidates.size <= 50_000 else \
        np.sort(rng.choice(candidates, 50_000, replace=False))
    calib["searched_share"] = float(queries.size / max(candidates.size, 1))
    t_idx = np.flatnonzero(train)
    best = np.full(table.n_rows, np.inf)
    partner = np.full(table.n_rows, -1)
    d = len(numeric)
    for _ in range(BANDS):
        dims = rng.choice(d, min(d, BAND_DIMS), replace=False)
        offset = rng.uniform(0, CELL)
        key = cat_key.copy()
        with np.errstate(over="ignore", invalid="ignore"):
            for j in dims:
                cell = np.floor((numeric.column(j) + offset) / CELL).astype(np.int64)
                key = key * np.uint64(0x100000001B3) ^ cell.astype(np.uint64)
        q, t = _band_pairs(key, t_idx, queries)
        if q.size == 0:
            continue
        dist = numeric.distance(q, t)
        order = np.lexsort((dist, q))
        q, t, dist = q[order], t[order], dist[order]
        first = np.r_[True, q[1:] != q[:-1]]
        better = dist[first] < best[q[first]]
        best[q[first][better]] = dist[first][better]
        partner[q[first][better]] = t[first][better]
    near[queries] = best[queries] <= threshold
    hits = np.flatnonzero(near)[:5]
    left, right = _row_labels(table, partner[hits]), _row_labels(table, hits)
    calib["pairs"] = [[a, b, float(best[i])] for a, b, i in zip(left, right, hits, strict=True)]
    calib["threshold"] = threshold
    calib["near_twin_distances"] = [float(v) for v in np.sort(best[near])[:50]]
    return near, calib


def _band_pairs(key: np.ndarray, t_idx: np.ndarray, queries: np.ndarray
                ) -> tuple[np.ndarray, np.ndarray]:
    """(query, training row) pairs that share a band key; keys held by more than MAX_BUCKET
    training rows are dropped, since a crowded cell is no evidence of a copy."""
    tk = key[t_idx]
    order = np.argsort(tk, kind="stable")
    tk, tr = tk[order], t_idx[order]
    starts = np.r_[0, np.flatnonzero(tk[1:] != tk[:-1]) + 1]
    sizes = np.diff(np.r_[starts, tk.size])
    keep = np.repeat(sizes <= MAX_BUCKET, sizes)
    tk, tr = tk[keep], tr[keep]
    qk = key[queries]
    lo = np.searchsorted(tk, qk, side="left")
    hi = np.searchsorted(tk, qk, side="right")
    n = hi - lo
    total = int(n.sum())
    if total == 0:
        return np.zeros(0, np.int64), np.zeros(0, np.int64)
    q = np.repeat(queries, n)
    offsets = np.arange(total) - np.repeat(np.cumsum(n) - n, n)
    return q, tr[np.repeat(lo, n) + offsets]


def _row_labels(table: AuditTable, rows: np.ndarray) -> list[str]:
    """The first identifier column's values for ``rows``, or their row numbers."""
    if table.id_columns:
        ids = table.frame[table.id_columns[0]].to_numpy()
        return [str(ids[i]) for i in rows]
    return [f"row {i}" for i in rows]


def _calibrate(numeric: _Scaled, cat_key: np.ndarray, train: np.ndarray,
               rng: np.random.Generator) -> tuple[float, dict]:
    """Threshold from training-to-training nearest-neighbour distances on a sample."""
    from sklearn.neighbors import NearestNeighbors
    t_idx = np.flatnonzero(train)
    sample = rng.choice(t_idx, min(t_idx.size, 3000), replace=False)
    xs = np.column_stack([numeric.column(j, sample) for j in range(len(numeric))])
    xs += (cat_key[sample] % np.uint64(9973)).astype(np.float64)[:, None] * 1e6
    nn = NearestNeighbors(n_neighbors=2).fit(xs)
    dist, _ = nn.kneighbors(xs)
    d = dist[:, 1] / np.sqrt(len(numeric))
    d = d[d < 1e5]
    positive = d[d > 0]
    median = float(np.median(positive)) if positive.size else 0.0
    threshold = NEAR_FRACTION * median
    return threshold, {"method": "banded hashing of robustly scaled numbers, categories exact",
                       "sample_rows": int(sample.size), "train_nn_q01": _q(d, 0.01),
                       "train_nn_q05": _q(d, 0.05), "train_nn_median": median,
                       "train_nn_exact_share": float(np.mean(d == 0)) if d.size else 0.0}


def _q(values: np.ndarray, q: float) -> float:
    return float(np.quantile(values, q)) if values.size else 0.0
