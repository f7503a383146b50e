"""Piles of one value: imputation spikes and quantile caps, and whether all rows or only
the training rows explain them exactly.

Imputation: a value far more frequent than its neighbours that equals the mean or median of
the other values (allowing for the few genuine copies of it that continuous data has).
Capping: piles at the extremes whose sizes are exactly what numpy's linear-interpolation
quantile clipping leaves; small piles often fit both hypotheses and then cannot tell.
"""

from __future__ import annotations

import numpy as np

from featureaudit.probes.fitscope._fingerprint import verdict as _verdict
from featureaudit.probes.fitscope._precision import mean_tolerance

CAP_LEVELS = (0.005, 0.01, 0.025, 0.05)
SPIKE_SHARE = 0.005    # an imputation spike holds at least 0.5 % of rows ...
SPIKE_RATIO = 10.0     # ... and ten times the next most frequent value


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


def imputed(name, values, err, ok, train, split):
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


def capped(name, values, err, ok, train, split):
    """Piles at the extremes whose sizes are exactly what numpy's quantile clipping of all rows
    (or of the training rows) leaves. Each pile must fit its hypothesis within one row; a pile
    that fits both is no evidence, so small piles often cannot tell."""
    v = values[ok]
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
