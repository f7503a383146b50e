# expect: clean
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
X_train, X_test, y_train, y_test = train_test_split(X, y)
X_tr, X_val, y_tr, y_val = train_test_split(X_train, y_train)
best, best_c = 0, None
for c in [0.01, 0.1, 1, 10]:
    m = LogisticRegression(C=c).fit(X_tr, y_tr)
    acc = m.score(X_val, y_val)
    if acc > best:
        best, best_c = acc, c
print(LogisticRegression(C=best_c).fit(X_train, y_train).score(X_test, y_test))
