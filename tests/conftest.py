"""Shared fixtures: real bundled datasets and small hand-made tables."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest
from sklearn.datasets import load_breast_cancer, load_diabetes, load_wine


def _noisy_copy(y: np.ndarray, share: float, seed: int, n_classes: int = 2) -> np.ndarray:
    """The target with ``share`` of its labels changed to another class."""
    rng = np.random.default_rng(seed)
    flip = rng.random(len(y)) < share
    shift = rng.integers(1, n_classes, len(y))
    return np.where(flip, (y + shift) % n_classes, y)


@pytest.fixture(scope="session")
def noisy_copy():
    """A function: the target with a share of its labels changed to another class."""
    return _noisy_copy


def _bundled(loader, target: str, flip: bool = False) -> pd.DataFrame:
    """A scikit-learn bundled dataset as one frame, its target in column ``target``."""
    data = loader(as_frame=True)
    frame = data.data.copy()
    y = data.target.to_numpy()
    frame[target] = 1 - y if flip else y
    return frame


@pytest.fixture(scope="session")
def breast_cancer() -> pd.DataFrame:
    """scikit-learn's bundled breast-cancer data (real), target 'malignant' (1 = malignant)."""
    return _bundled(load_breast_cancer, "malignant", flip=True)


@pytest.fixture(scope="session")
def wine() -> pd.DataFrame:
    """scikit-learn's bundled wine data (real): three cultivars, target 'cultivar'."""
    return _bundled(load_wine, "cultivar")


@pytest.fixture(scope="session")
def diabetes() -> pd.DataFrame:
    """scikit-learn's bundled diabetes data (real): numeric target 'progression'."""
    return _bundled(load_diabetes, "progression")


@pytest.fixture()
def small_binary() -> pd.DataFrame:
    """400 rows: one informative feature, two noise columns, a category, a date."""
    rng = np.random.default_rng(3)
    n = 400
    x = rng.normal(size=n)
    y = (x + rng.normal(scale=1.0, size=n) > 0).astype(int)
    return pd.DataFrame(
        {
            "signal": x,
            "noise": rng.normal(size=n),
            "noise2": rng.uniform(size=n),
            "colour": rng.choice(["red", "green", "blue"], n),
            "seen_at": pd.Timestamp("2025-01-01") + pd.to_timedelta(rng.integers(0, 300, n), "D"),
            "y": y,
        }
    )
