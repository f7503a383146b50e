"""Piles of one value: imputation spikes and quantile caps, and whether all rows or only
the training rows explain them exactly.

Imputation: a value far more frequent than its neighbouring values predict (a Poisson
excess over their median count, so natural ties of rounded measurements are not piles) that
equals the mean or median of the other values, allowing for the genuine copies of it the
column's own ties predict. Capping: piles at the extremes more frequent than every interior
value or than their inner neighbours predict, whose sizes are what numpy's
linear-interpolation quantile clipping leaves (plus the cap value's own natural ties); small
piles often fit both hypotheses and then cannot tell.
"""

from __future__ import annotations

import numpy as np
from scipy.stats import poisson

from featureaudit.probes.fitscope._fingerprint import verdict as _verdict
from featureaudit.probes.fitscope._precision import _decimals, mean_tolerance
from featureaudit.probes.fitscope._thresholds import THRESHOLDS, FitscopeThresholds
from featureaudit.probes.fitscope._tiemedian import median_explains, neighbour_rate

CAP_LEVELS = THRESHOLDS.cap_levels


def pile_excess_p(count: int, neighbour_counts: np.ndarray) -> tuple[float, float]:
    """The Poisson tail P(X >= count) of a pile against the median count of its neighbouring
    distinct values (at least 1), and that expected count. Natural ties of a rounded
    measurement set the neighbours' counts, so they are not piles."""
    expected = max(float(np.median(neighbour_counts)), 1.0) if neighbour_counts.size else 1.0
    return float(poisson.sf(count - 1, expected)), expected


def piles(
    values: np.ndarray, ok: np.ndarray, th: FitscopeThresholds = THRESHOLDS
) -> list[tuple[float, int, float]]:
    """Values held by far more rows than their neighbours predict: (value, rows, expected).

    A pile needs ``pile_share`` of the rows, ``pile_min_rows`` rows, and a Poisson excess
    over the median count of the ``neighbours`` nearest distinct values on each side below
    ``pile_alpha`` after a Bonferroni correction over the distinct values, and the same
    excess over the column's largest other tie where the column ties naturally. Largest first,
    ties by value, so the order of rows never matters."""
    v = values[ok]
    probe = v[:: max(1, v.size // 20_000)]
    _, probe_counts = np.unique(probe, return_counts=True)
    if probe_counts.max() < max(3, th.pile_share * probe.size):
        return []
    uniq, counts = np.unique(v, return_counts=True)
    if uniq.size < 10:
        return []
    floor = max(th.pile_min_rows, th.pile_share * v.size)
    candidates = np.flatnonzero(counts >= floor)
    candidates = candidates[np.lexsort((uniq[candidates], -counts[candidates]))]
    k = th.neighbours
    out = []
    top_two = np.sort(counts)[-2:]
    grid = _decimals(_spread_sample(uniq[counts < floor]))
    coarse = grid is not None and grid <= th.pile_grid_decimals
    for i in candidates[: 10 * th.max_piles]:
        if coarse and np.round(uniq[i], grid) != uniq[i]:
            # off the grid every other value sits on: no natural tie holds it (a mean filled
            # into whole numbers), so every row of it is a pile
            out.append((float(uniq[i]), int(counts[i]), 1.0))
            if len(out) == th.max_piles:
                break
            continue
        near = np.r_[counts[max(0, i - k) : i], counts[i + 1 : i + 1 + k]]
        p, expected = pile_excess_p(int(counts[i]), near)
        # ... and, where the column ties naturally, beyond its largest other tie: a mode
        # among equal ties is no pile
        largest_other = float(top_two[0] if counts[i] == top_two[-1] else top_two[-1])
        if expected > 1.0 and largest_other > expected:
            expected = largest_other
            p = float(poisson.sf(int(counts[i]) - 1, expected))
        if p * uniq.size < th.pile_alpha:
            out.append((float(uniq[i]), int(counts[i]), expected))
        if len(out) == th.max_piles:
            break
    return out


def _spread_sample(x: np.ndarray, size: int = 2000) -> np.ndarray:
    """Up to ``size`` values spread over ``x`` (sorted distinct values: no row order)."""
    return x[:: max(1, x.size // size)]


def _tie_allowance(expected: float) -> int:
    """Copies of a value its natural ties may hold: none for a continuous column, else up to
    a Poisson upper bound (mean + 3 SD)."""
    return 0 if expected <= 1.0 else int(np.ceil(expected + 3 * np.sqrt(expected)))


def imputed(name, values, err, ok, train, split):
    """The strongest imputation fingerprint among the column's piles (a leak first)."""
    found = [
        e
        for e in (
            _imputed_pile(name, values, err, ok, train, split, pile) for pile in piles(values, ok)
        )
        if e is not None
    ]
    return max(found, key=lambda e: e.rank) if found else None


def _imputed_pile(name, values, err, ok, train, split, pile):
    value, count, expected = pile
    other = ok & (values != value)
    natural = expected > 1.0 and _on_grid(values[other], value)
    genuine = expected if natural else _genuine_count(values[other], value)
    if expected > 1.0 and not natural:
        genuine = 0.0  # a value off the column's rounding grid has no natural copies
    tol = mean_tolerance(values[other], err[other])
    if not natural:  # an off-grid fill may itself have been rounded when written
        tol += 4 * float(err[ok & (values == value)][0])
    figures: dict = {}
    pile = ok & (values == value)
    share = float((ok & train).sum()) / max(int(ok.sum()), 1)
    rate = neighbour_rate(values[ok], value) if natural else 1.0
    for label, rows, g, at_value, lam in (
        ("all_rows", other, genuine, count, rate),
        ("training_rows", other & train, genuine * share, int((pile & train).sum()), rate * share),
    ):
        x = values[rows]
        below, above = int((x < value).sum()), int((x > value).sum())
        figures[label] = {
            "mean": float(np.mean(x)),
            "below": below,
            "above": above,
            "mean_holds": abs(float(np.mean(x)) - value) <= tol,
        }
        if natural:  # genuine ties: weigh the copies each median needs (``_tiemedian``)
            holds, tail = median_explains(x, value, tol, at_value, lam)
            figures[label].update(median_holds=holds, **tail)
        else:
            figures[label]["median_holds"] = _median_holds(x, value, g, tol, natural)
    holds = {
        stat: (figures["all_rows"][f"{stat}_holds"], figures["training_rows"][f"{stat}_holds"])
        for stat in ("mean", "median")
    }
    # A statistic of the training rows that explains the pile wins: a leak needs every
    # training-row explanation to fail.
    order = sorted(holds, key=lambda st: (not holds[st][1], not holds[st][0]))
    for stat in order:
        all_exact, train_exact = holds[stat]
        if all_exact or train_exact:
            detail = {
                "spike_value": value,
                "spike_rows": count,
                "statistic": stat,
                "neighbours_expected_rows": expected,
                "observed_copies_of_value_estimated": genuine,
                "tolerance": tol,
                **figures,
            }
            x_tr = values[other & train]
            fit_tr = (
                float(np.mean(x_tr))
                if stat == "mean"
                else float(
                    np.median(
                        np.concatenate([x_tr, np.full(int(round(genuine * train.mean())), value)])
                    )
                )
            )
            gap = value - fit_tr
            detail["training_rows_fit_would_give"] = fit_tr
            return _verdict(
                name,
                f"imputed with the {stat} ({value:.6g} fills {count} rows)",
                all_exact,
                train_exact,
                abs(gap) > tol,
                split,
                detail,
                f"imputed_minus_training_{stat}",
                gap,
            )
    return None


def _on_grid(other: np.ndarray, value: float) -> bool:
    """Is ``value`` written with no more decimals than the column's other values (so that
    natural ties of it can exist)?"""
    sample = other[:: max(1, other.size // 2000)]
    dec = _decimals(sample)
    return dec is None or bool(np.round(value, dec) == value)


def _median_holds(
    x: np.ndarray, value: float, genuine: float, tol: float, natural: bool = False
) -> bool:
    """Is ``value`` the median of ``x`` plus some of its own genuine copies (0 to ~genuine,
    one more where the column has natural ties)?"""
    below, above = int((x < value).sum()), int((x > value).sum())
    top = int(np.ceil(genuine)) + (1 if natural else 0)
    for g in range(0, top + 1):
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
    n_all, n_tr = int(ok.sum()), int((ok & train).sum())
    share_tr = n_tr / max(n_all, 1)
    k = THRESHOLDS.neighbours
    piles = []
    for side, value, inner in (
        ("upper", float(v.max()), counts[-1 - k : -1]),
        ("lower", float(v.min()), counts[1 : 1 + k]),
    ):
        pile = ok & (values == value)
        count_all, count_tr = int(pile.sum()), int((pile & train).sum())
        p_excess, expected = pile_excess_p(count_all, inner)
        interior = int(counts[1:-1].max())
        examined = count_all >= max(3, interior + 1) or (
            count_all >= 3 and p_excess * 2 < THRESHOLDS.pile_alpha
        )
        if not examined or value == round(value):
            continue  # whole numbers (0, 1, 100) are natural floors; quantiles rarely are
        allow_all, allow_tr = _tie_allowance(expected), _tie_allowance(expected * share_tr)
        fits_all = [p for p in CAP_LEVELS if _cap_fits(n_all, count_all, p, allow_all)]
        fits_tr = [p for p in CAP_LEVELS if _cap_fits(n_tr, count_tr, p, allow_tr)]
        if fits_all or fits_tr:
            piles.append(
                {
                    "side": side,
                    "cap_value": value,
                    "rows_at_cap": count_all,
                    "neighbours_expected_rows": expected,
                    "training_rows_at_cap": count_tr,
                    "levels_fitting_all_rows": fits_all,
                    "levels_fitting_training_rows": fits_tr,
                    "level": (fits_all or fits_tr)[0],
                }
            )
    if not piles:
        return None
    all_exact = all(q["levels_fitting_all_rows"] for q in piles) and any(
        not q["levels_fitting_training_rows"] for q in piles
    )
    train_exact = all(q["levels_fitting_training_rows"] for q in piles) and any(
        not q["levels_fitting_all_rows"] for q in piles
    )
    if not all_exact and not train_exact:
        all_exact = train_exact = True  # every pile fits both: cannot tell
    what = " and ".join(f"{q['side']} {q['level']:.1%}" for q in piles)
    return _verdict(
        name,
        f"capped at the {what} quantile",
        all_exact,
        train_exact,
        True,
        split,
        {"piles": piles},
        "training_rows_at_cap",
        piles[0]["training_rows_at_cap"],
    )


def _cap_fits(n: int, count: int, p: float, allow: int) -> bool:
    """Does a pile of ``count`` rows fit clipping ``n`` rows at the p quantile? Within one row
    of what the clip leaves, plus up to ``allow`` natural ties of the cap value itself (when
    the quantile lands on a value the data already holds)."""
    gap = count - _pile(n, p)
    return -1 <= gap <= 1 + allow


def _pile(n: int, p: float) -> int:
    """Rows that numpy's linear-interpolation quantile at p (or 1-p) clips onto the cap."""
    return n - 1 - int(np.floor((1 - p) * (n - 1)))
