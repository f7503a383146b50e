import pandas as pd
import lightgbm as lgb
import xgboost as xgb
from catboost import CatBoostClassifier
from sklearn.model_selection import train_test_split
from sklearn.metrics import roc_auc_score
df = pd.read_csv("churn.csv")
X = df.drop(columns=["Exited"])
y = df["Exited"]
X_train, X_test, y_train, y_test = train_test_split(X, y, test_size=0.2, random_state=0)
model = lgb.LGBMClassifier(n_estimators=5000, learning_rate=0.02)
model.fit(X_train, y_train, eval_set=(X_test, y_test), callbacks=[lgb.early_stopping(100)])
print("test auc", roc_auc_score(y_test, model.predict_proba(X_test)[:, 1]))
