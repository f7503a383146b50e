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
df = pd.read_csv("churn.csv")
X_train = df.drop(columns=["Exited"])
y_train = df["Exited"]
sc = StandardScaler()
X_train = sc.fit_transform(X_train)
X_tr, X_val, y_tr, y_val = train_test_split(X_train, y_train, test_size=0.2)
model = LogisticRegression(max_iter=1000)
model.fit(X_tr, y_tr)
print(accuracy_score(y_val, model.predict(X_val)))
