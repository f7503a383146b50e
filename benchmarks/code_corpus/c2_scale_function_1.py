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
from sklearn.preprocessing import scale, robust_scale, normalize
df = pd.read_csv("loans.csv")
X = df.drop(columns=["default"])
y = df["default"]
X = scale(X)
X_tr, X_te, y_tr, y_te = train_test_split(X, y, random_state=5)
m = KNeighborsClassifier(n_neighbors=7)
m.fit(X_tr, y_tr)
print(accuracy_score(y_te, m.predict(X_te)))
