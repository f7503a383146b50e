"""The ``separability`` probe: adversarial validation of the split.

Training rows are labelled 0 and held-out rows 1; an out-of-fold LightGBM on a seeded,
stratified sample tries to tell them apart. Under a fair random split it cannot, and its
AUC stays near 0.5 with a null spread of about sqrt((n0+n1+1)/(12 n0 n1)) (the
Mann–Whitney null; a classifier two-sample test, Lopez-Paz & Oquab 2017). The columns that
drive it are named by gain and by the AUC lost when the top three are left out.

The model sees the features only, and each in a form that does not depend on the order of
rows in the file (rows are sampled and folded in an order set by their content): numbers and
times as they are, categories as codes of their sorted values (codes in order of first
appearance would hand the model the row position, and a split given as ``--test`` files or a
file sorted by date would look separable). Identifier columns stay out of the model: an
identifier whose values differ between the sides (ids issued in order, a split on an id
range) is reported on its own, as that, at a modest level. Thresholds are in
:class:`SeparabilityThresholds`. Without a split, the split the user is about to make is
simulated: a random split holding out ``SIMULATED_HELDOUT_SHARE`` of the rows (expect about
0.5) and, when a time is known, a time-ordered one (the last rows in time), reported as
information.
"""

from __future__ import annotations

from dataclasses import asdict, dataclass, field

import numpy as np
import pandas as pd

from featureaudit.evidence import Evidence, Skip
from featureaudit.levels import Ladder, Level
from featureaudit.matrix import feature_matrix, order_free_codes
from featureaudit.models import lgbm_params
from featureaudit.registry import Capabilities, Probe, ProbeOutput, register
from featureaudit.settings import Settings
from featureaudit.splits import SIMULATED_HELDOUT_SHARE
from featureaudit.stats import hanley_mcneil_se, null_auc_se
from featureaudit.table import AuditTable
from featureaudit.threads import limited_blas, model_threads


@dataclass(frozen=True)
class SeparabilityThresholds:
    """The numbers behind the separability levels.

    ``auc``: adversarial AUC floors, critical 0.85, high 0.70, medium 0.60, each also
    needing ``z_high`` (critical, high) or ``z_medium`` (medium) null SEs above 0.5;
    ``z_low``: null SEs above 0.5 for low. Measured on random 75/25 splits of
    scikit-learn's breast-cancer, wine and diabetes data and statsmodels' modechoice, fair,
    anes96 and star98 data with a text record id, each in file order, sorted by the target
    and given as a ``--test`` frame, over 3 seeds: 0 of 63 at medium or above, 3 at low,
    the same level in all three orders every time; splits on a feature's top quartile of
    the same data: 21 of 21 at high or above, that feature the top driver. The floors
    themselves are common practice, no source. ``design_cap``: the highest level of a
    shift under a split made by time (``later_share`` of the held-out rows later than every
    training row) or by entity (at most ``shared_entity_share`` of held-out rows with an
    entity seen in training): such splits are made to show drift, and trending features or
    different firms separate the sides honestly (statsmodels' grunfeld split by firm and by
    year, AUC 0.9 and more, measured; the cut-offs are common practice, no source). A split
    along an undeclared group key counts as by entity (see :func:`group_key`: at least
    ``group_values`` values of ``group_rows`` rows each on average, side changes along the
    sorted values in ``group_interleave`` of them; statsmodels' modechoice split by
    individual, measured; common practice, no source).
    ``identifier_level``: the level of a split
    that only an identifier separates (common practice, no source: it is worth a look, not
    a leak). ``top_left_out``: drivers left out to see how much of the AUC they carry.
    """

    auc: Ladder = field(
        default=Ladder(
            "adversarial_auc", ((Level.CRITICAL, 0.85), (Level.HIGH, 0.70), (Level.MEDIUM, 0.60))
        )
    )
    z_high: float = 4.0
    z_medium: float = 3.0
    z_low: float = 2.0
    identifier_level: Level = Level.LOW
    top_left_out: int = 3
    design_cap: Level = Level.MEDIUM
    later_share: float = 0.9
    shared_entity_share: float = 0.01
    group_values: int = 20
    group_rows: float = 2.0
    group_interleave: float = 0.1


THRESHOLDS = SeparabilityThresholds()


def split_level(auc: float, z: float, t: SeparabilityThresholds = THRESHOLDS) -> Level:
    """The level of an adversarial AUC ``auc`` lying ``z`` null SEs above 0.5."""
    for lv, floor in t.auc.floors:
        if auc >= floor and z >= (t.z_high if lv >= Level.HIGH else t.z_medium):
            return lv
    return Level.LOW if z >= t.z_low else Level.NONE


def simulated_level(level: Level, simulated: str | None) -> Level:
    """A simulated split is information: a time-ordered one at most low, a random one none."""
    if simulated is None:
        return level
    return Level.LOW if simulated == "time" and level > Level.NONE else Level.NONE


def split_design(table: AuditTable, heldout: np.ndarray, groups: bool = True) -> str | None:
    """ "time" when the held-out rows come after the training rows, "entity" when they hold
    other entities than the training rows, "groups of X" along an undeclared group key
    (looked for only with ``groups``: it reads every feature), else None (a split that
    should not shift)."""
    t = THRESHOLDS
    base = table.cutoff_time if table.cutoff_time is not None else table.label_time
    if base is not None:
        times = pd.to_datetime(base, errors="coerce").to_numpy()
        train_t, held_t = times[~heldout], times[heldout]
        train_t, held_t = train_t[~pd.isna(train_t)], held_t[~pd.isna(held_t)]
        if train_t.size and held_t.size and np.mean(held_t > train_t.max()) >= t.later_share:
            return "time"
    if table.entity is not None:
        ent = table.frame[table.entity]
        seen = ent[~heldout].dropna().unique()
        held = ent[heldout]
        if held.notna().any() and held.isin(seen).mean() <= t.shared_entity_share:
            return "entity"
    key = group_key(table, heldout) if groups else None
    return f"groups of {key}" if key else None


def group_key(table: AuditTable, heldout: np.ndarray) -> str | None:
    """A feature the split was cut along as groups although no entity was declared: its
    values repeat (``group_rows`` rows per value or more), almost none of them occurs on
    both sides, and the sides interleave along its sorted values (a cut at a threshold is a
    shift along that column, not groups). Such a key lets the adversarial model memorise
    each value's side, which is the split's design, not a difference between the rows."""
    t = THRESHOLDS
    side = heldout.astype(np.int8)
    for c in sorted(table.features):
        s = table.frame[c]
        codes, uniques = pd.factorize(s, sort=True)
        ok = codes >= 0
        n_values = len(uniques)
        if n_values < t.group_values or ok.sum() < t.group_rows * n_values:
            continue
        held_per = np.bincount(codes[ok], weights=side[ok], minlength=n_values)
        rows_per = np.bincount(codes[ok], minlength=n_values)
        mixed = (held_per > 0) & (held_per < rows_per)
        if rows_per[mixed].sum() > t.shared_entity_share * ok.sum():
            continue
        held_value = held_per > 0
        changes = int(np.count_nonzero(held_value[1:] != held_value[:-1]))
        if changes >= t.group_interleave * n_values:
            return c
    return None


def identifier_level(auc: float, z: float, t: SeparabilityThresholds = THRESHOLDS) -> Level:
    """An identifier that separates the sides as a feature would reach high: reported at
    ``identifier_level``, since ids issued in order or split on a range are no shift."""
    return min(split_level(auc, z, t), t.identifier_level)


def adversarial_auc(
    x: np.ndarray, side: np.ndarray, seed: int, folds: int = 3, n_jobs: int = 1
) -> tuple[float, np.ndarray]:
    """Out-of-fold AUC of LightGBM telling side 1 from side 0, and total gain per column."""
    import lightgbm as lgb
    from sklearn.metrics import roc_auc_score
    from sklearn.model_selection import StratifiedKFold

    pred = np.zeros(len(side))
    gain = np.zeros(x.shape[1])
    params = lgbm_params(
        seed,
        model_threads(n_jobs, len(side)),
        n_estimators=50,
        learning_rate=0.12,
        min_child_samples=20,
        max_bin=63,
        importance_type="gain",
    )
    with limited_blas():
        for tr, te in StratifiedKFold(folds, shuffle=True, random_state=seed).split(x, side):
            model = lgb.LGBMClassifier(**params).fit(x[tr], side[tr])
            pred[te] = np.asarray(model.predict_proba(x[te]))[:, 1]
            gain += model.feature_importances_
    return float(roc_auc_score(side, pred)), gain


@register
class Separability(Probe):
    """Adversarial validation: can a model tell held-out rows from training rows, and which
    columns let it. Thresholds: :class:`SeparabilityThresholds`."""

    name = "separability"
    scope = "table"
    kinds = ("split_shift",)
    thresholds = THRESHOLDS
    capabilities = Capabilities(pairs=frozenset({"partition"}))

    @classmethod
    def describe(cls, settings: Settings) -> str:
        t = cls.thresholds
        return (
            "Adversarial validation: an out-of-fold LightGBM (3 folds, seed "
            f"{settings.seed}) on a stratified sample of up to {settings.reference_rows} rows "
            "tries to tell held-out rows from training rows, on the features only (categories "
            "as codes of their sorted values, so the order of rows plays no part; identifiers "
            "are judged on their own). The split is "
            f"{t.auc.describe()} in AUC, with {t.z_high:g} null standard errors above 0.5 for "
            f"high and critical and {t.z_medium:g} for medium, and low from {t.z_low:g}; an "
            "identifier whose values alone separate the sides is reported at "
            f"{t.identifier_level.label}. A split made by time ({t.later_share:.0%} of the "
            "held-out rows later than every training row) or by entity (at most "
            f"{t.shared_entity_share:.0%} of held-out rows with an entity seen in training, or "
            f"an undeclared group key of at least {t.group_values} values of {t.group_rows:g} "
            f"rows each, the sides changing in {t.group_interleave:.0%} of them) is shown "
            f"at {t.design_cap.label} at most: such splits are made to show drift. The "
            f"{t.top_left_out} strongest drivers are left out once to see how much of the AUC "
            "they carry. Without a split, a random split holding out "
            f"{SIMULATED_HELDOUT_SHARE:.0%} of the rows and, when a time is known, the last "
            f"{SIMULATED_HELDOUT_SHARE:.0%} in time are simulated and reported as information."
        )

    def run(self, table: AuditTable, settings: Settings) -> ProbeOutput:
        columns = [c for c in table.features if table.frame[c].notna().any()]
        ids = [c for c in table.id_columns if table.frame[c].notna().any()]
        if not columns and not ids:
            return [], [Skip(self.name, "no column with values to compare the sides on")]
        rng = np.random.default_rng(settings.seed)
        if table.heldout is not None:
            return [self._measure(table, columns, ids, table.heldout, rng, settings, None)], []
        random_split = rng.random(table.n_rows) < SIMULATED_HELDOUT_SHARE
        evidence = [self._measure(table, columns, ids, random_split, rng, settings, "random")]
        base = table.cutoff_time if table.cutoff_time is not None else table.label_time
        if base is not None:
            order = base.rank(method="first").to_numpy()
            late = order > np.nanquantile(order, 1 - SIMULATED_HELDOUT_SHARE)
            evidence.append(self._measure(table, columns, ids, late, rng, settings, "time"))
        return evidence, []

    def _measure(
        self,
        table: AuditTable,
        columns: list[str],
        ids: list[str],
        heldout: np.ndarray,
        rng: np.random.Generator,
        settings: Settings,
        simulated: str | None,
    ) -> Evidence:
        t = self.thresholds
        high_floor = t.auc.floor(Level.HIGH)
        order = _content_order(table, columns + ids, heldout)
        rows = order[_sample(heldout[order], settings.reference_rows, rng)]
        side = heldout[rows].astype(int)
        if min(side.sum(), (1 - side).sum()) < 10:
            return Evidence(
                self.name,
                "split_shift",
                "adversarial_auc",
                None,
                high_floor,
                Level.NONE,
                summary="too few rows on one side to compare",
                detail={"sample_rows": int(rows.size)},
            )
        n1, n0 = int(side.sum()), int((1 - side).sum())
        null = null_auc_se(n1, n0)
        id_aucs = _identifier_aucs(table, ids, rows, side)
        if columns:
            xs = feature_matrix(table.frame, columns, rows)
            auc, gain = adversarial_auc(xs, side, settings.seed, n_jobs=settings.n_jobs)
        else:
            xs, auc, gain = np.zeros((rows.size, 0)), 0.5, np.zeros(0)
        z = (auc - 0.5) / null
        top = np.argsort(-gain)[: t.top_left_out]
        keep = np.setdiff1d(np.arange(len(columns)), top)
        worth = auc >= t.auc.floors[-1][1]  # a refit only pays when there is a shift
        auc_without = (
            adversarial_auc(xs[:, keep], side, settings.seed, n_jobs=settings.n_jobs)[0]
            if keep.size and worth
            else None
        )
        total = float(gain.sum()) or 1.0
        drivers = [
            {
                "column": columns[i],
                "gain_share": float(gain[i] / total),
                "role": _role(table, columns[i]),
            }
            for i in np.argsort(-gain)[:8]
            if gain[i] > 0
        ]
        level = simulated_level(split_level(auc, z, t), simulated)
        # the group-key search reads every feature: only when the level would be capped
        design = (
            split_design(table, heldout, groups=level > t.design_cap) if simulated is None else None
        )
        capped = design is not None and level > t.design_cap
        before = level
        if capped:
            level = t.design_cap
        id_name, id_auc = max(id_aucs.items(), key=lambda kv: kv[1]) if id_aucs else (None, 0.5)
        id_z = (id_auc - 0.5) / null
        by_id = simulated_level(identifier_level(id_auc, id_z, t), simulated)
        what = {
            "random": f"a random {1 - SIMULATED_HELDOUT_SHARE:.0%}/"
            f"{SIMULATED_HELDOUT_SHARE:.0%} split",
            "time": f"a split on the last {SIMULATED_HELDOUT_SHARE:.0%} in time",
            None: "the split",
        }[simulated]
        summary = (
            f"a model tells held-out rows from training rows under {what} with AUC "
            f"{auc:.3f}" + (f", driven by {drivers[0]['column']}" if drivers and worth else "")
        )
        named = [d for d in drivers[: t.top_left_out] if d["role"] != "feature"]
        if named and worth:
            summary += f" ({', '.join(d['column'] + ' is ' + d['role'] for d in named)})"
        if by_id > Level.NONE:
            summary += (
                f"; {id_name} is an identifier whose values differ between the sides "
                f"(AUC {id_auc:.3f} on its own): the split follows its order or "
                "ranges, which says how the split was made, not that the rows differ"
            )
        if capped:
            summary += (
                f"; the split is by {design} ("
                + {
                    "time": "held-out rows later than the training rows",
                    "entity": "no held-out entity among the training rows",
                }.get(design or "", "no value on both sides; declare it with --entity")
                + "): the shift is what such a split is meant to show, the model meets it in "
                "production; it is no leak, but check that the columns driving it are stable"
            )
        se = hanley_mcneil_se(auc, n1, n0)
        detail = {
            "auc": auc,
            "se": se,
            "null_se": null,
            "z": z,
            "ci95": [auc - 1.96 * se, auc + 1.96 * se],
            "auc_without_top": auc_without,
            "left_out": [columns[i] for i in top],
            "drivers": drivers,
            "sample_rows": int(rows.size),
            "heldout_in_sample": n1,
            "simulated_split": simulated,
            "identifier_auc": id_aucs,
            "identifier_level": by_id.label,
            "split_design": design,
            "level_before_cap": before.label if capped else None,
            "thresholds": _json(t),
        }
        return Evidence(
            self.name,
            "split_shift",
            "adversarial_auc",
            auc,
            high_floor,
            max(level, by_id),
            summary=summary,
            severity=min(1.0, max(0.0, 2 * auc - 1)),
            detail=detail,
        )


def _identifier_aucs(
    table: AuditTable, ids: list[str], rows: np.ndarray, side: np.ndarray
) -> dict[str, float]:
    """Per identifier, how well its order-independent code alone separates the sides: the
    Mann–Whitney AUC, folded so that 0.5 is none and 1 a clean cut at one value."""
    from sklearn.metrics import roc_auc_score

    out: dict[str, float] = {}
    for name in ids:
        v = order_free_codes(table.frame[name])[rows]
        ok = ~np.isnan(v)
        if ok.sum() < 20 or len(np.unique(side[ok])) < 2:
            continue
        a = float(roc_auc_score(side[ok], v[ok]))
        out[name] = max(a, 1.0 - a)
    return out


def _json(t: SeparabilityThresholds) -> dict:
    d = asdict(t)
    d["auc"] = t.auc.to_dict()
    d["identifier_level"] = t.identifier_level.label
    return d


def _content_order(table: AuditTable, columns: list[str], heldout: np.ndarray) -> np.ndarray:
    """Row positions sorted by a hash of the rows' values and side, so that the sample and
    the folds, hence the verdict, do not depend on the order of rows in the file."""
    h = pd.util.hash_pandas_object(table.frame[columns], index=False).to_numpy()
    return np.lexsort((heldout, h))


def _sample(heldout: np.ndarray, size: int, rng: np.random.Generator) -> np.ndarray:
    """Seeded sample that keeps the sides' proportions."""
    if heldout.size <= size:
        return np.arange(heldout.size)
    parts = []
    for side in (False, True):
        idx = np.flatnonzero(heldout == side)
        take = max(1, round(size * idx.size / heldout.size))
        parts.append(rng.choice(idx, min(take, idx.size), replace=False))
    return np.sort(np.concatenate(parts))


def _role(table: AuditTable, column: str) -> str:
    if column in table.id_columns:
        return "an identifier"
    s = table.frame[column]
    if pd.api.types.is_datetime64_any_dtype(s.dtype):
        return "a time"
    return "feature"
