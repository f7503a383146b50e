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
X = train.drop(["Id", "Survived"], axis=1)
y = train["Survived"]
X_train, X_test, y_train, y_test = train_test_split(X, y, test_size=0.25, random_state=4)
best_score = 0
for n in [50, 100, 200, 400]:
    rf = RandomForestClassifier(n_estimators=n).fit(X_train, y_train)
    score = roc_auc_score(y_test, rf.predict_proba(X_test)[:, 1])
    if score > best_score:
        best_score = score
        best_n = n
final = RandomForestClassifier(n_estimators=best_n).fit(X_train, y_train)
print("test accuracy of the chosen model:", accuracy_score(y_test, final.predict(X_test)))
