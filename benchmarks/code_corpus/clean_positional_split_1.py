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
df = pd.read_csv("churn.csv").sort_values("date")
feats = [c for c in df.columns if c not in ("Exited", "date")]
cut = int(len(df) * 0.8)
train = df.iloc[:cut]
holdout = df.iloc[cut:]
scaler = MinMaxScaler()
tr_x = scaler.fit_transform(train[feats])
te_x = scaler.transform(holdout[feats])
model = LogisticRegression(max_iter=1000).fit(tr_x, train["Exited"])
print(accuracy_score(holdout["Exited"], model.predict(te_x)))
