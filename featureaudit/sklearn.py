"""``DropSuspects``: a scikit-learn transformer that drops an audit's suspect columns;
``FindingsSplit`` (from :mod:`featureaudit.cv`): folds that follow the audit's split findings.

It reads the drop list from a findings.json at ``fit`` time (so a fitted, pickled pipeline no
longer needs the file) and drops those of the listed columns that the input has.
"""

from __future__ import annotations

import os
from typing import Any

import numpy as np
import pandas as pd
from sklearn.base import BaseEstimator, TransformerMixin
from sklearn.utils.validation import check_is_fitted, validate_data

from featureaudit.cv import FindingsSplit
from featureaudit.judge.findings import droplist, load_findings
from featureaudit.load.settings import check_level

__all__ = ["DropSuspects", "FindingsSplit"]


class DropSuspects(TransformerMixin, BaseEstimator):
    """Drop the columns that an audit lists at ``at_least`` or above.

    Parameters
    ----------
    findings : str or path-like
        The ``findings.json`` written by ``featureaudit scan`` (schema 1, 2 or 3).
    at_least : {"critical", "high", "medium", "low"}, default "high"
        The lowest level to drop. Columns a reviewer accepted (``--accepted``) and columns
        to refit rather than drop are kept, as in ``droplist.txt``.

    Attributes
    ----------
    columns_dropped_ : list of str
        The listed columns found in the input seen by ``fit``.
    feature_names_in_ : ndarray of str
        Column names seen by ``fit`` (only when the input had string column names).
    n_features_in_ : int
        Number of columns seen by ``fit``.

    Examples
    --------
    >>> from sklearn.pipeline import make_pipeline                   # doctest: +SKIP
    >>> from sklearn.linear_model import LogisticRegression          # doctest: +SKIP
    >>> pipe = make_pipeline(DropSuspects("report/findings.json"),
    ...                      LogisticRegression())                   # doctest: +SKIP
    """

    def __init__(self, findings: str | os.PathLike[str] = "", at_least: str = "high") -> None:
        self.findings = findings
        self.at_least = at_least

    def fit(self, X: Any, y: Any = None) -> DropSuspects:
        """Read the drop list and remember which of its columns ``X`` has."""
        level = check_level(self.at_least, flag="at_least")
        if not str(self.findings):
            raise ValueError(
                "DropSuspects needs `findings`: the path of the findings.json that "
                "`featureaudit scan` wrote."
            )
        listed = droplist(load_findings(os.fspath(self.findings)), level)
        self._check(X, reset=True)
        names = getattr(self, "feature_names_in_", None)
        present = set() if names is None else {str(n) for n in names}
        self.columns_dropped_ = [c for c in listed if c in present]
        self._keep = np.array(
            [names is None or str(n) not in set(self.columns_dropped_) for n in self._all_names()]
        )
        return self

    def transform(self, X: Any) -> Any:
        """``X`` without the dropped columns (a DataFrame stays a DataFrame)."""
        check_is_fitted(self, "columns_dropped_")
        checked = self._check(X, reset=False)
        if isinstance(X, pd.DataFrame):
            return X.drop(columns=self.columns_dropped_)
        return checked[:, self._keep]

    def get_feature_names_out(self, input_features: Any = None) -> np.ndarray:
        """The names of the columns that ``transform`` keeps."""
        check_is_fitted(self, "columns_dropped_")
        if input_features is not None:
            given = np.asarray(input_features, dtype=object)
            names = getattr(self, "feature_names_in_", None)
            if names is not None and not np.array_equal(given, names):
                raise ValueError("input_features is not equal to feature_names_in_")
            if len(given) != self.n_features_in_:
                raise ValueError(
                    f"input_features has {len(given)} names; this transformer was fitted on "
                    f"{self.n_features_in_} columns."
                )
            return given[self._keep]
        return np.asarray(self._all_names(), dtype=object)[self._keep]

    def _all_names(self) -> list[str]:
        names = getattr(self, "feature_names_in_", None)
        if names is not None:
            return [str(n) for n in names]
        return [f"x{i}" for i in range(self.n_features_in_)]

    def _check(self, X: Any, *, reset: bool) -> Any:
        """Validate shape and names as scikit-learn does, keeping any dtype and NaN."""
        return validate_data(
            self,
            X,
            reset=reset,
            skip_check_array=isinstance(X, pd.DataFrame),
            dtype=None,
            ensure_all_finite=False,
            accept_sparse=("csr", "csc"),
        )

    def __sklearn_tags__(self) -> Any:
        tags = super().__sklearn_tags__()
        tags.input_tags.allow_nan = True
        tags.input_tags.sparse = True
        tags.input_tags.string = True
        tags.requires_fit = True
        return tags
