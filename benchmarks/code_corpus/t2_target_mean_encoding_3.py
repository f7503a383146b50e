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
df = pd.read_csv("diabetes.csv")
df['city_n'] = df.groupby('city')['age'].transform('count')
df['city_code'] = df['city'].astype('category').cat.codes
X = df.drop(columns=["Outcome", "city"])
y = df["Outcome"]
X_train, X_test, y_train, y_test = train_test_split(X, y, random_state=0)
print(SVC(probability=True).fit(X_train, y_train).score(X_test, y_test))
