"""Write the development corpus of benchmarks/code_corpus/ and its label file.

Each family reproduces one pattern of ordinary machine-learning code (scripts and notebooks) in
several variants. A line that should give a finding carries a ``#! KIND LEVEL`` marker here;
the marker is stripped from the written file and becomes a row of ``labels.csv`` (file, half,
family, kind, level floor, line), so the labels exist before the tool runs. Halves are fixed by
family (``HALF``): thresholds and rules are tuned on ``tune`` and quoted on ``check``.
"""

# ruff: noqa: E501 - the templates are code lines as people write them
from __future__ import annotations

import csv
import json
import re
from pathlib import Path
from string import Template

OUT = Path(__file__).resolve().parent / "code_corpus"

HEAD = """import numpy as np
import pandas as pd
from sklearn.model_selection import train_test_split, cross_val_score, StratifiedKFold, KFold, GridSearchCV
from sklearn.preprocessing import StandardScaler, MinMaxScaler, RobustScaler, OneHotEncoder, OrdinalEncoder, QuantileTransformer
from sklearn.impute import SimpleImputer
from sklearn.decomposition import PCA
from sklearn.pipeline import Pipeline, make_pipeline
from sklearn.metrics import accuracy_score, f1_score, roc_auc_score, mean_squared_error
from sklearn.linear_model import LogisticRegression, Ridge
from sklearn.ensemble import RandomForestClassifier, GradientBoostingClassifier
from sklearn.neighbors import KNeighborsClassifier
from sklearn.svm import SVC
from sklearn.tree import DecisionTreeClassifier"""

# loaders: each defines X and y on all labelled rows (and df for the pandas ones)
LOADERS = {
    "csv": 'df = pd.read_csv("$csv")\nX = df.drop(columns=["$t"])\ny = df["$t"]',
    "frame": "from sklearn.datasets import load_breast_cancer\ndata = load_breast_cancer()\n"
    "df = pd.DataFrame(data.data, columns=data.feature_names)\ndf['target'] = data.target\n"
    "X = df.drop('target', axis=1)\ny = df['target']",
    "xy": "from sklearn.datasets import load_wine\nX, y = load_wine(return_X_y=True)",
    "bunch": "from sklearn.datasets import load_digits\ndigits = load_digits()\n"
    "X = digits.data\ny = digits.target",
    "kaggle": 'train = pd.read_csv("train.csv")\nX = train.drop(["Id", "$t"], axis=1)\n'
    'y = train["$t"]',
}
PANDAS = ("csv", "frame", "kaggle")
MODELS = [
    "LogisticRegression(max_iter=1000)",
    "RandomForestClassifier(n_estimators=200, random_state=0)",
    "SVC(probability=True)",
    "KNeighborsClassifier(n_neighbors=7)",
    "GradientBoostingClassifier()",
    "DecisionTreeClassifier(max_depth=5)",
]
CSVS = [
    ("churn.csv", "Exited"),
    ("heart.csv", "output"),
    ("diabetes.csv", "Outcome"),
    ("loans.csv", "default"),
    ("titanic.csv", "Survived"),
    ("credit.csv", "Class"),
]

FAMILIES: dict[str, tuple[str, str, list[dict[str, str]]]] = {}


def family(name: str, half: str, template: str, variants: list[dict[str, str]]) -> None:
    """Register a family: a template and the substitutions of each variant (``nb`` = notebook)."""
    FAMILIES[name] = (half, template, variants)


def v(i: int, loader: str | bool = "csv", nb: bool = False, **kw: str) -> dict[str, str]:
    """One variant: the i-th model and data file; ``v(i, True)`` is a csv notebook."""
    if isinstance(loader, bool):
        loader, nb = "csv", loader
    csv_name, target = CSVS[i % len(CSVS)]
    d = {"LOAD": loader, "MODEL": MODELS[i % len(MODELS)], "csv": csv_name, "t": target}
    d["nb"] = "1" if nb else ""
    d.update(kw)
    return d


# ---- fit_before_split --------------------------------------------------------------------
family(
    "fb_transformer_then_split",
    "tune",
    """$HEAD
$LOADER
# %%
X_scaled = $T.fit_transform(X)  #! fit_before_split high
# %%
X_train, X_test, y_train, y_test = train_test_split(X_scaled, y, test_size=0.2, random_state=42)
model = $MODEL
model.fit(X_train, y_train)
print("test accuracy:", accuracy_score(y_test, model.predict(X_test)))
""",
    [
        v(0, T="StandardScaler()"),
        v(1, "frame", T="MinMaxScaler()"),
        v(2, "xy", T="PCA(n_components=5)"),
        v(3, "bunch", True, T="RobustScaler()"),
        v(4, "csv", True, T="SimpleImputer(strategy='median')"),
        v(5, "kaggle", T="QuantileTransformer(n_quantiles=100)"),
    ],
)

family(
    "fb_fit_then_transform_cv",
    "check",
    """$HEAD
$LOADER
# %%
scaler = $T
scaler.fit(X)  #! fit_before_split high
X = scaler.transform(X)
# %%
model = $MODEL
scores = cross_val_score(model, X, y, cv=5)
print("cv accuracy %.3f +- %.3f" % (scores.mean(), scores.std()))
""",
    [
        v(0, T="StandardScaler()"),
        v(1, "frame", T="MinMaxScaler()"),
        v(2, "xy", True, T="StandardScaler()"),
        v(3, "bunch", T="PCA(n_components=0.95)"),
        v(4, "kaggle", T="SimpleImputer()"),
        v(5, "csv", True, T="RobustScaler()"),
    ],
)

family(
    "fb_manual_scaling",
    "tune",
    """$HEAD
$LOADER
# %%
$MANUAL
# %%
X_tr, X_te, y_tr, y_te = train_test_split(X, y, random_state=1, stratify=y)
clf = $MODEL.fit(X_tr, y_tr)
print(f1_score(y_te, clf.predict(X_te), average="macro"))
""",
    [
        v(0, MANUAL="X = (X - X.mean()) / X.std()  #! fit_before_split high"),
        v(1, "frame", MANUAL="X = (X - X.min()) / (X.max() - X.min())  #! fit_before_split high"),
        v(
            2,
            "xy",
            MANUAL="X = (X - np.mean(X, axis=0)) / np.std(X, axis=0)  #! fit_before_split high",
        ),
        v(3, "bunch", True, MANUAL="X = X / X.max()  #! fit_before_split high"),
        v(
            4,
            "csv",
            True,
            MANUAL="mu, sd = X.mean(), X.std()\nX = (X - mu) / sd  #! fit_before_split high",
        ),
    ],
)

family(
    "fb_fillna_loop",
    "check",
    """$HEAD
df = pd.read_csv("$csv")
num_cols = df.select_dtypes("number").columns.drop("$t")
# %%
$FILL
# %%
X = df[num_cols]
y = df["$t"]
X_train, X_valid, y_train, y_valid = train_test_split(X, y, test_size=0.25, random_state=7)
model = $MODEL
model.fit(X_train, y_train)
print(roc_auc_score(y_valid, model.predict_proba(X_valid)[:, 1]))
""",
    [
        v(
            0,
            FILL="for col in num_cols:\n    df[col] = df[col].fillna(df[col].mean())  #! fit_before_split high",
        ),
        v(
            1,
            FILL="for c in num_cols:\n    df[c].fillna(df[c].median(), inplace=True)  #! fit_before_split high",
        ),
        v(
            2,
            True,
            FILL="df[num_cols] = df[num_cols].fillna(df[num_cols].mean())  #! fit_before_split high",
        ),
        v(3, FILL="df = df.fillna(df.median(numeric_only=True))  #! fit_before_split high"),
        v(
            4,
            FILL="for col in num_cols:\n    df[col] = df[col].clip(upper=df[col].quantile(0.99))  #! fit_before_split high",
        ),
    ],
)

family(
    "fb_second_experiment",
    "tune",
    """$HEAD
$LOADER
# %%
X_train, X_test, y_train, y_test = train_test_split(X, y, test_size=0.3, random_state=0)
base = $MODEL.fit(X_train, y_train)
print("baseline", base.score(X_test, y_test))
# %%
# second try: $WHAT
X2 = $T.fit_transform(X)  #! fit_before_split high
X_train, X_test, y_train, y_test = train_test_split(X2, y, test_size=0.3, random_state=0)
model = $MODEL.fit(X_train, y_train)
print("with $WHAT", model.score(X_test, y_test))
""",
    [
        v(0, T="StandardScaler()", WHAT="scaling"),
        v(1, "xy", T="PCA(n_components=3)", WHAT="pca"),
        v(2, "frame", True, T="MinMaxScaler()", WHAT="minmax"),
        v(3, "bunch", T="StandardScaler()", WHAT="scaling"),
        v(4, "kaggle", True, T="SimpleImputer(strategy='mean')", WHAT="imputation"),
    ],
)

family(
    "fb_training_name_before_split",
    "check",
    """$HEAD
df = pd.read_csv("$csv")
X_train = df.drop(columns=["$t"])
y_train = df["$t"]
# %%
sc = $T
X_train = sc.fit_transform(X_train)  #! fit_before_split high
# %%
X_tr, X_val, y_tr, y_val = train_test_split(X_train, y_train, test_size=0.2)
model = $MODEL
model.fit(X_tr, y_tr)
print(accuracy_score(y_val, model.predict(X_val)))
""",
    [
        v(0, T="StandardScaler()"),
        v(1, T="MinMaxScaler()"),
        v(2, True, T="SimpleImputer()"),
        v(3, T="PCA(n_components=4)"),
        v(4, True, T="StandardScaler()"),
    ],
)

family(
    "fb_after_shuffle",
    "tune",
    """$HEAD
df = pd.read_csv("$csv")
df = df.sample(frac=1, random_state=42).reset_index(drop=True)
# %%
features = [c for c in df.columns if c != "$t"]
df[features] = $T.fit_transform(df[features])  #! fit_before_split high
# %%
train_df, test_df = train_test_split(df, test_size=0.2, random_state=42)
model = $MODEL
model.fit(train_df[features], train_df["$t"])
print(accuracy_score(test_df["$t"], model.predict(test_df[features])))
""",
    [
        v(0, T="StandardScaler()"),
        v(1, True, T="MinMaxScaler()"),
        v(2, T="RobustScaler()"),
        v(3, T="StandardScaler()"),
    ],
)

family(
    "fb_variance_threshold",
    "check",
    """$HEAD
from sklearn.feature_selection import VarianceThreshold
$LOADER
vt = VarianceThreshold(threshold=0.01)
X_reduced = vt.fit_transform(X)  #! fit_before_split high
X_train, X_test, y_train, y_test = train_test_split(X_reduced, y, random_state=3)
print($MODEL.fit(X_train, y_train).score(X_test, y_test))
""",
    [v(0), v(1, "bunch"), v(2, "xy")],
)

# ---- fit_on_heldout ----------------------------------------------------------------------
family(
    "fh_refit_on_test",
    "tune",
    """$HEAD
$LOADER
X_train, X_test, y_train, y_test = train_test_split(X, y, test_size=0.25, random_state=0)
# %%
scaler = $T
X_train = scaler.fit_transform(X_train)
X_test = scaler.fit_transform(X_test)  #! fit_on_heldout high
# %%
model = $MODEL.fit(X_train, y_train)
print(accuracy_score(y_test, model.predict(X_test)))
""",
    [
        v(0, T="StandardScaler()"),
        v(1, "xy", T="MinMaxScaler()"),
        v(2, "frame", True, T="PCA(n_components=5)"),
        v(3, "bunch", T="StandardScaler()"),
        v(4, "kaggle", T="SimpleImputer()"),
    ],
)

family(
    "fh_encoder_loop",
    "check",
    """$HEAD
df = pd.read_csv("$csv")
cat_cols = ["city", "segment", "channel"]
train, rest = train_test_split(df, test_size=0.3, random_state=0)
valid, test = train_test_split(rest, test_size=0.5, random_state=0)
# %%
for frame in [train, valid, test]:
    enc = $ENC
    frame[cat_cols] = enc.fit_transform(frame[cat_cols])  #! fit_on_heldout high
# %%
model = $MODEL
model.fit(train.drop(columns=["$t"]), train["$t"])
print(model.score(valid.drop(columns=["$t"]), valid["$t"]))
""",
    [
        v(0, ENC="OrdinalEncoder()"),
        v(1, True, ENC="OrdinalEncoder(handle_unknown='use_encoded_value', unknown_value=-1)"),
        v(2, ENC="OrdinalEncoder()"),
        v(3, ENC="StandardScaler()"),
    ],
)

family(
    "fh_positional_slices",
    "tune",
    """$HEAD
df = pd.read_csv("$csv").sort_values("date")
feats = [c for c in df.columns if c not in ("$t", "date")]
valid = df.iloc[1:2000]
train = df.iloc[2001:]
# %%
scaler = StandardScaler()
tr_x = scaler.fit_transform(train[feats])
va_x = $VALFIT
# %%
model = $MODEL.fit(tr_x, train["$t"])
print(accuracy_score(valid["$t"], model.predict(va_x)))
""",
    [
        v(0, VALFIT="scaler.fit_transform(valid[feats])  #! fit_on_heldout high"),
        v(1, True, VALFIT="StandardScaler().fit_transform(valid[feats])  #! fit_on_heldout high"),
        v(2, VALFIT="scaler.fit(valid[feats]).transform(valid[feats])  #! fit_on_heldout high"),
    ],
)

family(
    "fh_test_statistics",
    "check",
    """$HEAD
train = pd.read_csv("train.csv")
test = pd.read_csv("test.csv")
features = ["age", "income", "tenure", "balance"]
# %%
$FIX
# %%
model = $MODEL.fit(train[features], train["$t"])
print(accuracy_score(test["$t"], model.predict(test[features])))
""",
    [
        v(
            0,
            FIX="train[features] = (train[features] - train[features].mean()) / train[features].std()\n"
            "test[features] = (test[features] - test[features].mean()) / test[features].std()  #! fit_on_heldout medium",
        ),
        v(
            1,
            FIX="for col in features:\n    train[col] = train[col].fillna(train[col].median())\n"
            "    test[col] = test[col].fillna(test[col].median())  #! fit_on_heldout medium",
        ),
        v(
            2,
            True,
            FIX="imp = SimpleImputer()\ntrain[features] = imp.fit_transform(train[features])\n"
            "test[features] = imp.fit_transform(test[features])  #! fit_on_heldout high",
        ),
        v(3, FIX="model0 = $MODEL.fit(test[features], test['$t'])  #! fit_on_heldout high"),
    ],
)

# ---- oversampled_before_split ------------------------------------------------------------
family(
    "os_sampler_then_split",
    "tune",
    """$HEAD
from imblearn.over_sampling import $S
$LOADER
# %%
print(pd.Series(y).value_counts())
X_res, y_res = $S(random_state=42).fit_resample(X, y)  #! oversampled_before_split high
# %%
X_train, X_test, y_train, y_test = train_test_split(X_res, y_res, test_size=0.2, random_state=42)
clf = $MODEL
clf.fit(X_train, y_train)
print(f1_score(y_test, clf.predict(X_test)))
""",
    [
        v(0, S="SMOTE"),
        v(1, "frame", S="ADASYN"),
        v(2, "xy", True, S="RandomOverSampler"),
        v(3, "kaggle", S="BorderlineSMOTE"),
        v(4, "csv", True, S="SMOTE"),
    ],
)

family(
    "os_sampler_then_folds",
    "check",
    """$HEAD
from imblearn.over_sampling import $S
$LOADER
sm = $S(random_state=0)
X_sm, y_sm = sm.fit_resample(X, y)  #! oversampled_before_split high
# %%
$CV
""",
    [
        v(
            0,
            S="SMOTE",
            CV="skf = StratifiedKFold(n_splits=5, shuffle=True, random_state=0)\n"
            "for fold, (tr, va) in enumerate(skf.split(X_sm, y_sm)):\n"
            "    m = $MODEL.fit(X_sm[tr], y_sm[tr])\n    print(fold, f1_score(y_sm[va], m.predict(X_sm[va])))",
        ),
        v(
            1,
            "xy",
            S="RandomOverSampler",
            CV="print(cross_val_score($MODEL, X_sm, y_sm, cv=StratifiedKFold(5)).mean())",
        ),
        v(
            2,
            "frame",
            True,
            S="SMOTE",
            CV="kf = KFold(n_splits=5, shuffle=True)\nfor tr_idx, va_idx in kf.split(X_sm):\n"
            "    model = $MODEL\n    model.fit(X_sm.iloc[tr_idx], y_sm.iloc[tr_idx])\n"
            "    print(model.score(X_sm.iloc[va_idx], y_sm.iloc[va_idx]))",
        ),
        v(
            3,
            "bunch",
            S="ADASYN",
            CV="scores = cross_val_score($MODEL, X_sm, y_sm, cv=5, scoring='f1_macro')\nprint(scores)",
        ),
        v(
            4,
            "csv",
            S="SMOTE",
            CV="gs = GridSearchCV($MODEL, {'max_depth': [3, 5]}, cv=5)\ngs.fit(X_sm, y_sm)\nprint(gs.best_score_)",
        ),
    ],
)

family(
    "os_manual_upsample",
    "tune",
    """$HEAD
from sklearn.utils import resample
df = pd.read_csv("$csv")
majority = df[df["$t"] == 0]
minority = df[df["$t"] == 1]
# %%
$UP
# %%
X = balanced.drop(columns=["$t"])
y = balanced["$t"]
X_train, X_test, y_train, y_test = train_test_split(X, y, test_size=0.2, random_state=1)
model = $MODEL.fit(X_train, y_train)
print(accuracy_score(y_test, model.predict(X_test)))
""",
    [
        v(
            0,
            UP="minority_up = resample(minority, replace=True, n_samples=len(majority), random_state=1)  #! oversampled_before_split high\n"
            "balanced = pd.concat([majority, minority_up])",
        ),
        v(
            1,
            True,
            UP="extra = minority.sample(n=len(majority), replace=True, random_state=0)  #! oversampled_before_split high\n"
            "balanced = pd.concat([majority, extra]).sample(frac=1)",
        ),
        v(
            2,
            UP="up = resample(minority, replace=True, n_samples=5000)  #! oversampled_before_split high\n"
            "balanced = pd.concat([majority, up], axis=0)",
        ),
        v(
            3,
            UP="balanced = pd.concat([majority, minority.sample(len(majority), replace=True)])  #! oversampled_before_split high",
        ),
    ],
)

family(
    "os_second_experiment",
    "check",
    """$HEAD
from imblearn.over_sampling import $S
$LOADER
X_train, X_test, y_train, y_test = train_test_split(X, y, stratify=y, random_state=0)
rf = $MODEL.fit(X_train, y_train)
print("plain", f1_score(y_test, rf.predict(X_test), average="macro"))
# %%
X_bal, y_bal = $S().fit_resample(X, y)  #! oversampled_before_split high
X_train, X_test, y_train, y_test = train_test_split(X_bal, y_bal, stratify=y_bal, random_state=0)
rf = $MODEL.fit(X_train, y_train)
print("balanced", f1_score(y_test, rf.predict(X_test), average="macro"))
""",
    [
        v(0, S="SMOTE"),
        v(1, "xy", S="RandomOverSampler"),
        v(2, "frame", True, S="SMOTE"),
        v(3, "kaggle", S="ADASYN"),
    ],
)

# ---- selection_on_all_rows ---------------------------------------------------------------
family(
    "sel_selector_then_split",
    "tune",
    """$HEAD
from sklearn.feature_selection import SelectKBest, f_classif, chi2, mutual_info_classif, RFE, SelectFromModel
$LOADER
# %%
selector = $SEL
X_new = selector.fit_transform(X, y)  #! selection_on_all_rows high
print(X_new.shape)
# %%
X_train, X_test, y_train, y_test = train_test_split(X_new, y, test_size=0.3, random_state=0)
model = $MODEL.fit(X_train, y_train)
print(model.score(X_test, y_test))
""",
    [
        v(0, SEL="SelectKBest(f_classif, k=10)"),
        v(1, "bunch", SEL="SelectKBest(chi2, k=20)"),
        v(2, "frame", True, SEL="RFE(LogisticRegression(max_iter=500), n_features_to_select=8)"),
        v(3, "xy", SEL="SelectFromModel(RandomForestClassifier(n_estimators=100))"),
        v(4, "kaggle", SEL="SelectKBest(mutual_info_classif, k=15)"),
    ],
)

family(
    "sel_corr_with_target",
    "check",
    """$HEAD
import seaborn as sns
df = pd.read_csv("$csv")
# %%
$CORR
# %%
X = df[top_features]
y = df["$t"]
X_train, X_test, y_train, y_test = train_test_split(X, y, test_size=0.2, random_state=2)
model = $MODEL.fit(X_train, y_train)
print(accuracy_score(y_test, model.predict(X_test)))
""",
    [
        v(
            0,
            CORR="corr = df.corr()['$t'].abs().sort_values(ascending=False)  #! selection_on_all_rows high\n"
            "top_features = corr.index[1:11]",
        ),
        v(
            1,
            True,
            CORR="target_corr = df.corrwith(df['$t']).abs()  #! selection_on_all_rows high\n"
            "top_features = target_corr[target_corr > 0.1].index.drop('$t')",
        ),
        v(
            2,
            CORR="corr_matrix = df.corr()  #! selection_on_all_rows high\n"
            "top_features = [c for c in corr_matrix.columns if abs(corr_matrix.loc[c, '$t']) > 0.2 and c != '$t']",
        ),
        v(
            3,
            CORR="cors = df.corr(numeric_only=True)['$t']  #! selection_on_all_rows high\n"
            "top_features = cors.drop('$t').abs().nlargest(8).index",
        ),
    ],
)

family(
    "sel_search_on_all_rows",
    "tune",
    """$HEAD
$LOADER
# %%
grid = GridSearchCV($MODEL, $GRID, cv=5)
grid.fit(X, y)  #! selection_on_all_rows high
best = grid.best_estimator_
# %%
X_train, X_test, y_train, y_test = train_test_split(X, y, test_size=0.2, random_state=0)
best.fit(X_train, y_train)
print("test", best.score(X_test, y_test))
""",
    [
        v(0, GRID="{'C': [0.1, 1, 10]}"),
        v(1, "xy", GRID="{'max_depth': [3, 5, None]}"),
        v(2, "frame", True, GRID="{'n_neighbors': [3, 5, 9]}"),
        v(3, "bunch", GRID="{'C': [1, 10]}"),
    ],
)

family(
    "sel_second_experiment",
    "check",
    """$HEAD
from sklearn.feature_selection import SelectKBest, f_classif, RFE
$LOADER
X_train, X_test, y_train, y_test = train_test_split(X, y, random_state=0)
print("all features", $MODEL.fit(X_train, y_train).score(X_test, y_test))
# %%
X_k = $SEL.fit_transform(X, y)  #! selection_on_all_rows high
X_train, X_test, y_train, y_test = train_test_split(X_k, y, random_state=0)
print("selected", $MODEL.fit(X_train, y_train).score(X_test, y_test))
""",
    [
        v(0, SEL="SelectKBest(f_classif, k=5)"),
        v(1, "xy", True, SEL="RFE(DecisionTreeClassifier(), n_features_to_select=4)"),
        v(2, "bunch", SEL="SelectKBest(k=30)"),
    ],
)

# ---- test_reused -------------------------------------------------------------------------
family(
    "tr_loop_picks_on_test",
    "tune",
    """$HEAD
$LOADER
X_train, X_test, y_train, y_test = train_test_split(X, y, test_size=0.25, random_state=4)
# %%
$LOOP
# %%
final = $FINAL.fit(X_train, y_train)
print("test accuracy of the chosen model:", accuracy_score(y_test, final.predict(X_test)))
""",
    [
        v(
            0,
            LOOP="best_acc, best_k = 0, None\nfor k in range(1, 31):\n    knn = KNeighborsClassifier(n_neighbors=k).fit(X_train, y_train)\n"
            "    acc = accuracy_score(y_test, knn.predict(X_test))  #! test_reused high\n    if acc > best_acc:\n        best_acc, best_k = acc, k",
            FINAL="KNeighborsClassifier(n_neighbors=best_k)",
        ),
        v(
            1,
            "xy",
            LOOP="scores = []\ndepths = range(1, 15)\nfor d in depths:\n    tree = DecisionTreeClassifier(max_depth=d).fit(X_train, y_train)\n"
            "    scores.append(tree.score(X_test, y_test))  #! test_reused high\nbest_depth = depths[int(np.argmax(scores))]",
            FINAL="DecisionTreeClassifier(max_depth=best_depth)",
        ),
        v(
            2,
            "frame",
            True,
            LOOP="results = {}\nfor C in [0.01, 0.1, 1, 10, 100]:\n    svc = SVC(C=C).fit(X_train, y_train)\n"
            "    results[C] = f1_score(y_test, svc.predict(X_test))  #! test_reused high\nbest_C = max(results, key=results.get)",
            FINAL="SVC(C=best_C)",
        ),
        v(
            3,
            "bunch",
            LOOP="error_rate = []\nfor i in range(1, 40):\n    knn = KNeighborsClassifier(n_neighbors=i)\n    knn.fit(X_train, y_train)\n"
            "    pred_i = knn.predict(X_test)\n    error_rate.append(np.mean(pred_i != y_test))  #! test_reused high\n"
            "best_k = error_rate.index(min(error_rate)) + 1",
            FINAL="KNeighborsClassifier(n_neighbors=best_k)",
        ),
        v(
            4,
            "kaggle",
            LOOP="best_score = 0\nfor n in [50, 100, 200, 400]:\n    rf = RandomForestClassifier(n_estimators=n).fit(X_train, y_train)\n"
            "    score = roc_auc_score(y_test, rf.predict_proba(X_test)[:, 1])  #! test_reused high\n"
            "    if score > best_score:\n        best_score = score\n        best_n = n",
            FINAL="RandomForestClassifier(n_estimators=best_n)",
        ),
    ],
)

family(
    "tr_key_lambda",
    "check",
    """$HEAD
$LOADER
X_train, X_test, y_train, y_test = train_test_split(X, y, random_state=0)
# %%
$PICK
# %%
print("chosen", best)
""",
    [
        v(
            0,
            PICK="def fit_k(k):\n    return KNeighborsClassifier(n_neighbors=k).fit(X_train, y_train)\n\n"
            "best = max(range(1, 25), key=lambda k: accuracy_score(y_test, fit_k(k).predict(X_test)))  #! test_reused high",
        ),
        v(
            1,
            "xy",
            PICK="candidates = [LogisticRegression(max_iter=500), SVC(), RandomForestClassifier()]\n"
            "best = max(candidates, key=lambda m: m.fit(X_train, y_train).score(X_test, y_test))  #! test_reused high",
        ),
        v(
            2,
            "frame",
            True,
            PICK="scores = {d: DecisionTreeClassifier(max_depth=d).fit(X_train, y_train).score(X_test, y_test) for d in range(2, 12)}  #! test_reused high\n"
            "best = max(scores, key=scores.get)",
        ),
        v(
            3,
            "bunch",
            PICK="models = {'lr': LogisticRegression(max_iter=300), 'rf': RandomForestClassifier()}\n"
            "ranked = sorted(models, key=lambda n: f1_score(y_test, models[n].fit(X_train, y_train).predict(X_test), average='macro'), reverse=True)  #! test_reused high\n"
            "best = ranked[0]",
        ),
    ],
)

KERAS = """import numpy as np
import pandas as pd
from sklearn.model_selection import train_test_split
from sklearn.preprocessing import StandardScaler
from tensorflow import keras
from tensorflow.keras.callbacks import EarlyStopping, ModelCheckpoint
df = pd.read_csv("$csv")
X = df.drop(columns=["$t"]).values
y = df["$t"].values
X_train, X_test, y_train, y_test = train_test_split(X, y, test_size=0.2, random_state=0)
sc = StandardScaler()
X_train = sc.fit_transform(X_train)
X_test = sc.transform(X_test)
# %%
model = keras.Sequential([keras.layers.Dense(32, activation="relu"), keras.layers.Dense(1, activation="sigmoid")])
model.compile(optimizer="adam", loss="binary_crossentropy", metrics=["accuracy"])
$CB
# %%
loss, acc = model.evaluate(X_test, y_test)
print("test accuracy", acc)
"""
family(
    "tr_keras_validation_test",
    "tune",
    KERAS,
    [
        v(
            0,
            CB="es = EarlyStopping(monitor='val_loss', patience=5, restore_best_weights=True)\n"
            "history = model.fit(X_train, y_train, epochs=200, batch_size=32, validation_data=(X_test, y_test), callbacks=[es])  #! test_reused medium",
        ),
        v(
            1,
            True,
            CB="ckpt = ModelCheckpoint('best.h5', save_best_only=True, monitor='val_accuracy')\n"
            "model.fit(X_train, y_train, epochs=50, validation_data=(X_test, y_test), callbacks=[ckpt])  #! test_reused medium\n"
            "model = keras.models.load_model('best.h5')",
        ),
        v(
            2,
            CB="history = model.fit(X_train, y_train, epochs=100, validation_data=(X_test, y_test), callbacks=[EarlyStopping(patience=10)])  #! test_reused medium",
        ),
        v(
            3,
            CB="callbacks = [EarlyStopping(monitor='val_loss', patience=3), ModelCheckpoint('m.keras', save_best_only=True)]\n"
            "model.fit(X_train, y_train, validation_data=(X_test, y_test), epochs=30, callbacks=callbacks)  #! test_reused medium",
        ),
    ],
)

BOOST = """import pandas as pd
import lightgbm as lgb
import xgboost as xgb
from catboost import CatBoostClassifier
from sklearn.model_selection import train_test_split
from sklearn.metrics import roc_auc_score
df = pd.read_csv("$csv")
X = df.drop(columns=["$t"])
y = df["$t"]
X_train, X_test, y_train, y_test = train_test_split(X, y, test_size=0.2, random_state=0)
# %%
$FIT
# %%
print("test auc", roc_auc_score(y_test, $PRED))
"""
family(
    "tr_eval_set_test",
    "check",
    BOOST,
    [
        v(
            0,
            FIT="model = lgb.LGBMClassifier(n_estimators=5000, learning_rate=0.02)\n"
            "model.fit(X_train, y_train, eval_set=(X_test, y_test), callbacks=[lgb.early_stopping(100)])  #! test_reused medium",
            PRED="model.predict_proba(X_test)[:, 1]",
        ),
        v(
            1,
            FIT="model = xgb.XGBClassifier(n_estimators=2000, early_stopping_rounds=50)\n"
            "model.fit(X_train, y_train, eval_set=[(X_test, y_test)], verbose=False)  #! test_reused medium",
            PRED="model.predict_proba(X_test)[:, 1]",
        ),
        v(
            2,
            True,
            FIT="clf = CatBoostClassifier(iterations=3000, verbose=0)\n"
            "clf.fit(X_train, y_train, eval_set=(X_test, y_test), early_stopping_rounds=200)  #! test_reused medium",
            PRED="clf.predict_proba(X_test)[:, 1]",
        ),
        v(
            3,
            FIT="model = xgb.XGBClassifier(n_estimators=1000)\n"
            "model.fit(X_train, y_train, eval_set=(X_test, y_test), early_stopping_rounds=20)  #! test_reused medium",
            PRED="model.predict_proba(X_test)[:, 1]",
        ),
    ],
)

family(
    "tr_native_train_test",
    "check",
    BOOST,
    [
        v(
            0,
            FIT="dtrain = xgb.DMatrix(X_train, label=y_train)\ndtest = xgb.DMatrix(X_test, label=y_test)\n"
            "params = {'objective': 'binary:logistic', 'eta': 0.05}\n"
            "bst = xgb.train(params, dtrain, num_boost_round=1000, evals=[(dtrain, 'train'), (dtest, 'test')], early_stopping_rounds=50)  #! test_reused medium",
            PRED="bst.predict(dtest)",
        ),
        v(
            1,
            FIT="train_set = lgb.Dataset(X_train, y_train)\nvalid_set = lgb.Dataset(X_test, y_test)\n"
            "gbm = lgb.train({'objective': 'binary'}, train_set, 2000, valid_sets=[valid_set], callbacks=[lgb.early_stopping(50)])  #! test_reused medium",
            PRED="gbm.predict(X_test, num_iteration=gbm.best_iteration)",
        ),
        v(
            2,
            True,
            FIT="dtr = xgb.DMatrix(X_train, y_train)\ndte = xgb.DMatrix(X_test, y_test)\n"
            "watchlist = [(dtr, 'train'), (dte, 'eval')]\n"
            "booster = xgb.train({'max_depth': 4}, dtr, 500, watchlist, early_stopping_rounds=30)  #! test_reused medium",
            PRED="booster.predict(dte)",
        ),
    ],
)

# ---- clean forms -------------------------------------------------------------------------
family(
    "clean_pipeline_cv",
    "tune",
    """$HEAD
from imblearn.pipeline import Pipeline as ImbPipeline
from imblearn.over_sampling import SMOTE
from sklearn.feature_selection import SelectKBest, f_classif
$LOADER
# %%
$PIPE
""",
    [
        v(
            0,
            PIPE="pipe = make_pipeline(StandardScaler(), $MODEL)\nscores = cross_val_score(pipe, X, y, cv=5)\nprint(scores.mean())",
        ),
        v(
            1,
            "xy",
            PIPE="pipe = Pipeline([('scale', StandardScaler()), ('pca', PCA(n_components=5)), ('clf', $MODEL)])\n"
            "print(cross_val_score(pipe, X, y, cv=StratifiedKFold(5, shuffle=True, random_state=0)).mean())",
        ),
        v(
            2,
            "frame",
            True,
            PIPE="pipe = ImbPipeline([('smote', SMOTE()), ('clf', $MODEL)])\nprint(cross_val_score(pipe, X, y, scoring='f1', cv=5))",
        ),
        v(
            3,
            "bunch",
            PIPE="pipe = Pipeline([('sel', SelectKBest(f_classif, k=20)), ('clf', $MODEL)])\n"
            "X_train, X_test, y_train, y_test = train_test_split(X, y, random_state=0)\n"
            "search = GridSearchCV(pipe, {'sel__k': [10, 20, 40]}, cv=5).fit(X_train, y_train)\nprint(search.score(X_test, y_test))",
        ),
        v(
            4,
            "kaggle",
            PIPE="pipe = make_pipeline(SimpleImputer(strategy='median'), StandardScaler(), $MODEL)\n"
            "X_train, X_valid, y_train, y_valid = train_test_split(X, y, test_size=0.2)\npipe.fit(X_train, y_train)\n"
            "print(accuracy_score(y_valid, pipe.predict(X_valid)))",
        ),
        v(
            5,
            "csv",
            PIPE="skf = StratifiedKFold(n_splits=5)\nfor tr, va in skf.split(X, y):\n"
            "    pipe = make_pipeline(StandardScaler(), $MODEL)\n    pipe.fit(X.iloc[tr], y.iloc[tr])\n    print(pipe.score(X.iloc[va], y.iloc[va]))",
        ),
    ],
)

family(
    "clean_fit_on_train",
    "check",
    """$HEAD
from imblearn.over_sampling import SMOTE
from sklearn.feature_selection import SelectKBest, f_classif
$LOADER
X_train, X_test, y_train, y_test = train_test_split(X, y, test_size=0.2, random_state=0)
# %%
$FIT
# %%
model = $MODEL.fit(X_tr, y_tr)
print(accuracy_score(y_test, model.predict(X_te)))
""",
    [
        v(
            0,
            FIT="scaler = StandardScaler().fit(X_train)\nX_tr, X_te, y_tr = scaler.transform(X_train), scaler.transform(X_test), y_train",
        ),
        v(
            1,
            "xy",
            FIT="sel = SelectKBest(f_classif, k=5)\nX_tr = sel.fit_transform(X_train, y_train)\nX_te = sel.transform(X_test)\ny_tr = y_train",
        ),
        v(
            2,
            "frame",
            True,
            FIT="X_tr, y_tr = SMOTE(random_state=0).fit_resample(X_train, y_train)\nX_te = X_test",
        ),
        v(
            3,
            "bunch",
            FIT="pca = PCA(n_components=10)\nX_tr = pca.fit_transform(X_train)\nX_te = pca.transform(X_test)\ny_tr = y_train",
        ),
        v(
            4,
            "kaggle",
            FIT="mu, sd = X_train.mean(), X_train.std()\nX_tr = (X_train - mu) / sd\nX_te = (X_test - mu) / sd\ny_tr = y_train",
        ),
        v(
            5,
            "csv",
            True,
            FIT="X_train = X_train.copy()\nX_test = X_test.copy()\nfor col in X_train.columns:\n"
            "    med = X_train[col].median()\n    X_train[col] = X_train[col].fillna(med)\n    X_test[col] = X_test[col].fillna(med)\n"
            "X_tr, X_te, y_tr = X_train, X_test, y_train",
        ),
    ],
)

family(
    "clean_honest_early_stopping",
    "tune",
    """import pandas as pd
import lightgbm as lgb
import xgboost as xgb
from sklearn.model_selection import train_test_split
from sklearn.metrics import roc_auc_score
from tensorflow import keras
from tensorflow.keras.callbacks import EarlyStopping
df = pd.read_csv("$csv")
X = df.drop(columns=["$t"])
y = df["$t"]
X_train, X_test, y_train, y_test = train_test_split(X, y, test_size=0.2, random_state=0)
X_tr, X_val, y_tr, y_val = train_test_split(X_train, y_train, test_size=0.2, random_state=1)
# %%
$FIT
# %%
print("test auc", roc_auc_score(y_test, $PRED))
""",
    [
        v(
            0,
            FIT="model = lgb.LGBMClassifier(n_estimators=3000)\nmodel.fit(X_tr, y_tr, eval_set=[(X_val, y_val)], callbacks=[lgb.early_stopping(100)])",
            PRED="model.predict_proba(X_test)[:, 1]",
        ),
        v(
            1,
            True,
            FIT="dtr = xgb.DMatrix(X_tr, y_tr)\ndval = xgb.DMatrix(X_val, y_val)\n"
            "bst = xgb.train({'objective': 'binary:logistic'}, dtr, 1000, evals=[(dval, 'valid')], early_stopping_rounds=40)",
            PRED="bst.predict(xgb.DMatrix(X_test))",
        ),
        v(
            2,
            FIT="net = keras.Sequential([keras.layers.Dense(16, activation='relu'), keras.layers.Dense(1, activation='sigmoid')])\n"
            "net.compile(optimizer='adam', loss='binary_crossentropy')\n"
            "net.fit(X_tr, y_tr, validation_data=(X_val, y_val), epochs=100, callbacks=[EarlyStopping(patience=5)])",
            PRED="net.predict(X_test).ravel()",
        ),
        v(
            3,
            FIT="net = keras.Sequential([keras.layers.Dense(8), keras.layers.Dense(1, activation='sigmoid')])\n"
            "net.compile(optimizer='adam', loss='binary_crossentropy')\n"
            "net.fit(X_train, y_train, validation_split=0.2, epochs=50, callbacks=[EarlyStopping(patience=3)])",
            PRED="net.predict(X_test).ravel()",
        ),
        v(
            4,
            FIT="model = xgb.XGBClassifier(n_estimators=800, early_stopping_rounds=30)\nmodel.fit(X_tr, y_tr, eval_set=[(X_val, y_val)])",
            PRED="model.predict_proba(X_test)[:, 1]",
        ),
    ],
)

family(
    "clean_eda",
    "check",
    """$HEAD
import matplotlib.pyplot as plt
import seaborn as sns
df = pd.read_csv("$csv")
# %%
$EDA
# %%
X = df.drop(columns=["$t"])
y = df["$t"]
X_train, X_test, y_train, y_test = train_test_split(X, y, stratify=y, random_state=0)
pipe = make_pipeline(StandardScaler(), $MODEL).fit(X_train, y_train)
print(pipe.score(X_test, y_test))
""",
    [
        v(
            0,
            EDA="print(df.describe())\nplt.figure(figsize=(12, 10))\nsns.heatmap(df.corr(), annot=True, cmap='coolwarm')\nplt.show()",
        ),
        v(
            1,
            True,
            EDA="corr = df.corr()\nprint(corr['$t'].sort_values(ascending=False))\nsns.pairplot(df, hue='$t')",
        ),
        v(
            2,
            EDA="enc = OneHotEncoder()\nencoded = enc.fit_transform(df[['city']]).toarray()\nprint(encoded[:5])\nprint(enc.categories_)",
        ),
        v(
            3,
            EDA="print(df.isnull().sum())\nprint(df['$t'].value_counts(normalize=True))\ndf.hist(bins=30, figsize=(15, 10))",
        ),
        v(
            4,
            True,
            EDA="scaled = StandardScaler().fit_transform(df.select_dtypes('number'))\nplt.boxplot(scaled)\nplt.title('scaled features')",
        ),
    ],
)

family(
    "clean_shuffle_then_split",
    "tune",
    """$HEAD
df = pd.read_csv("$csv")
df = df.sample(frac=1, random_state=0)
X = df.drop(columns=["$t"])
y = df["$t"]
X_train, X_test, y_train, y_test = train_test_split(X, y, test_size=0.2)
# %%
$FIT
print(model.score(X_test_s, y_test))
""",
    [
        v(
            0,
            FIT="sc = StandardScaler().fit(X_train)\nX_train_s, X_test_s = sc.transform(X_train), sc.transform(X_test)\nmodel = $MODEL.fit(X_train_s, y_train)",
        ),
        v(
            1,
            True,
            FIT="imp = SimpleImputer()\nX_train_s = imp.fit_transform(X_train)\nX_test_s = imp.transform(X_test)\nmodel = $MODEL.fit(X_train_s, y_train)",
        ),
        v(
            2,
            FIT="mn, mx = X_train.min(), X_train.max()\nX_train_s = (X_train - mn) / (mx - mn)\nX_test_s = (X_test - mn) / (mx - mn)\nmodel = $MODEL.fit(X_train_s, y_train)",
        ),
    ],
)

family(
    "clean_positional_split",
    "check",
    """$HEAD
df = pd.read_csv("$csv").sort_values("date")
feats = [c for c in df.columns if c not in ("$t", "date")]
$SLICES
# %%
scaler = MinMaxScaler()
tr_x = scaler.fit_transform(train[feats])
te_x = scaler.transform(holdout[feats])
model = $MODEL.fit(tr_x, train["$t"])
print(accuracy_score(holdout["$t"], model.predict(te_x)))
""",
    [
        v(0, SLICES="cut = int(len(df) * 0.8)\ntrain = df.iloc[:cut]\nholdout = df.iloc[cut:]"),
        v(1, True, SLICES="holdout = df.iloc[1:20000]\ntrain = df.iloc[20001:]"),
        v(2, SLICES="train, holdout = df[:-5000], df[-5000:]"),
        v(3, SLICES="n = len(df)\nholdout = df.iloc[: n // 5]\ntrain = df.iloc[n // 5 :]"),
    ],
)

family(
    "clean_report_each_model",
    "tune",
    """$HEAD
$LOADER
X_train, X_test, y_train, y_test = train_test_split(X, y, random_state=0)
# %%
$LOOK
""",
    [
        v(
            0,
            LOOK="models = [LogisticRegression(max_iter=1000), RandomForestClassifier(), SVC()]\nfor m in models:\n"
            "    m.fit(X_train, y_train)\n    print(type(m).__name__, accuracy_score(y_test, m.predict(X_test)))",
        ),
        v(
            1,
            "xy",
            LOOK="for name, m in {'lr': LogisticRegression(max_iter=300), 'tree': DecisionTreeClassifier()}.items():\n"
            "    m.fit(X_train, y_train)\n    print(name, f1_score(y_test, m.predict(X_test), average='macro'))",
        ),
        v(
            2,
            "bunch",
            True,
            LOOK="best_score, best_k = 0, None\nfor k in range(1, 20):\n"
            "    cv = cross_val_score(KNeighborsClassifier(n_neighbors=k), X_train, y_train, cv=5).mean()\n"
            "    if cv > best_score:\n        best_score, best_k = cv, k\n"
            "final = KNeighborsClassifier(n_neighbors=best_k).fit(X_train, y_train)\nprint(final.score(X_test, y_test))",
        ),
    ],
)

family(
    "clean_cv_choice",
    "check",
    """$HEAD
$LOADER
X_train, X_test, y_train, y_test = train_test_split(X, y, random_state=1)
X_tr, X_val, y_tr, y_val = train_test_split(X_train, y_train, random_state=2)
# %%
$CHOOSE
print("test", accuracy_score(y_test, final.predict(X_test)))
""",
    [
        v(
            0,
            CHOOSE="scores = []\nfor d in range(2, 12):\n    scores.append(DecisionTreeClassifier(max_depth=d).fit(X_tr, y_tr).score(X_val, y_val))\n"
            "best = 2 + int(np.argmax(scores))\nfinal = DecisionTreeClassifier(max_depth=best).fit(X_train, y_train)",
        ),
        v(
            1,
            "xy",
            True,
            CHOOSE="best = max(range(1, 15), key=lambda k: KNeighborsClassifier(n_neighbors=k).fit(X_tr, y_tr).score(X_val, y_val))\n"
            "final = KNeighborsClassifier(n_neighbors=best).fit(X_train, y_train)",
        ),
        v(
            2,
            "frame",
            CHOOSE="grid = GridSearchCV(make_pipeline(StandardScaler(), SVC()), {'svc__C': [0.1, 1, 10]}, cv=5)\n"
            "final = grid.fit(X_train, y_train)",
        ),
        v(
            3,
            "bunch",
            CHOOSE="res = {}\nfor C in [0.1, 1, 10]:\n    res[C] = cross_val_score(LogisticRegression(C=C, max_iter=500), X_train, y_train, cv=5).mean()\n"
            "final = LogisticRegression(C=max(res, key=res.get), max_iter=500).fit(X_train, y_train)",
        ),
    ],
)

# ---- notebooks as written: magics, % continuations, lines ending in ? --------------------
NB = """%matplotlib inline
!pip install -q imbalanced-learn
$HEAD
$LOADER
# %%
X.describe?
print("rows: %d, columns: %d"
      % X.shape)
# %%
$BODY
# %%
notes = '''Does the model generalise?
Check the held-out score.'''
print("accuracy: %.3f"
      % acc)
"""
family(
    "nb_magics_leaky",
    "tune",
    NB,
    [
        v(
            0,
            nb=True,
            BODY="X = StandardScaler().fit_transform(X)  #! fit_before_split high\n"
            "X_train, X_test, y_train, y_test = train_test_split(X, y)\nacc = $MODEL.fit(X_train, y_train).score(X_test, y_test)",
        ),
        v(
            1,
            "frame",
            nb=True,
            BODY="X_train, X_test, y_train, y_test = train_test_split(X, y)\n"
            "acc = 0\nfor k in range(1, 20):\n    a = KNeighborsClassifier(n_neighbors=k).fit(X_train, y_train).score(X_test, y_test)  #! test_reused high\n"
            "    if a > acc:\n        acc = a",
        ),
        v(
            2,
            "kaggle",
            nb=True,
            BODY="X_train, X_test, y_train, y_test = train_test_split(X, y)\npca = PCA(5).fit(X_train)\n"
            "X_test = PCA(5).fit_transform(X_test)  #! fit_on_heldout high\nacc = $MODEL.fit(pca.transform(X_train), y_train).score(X_test, y_test)",
        ),
    ],
)
family(
    "nb_magics_clean",
    "check",
    NB,
    [
        v(
            3,
            nb=True,
            BODY="X_train, X_test, y_train, y_test = train_test_split(X, y)\n"
            "pipe = make_pipeline(StandardScaler(), $MODEL).fit(X_train, y_train)\nacc = pipe.score(X_test, y_test)",
        ),
        v(
            4,
            "xy",
            nb=True,
            BODY="acc = cross_val_score(make_pipeline(MinMaxScaler(), $MODEL), X, y, cv=5).mean()",
        ),
        v(
            5,
            "bunch",
            nb=True,
            BODY="X_train, X_test, y_train, y_test = train_test_split(X, y)\n"
            "sc = StandardScaler().fit(X_train)\nacc = $MODEL.fit(sc.transform(X_train), y_train).score(sc.transform(X_test), y_test)",
        ),
    ],
)
family(
    "nb_magics_leaky_check",
    "check",
    NB,
    [
        v(
            1,
            "csv",
            nb=True,
            BODY="from imblearn.over_sampling import SMOTE\nX, y = SMOTE().fit_resample(X, y)  #! oversampled_before_split high\n"
            "X_train, X_test, y_train, y_test = train_test_split(X, y)\nacc = $MODEL.fit(X_train, y_train).score(X_test, y_test)",
        ),
        v(
            2,
            "xy",
            nb=True,
            BODY="X = (X - X.mean(axis=0)) / X.std(axis=0)  #! fit_before_split high\n"
            "acc = cross_val_score($MODEL, X, y, cv=5).mean()",
        ),
    ],
)
family(
    "nb_magics_clean_tune",
    "tune",
    NB,
    [
        v(
            0,
            "frame",
            nb=True,
            BODY="X_train, X_test, y_train, y_test = train_test_split(X, y)\n"
            "imp = SimpleImputer().fit(X_train)\nacc = $MODEL.fit(imp.transform(X_train), y_train).score(imp.transform(X_test), y_test)",
        )
    ],
)


# ---- second batch, written after the first results: new families in both halves -----------
family(
    "t2_scale_function",
    "tune",
    """$HEAD
from sklearn import preprocessing
$LOADER
$SCALE
X_train, X_test, y_train, y_test = train_test_split(X, y, test_size=0.3)
clf = $MODEL.fit(X_train, y_train)
print(clf.score(X_test, y_test))
""",
    [
        v(0, SCALE="X = preprocessing.scale(X)  #! fit_before_split high"),
        v(
            1,
            "xy",
            SCALE="X = preprocessing.StandardScaler().fit(X).transform(X)  #! fit_before_split high",
        ),
        v(2, "bunch", SCALE="X = preprocessing.minmax_scale(X)  #! fit_before_split high"),
    ],
)

family(
    "c2_scale_function",
    "check",
    """$HEAD
from sklearn.preprocessing import scale, robust_scale, normalize
$LOADER
$SCALE
X_tr, X_te, y_tr, y_te = train_test_split(X, y, random_state=5)
m = $MODEL
m.fit(X_tr, y_tr)
print(accuracy_score(y_te, m.predict(X_te)))
""",
    [
        v(3, SCALE="X = scale(X)  #! fit_before_split high"),
        v(4, "frame", SCALE="X = robust_scale(X)  #! fit_before_split high"),
        v(5, "xy", SCALE="X = normalize(X)"),
    ],
)

family(
    "t2_function_prep",
    "tune",
    """$HEAD
$DEF
$LOADER_DF
$USE
""",
    [
        v(
            0,
            DEF="def preprocess(data):\n    data = data.fillna(data.mean())  #! fit_before_split high\n    return data",
            LOADER_DF='df = pd.read_csv("$csv")',
            USE='df = preprocess(df)\nX, y = df.drop(columns=["$t"]), df["$t"]\n'
            "X_train, X_test, y_train, y_test = train_test_split(X, y)\nprint($MODEL.fit(X_train, y_train).score(X_test, y_test))",
        ),
        v(
            1,
            DEF="def prep(frame):\n    return StandardScaler().fit_transform(frame)  #! fit_on_heldout high",
            LOADER_DF='df = pd.read_csv("$csv")\nX, y = df.drop(columns=["$t"]), df["$t"]',
            USE="X_train, X_test, y_train, y_test = train_test_split(X, y)\nX_train = prep(X_train)\nX_test = prep(X_test)\n"
            "print($MODEL.fit(X_train, y_train).score(X_test, y_test))",
        ),
        v(
            2,
            DEF="def scale_pair(train, test):\n    sc = StandardScaler().fit(train)\n    return sc.transform(train), sc.transform(test)",
            LOADER_DF='df = pd.read_csv("$csv")\nX, y = df.drop(columns=["$t"]), df["$t"]',
            USE="X_train, X_test, y_train, y_test = train_test_split(X, y)\nX_train, X_test = scale_pair(X_train, X_test)\n"
            "print($MODEL.fit(X_train, y_train).score(X_test, y_test))",
        ),
    ],
)

family(
    "c2_function_prep",
    "check",
    """$HEAD
NUM = ["age", "income", "balance"]
$DEF
df = pd.read_csv("$csv")
$USE
""",
    [
        v(
            3,
            DEF="def clean(df):\n    for c in NUM:\n        df[c] = df[c].fillna(df[c].median())  #! fit_before_split high\n    return df",
            USE="df = clean(df)\ntrain, test = train_test_split(df, test_size=0.2)\n"
            'model = $MODEL.fit(train[NUM], train["$t"])\nprint(model.score(test[NUM], test["$t"]))',
        ),
        v(
            4,
            DEF="def clean(df):\n    for c in NUM:\n        df[c] = df[c].fillna(df[c].median())  #! fit_on_heldout medium\n    return df",
            USE="train, test = train_test_split(df, test_size=0.2)\ntrain = clean(train)\ntest = clean(test)\n"
            'model = $MODEL.fit(train[NUM], train["$t"])\nprint(model.score(test[NUM], test["$t"]))',
        ),
        v(
            5,
            DEF="def add_features(df):\n    df['ratio'] = df['income'] / (df['balance'] + 1)\n    df['log_income'] = np.log1p(df['income'])\n    return df",
            USE="df = add_features(df)\ntrain, test = train_test_split(df, test_size=0.2)\n"
            'model = $MODEL.fit(train[NUM], train["$t"])\nprint(model.score(test[NUM], test["$t"]))',
        ),
    ],
)

family(
    "t2_sampler_on_test",
    "tune",
    """$HEAD
from imblearn.over_sampling import SMOTE, ADASYN
$LOADER
X_train, X_test, y_train, y_test = train_test_split(X, y, test_size=0.3, stratify=y)
X_train, y_train = SMOTE().fit_resample(X_train, y_train)
$TEST
model = $MODEL.fit(X_train, y_train)
print(f1_score(y_test, model.predict(X_test)))
""",
    [
        v(0, TEST="X_test, y_test = SMOTE().fit_resample(X_test, y_test)  #! fit_on_heldout high"),
        v(
            1,
            "xy",
            TEST="X_test, y_test = ADASYN().fit_resample(X_test, y_test)  #! fit_on_heldout high",
        ),
        v(2, "bunch", TEST="print(pd.Series(y_test).value_counts())"),
    ],
)

family(
    "c2_sampler_on_test",
    "check",
    """$HEAD
from imblearn.over_sampling import SMOTE, RandomOverSampler
$LOADER
X_tr, X_te, y_tr, y_te = train_test_split(X, y, test_size=0.25)
ros = $S
X_tr_b, y_tr_b = ros.fit_resample(X_tr, y_tr)
$TEST
clf = $MODEL.fit(X_tr_b, y_tr_b)
print(f1_score(y_te_b, clf.predict(X_te_b)))
""",
    [
        v(
            3,
            S="RandomOverSampler()",
            TEST="X_te_b, y_te_b = ros.fit_resample(X_te, y_te)  #! fit_on_heldout high",
        ),
        v(
            4,
            "frame",
            S="SMOTE(k_neighbors=3)",
            TEST="X_te_b, y_te_b = SMOTE().fit_resample(X_te, y_te)  #! fit_on_heldout high",
        ),
        v(5, "xy", S="SMOTE()", TEST="X_te_b, y_te_b = X_te, y_te"),
    ],
)

family(
    "t2_target_mean_encoding",
    "tune",
    """$HEAD
df = pd.read_csv("$csv")
$ENC
X = df.drop(columns=["$t", "city"])
y = df["$t"]
X_train, X_test, y_train, y_test = train_test_split(X, y, random_state=0)
print($MODEL.fit(X_train, y_train).score(X_test, y_test))
""",
    [
        v(
            0,
            ENC="df['city_te'] = df.groupby('city')['$t'].transform('mean')  #! fit_before_split high",
        ),
        v(
            1,
            ENC="means = df.groupby('city')['$t'].mean()  #! fit_before_split high\ndf['city_te'] = df['city'].map(means)",
        ),
        v(
            2,
            ENC="df['city_n'] = df.groupby('city')['age'].transform('count')\ndf['city_code'] = df['city'].astype('category').cat.codes",
        ),
    ],
)

family(
    "c2_target_mean_encoding",
    "check",
    """$HEAD
df = pd.read_csv("$csv")
$ENC
features = [c for c in df.columns if c not in ("$t", "segment")]
train, valid = train_test_split(df, test_size=0.2, random_state=1)
model = $MODEL.fit(train[features], train["$t"])
print(roc_auc_score(valid["$t"], model.predict_proba(valid[features])[:, 1]))
""",
    [
        v(
            3,
            ENC="df['segment_rate'] = df.groupby('segment')['$t'].transform('mean')  #! fit_before_split high",
        ),
        v(
            4,
            ENC="rate = df.groupby('segment')['$t'].mean().to_dict()  #! fit_before_split high\ndf['segment_rate'] = df['segment'].map(rate)",
        ),
        v(
            5,
            ENC="train_part, _ = train_test_split(df, test_size=0.2, random_state=1)\nrate = train_part.groupby('segment')['$t'].mean()\ndf['segment_rate'] = df['segment'].map(rate)",
        ),
    ],
)

family(
    "t2_keras_holdout_slices",
    "tune",
    KERAS.replace("$CB", "$CB"),
    [
        v(
            0,
            CB="x_val, partial_x = X_train[:1000], X_train[1000:]\ny_val, partial_y = y_train[:1000], y_train[1000:]\n"
            "model.fit(partial_x, partial_y, epochs=40, validation_data=(x_val, y_val), callbacks=[EarlyStopping(patience=4)])",
        )
    ],
)

family(
    "c2_keras_holdout_slices",
    "check",
    KERAS,
    [
        v(
            1,
            CB="x_val = X_train[:500]\nx_part = X_train[500:]\ny_val = y_train[:500]\ny_part = y_train[500:]\n"
            "model.fit(x_part, y_part, epochs=20, validation_data=(x_val, y_val), callbacks=[ModelCheckpoint('b.keras', save_best_only=True)])",
        )
    ],
)


# ---- third batch: check families only, labelled and run once, the tool not changed after -----
TEXT = """import pandas as pd
from sklearn.feature_extraction.text import TfidfVectorizer, CountVectorizer
from sklearn.model_selection import train_test_split, cross_val_score
from sklearn.pipeline import make_pipeline
from sklearn.linear_model import LogisticRegression
from sklearn.naive_bayes import MultinomialNB
from sklearn.metrics import accuracy_score
df = pd.read_csv("$csv")
$BODY
"""
family(
    "b3_text_vectoriser",
    "check",
    TEXT,
    [
        v(
            0,
            BODY="vec = TfidfVectorizer(stop_words='english', max_features=5000)\nX = vec.fit_transform(df['text'])  #! fit_before_split high\n"
            "X_train, X_test, y_train, y_test = train_test_split(X, df['label'], test_size=0.2)\n"
            "nb = MultinomialNB().fit(X_train, y_train)\nprint(accuracy_score(y_test, nb.predict(X_test)))",
        ),
        v(
            1,
            True,
            BODY="cv = CountVectorizer()\nbow = cv.fit_transform(df.review)  #! fit_before_split high\n"
            "print(cross_val_score(LogisticRegression(max_iter=1000), bow, df.sentiment, cv=5).mean())",
        ),
        v(
            2,
            BODY="X_train, X_test, y_train, y_test = train_test_split(df['text'], df['label'], test_size=0.2)\n"
            "pipe = make_pipeline(TfidfVectorizer(), LogisticRegression(max_iter=1000)).fit(X_train, y_train)\n"
            "print(pipe.score(X_test, y_test))",
        ),
        v(
            3,
            BODY="X_train, X_test, y_train, y_test = train_test_split(df['text'], df['label'], test_size=0.2)\n"
            "tfidf = TfidfVectorizer()\nXtr = tfidf.fit_transform(X_train)\nXte = tfidf.fit_transform(X_test)  #! fit_on_heldout high\n"
            "print(MultinomialNB().fit(Xtr, y_train).score(Xte, y_test))",
        ),
    ],
)

family(
    "b3_time_mask_split",
    "check",
    """$HEAD
df = pd.read_csv("$csv", parse_dates=["date"])
num = ["age", "income", "balance"]
$BODY
model = $MODEL.fit(train[num], train["$t"])
print(accuracy_score(test["$t"], model.predict(test[num])))
""",
    [
        v(
            0,
            BODY="df[num] = StandardScaler().fit_transform(df[num])  #! fit_before_split high\n"
            "train = df[df['date'] < '2021-01-01']\ntest = df[df['date'] >= '2021-01-01']",
        ),
        v(
            1,
            True,
            BODY="train = df[df.date < '2021-01-01'].copy()\ntest = df[df.date >= '2021-01-01'].copy()\n"
            "sc = MinMaxScaler().fit(train[num])\ntrain[num] = sc.transform(train[num])\ntest[num] = sc.transform(test[num])",
        ),
        v(
            2,
            BODY="df[num] = df[num].fillna(df[num].median())  #! fit_before_split high\n"
            "train = df[df['split'] == 'train']\ntest = df[df['split'] == 'test']",
        ),
    ],
)

family(
    "b3_imputers_all_rows",
    "check",
    """$HEAD
from sklearn.impute import KNNImputer
from sklearn.experimental import enable_iterative_imputer
from sklearn.impute import IterativeImputer
$LOADER
$BODY
""",
    [
        v(
            0,
            BODY="X = pd.DataFrame(KNNImputer(n_neighbors=5).fit_transform(X), columns=X.columns)  #! fit_before_split high\n"
            "X_train, X_test, y_train, y_test = train_test_split(X, y)\nprint($MODEL.fit(X_train, y_train).score(X_test, y_test))",
        ),
        v(
            1,
            "frame",
            True,
            BODY="imp = IterativeImputer(max_iter=10)\nX_imp = imp.fit_transform(X)  #! fit_before_split high\n"
            "print(cross_val_score($MODEL, X_imp, y, cv=StratifiedKFold(5)).mean())",
        ),
        v(
            2,
            "kaggle",
            BODY="X_train, X_test, y_train, y_test = train_test_split(X, y)\nimp = KNNImputer().fit(X_train)\n"
            "print($MODEL.fit(imp.transform(X_train), y_train).score(imp.transform(X_test), y_test))",
        ),
    ],
)

family(
    "b3_selection_scores",
    "check",
    """$HEAD
from sklearn.feature_selection import RFECV, mutual_info_classif
$LOADER
$BODY
""",
    [
        v(
            0,
            "frame",
            BODY="rfecv = RFECV(LogisticRegression(max_iter=500), cv=5).fit(X, y)  #! selection_on_all_rows high\n"
            "X_sel = rfecv.transform(X)\nprint(cross_val_score($MODEL, X_sel, y, cv=5).mean())",
        ),
        v(
            1,
            "frame",
            BODY="mi = mutual_info_classif(X, y)  #! selection_on_all_rows high\ntop = X.columns[np.argsort(mi)[-10:]]\n"
            "X_train, X_test, y_train, y_test = train_test_split(X[top], y)\nprint($MODEL.fit(X_train, y_train).score(X_test, y_test))",
        ),
        v(
            2,
            "frame",
            True,
            BODY="X_train, X_test, y_train, y_test = train_test_split(X, y)\n"
            "rfecv = RFECV(DecisionTreeClassifier(), cv=5).fit(X_train, y_train)\n"
            "print($MODEL.fit(rfecv.transform(X_train), y_train).score(rfecv.transform(X_test), y_test))",
        ),
    ],
)

family(
    "b3_clean_everyday",
    "check",
    """$HEAD
from sklearn.preprocessing import LabelEncoder
import joblib
df = pd.read_csv("$csv")
$BODY
""",
    [
        v(
            0,
            BODY="X = df.drop(columns=['$t'])\ny = df['$t']\nX = StandardScaler().fit_transform(X)\n"
            "model = $MODEL.fit(X, y)\nprint('training accuracy', model.score(X, y))\njoblib.dump(model, 'model.pkl')",
        ),
        v(
            1,
            BODY="for col in ['city', 'segment', 'channel']:\n    df[col] = LabelEncoder().fit_transform(df[col])\n"
            "df = pd.get_dummies(df, columns=['region'])\nX_train, X_test, y_train, y_test = train_test_split(df.drop(columns=['$t']), df['$t'])\n"
            "print($MODEL.fit(X_train, y_train).score(X_test, y_test))",
        ),
        v(
            2,
            True,
            BODY="df = df.dropna()\ndf['age_band'] = pd.cut(df['age'], bins=[0, 30, 50, 120])\n"
            "X_train, X_test, y_train, y_test = train_test_split(df[['age', 'income']], df['$t'], test_size=0.3)\n"
            "pipe = make_pipeline(StandardScaler(), $MODEL)\nprint(cross_val_score(pipe, X_train, y_train, cv=5).mean())\n"
            "print(pipe.fit(X_train, y_train).score(X_test, y_test))",
        ),
        v(
            3,
            BODY="X = df.drop(columns=['$t'])\ny = df['$t']\nX_train, X_test, y_train, y_test = train_test_split(X, y)\n"
            "m = $MODEL.fit(X_train, y_train)\nfor name, Xp, yp in [('train', X_train, y_train), ('test', X_test, y_test)]:\n"
            "    print(name, accuracy_score(yp, m.predict(Xp)))",
        ),
    ],
)

family(
    "b3_choose_on_test",
    "check",
    """$HEAD
$LOADER
X_train, X_test, y_train, y_test = train_test_split(X, y, random_state=8)
$BODY
""",
    [
        v(
            0,
            BODY="best_model, best_f1 = None, -1\nfor model in [LogisticRegression(max_iter=500), RandomForestClassifier(), SVC()]:\n"
            "    model.fit(X_train, y_train)\n    f1 = f1_score(y_test, model.predict(X_test), average='macro')  #! test_reused high\n"
            "    if f1 > best_f1:\n        best_model, best_f1 = model, f1\nprint('best', best_model, best_f1)",
        ),
        v(
            1,
            "xy",
            BODY="accs = [accuracy_score(y_test, KNeighborsClassifier(n_neighbors=k).fit(X_train, y_train).predict(X_test)) for k in range(1, 21)]  #! test_reused high\n"
            "k_best = int(np.argmax(accs)) + 1\nprint(k_best, max(accs))",
        ),
        v(
            2,
            "bunch",
            True,
            BODY="X_tr, X_val, y_tr, y_val = train_test_split(X_train, y_train, random_state=9)\n"
            "best_model, best_acc = None, 0\nfor d in [2, 4, 8, 16]:\n    model = DecisionTreeClassifier(max_depth=d).fit(X_tr, y_tr)\n"
            "    acc = accuracy_score(y_val, model.predict(X_val))\n    if acc > best_acc:\n        best_model, best_acc = model, acc\n"
            "print('test', accuracy_score(y_test, best_model.predict(X_test)))",
        ),
    ],
)

family(
    "b3_boost_monitoring",
    "check",
    BOOST,
    [
        v(
            0,
            FIT="model = xgb.XGBClassifier(n_estimators=300)\nmodel.fit(X_train, y_train, eval_set=[(X_train, y_train), (X_test, y_test)], verbose=50)",
            PRED="model.predict_proba(X_test)[:, 1]",
        ),
        v(
            1,
            FIT="X_tr, X_val, y_tr, y_val = train_test_split(X_train, y_train, test_size=0.15)\n"
            "model = lgb.LGBMClassifier(n_estimators=4000)\n"
            "model.fit(X_tr, y_tr, eval_set=(X_val, y_val), callbacks=[lgb.early_stopping(200), lgb.log_evaluation(100)])",
            PRED="model.predict_proba(X_test)[:, 1]",
        ),
        v(
            2,
            True,
            FIT="model = lgb.LGBMClassifier(n_estimators=4000)\n"
            "model.fit(X_train, y_train, eval_set=[(X_test, y_test)], eval_metric='auc', callbacks=[lgb.early_stopping(stopping_rounds=100)])  #! test_reused medium",
            PRED="model.predict_proba(X_test)[:, 1]",
        ),
    ],
)


# ---- writing -----------------------------------------------------------------------------
MARK = re.compile(r"\s*#! (\w+) (\w+)\s*$")


def render(template: str, sub: dict[str, str]) -> str:
    text = template
    full = {"HEAD": HEAD, "LOADER": LOADERS[sub["LOAD"]], **sub}
    for _ in range(4):
        text = Template(text).safe_substitute(full)
    return text


def cells_and_labels(text: str) -> tuple[list[list[str]], list[tuple[str, str, int, int]]]:
    """Cells (split at ``# %%``) with markers stripped, and (kind, level, cell, line) labels."""
    cells: list[list[str]] = [[]]
    labels = []
    for raw in text.rstrip("\n").split("\n"):
        if raw.strip() == "# %%":
            cells.append([])
            continue
        m = MARK.search(raw)
        line = MARK.sub("", raw) if m else raw
        cells[-1].append(line)
        if m:
            labels.append((m.group(1), m.group(2), len(cells), len(cells[-1])))
    return cells, labels


def write_all() -> int:
    OUT.mkdir(exist_ok=True)
    rows = []
    count = 0
    for fam, (half, template, variants) in FAMILIES.items():
        for i, sub in enumerate(variants, start=1):
            cells, labels = cells_and_labels(render(template, sub))
            nb = bool(sub.get("nb"))
            name = f"{fam}_{i}.{'ipynb' if nb else 'py'}"
            if nb:
                doc = {
                    "nbformat": 4,
                    "nbformat_minor": 5,
                    "metadata": {"kernelspec": {"name": "python3", "display_name": "Python 3"}},
                    "cells": [
                        {
                            "cell_type": "code",
                            "metadata": {},
                            "execution_count": None,
                            "outputs": [],
                            "source": [ln + "\n" for ln in c[:-1]] + c[-1:],
                        }
                        for c in cells
                    ],
                }
                (OUT / name).write_text(json.dumps(doc, indent=1) + "\n")
            else:
                flat = [ln for c in cells for ln in c]
                (OUT / name).write_text("\n".join(flat) + "\n")
            count += 1
            if not labels:
                rows.append([name, half, fam, "clean", "", ""])
            for kind, level, cell, line in labels:
                if nb:
                    where = f"{cell}:{line}"
                else:
                    where = str(sum(len(c) for c in cells[: cell - 1]) + line)
                rows.append([name, half, fam, kind, level, where])
    with open(OUT / "labels.csv", "w", newline="") as fh:
        w = csv.writer(fh)
        w.writerow(["file", "half", "family", "kind", "level", "line"])
        w.writerows(rows)
    return count


if __name__ == "__main__":
    print(write_all(), "files written to", OUT)
