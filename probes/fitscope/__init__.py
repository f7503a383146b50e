"""The ``fitscope`` probe: preprocessing fitted on all rows, held-out rows included.

A column scaled, imputed, capped, rank-transformed or target-encoded with statistics of
all rows carries the held-out distribution into training, and the data keeps the
fingerprint: the statistic is exact over all rows and off over the training rows alone.
"Exact" means within what the column's storage allows (``_precision``: float32, float64,
or values written with a few digits), so rounding is never evidence. A fit on the training
rows leaves the opposite fingerprint and is reported as clean. Where the held-out share is
so small that a training-only fit would look the same, the probe says it cannot tell.

Levels (numbers in :class:`FitscopeThresholds`): a fingerprint that holds over all rows and is
off over the training rows by more than 5 rounding SDs and than the sampling spread allows is
``high``; target encodings that
used held-out targets are ``critical``, since they carry the outcome itself. Preprocessing
leakage biases validation in either direction (Moscovich & Rosset 2022); the level says how
sure the fingerprint is, not how large the bias is. Every numeric column examined without a
fingerprint, or too short to judge, carries a ``none`` evidence saying what was checked.
"""

from __future__ import annotations

import numpy as np
import pandas as pd
from scipy.special import ndtr
from scipy.stats import rankdata

from featureaudit.evidence import Evidence, Skip
from featureaudit.io import numeric_view
from featureaudit.probes.fitscope._bins import code_count, quantile_binned
from featureaudit.probes.fitscope._capgrid import grid_capped as _grid_capped
from featureaudit.probes.fitscope._decorrelated import decorrelated
from featureaudit.probes.fitscope._fingerprint import evidence as _evidence
from featureaudit.probes.fitscope._fingerprint import verdict as _verdict
from featureaudit.probes.fitscope._maxabs import looks_maxabs, maxabs_scaled
from featureaudit.probes.fitscope._onehot import onehot
from featureaudit.probes.fitscope._ordinal import ordinal_coded
from featureaudit.probes.fitscope._piles import capped as _capped
from featureaudit.probes.fitscope._piles import imputed as _imputed
from featureaudit.probes.fitscope._precision import mean_tolerance, sd_tolerance, value_error
from featureaudit.probes.fitscope._robust import looks_robust, robust_scaled
from featureaudit.probes.fitscope._thresholds import THRESHOLDS, FitscopeThresholds
from featureaudit.registry import Capabilities, Probe, ProbeOutput, register
from featureaudit.settings import Settings
from featureaudit.table import AuditTable
from featureaudit.threads import column_map

MIN_SIDE = THRESHOLDS.min_side  # fewer held-out or training rows than this: cannot tell
__all__ = ["Fitscope", "FitscopeThresholds"]


# a fit's fingerprint is exact over the rows it was fitted on; a sample's statistics match
# neither fit but by chance (randhie's capped deductible matched the sample's all-rows cap:
# a clean column at high), so on a sample of the table the probe does not judge
SAMPLED = (
    "a fitted step's fingerprint (exact mean, quantile or category rate) holds over every "
    "row it was fitted on, not over a sample of them; audit the table with --engine memory "
    "to check fitted steps"
)


@register
class Fitscope(Probe):
    """Fingerprints of scaling (standard, min-max, robust, max-abs), imputation, capping, rank
    transforms, equal-frequency bins, one-hot and ordinal encodings, PCA or whitening and
    target encodings fitted on all rows.
    Thresholds: :class:`FitscopeThresholds`; method: the module
    docstring."""

    name = "fitscope"
    scope = "column"
    kinds = ("fit_on_all_rows", "target_proxy")
    thresholds = THRESHOLDS
    # an in-sample target encoding is refitted out of fold on the training rows, not dropped
    capabilities = Capabilities(
        needs_every_row=SAMPLED,
        pairs=frozenset({"partition", "growing_fit", "fold"}),
        remedies={"target_proxy": "refit_on_training_rows"},
    )

    @classmethod
    def describe(cls, settings: Settings) -> str:
        th = cls.thresholds
        caps = ", ".join(f"{p:.1%}" for p in th.cap_levels)
        return (
            "Scaling, imputation, capping, rank transforms and target encodings leave "
            "statistics that are exact over the rows they were fitted on. Exact over all rows "
            "but not over the training rows, within 5 SDs of the column's storage rounding "
            f"and beyond the sampling spread, is {th.leak.label}; target encodings that used "
            f"held-out targets are {th.encoding.label}. A pile of one value is examined from "
            f"{th.pile_share:.1%} of rows and {th.pile_min_rows} rows when it exceeds what "
            f"its {th.neighbours} nearest values on each side predict (Poisson tail below "
            f"{th.pile_alpha:g}, Bonferroni over the distinct values), so natural ties are "
            f"no evidence; caps are tested at the {caps} quantiles, and in columns written on "
            "a decimal grid by recovering the value each cap replaced on that grid; a median "
            "imputation among natural ties is explained by a set of rows only if the genuine "
            f"copies it needs have a Poisson tail of at least {th.median_alpha:g}. Robust "
            "scaling (median 0, IQR 1), max-abs scaling (largest |x| = 1 on held-out rows "
            f"only) and equal-frequency bins (every bin within {th.bin_slack:g} rows of n/k) "
            "are read the same way; power and log transforms that standardise are read as "
            "standardisation. A group of columns with mean 0 and pairwise correlation 0 over "
            "all rows, within 5 SDs of the rounding of their products, is read as PCA, "
            "whitening or a rotation fitted there; a one-hot column 1 on held-out rows and on "
            "no training row, or an ordinal code inside the training rows' range that no "
            "training row holds (chance below "
            f"{th.ordinal_alpha:g}, Bonferroni over the codes), as categories taken from all "
            "rows. With fewer than "
            f"{th.min_side} rows on a side, or where both fits would look alike, it says it "
            "cannot tell; every numeric column examined carries what was checked. At most "
            f"{th.max_piles} piles a column are examined; bins are read in columns of up to "
            f"{th.max_bins} distinct values, ordinal codes in columns of up to {th.max_codes}."
        )

    def run(self, table: AuditTable, settings: Settings) -> ProbeOutput:
        skipped: list[Skip] = []
        split = table.heldout is not None and table.heldout_rows >= 1
        if not split:
            skipped.append(
                Skip(
                    self.name,
                    "audited as one pool: without held-out rows the "
                    "probe cannot tell which rows a fit used; columns "
                    "that look preprocessed are listed as information",
                )
            )
        train = (
            ~table.heldout if split and table.heldout is not None else np.ones(table.n_rows, bool)
        )

        def one(name: str) -> list[Evidence]:
            s = table.frame[name]
            if pd.api.types.is_datetime64_any_dtype(s.dtype) or pd.api.types.is_bool_dtype(s.dtype):
                return []
            values = numeric_view(s)
            return [] if values is None else _check_column(name, s, values, train, split)

        evidence: list[Evidence] = []
        for found in column_map(one, table.features, settings.n_jobs):  # numpy frees the GIL
            evidence.extend(found)
        evidence.extend(decorrelated(table, train, split))  # groups of columns, found here
        evidence.extend(onehot(table, train, split))
        if split and table.y is not None and table.target_problem is None:
            evidence.extend(_encodings(table, train))
        return evidence, skipped


def _check_column(
    name: str, s: pd.Series, values: np.ndarray, train: np.ndarray, split: bool
) -> list[Evidence]:
    ok = np.isfinite(values)
    v = values if ok.all() else values[ok]
    if v.size < 2 * MIN_SIDE or not _three_values(v):
        return [
            _coverage(
                name,
                None,
                f"could not judge: {v.size} values, "
                f"{np.unique(v).size} distinct (a fit needs {2 * MIN_SIDE} values "
                "and 3 distinct)",
            )
        ]
    err = _LazyError(s, values)
    out = []
    checks = _plausible(v, values[ok & train])
    for check in checks:
        found = check(name, values, err, ok, train, split)
        if found is not None:
            out.append(found)
    if not out:
        tried = ", ".join(CHECK_NAMES[c.__name__] for c in checks)
        out.append(
            _coverage(
                name,
                tried,
                "no fingerprint of a fit on all rows" + ("" if split else " (audited as one pool)"),
            )
        )
    return out


def _three_values(v: np.ndarray) -> bool:
    """At least 3 distinct values: one strictly between the least and the greatest (no sort)."""
    lo, hi = v.min(), v.max()
    return bool(lo < hi and np.any((v > lo) & (v < hi)))


CHECK_NAMES = {
    "_standardised": "standardisation",
    "_minmax": "min-max scaling",
    "imputed": "imputation piles",
    "capped": "quantile caps",
    "grid_capped": "percentile caps on the rounding grid",
    "robust_scaled": "robust scaling",
    "maxabs_scaled": "max-abs scaling",
    "quantile_binned": "equal-frequency bins",
    "ordinal_coded": "ordinal codes",
    "_quantile": "rank or quantile transform",
}


def _coverage(name: str, tried: str | None, reason: str) -> Evidence:
    """A none-level note: what fitscope checked on a column and why it found nothing."""
    summary = reason + (f"; checked {tried}" if tried else "")
    return _evidence(
        name,
        "fingerprint_checks",
        None,
        "none",
        summary,
        {
            "checked": tried.split(", ") if tried else [],
            "fitted_on": "cannot tell" if tried is None else "no fingerprint",
        },
        0.0,
    )


def _plausible(v: np.ndarray, v_tr: np.ndarray) -> list:
    """The checks whose fingerprint a few cheap statistics do not already rule out; the
    checks themselves rely on this gate and do not repeat it."""
    lo, hi = float(v.min()), float(v.max())
    checks: list = []
    if any(
        abs(float(np.mean(x))) <= 1e-3 and abs(float(np.std(x)) - 1) <= 1e-2
        for x in (v, v_tr)
        if x.size
    ):
        checks.append(_standardised)
    if abs(lo) <= 1e-3 and abs(hi - 1) <= 1e-3:
        checks.append(_minmax)
    if looks_robust(v, v_tr):
        checks.append(robust_scaled)
    if looks_maxabs(v):
        checks.append(maxabs_scaled)
    codes = code_count(v, max(THRESHOLDS.max_bins, THRESHOLDS.max_codes))  # one pass for both
    if 3 <= codes <= THRESHOLDS.max_bins:
        checks.append(quantile_binned)
    if 3 <= codes <= THRESHOLDS.max_codes:
        checks.append(ordinal_coded)
    checks.append(_imputed)  # its own sampled pre-check is cheap
    if int((v == hi).sum()) >= 3 or int((v == lo).sum()) >= 3:
        checks.append(_capped)
        checks.append(_grid_capped)
    if (lo >= 0 and hi <= 1) or min(abs(lo + NORMAL_BOUND), abs(hi - NORMAL_BOUND)) < 1e-6:
        checks.append(_quantile)
    return checks


class _LazyError:
    """Per-value storage error, computed on first use (most columns never need it)."""

    def __init__(self, s: pd.Series, values: np.ndarray) -> None:
        self._s, self._values, self._err = s, values, None

    def __getitem__(self, key):  # noqa: ANN001, ANN204
        if self._err is None:
            self._err = value_error(self._s, self._values)
        return self._err[key]


def _moments(v: np.ndarray, e: np.ndarray, ddof: int) -> tuple[float, float, float, float]:
    mean, sd = float(np.mean(v)), float(np.std(v, ddof=ddof))
    return mean, sd, mean_tolerance(v, e), sd_tolerance(v, e)


def _standardised(name, values, err, ok, train, split):
    v_all, e_all = values[ok], err[ok]
    tr = ok & train
    v_tr, e_tr = values[tr], err[tr]
    best = None
    for ddof in (0, 1):
        m, sd, tm, ts = _moments(v_all, e_all, ddof)
        mt, sdt, tmt, tst = _moments(v_tr, e_tr, ddof)
        all_exact = abs(m) <= tm and abs(sd - 1) <= ts
        train_exact = abs(mt) <= tmt and abs(sdt - 1) <= tst
        if all_exact or train_exact:
            best = (ddof, m, sd, mt, sdt, all_exact, train_exact, tm, tmt)
            break
    if best is None:
        return None
    ddof, m, sd, mt, sdt, all_exact, train_exact, tm, tmt = best
    held = int(ok.sum() - tr.sum())
    spread = np.sqrt(held / max(ok.sum() * tr.sum(), 1))  # SD of the training mean
    distinguishable = held >= MIN_SIDE and spread > 3 * tmt
    detail = {
        "all_rows": {"mean": m, "sd": sd},
        "training_rows": {"mean": mt, "sd": sdt},
        "ddof": ddof,
        "tolerance_mean": tm,
        "sampling_sd_of_training_mean": spread,
    }
    return _verdict(
        name,
        "standardised (mean 0, SD 1)",
        all_exact,
        train_exact,
        distinguishable,
        split,
        detail,
        "training_rows_mean",
        mt,
    )


def _minmax(name, values, err, ok, train, split):
    v = values[ok]
    lo, hi = float(v.min()), float(v.max())
    tol = 4 * float(err[ok].max())
    if abs(lo) > tol or abs(hi - 1) > tol:
        return None
    tr = values[ok & train]
    train_lo, train_hi = float(tr.min()), float(tr.max())
    if abs(train_lo) <= tol and abs(train_hi - 1) <= tol:
        return None  # the training rows reach both ends: either fit gives the same scale
    detail = {
        "all_rows": {"min": lo, "max": hi},
        "training_rows": {"min": train_lo, "max": train_hi},
    }
    if _looks_uniform(v, tr):
        return None  # a quantile transform: judged by _quantile
    return _verdict(
        name,
        "min-max scaled to [0, 1]",
        True,
        False,
        int((~train & ok).sum()) >= 1,
        split,
        detail,
        "training_rows_max",
        train_hi,
    )


def _rank_gap(u: np.ndarray) -> float:
    """Largest gap between values and their own mid-ranks scaled to [0, 1]: zero for a rank
    or quantile transform fitted on exactly these rows (ties share their mid-rank)."""
    if u.size < 2:
        return np.inf
    ranks = rankdata(u, method="average") - 1
    return float(np.max(np.abs(u - ranks / (u.size - 1))))


def _quantile_fit(u_all: np.ndarray, u_tr: np.ndarray) -> tuple[bool, bool, dict]:
    tol = 1e-6 + 1.0 / min(u_all.size, 1000)  # one step of the transform's reference grid
    gap_all, gap_tr = _rank_gap(u_all), _rank_gap(u_tr)
    return (
        gap_all <= tol,
        gap_tr <= tol,
        {"rank_gap_all_rows": gap_all, "rank_gap_training_rows": gap_tr, "tolerance": tol},
    )


def _looks_uniform(v: np.ndarray, v_tr: np.ndarray) -> bool:
    all_exact, train_exact, _ = _quantile_fit(v, v_tr)
    return all_exact or train_exact


NORMAL_BOUND = 5.199337582605575  # scikit-learn's normal output clips at the 1e-7 quantile


def _quantile(name, values, err, ok, train, split):
    v, v_tr = values[ok], values[ok & train]
    if v.min() >= 0 and v.max() <= 1:
        u, u_tr, what = v, v_tr, "rank- or quantile-transformed to uniform"
    elif min(abs(v.min() + NORMAL_BOUND), abs(v.max() - NORMAL_BOUND)) < 1e-6:
        u, u_tr, what = ndtr(v), ndtr(v_tr), "quantile-transformed to normal"
    else:
        return None
    all_exact, train_exact, detail = _quantile_fit(u, u_tr)
    return _verdict(
        name,
        what,
        all_exact,
        train_exact,
        True,
        split,
        detail,
        "rank_gap_training_rows",
        detail["rank_gap_training_rows"],
    )


def _encodings(table: AuditTable, train: np.ndarray) -> list[Evidence]:
    """Target encodings fitted with held-out targets, or in sample (see ``_encoding``)."""
    from featureaudit.probes.fitscope._encoding import encoding_evidence

    return encoding_evidence(table, train)
