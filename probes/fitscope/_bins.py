"""Equal-frequency binning fitted on all rows: bin counts balanced over all rows, not over
the training rows.

``KBinsDiscretizer(strategy="quantile", encode="ordinal")`` writes bin numbers 0..k-1 whose
edges are quantiles of the rows it was fitted on, so over those rows every bin holds n/k rows
to within a row or two of interpolation; over another set of rows the counts scatter by
sampling, about sqrt(n/k * s * (1 - s)) rows for a share s. Counts, not floats, are compared,
so storage rounding plays no part.
"""

from __future__ import annotations

import numpy as np

from featureaudit.probes.fitscope._fingerprint import verdict as _verdict
from featureaudit.probes.fitscope._thresholds import THRESHOLDS

__all__ = ["code_count", "quantile_binned"]


def code_count(v: np.ndarray, limit: int) -> int:
    """The cheap gate of bin numbers and ordinal codes: k when the values are the whole
    numbers 0..k-1, every one present, with 3 <= k <= ``limit``; else 0."""
    k = int(v.max()) + 1 if v.size else 0
    if not 3 <= k <= limit or v.min() != 0 or np.any(v != np.round(v)):
        return 0
    return k if np.unique(v).size == k else 0


def _deviation(x: np.ndarray, k: int) -> float:
    counts = np.bincount(x.astype(np.int64), minlength=k)
    return float(np.max(np.abs(counts - x.size / k)))


def quantile_binned(name, values, err, ok, train, split):
    v, v_tr = values[ok], values[ok & train]
    k = int(v.max()) + 1
    slack = THRESHOLDS.bin_slack
    dev_all, dev_tr = _deviation(v, k), _deviation(v_tr, k)
    share = v_tr.size / max(v.size, 1)
    spread = float(np.sqrt(v.size / k * share * (1 - share)))
    detail = {
        "bins": k,
        "largest_count_gap_all_rows": dev_all,
        "largest_count_gap_training_rows": dev_tr,
        "slack_rows": slack,
        "sampling_sd_of_training_count": spread,
    }
    return _verdict(
        name,
        f"binned into {k} equal-frequency bins",
        dev_all <= slack,
        dev_tr <= slack,
        spread > slack,
        split,
        detail,
        "largest_count_gap_training_rows",
        dev_tr,
    )
