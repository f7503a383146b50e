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
df = pd.read_csv("credit.csv")
X = df.drop(columns=["Class"])
y = df["Class"]
skf = StratifiedKFold(n_splits=5)
for tr, va in skf.split(X, y):
    pipe = make_pipeline(StandardScaler(), DecisionTreeClassifier(max_depth=5))
    pipe.fit(X.iloc[tr], y.iloc[tr])
    print(pipe.score(X.iloc[va], y.iloc[va]))
