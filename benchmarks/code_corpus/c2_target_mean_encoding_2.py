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
df = pd.read_csv("titanic.csv")
rate = df.groupby('segment')['Survived'].mean().to_dict()
df['segment_rate'] = df['segment'].map(rate)
features = [c for c in df.columns if c not in ("Survived", "segment")]
train, valid = train_test_split(df, test_size=0.2, random_state=1)
model = GradientBoostingClassifier().fit(train[features], train["Survived"])
print(roc_auc_score(valid["Survived"], model.predict_proba(valid[features])[:, 1]))
