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
from imblearn.over_sampling import SMOTE
df = pd.read_csv("titanic.csv")
X = df.drop(columns=["Survived"])
y = df["Survived"]
sm = SMOTE(random_state=0)
X_sm, y_sm = sm.fit_resample(X, y)
gs = GridSearchCV(GradientBoostingClassifier(), {'max_depth': [3, 5]}, cv=5)
gs.fit(X_sm, y_sm)
print(gs.best_score_)
