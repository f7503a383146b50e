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
df = df.sample(frac=1, random_state=42).reset_index(drop=True)
features = [c for c in df.columns if c != "default"]
df[features] = StandardScaler().fit_transform(df[features])
train_df, test_df = train_test_split(df, test_size=0.2, random_state=42)
model = KNeighborsClassifier(n_neighbors=7)
model.fit(train_df[features], train_df["default"])
print(accuracy_score(test_df["default"], model.predict(test_df[features])))
