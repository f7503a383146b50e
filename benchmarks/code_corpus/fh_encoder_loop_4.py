import numpy as np
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
from sklearn.tree import DecisionTreeClassifier
df = pd.read_csv("loans.csv")
cat_cols = ["city", "segment", "channel"]
train, rest = train_test_split(df, test_size=0.3, random_state=0)
valid, test = train_test_split(rest, test_size=0.5, random_state=0)
for frame in [train, valid, test]:
    enc = StandardScaler()
    frame[cat_cols] = enc.fit_transform(frame[cat_cols])
model = KNeighborsClassifier(n_neighbors=7)
model.fit(train.drop(columns=["default"]), train["default"])
print(model.score(valid.drop(columns=["default"]), valid["default"]))
