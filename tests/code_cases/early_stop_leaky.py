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
from xgboost import XGBClassifier
X_train, X_test, y_train, y_test = train_test_split(X, y)
m = XGBClassifier(n_estimators=500, early_stopping_rounds=20)
m.fit(X_train, y_train, eval_set=[(X_test, y_test)])
print(m.score(X_test, y_test))
