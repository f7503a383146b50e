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
from sklearn.utils import resample
train, test = train_test_split(df)
minority = train[train.late == 1]
up = resample(minority, replace=True, n_samples=1000, random_state=0)
train = pd.concat([train, up])
