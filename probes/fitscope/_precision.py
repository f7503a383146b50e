"""How precisely a column's values are stored, so rounding is never taken for evidence.

A value that went through CSV with six significant digits, a float32 array, or a float64
array each carry a different rounding error; the tolerances of the fingerprint tests in
``fitscope`` are built from this per-value error bound. A float32 array written to CSV
spells each value in the shortest digits that read back as that float32, so it carries
float32 rounding, not the rounding of the digits written; a missing value has no spelling
and does not change the column's.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

__all__ = ["value_error", "largest_value_error", "mean_tolerance", "sd_tolerance"]

_EPS64 = np.finfo(np.float64).eps
_EPS32 = float(np.finfo(np.float32).eps)


def value_error(s: pd.Series, values: np.ndarray, sample: int = 2000) -> np.ndarray:
    """Half the rounding quantum of each value: the largest error its storage allows."""
    finite = values[np.isfinite(values)]
    if s.dtype == np.float32:
        return 0.5 * _EPS32 * np.abs(values) + 1e-45
    probe = finite[:: max(1, finite.size // sample)]
    sig = _significant_digits(probe)
    dec = _decimals(probe)
    mag = np.floor(np.log10(np.where(values == 0, 1.0, np.abs(values))))
    err_sig = 0.5 * 10.0 ** (mag - sig + 1) if sig is not None else np.full(values.shape, np.inf)
    err_dec = (
        np.full(values.shape, 0.5 * 10.0**-dec)
        if dec is not None
        else np.full(values.shape, np.inf)
    )
    # float32 numbers written in their shortest spelling (a float32 frame through CSV) carry
    # float32 rounding, larger than the digits written suggest
    err_32 = (
        0.5 * _EPS32 * np.abs(values) if _float32_spelled(probe) else np.full(values.shape, np.inf)
    )
    # Values that fit several spellings may have gone through any of them: take the largest.
    # (judged on the present values: a missing value has no spelling and must not discard one)
    present = np.isfinite(values)
    candidates = [e for e in (err_sig, err_dec, err_32) if np.all(np.isfinite(e[present]))]
    floor = 4 * _EPS64 * np.abs(values) + 1e-300
    if not candidates:
        return floor
    return np.maximum(np.maximum.reduce(candidates), floor)


def largest_value_error(s: pd.Series, values: np.ndarray, sample: int = 2000) -> float:
    """The largest of :func:`value_error` over ``values``, without an error per value: the
    storage spellings come from the same probe of values, and an error grows with the
    value's magnitude (zeros err as values of magnitude 1 do)."""
    finite = values[np.isfinite(values)]
    if finite.size == 0:
        return 0.0
    top = float(np.max(np.abs(finite)))
    if s.dtype == np.float32:
        return 0.5 * _EPS32 * top + 1e-45
    probe = finite[:: max(1, finite.size // sample)]
    sig = _significant_digits(probe)
    dec = _decimals(probe)
    mags = [np.floor(np.log10(top))] if top > 0 else []
    if np.any(values == 0):
        mags.append(0.0)
    floor = 4 * _EPS64 * top + 1e-300
    candidates = []
    if sig is not None and mags:
        candidates.append(0.5 * 10.0 ** (max(mags) - sig + 1))
    if dec is not None:
        candidates.append(0.5 * 10.0**-dec)
    return max([*candidates, floor])


def _float32_spelled(values: np.ndarray) -> bool:
    """Is every value the shortest decimal spelling of a float32 number, with more digits
    than a few (so a column written on a short decimal grid is not taken for float32)?"""
    v = values[values != 0]
    if v.size == 0:
        return False
    x32 = v.astype(np.float32)
    if not np.all(np.abs(x32.astype(np.float64) - v) <= 0.5 * _EPS32 * np.abs(v)):
        return False
    sig = _significant_digits(v)
    if sig is not None and sig <= 6:
        return False  # a short decimal grid: its own rounding is the larger
    return all(float(str(a)) == b for a, b in zip(x32, v.tolist(), strict=True))


def _significant_digits(values: np.ndarray) -> int | None:
    """The fewest significant digits that reproduce every value, if fewer than 15."""
    v = values[values != 0]
    if v.size == 0:
        return None
    mag = np.floor(np.log10(np.abs(v)))
    for digits in range(1, 15):
        scaled = v / 10.0 ** (mag - digits + 1)
        if np.all(np.abs(scaled - np.round(scaled)) <= 1e-6):
            return digits
    return None


def _decimals(values: np.ndarray) -> int | None:
    """The fewest decimals that reproduce every value, if fewer than 12."""
    if values.size == 0:
        return None
    for k in range(0, 12):
        if np.all(np.round(values, k) == values):
            return k
    return None


def mean_tolerance(values: np.ndarray, err: np.ndarray) -> float:
    """How far a mean of exactly 0 can move through storage rounding (5 SDs of uniform error)."""
    n = values.size
    if n == 0:
        return np.inf
    spread = np.sqrt(np.sum(err**2) / 3.0) / n
    return float(5 * spread + 16 * _EPS64 * np.max(np.abs(values)))


def sd_tolerance(values: np.ndarray, err: np.ndarray) -> float:
    """How far a standard deviation of exactly 1 can move through storage rounding."""
    n = values.size
    if n == 0:
        return np.inf
    spread = np.sqrt(np.sum((values * err) ** 2) / 3.0) / n
    return float(5 * spread + 16 * _EPS64 * np.max(np.abs(values)) + 1.0 / max(n, 1) ** 2)
