import pandas as pd
import lightgbm as lgb
import xgboost as xgb
from catboost import CatBoostClassifier
from sklearn.model_selection import train_test_split
from sklearn.metrics import roc_auc_score
df = pd.read_csv("loans.csv")
X = df.drop(columns=["default"])
y = df["default"]
X_train, X_test, y_train, y_test = train_test_split(X, y, test_size=0.2, random_state=0)
model = xgb.XGBClassifier(n_estimators=1000)
model.fit(X_train, y_train, eval_set=(X_test, y_test), early_stopping_rounds=20)
print("test auc", roc_auc_score(y_test, model.predict_proba(X_test)[:, 1]))
