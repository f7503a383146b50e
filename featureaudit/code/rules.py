"""What the code audit knows: estimator families, the kinds it reports, their levels and remedies.

Levels are common practice, no source: a fit on rows that include held-out rows is ``high``
when its output reaches the model that is then evaluated (the evaluation is no longer on unseen
rows, whatever the fit), and ``low`` when its output is only looked at (a table, a plot);
early stopping on the test set chooses one number on it and is ``medium``.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

from featureaudit.vocab.levels import Level

__all__ = ["Finding", "KINDS", "family_of", "LEVELS", "REMEDY", "UNUSED_LEVEL"]

TRANSFORMERS = {
    "StandardScaler",
    "MinMaxScaler",
    "RobustScaler",
    "MaxAbsScaler",
    "QuantileTransformer",
    "PowerTransformer",
    "SimpleImputer",
    "KNNImputer",
    "IterativeImputer",
    "PCA",
    "TruncatedSVD",
    "KernelPCA",
    "FastICA",
    "NMF",
    "KBinsDiscretizer",
    "TfidfVectorizer",
    "CountVectorizer",
    "TfidfTransformer",
    "OneHotEncoder",
    "OrdinalEncoder",
    "TargetEncoder",
    "SplineTransformer",
    "FactorAnalysis",
    "IncrementalPCA",
    "VarianceThreshold",
}
SUPERVISED_TRANSFORMERS = {"TargetEncoder"}
SELECTORS = {
    "SelectKBest",
    "SelectPercentile",
    "SelectFpr",
    "SelectFdr",
    "SelectFwe",
    "RFE",
    "RFECV",
    "SelectFromModel",
    "SequentialFeatureSelector",
    "GenericUnivariateSelect",
}
SCORE_FUNCS = {
    "f_classif",
    "f_regression",
    "chi2",
    "mutual_info_classif",
    "mutual_info_regression",
    "r_regression",
}
SAMPLERS = {
    "SMOTE",
    "ADASYN",
    "BorderlineSMOTE",
    "SVMSMOTE",
    "SMOTENC",
    "SMOTEN",
    "KMeansSMOTE",
    "RandomOverSampler",
    "SMOTETomek",
    "SMOTEENN",
}
SEARCHES = {
    "GridSearchCV",
    "RandomizedSearchCV",
    "HalvingGridSearchCV",
    "HalvingRandomSearchCV",
    "BayesSearchCV",
}
PIPELINES = {"Pipeline", "make_pipeline", "ColumnTransformer", "make_column_transformer"}
SPLITTERS = {
    "KFold",
    "StratifiedKFold",
    "GroupKFold",
    "TimeSeriesSplit",
    "RepeatedKFold",
    "RepeatedStratifiedKFold",
    "ShuffleSplit",
    "StratifiedShuffleSplit",
    "GroupShuffleSplit",
    "StratifiedGroupKFold",
    "LeaveOneOut",
    "LeaveOneGroupOut",
}
HARMLESS = {
    "LabelEncoder",
    "LabelBinarizer",
    "MultiLabelBinarizer",
    "FunctionTransformer",
    "Normalizer",
    "PolynomialFeatures",
    "Binarizer",
}


def family_of(name: str) -> str | None:
    """The family of a scikit-learn / imbalanced-learn class name, or None for anything else
    (models and unknown classes)."""
    for fam, names in (
        ("transformer", TRANSFORMERS),
        ("selector", SELECTORS),
        ("sampler", SAMPLERS),
        ("search", SEARCHES),
        ("pipeline", PIPELINES),
        ("splitter", SPLITTERS),
        ("harmless", HARMLESS),
    ):
        if name in names:
            return fam
    return None


KINDS = {
    "fit_before_split": "a scaler, imputer, encoder, decomposition or pandas statistic fitted "
    "on rows that include held-out rows",
    "selection_on_all_rows": "features or hyper-parameters chosen with held-out rows or their "
    "targets",
    "test_reused": "the held-out set used to choose among models or settings, then reported as "
    "if untouched",
    "fit_on_heldout": "a fit or fit_transform called on held-out rows",
    "oversampled_before_split": "synthetic or duplicated rows made before the split",
}

LEVELS = {  # (kind, variant) -> level; common practice, no source (see the module docstring)
    ("fit_before_split", "unsupervised"): Level.HIGH,
    ("fit_before_split", "encoder"): Level.HIGH,
    ("fit_before_split", "supervised"): Level.HIGH,
    ("fit_before_split", "pandas"): Level.HIGH,
    ("selection_on_all_rows", "features"): Level.HIGH,
    ("selection_on_all_rows", "search"): Level.HIGH,
    ("test_reused", "loop"): Level.HIGH,
    ("test_reused", "early_stopping"): Level.MEDIUM,
    ("fit_on_heldout", "fit"): Level.HIGH,
    ("fit_on_heldout", "pandas"): Level.MEDIUM,
    ("oversampled_before_split", "resample"): Level.HIGH,
}
UNUSED_LEVEL = Level.LOW  # a fit on all rows whose output never reaches a model: looked at

REMEDY = {
    "fit_before_split": "fit it on the training rows only: put it in a Pipeline with the model, "
    "or fit on X_train and transform X_test",
    "fit_before_split/pandas": "compute the statistic on the training rows after the split "
    "(e.g. train.mean()) and apply that to both parts",
    "selection_on_all_rows/features": "select inside the cross-validation: put the selector in "
    "a Pipeline with the model, or fit it on the training "
    "rows only",
    "selection_on_all_rows/search": "fit the search on the training rows only (or nest it in "
    "cross-validation) and score the held-out rows once",
    "test_reused/loop": "choose on a validation split or by cross-validation on the training "
    "rows; score the test set once, at the end",
    "test_reused/early_stopping": "early-stop on a validation split carved from the training "
    "rows, not on the test set",
    "fit_on_heldout": "fit on the training rows and only transform or predict the held-out rows",
    "fit_on_heldout/pandas": "take the statistic from the training rows and apply it to the "
    "held-out rows",
    "oversampled_before_split": "resample the training rows only, after the split (an "
    "imbalanced-learn Pipeline inside cross-validation does this)",
}


@dataclass(frozen=True)
class Finding:
    """One code finding, as the contract's ``code-findings.json`` entry."""

    file: str
    line: int
    cell: int | None
    kind: str
    variant: str
    summary: str
    code: str
    flow: str
    columns: tuple[str, ...] = field(default=())
    reached: bool = True  # the fitted output reaches a model's training rows

    @property
    def level(self) -> Level:
        return LEVELS[(self.kind, self.variant)] if self.reached else UNUSED_LEVEL

    @property
    def remedy(self) -> str:
        return REMEDY.get(f"{self.kind}/{self.variant}", REMEDY.get(self.kind, ""))

    def key(self) -> tuple[Any, ...]:
        return (self.file, self.cell or 0, self.line, self.kind)

    def to_dict(self) -> dict[str, Any]:
        return {
            "file": self.file,
            "line": self.line,
            "cell": self.cell,
            "kind": self.kind,
            "level": self.level.label,
            "summary": self.summary,
            "evidence": {
                "code": self.code,
                "flow": self.flow,
                "remedy": self.remedy,
                "columns": list(self.columns),
            },
        }
