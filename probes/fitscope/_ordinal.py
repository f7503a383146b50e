"""Ordinal codes of categories taken from all rows: a code inside the training rows' range
that no training row holds.

scikit-learn's ``OrdinalEncoder`` numbers the sorted categories it was fitted on 0..k-1.
Fitted on the training rows, every code is held by some training row and a held-out row of
an unseen category gets the unknown value (or an error); fitted on all rows, a category only
held-out rows hold takes a code of its own, and the training rows' codes have a hole. A
natural count can also lack a value on the training rows, so a hole is read as a code only
when chance does not explain it: the value's rows all held out under a random split of rows
(the held-out share to the power of its count), or the value far rarer than its neighbours
(a Poisson tail against their median count, as ``_tiemedian``), either below
``ordinal_alpha`` after a Bonferroni correction over the k codes. A hole at either end is
left alone: a natural count's largest value often lies in held-out rows only. Counts, not
floats, are compared, so rounding plays no part.
"""

from __future__ import annotations

import numpy as np
from scipy.stats import poisson

from featureaudit.probes.fitscope._fingerprint import verdict as _verdict
from featureaudit.probes.fitscope._thresholds import THRESHOLDS
from featureaudit.probes.fitscope._tiemedian import neighbour_rate

__all__ = ["ordinal_coded"]


def _hole_p(code: int, v: np.ndarray, count: int, share: float, k: int) -> float:
    """Bonferroni-corrected chance of a hole at ``code``: all its rows held out by a random
    split, or its count as small as this among neighbours that are much more frequent."""
    chance = share**count
    rare = float(poisson.cdf(count, max(neighbour_rate(v, float(code)), 1e-9)))
    return min(1.0, k * min(chance, rare))


def ordinal_coded(name, values, err, ok, train, split):
    v, v_tr = values[ok], values[ok & train]
    if v_tr.size == 0:
        return None
    k = int(v.max()) + 1
    counts = np.bincount(v.astype(np.int64), minlength=k)
    on_train = np.bincount(v_tr.astype(np.int64), minlength=k)
    lo, hi = int(v_tr.min()), int(v_tr.max())
    holes = [c for c in range(lo + 1, hi) if on_train[c] == 0]
    if not holes:
        return None
    share = 1 - v_tr.size / v.size
    p = {c: _hole_p(c, v, int(counts[c]), share, k) for c in holes}
    worst = min(p, key=lambda c: p[c])
    detail = {
        "codes": k,
        "codes_only_on_heldout_rows": {str(c): int(counts[c]) for c in holes},
        "chance_of_hole": p[worst],
        "alpha": THRESHOLDS.ordinal_alpha,
        "training_rows": {"codes_held": int((on_train > 0).sum())},
        "all_rows": {"codes_held": k},
    }
    return _verdict(
        name,
        f"ordinal codes 0..{k - 1} of categories from all rows (code {worst} on "
        f"{int(counts[worst])} held-out rows, on no training row)",
        True,
        False,
        p[worst] < THRESHOLDS.ordinal_alpha,
        split,
        detail,
        "chance_of_hole",
        p[worst],
    )
