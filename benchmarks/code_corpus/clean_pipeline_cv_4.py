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
from imblearn.pipeline import Pipeline as ImbPipeline
from imblearn.over_sampling import SMOTE
from sklearn.feature_selection import SelectKBest, f_classif
from sklearn.datasets import load_digits
digits = load_digits()
X = digits.data
y = digits.target
pipe = Pipeline([('sel', SelectKBest(f_classif, k=20)), ('clf', KNeighborsClassifier(n_neighbors=7))])
X_train, X_test, y_train, y_test = train_test_split(X, y, random_state=0)
search = GridSearchCV(pipe, {'sel__k': [10, 20, 40]}, cv=5).fit(X_train, y_train)
print(search.score(X_test, y_test))
