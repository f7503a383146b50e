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
NUM = ["age", "income", "balance"]
def clean(df):
    for c in NUM:
        df[c] = df[c].fillna(df[c].median())
    return df
df = pd.read_csv("loans.csv")
df = clean(df)
train, test = train_test_split(df, test_size=0.2)
model = KNeighborsClassifier(n_neighbors=7).fit(train[NUM], train["default"])
print(model.score(test[NUM], test["default"]))
