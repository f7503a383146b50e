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
def add_features(df):
    df['ratio'] = df['income'] / (df['balance'] + 1)
    df['log_income'] = np.log1p(df['income'])
    return df
df = pd.read_csv("credit.csv")
df = add_features(df)
train, test = train_test_split(df, test_size=0.2)
model = DecisionTreeClassifier(max_depth=5).fit(train[NUM], train["Class"])
print(model.score(test[NUM], test["Class"]))
