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
from imblearn.over_sampling import SMOTE, RandomOverSampler
df = pd.read_csv("loans.csv")
X = df.drop(columns=["default"])
y = df["default"]
X_tr, X_te, y_tr, y_te = train_test_split(X, y, test_size=0.25)
ros = RandomOverSampler()
X_tr_b, y_tr_b = ros.fit_resample(X_tr, y_tr)
X_te_b, y_te_b = ros.fit_resample(X_te, y_te)
clf = KNeighborsClassifier(n_neighbors=7).fit(X_tr_b, y_tr_b)
print(f1_score(y_te_b, clf.predict(X_te_b)))
