# expect: test_reused
import pandas as pd
import numpy as np
from sklearn.model_selection import train_test_split, cross_val_score, KFold, StratifiedKFold, GridSearchCV
from sklearn.preprocessing import StandardScaler, MinMaxScaler
from sklearn.impute import SimpleImputer
from sklearn.pipeline import make_pipeline, Pipeline
from sklearn.linear_model import LogisticRegression
from sklearn.feature_selection import SelectKBest, f_classif
df = pd.read_csv("loans.csv")
X = df.drop(columns=["late"])
y = df["late"]
from sklearn.metrics import roc_auc_score
from sklearn.ensemble import RandomForestClassifier
X_train, X_test, y_train, y_test = train_test_split(X, y)
scores = {}
for name, model in {"lr": LogisticRegression(), "rf": RandomForestClassifier()}.items():
    model.fit(X_train, y_train)
    scores[name] = roc_auc_score(y_test, model.predict_proba(X_test)[:, 1])
winner = max(scores, key=scores.get)
