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
def prepare(train_part, test_part):
    scaler = StandardScaler().fit(train_part)
    return scaler.transform(train_part), scaler.transform(test_part)
X_train, X_test, y_train, y_test = train_test_split(X, y)
X_train, X_test = prepare(X_train, X_test)
