# expect: selection_on_all_rows
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
grid = GridSearchCV(LogisticRegression(), {"C": [0.1, 1, 10]}, cv=5)
grid.fit(X, y)
X_train, X_test, y_train, y_test = train_test_split(X, y)
print(grid.score(X_test, y_test))
