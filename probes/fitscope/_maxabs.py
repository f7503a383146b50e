"""Max-abs scaling fitted on all rows: the largest |x| is exactly 1, reached only on held-out
rows.

scikit-learn's ``MaxAbsScaler`` divides by the largest |x| of the rows it was fitted on, so
that row becomes exactly ±1 (x / x) and every other fitted row lies inside [-1, 1]; rows it
was not fitted on may fall outside. A column written on a short decimal grid (a natural
share or score that reaches 1.0) is not read as scaled.
"""

from __future__ import annotations

import numpy as np

from featureaudit.probes.fitscope._capgrid import grid_step
from featureaudit.probes.fitscope._fingerprint import verdict as _verdict

__all__ = ["looks_maxabs", "maxabs_scaled"]


def looks_maxabs(v: np.ndarray) -> bool:
    """The cheap gate: max |x| within 1e-6 of 1, not a [0, 1] range (min-max's reading)."""
    top = float(np.max(np.abs(v)))
    return abs(top - 1) <= 1e-6 and not (abs(float(v.min())) <= 1e-3 and v.max() > 0)


def maxabs_scaled(name, values, err, ok, train, split):
    v = values[ok]
    sample = v[:: max(1, v.size // 5000)]
    q = grid_step(sample[np.abs(sample) < 1])
    if q is not None and q >= 1e-4:
        return None  # a short decimal grid: natural values that reach 1.0
    e = err[ok]
    top = np.abs(v)
    tol = 4 * float(np.max(e[top >= 0.5])) if np.any(top >= 0.5) else np.inf
    m_all = float(top.max())
    tr = ok & train
    m_tr = float(np.abs(values[tr]).max()) if tr.any() else 0.0
    all_exact = abs(m_all - 1) <= tol
    train_exact = abs(m_tr - 1) <= tol
    held = int((ok & ~train).sum())
    detail = {
        "all_rows": {"max_abs": m_all},
        "training_rows": {"max_abs": m_tr},
        "tolerance": tol,
        "rows_at_max_abs": int((np.abs(top - 1) <= tol).sum()),
    }
    return _verdict(
        name,
        "max-abs scaled (largest |x| = 1)",
        all_exact,
        train_exact,
        held >= 1,
        split,
        detail,
        "training_rows_max_abs",
        m_tr,
    )
