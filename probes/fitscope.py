"""The ``fitscope`` probe: preprocessing fitted on all rows, held-out rows included.

A column scaled, imputed, capped, rank-transformed or target-encoded with statistics of
all rows carries the held-out distribution into training, and the data keeps the
fingerprint: the statistic is exact over all rows and off over the training rows alone.
"Exact" means within what the column's storage allows (``_precision``: float32, float64,
or values written with a few digits), so rounding is never evidence. A fit on the training
rows leaves the opposite fingerprint and is reported as clean. Where the held-out share is
so small that a training-only fit would look the same, the probe says it cannot tell.

Levels: a fingerprint that holds over all rows and is off over the training rows by more
than 5 rounding SDs and than the sampling spread allows is ``high``; target encodings that
used held-out targets are ``critical``, since they carry the outcome itself. Preprocessing
leakage biases validation in either direction (Moscovich & Rosset 2022); the level says how
sure the fingerprint is, not how large the bias is.
"""

from __future__ import annotations

from concurrent.futures import ThreadPoolExecutor

import numpy as np
import pandas as pd
from scipy.special import ndtr
from scipy.stats import rankdata

from featureaudit.evidence import Evidence, Skip
from featureaudit.io import numeric_view
from featureaudit.probes._precision import mean_tolerance, sd_tolerance, value_error
from featureaudit.registry import Probe, ProbeOutput, register
from featureaudit.settings import Settings
from featureaudit.table import AuditTable

CAP_LEVELS = (0.005, 0.01, 0.025, 0.05)
SPIKE_SHARE = 0.005    # an imputation spike holds at least 0.5 % of rows ...
SPIKE_RATIO = 10.0     # ... and ten times the next most frequent value
MIN_SIDE = 20          # fewer held-out or training rows than this: cannot tell


def _ev(name: str, statistic: str, value: float | None, level: str, summary: str,
        detail: dict, severity: float = 0.5) -> Evidence:
    return Evidence("fitscope", "fit_on_all_rows", statistic, value, None, level, column=name,
                    summary=summary, severity=severity, detail=detail)


@register
class Fitscope(Probe):
    """Fingerprints of scaling, imputation, capping, rank transforms and target encodings
    fitted on all rows. Thresholds: see the module docstring."""

    name = "fitscope"
    scope = "column"
    kinds = ("fit_on_all_rows", "target_proxy")

    def run(self, table: AuditTable, settings: Settings) -> ProbeOutput:
        skipped: list[Skip] = []
        split = table.heldout is not None and table.heldout_rows >= 1
        if not split:
            skipped.append(Skip(self.name, "audited as one pool: without held-out rows the "
                                           "probe cannot tell which rows a fit used; columns "
                                           "that look preprocessed are listed as information"))
        train = ~table.heldout if split else np.ones(table.n_rows, bool)
        def one(name: str) -> list[Evidence]:
            s = table.frame[name]
            if pd.api.types.is_datetime64_any_dtype(s.dtype) or pd.api.types.is_bool_dtype(s.dtype):
                return []
            values = numeric_view(s)
            return [] if values is None else _check_column(name, s, values, train, split)

        evidence: list[Evidence] = []
        with ThreadPoolExecutor(max_workers=2) as pool:   # numpy releases the GIL
            for found in pool.map(one, table.features):
                evidence.extend(found)
        if split and table.y is not None and table.target_problem is None:
            evidence.extend(_encodings(table, train))
        return evidence, skipped


def _check_column(name: str, s: pd.Series, values: np.ndarray, train: np.ndarray,
                  split: bool) -> list[Evidence]:
    ok = np.isfinite(values)
    v = values if ok.all() else values[ok]
    if v.size < 2 * MIN_SIDE or np.unique(v[:1000]).size < 3:
        return []
    err = _LazyError(s, values)
    out = []
    for check in _plausible(v, values[ok & train]):
        found = check(name, values, err, ok, train, split)
        if found is not None:
            out.append(found)
    return out


def _plausible(v: np.ndarray, v_tr: np.ndarray) -> list:
    """The checks whose fingerprint a few cheap statistics do not already rule out."""
    lo, hi = float(v.min()), float(v.max())
    checks: list = []
    if any(abs(float(np.mean(x))) <= 1e-3 and abs(float(np.std(x)) - 1) <= 1e-2
           for x in (v, v_tr) if x.size):
        checks.append(_standardised)
    if abs(lo) <= 1e-3 and abs(hi - 1) <= 1e-3:
        checks.append(_minmax)
    checks.append(_imputed)                       # its own sampled pre-check is cheap
    if int((v == hi).sum()) >= 3 or int((v == lo).sum()) >= 3:
        checks.append(_capped)
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


def _verdict(name: str, what: str, all_exact: bool, train_exact: bool, distinguishable: bool,
             split: bool, detail: dict, statistic: str, value: float | None) -> Evidence | None:
    """Exact over all rows only: leak; over training rows only: clean; both or unclear: say so."""
    if not all_exact and not train_exact:
        return None
    detail = {**detail, "fingerprint": what}
    if not split:
        return _ev(name, statistic, value, "none", f"looks {what} over all rows; with no split "
                   "the probe cannot judge whether held-out rows were used", detail, 0.0)
    if train_exact and not all_exact:
        return _ev(name, statistic, value, "none", f"{what} with training-row statistics",
                   {**detail, "fitted_on": "training rows"}, 0.0)
    if train_exact or not distinguishable:
        return _ev(name, statistic, value, "none", f"looks {what}, but a fit on the training "
                   "rows alone would look the same here (too few held-out rows, or the "
                   "extremes lie in training rows): cannot tell",
                   {**detail, "fitted_on": "cannot tell"}, 0.0)
    return _ev(name, statistic, value, "high", f"{what} with statistics of all rows, held-out "
               "rows included: exact over all rows, off over the training rows",
               {**detail, "fitted_on": "all rows"}, 0.8)


def _moments(v: np.ndarray, e: np.ndarray, ddof: int) -> tuple[float, float, float, float]:
    mean, sd = float(np.mean(v)), float(np.std(v, ddof=ddof))
    return mean, sd, mean_tolerance(v, e), sd_tolerance(v, e)


def _standardised(name, values, err, ok, train, split):
    near = [abs(np.mean(values[rows])) <= 1e-3 and abs(np.std(values[rows]) - 1) <= 1e-2
            for rows in (ok, ok & train)]
    if not any(near):
        return None
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
    spread = np.sqrt(held / max(ok.sum() * tr.sum(), 1))   # SD of the training mean
    distinguishable = held >= MIN_SIDE and spread > 3 * tmt
    detail = {"all_rows": {"mean": m, "sd": sd}, "training_rows": {"mean": mt, "sd": sdt},
              "ddof": ddof, "tolerance_mean": tm, "sampling_sd_of_training_mean": spread}
    return _verdict(name, "standardised (mean 0, SD 1)", all_exact, train_exact,
                    distinguishable, split, detail, "training_rows_mean", mt)


def _minmax(name, values, err, ok, train, split):
    v = values[ok]
    lo, hi = float(v.min()), float(v.max())
    if abs(lo) > 1e-3 or abs(hi - 1) > 1e-3:
        return None
    tol = 4 * float(err[ok].max())
    if abs(lo) > tol or abs(hi - 1) > tol:
        return None
    tr = values[ok & train]
    train_lo, train_hi = float(tr.min()), float(tr.max())
    if abs(train_lo) <= tol and abs(train_hi - 1) <= tol:
        return None   # the training rows reach both ends: either fit gives the same scale
    detail = {"all_rows": {"min": lo, "max": hi}, "training_rows": {"min": train_lo,
                                                                    "max": train_hi}}
    if _looks_uniform(v, tr):
        return None   # a quantile transform: judged by _quantile
    return _verdict(name, "min-max scaled to [0, 1]", True, False,
                    int((~train & ok).sum()) >= 1, split, detail, "training_rows_max", train_hi)


def _spike(values: np.ndarray, ok: np.ndarray) -> tuple[float, int] | None:
    v = values[ok]
    probe = v[:: max(1, v.size // 20_000)]
    _, probe_counts = np.unique(probe, return_counts=True)
    if probe_counts.max() < max(3, SPIKE_SHARE * probe.size):
        return None
    uniq, counts = np.unique(v, return_counts=True)
    if uniq.size < 10:
        return None
    order = np.argsort(-counts)
    top, second = counts[order[0]], counts[order[1]]
    if top < max(5, SPIKE_SHARE * v.size) or top < SPIKE_RATIO * second:
        return None
    return float(uniq[order[0]]), int(top)


def _imputed(name, values, err, ok, train, split):
    spike = _spike(values, ok)
    if spike is None:
        return None
    value, count = spike
    other = ok & (values != value)
    genuine = _genuine_count(values[other], value)
    tol = mean_tolerance(values[other], err[other]) + 4 * float(err[ok & (values == value)][0])
    figures: dict = {}
    for label, rows, g in (("all_rows", other, genuine),
                           ("training_rows", other & train, genuine * train.mean())):
        x = values[rows]
        below, above = int((x < value).sum()), int((x > value).sum())
        figures[label] = {"mean": float(np.mean(x)), "below": below, "above": above,
                          "median_holds": _median_holds(x, value, g, tol),
                          "mean_holds": abs(float(np.mean(x)) - value) <= tol}
    for stat in ("mean", "median"):
        all_exact = figures["all_rows"][f"{stat}_holds"]
        train_exact = figures["training_rows"][f"{stat}_holds"]
        if all_exact or train_exact:
            detail = {"spike_value": value, "spike_rows": count, "statistic": stat,
                      "observed_copies_of_value_estimated": genuine, "tolerance": tol, **figures}
            x_tr = values[other & train]
            fit_tr = float(np.mean(x_tr)) if stat == "mean" else float(np.median(
                np.concatenate([x_tr, np.full(int(round(genuine * train.mean())), value)])))
            gap = value - fit_tr
            detail["training_rows_fit_would_give"] = fit_tr
            return _verdict(name, f"imputed with the {stat} ({value:.6g} fills {count} rows)",
                            all_exact, train_exact, abs(gap) > tol, split, detail,
                            f"imputed_minus_training_{stat}", gap)
    return None


def _median_holds(x: np.ndarray, value: float, genuine: float, tol: float) -> bool:
    """Is ``value`` the median of ``x`` plus some of its own genuine copies (0 to ~genuine+1)?"""
    below, above = int((x < value).sum()), int((x > value).sum())
    for g in range(0, int(np.ceil(genuine)) + 1):
        n = below + above + g
        if abs(below - above) > g + 1:
            continue
        merged = np.concatenate([x, np.full(g, value)])
        if abs(float(np.median(merged)) - value) <= tol and n > 0:
            return True
    return False


def _genuine_count(other: np.ndarray, value: float) -> float:
    """How many rows would hold the spike value without imputation: the typical count of the
    nearest distinct values (1 for a continuous column)."""
    uniq, counts = np.unique(other, return_counts=True)
    if uniq.size == 0:
        return 1.0
    near = np.argsort(np.abs(uniq - value))[:20]
    return float(np.median(counts[near]))


def _capped(name, values, err, ok, train, split):
    """Piles at the extremes whose sizes are exactly what numpy's quantile clipping of all rows
    (or of the training rows) leaves. Each pile must fit its hypothesis within one row; a pile
    that fits both is no evidence, so small piles often cannot tell."""
    v = values[ok]
    if max(int((v == v.max()).sum()), int((v == v.min()).sum())) < 3:
        return None
    uniq, counts = np.unique(v, return_counts=True)
    if uniq.size < 10:
        return None
    interior = int(counts[1:-1].max())
    n_all, n_tr = int(ok.sum()), int((ok & train).sum())
    piles = []
    for side, value in (("upper", float(v.max())), ("lower", float(v.min()))):
        pile = ok & (values == value)
        count_all, count_tr = int(pile.sum()), int((pile & train).sum())
        if count_all < max(3, interior + 1) or value == round(value):
            continue      # whole numbers (0, 1, 100) are natural floors; quantiles rarely are
        fits_all = [p for p in CAP_LEVELS if abs(count_all - _pile(n_all, p)) <= 1]
        fits_tr = [p for p in CAP_LEVELS if abs(count_tr - _pile(n_tr, p)) <= 1]
        if fits_all or fits_tr:
            piles.append({"side": side, "cap_value": value, "rows_at_cap": count_all,
                          "training_rows_at_cap": count_tr, "levels_fitting_all_rows": fits_all,
                          "levels_fitting_training_rows": fits_tr,
                          "level": (fits_all or fits_tr)[0]})
    if not piles:
        return None
    all_exact = all(q["levels_fitting_all_rows"] for q in piles) and \
        any(not q["levels_fitting_training_rows"] for q in piles)
    train_exact = all(q["levels_fitting_training_rows"] for q in piles) and \
        any(not q["levels_fitting_all_rows"] for q in piles)
    if not all_exact and not train_exact:
        all_exact = train_exact = True            # every pile fits both: cannot tell
    what = " and ".join(f"{q['side']} {q['level']:.1%}" for q in piles)
    return _verdict(name, f"capped at the {what} quantile", all_exact, train_exact, True,
                    split, {"piles": piles}, "training_rows_at_cap",
                    piles[0]["training_rows_at_cap"])


def _pile(n: int, p: float) -> int:
    """Rows that numpy's linear-interpolation quantile at p (or 1-p) clips onto the cap."""
    return n - 1 - int(np.floor((1 - p) * (n - 1)))


def _rank_gap(u: np.ndarray) -> float:
    """Largest gap between values and their own mid-ranks scaled to [0, 1]: zero for a rank
    or quantile transform fitted on exactly these rows (ties share their mid-rank)."""
    if u.size < 2:
        return np.inf
    ranks = rankdata(u, method="average") - 1
    return float(np.max(np.abs(u - ranks / (u.size - 1))))


def _quantile_fit(u_all: np.ndarray, u_tr: np.ndarray) -> tuple[bool, bool, dict]:
    tol = 1e-6 + 1.0 / min(u_all.size, 1000)   # one step of the transform's reference grid
    gap_all, gap_tr = _rank_gap(u_all), _rank_gap(u_tr)
    return gap_all <= tol, gap_tr <= tol, {"rank_gap_all_rows": gap_all,
                                           "rank_gap_training_rows": gap_tr, "tolerance": tol}


def _looks_uniform(v: np.ndarray, v_tr: np.ndarray) -> bool:
    all_exact, train_exact, _ = _quantile_fit(v, v_tr)
    return all_exact or train_exact


NORMAL_BOUND = 5.199337582605575   # scikit-learn's normal output clips at the 1e-7 quantile


def _quantile(name, values, err, ok, train, split):
    v, v_tr = values[ok], values[ok & train]
    if v.min() >= 0 and v.max() <= 1:
        u, u_tr, what = v, v_tr, "rank- or quantile-transformed to uniform"
    elif min(abs(v.min() + NORMAL_BOUND), abs(v.max() - NORMAL_BOUND)) < 1e-6:
        u, u_tr, what = ndtr(v), ndtr(v_tr), "quantile-transformed to normal"
    else:
        return None
    all_exact, train_exact, detail = _quantile_fit(u, u_tr)
    return _verdict(name, what, all_exact, train_exact, True, split, detail,
                    "rank_gap_training_rows", detail["rank_gap_training_rows"])


def _encodings(table: AuditTable, train: np.ndarray) -> list[Evidence]:
    """Target encodings fitted with held-out targets, or in sample (see ``_encoding``)."""
    from featureaudit.probes._encoding import encoding_evidence
    return encoding_evidence(table, train)
