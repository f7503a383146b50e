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
df = pd.read_csv("churn.csv")
X = df.drop(columns=["Exited"])
y = df["Exited"]
X = (X - X.mean()) / X.std()
X_tr, X_te, y_tr, y_te = train_test_split(X, y, random_state=1, stratify=y)
clf = LogisticRegression(max_iter=1000).fit(X_tr, y_tr)
print(f1_score(y_te, clf.predict(X_te), average="macro"))
