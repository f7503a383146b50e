"""Caps at percentiles in columns written on a grid (measurements rounded to a few decimals).

``np.clip(x, *np.percentile(x, [p, 100 - p]))`` sets the cap between two sorted values by
linear interpolation: ``hi = x[j] + f * (x[j+1] - x[j])``. The rows above ``x[j]`` all become
``hi``, so ``x[j]`` is the largest value left and the lost ``x[j+1] = x[j] + (hi - x[j]) / f``
can be recovered. In a column rounded to a grid that recovered value lies on the grid for the
rows the cap was fitted on, and almost never for another set of rows; the pile at the cap also
holds exactly the rows the percentile's position leaves above it. Both are tested for every
usual percentile over all rows and over the training rows, within the storage rounding
(``_precision``), so tiny piles of 2-4 rows are evidence where counts alone cannot tell.
"""

from __future__ import annotations

import numpy as np

from featureaudit.probes.fitscope._fingerprint import verdict as _verdict
from featureaudit.probes.fitscope._thresholds import THRESHOLDS

__all__ = ["grid_capped", "grid_step"]

_EPS64 = float(np.finfo(np.float64).eps)


def grid_step(values: np.ndarray) -> float | None:
    """The decimal grid (10**-d, d <= 6) every value sits on, exactly or, for values that are
    float32 numbers, once stored as float32."""
    if values.size == 0:
        return None
    as32 = values.astype(np.float32)
    float32 = bool(np.all(as32.astype(np.float64) == values))
    for d in range(0, 7):
        r = np.round(values, d)
        if np.all(r == values) or (float32 and np.all(r.astype(np.float32) == as32)):
            return 10.0**-d
    return None


def _cap_error(cap: float, float32: bool) -> float:
    """The rounding a cap value may carry: half a unit of the shortest spelling (up to 15
    significant digits) that reads back as exactly this number, else float storage. The
    kept grid values are exact up to float storage, which the same floor covers."""
    floor = (0.5 * float(np.finfo(np.float32).eps) if float32 else 4 * _EPS64) * abs(cap)
    mag = np.floor(np.log10(abs(cap))) if cap != 0 else 0.0
    for k in range(1, 16):
        text = f"{cap:.{k}g}"
        back = float(np.float32(text)) if float32 else float(text)
        if back == cap:
            return max(floor, 0.5 * 10.0 ** (mag - k + 1))
    return floor + 1e-300


def _off_grid(x: float, q: float) -> float:
    """Distance of ``x`` from the nearest grid point."""
    return abs(x - round(x / q) * q)


def _side_fits(
    x: np.ndarray, cap: float, upper: bool, q: float, err: float, levels: tuple[float, ...]
) -> tuple[list[float], list[float]]:
    """Percentile levels whose clip of the rows ``x`` leaves exactly this pile at ``cap`` and a
    recovered lost value on the grid; and the levels matching the pile's size whose lost value
    lands on the grid only within a rounding band too wide to tell (then a fit on these rows
    cannot be ruled out). A lost value off the grid by more than the band rules a level out."""
    n = x.size
    s = np.sort(x)
    count = int((x == cap).sum())
    fits: list[float] = []
    unjudged: list[float] = []
    for p in levels:
        pos = (1 - p) * (n - 1) if upper else p * (n - 1)
        j = int(np.floor(pos + 1e-9))
        f = pos - j
        if f < 1e-9 or f > 1 - 1e-9:
            continue  # the cap is a value of the data: on the grid, no fingerprint
        if upper:
            if count != n - 1 - j or j < 0:
                continue
            kept = float(s[j])
            lost = kept + (cap - kept) / f
            tol = 2 * (2 * err / f + err)
        else:
            if count != j + 1 or j + 1 >= n:
                continue
            kept = float(s[j + 1])
            lost = kept - (kept - cap) / (1 - f)
            tol = 2 * (2 * err / (1 - f) + err)
        beyond = lost >= cap - tol if upper else lost <= cap + tol
        on_grid = beyond and _off_grid(lost, q) <= tol
        if tol >= q / 20 and on_grid:
            # a wide rounding band makes landing on the grid a common coincidence, but a
            # lost value off the grid by more than the band still rules these rows out
            unjudged.append(p)
        elif on_grid:
            fits.append(p)
    return fits, unjudged


def grid_capped(name, values, err, ok, train, split):
    """Caps at usual percentiles recovered exactly from all rows but not from the training
    rows (a leak), or the reverse (clean). Thresholds: ``cap_grid_levels``."""
    v = values[ok]
    lo, hi = float(v.min()), float(v.max())
    inner = v[(v > lo) & (v < hi)]
    q = grid_step(inner[:: max(1, inner.size // 5000)])
    if q is None or inner.size < 2 * THRESHOLDS.min_side:
        return None
    levels = THRESHOLDS.cap_grid_levels
    sides = []
    for upper, cap in ((True, hi), (False, lo)):
        e = _cap_error(cap, bool(np.all(inner.astype(np.float32) == inner)))
        if int((v == cap).sum()) < 2 or _off_grid(cap, q) <= 4 * e:
            continue  # a cap on the grid is a value of the data: no fingerprint
        fits_all, un_all = _side_fits(v, cap, upper, q, e, levels)
        fits_tr, un_tr = _side_fits(values[ok & train], cap, upper, q, e, levels)
        sides.append(
            {
                "side": "upper" if upper else "lower",
                "cap_value": cap,
                "rows_at_cap": int((v == cap).sum()),
                "training_rows_at_cap": int((values[ok & train] == cap).sum()),
                "grid_step": q,
                "levels_fitting_all_rows": fits_all,
                "levels_fitting_training_rows": fits_tr,
                "training_rows_unjudged": un_tr,
                "all_rows_unjudged": un_all,
            }
        )
    if not sides:
        return None

    # caps come in pairs at p and 1 - p: a set of rows explains the piles at a level that
    # fits every examined side where it can be judged, and at least one side judged
    def explained(fit: str, unjudged: str) -> set[float]:
        possible = set.intersection(*(set(s[fit]) | set(s[unjudged]) for s in sides))
        return {p for p in possible if any(p in s[fit] for s in sides)}

    common_all = explained("levels_fitting_all_rows", "all_rows_unjudged")
    common_tr = explained("levels_fitting_training_rows", "training_rows_unjudged")
    ruled_out = not any(
        s["levels_fitting_training_rows"] or s["training_rows_unjudged"] for s in sides
    )
    if ruled_out and not common_all:
        # the training rows are ruled out at every level; all rows fit within a wide band:
        # piles off the grid at both fits' sizes exist only after a cap, so all rows remain
        common_all = set.intersection(*(set(s["all_rows_unjudged"]) for s in sides))
    # a level unjudged on every side leaves the training rows possible: cannot rule them out
    if any(
        all(p in s["training_rows_unjudged"] for s in sides) for p in THRESHOLDS.cap_grid_levels
    ):
        common_tr.add(-1.0)
    all_exact, train_exact = bool(common_all), bool(common_tr)
    if common_tr == {-1.0}:
        all_exact = True  # nothing judged for the training rows: cannot tell, never "clean"
    if not all_exact and not train_exact:
        return None
    levels = sorted(p for p in common_all | common_tr if p > 0)
    what = " and ".join(s["side"] for s in sides) + (f" {levels[0]:.1%}" if levels else " usual")
    return _verdict(
        name,
        f"capped at the {what} percentile"
        + f" (lost value recovered on the {sides[0]['grid_step']:g} grid)",
        all_exact,
        train_exact,
        True,
        split,
        {"piles": sides},
        "training_rows_at_cap",
        float(sides[0]["training_rows_at_cap"]),
    )
