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
train = pd.read_csv("train.csv")
test = pd.read_csv("test.csv")
features = ["age", "income", "tenure", "balance"]
train[features] = (train[features] - train[features].mean()) / train[features].std()
test[features] = (test[features] - test[features].mean()) / test[features].std()
model = LogisticRegression(max_iter=1000).fit(train[features], train["Exited"])
print(accuracy_score(test["Exited"], model.predict(test[features])))
