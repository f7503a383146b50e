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
tr = X.sample(frac=0.8, random_state=1)
te = X.drop(tr.index)
lo, hi = tr.quantile(0.01), tr.quantile(0.99)
te = te.clip(lo, hi, axis=1)
