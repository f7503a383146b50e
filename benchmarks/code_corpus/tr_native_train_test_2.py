import pandas as pd
import lightgbm as lgb
import xgboost as xgb
from catboost import CatBoostClassifier
from sklearn.model_selection import train_test_split
from sklearn.metrics import roc_auc_score
df = pd.read_csv("heart.csv")
X = df.drop(columns=["output"])
y = df["output"]
X_train, X_test, y_train, y_test = train_test_split(X, y, test_size=0.2, random_state=0)
train_set = lgb.Dataset(X_train, y_train)
valid_set = lgb.Dataset(X_test, y_test)
gbm = lgb.train({'objective': 'binary'}, train_set, 2000, valid_sets=[valid_set], callbacks=[lgb.early_stopping(50)])
print("test auc", roc_auc_score(y_test, gbm.predict(X_test, num_iteration=gbm.best_iteration)))
