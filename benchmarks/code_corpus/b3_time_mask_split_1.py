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
df = pd.read_csv("churn.csv", parse_dates=["date"])
num = ["age", "income", "balance"]
df[num] = StandardScaler().fit_transform(df[num])
train = df[df['date'] < '2021-01-01']
test = df[df['date'] >= '2021-01-01']
model = LogisticRegression(max_iter=1000).fit(train[num], train["Exited"])
print(accuracy_score(test["Exited"], model.predict(test[num])))
