import pandas as pd
import lightgbm as lgb
import xgboost as xgb
from sklearn.model_selection import train_test_split
from sklearn.metrics import roc_auc_score
from tensorflow import keras
from tensorflow.keras.callbacks import EarlyStopping
df = pd.read_csv("loans.csv")
X = df.drop(columns=["default"])
y = df["default"]
X_train, X_test, y_train, y_test = train_test_split(X, y, test_size=0.2, random_state=0)
X_tr, X_val, y_tr, y_val = train_test_split(X_train, y_train, test_size=0.2, random_state=1)
net = keras.Sequential([keras.layers.Dense(8), keras.layers.Dense(1, activation='sigmoid')])
net.compile(optimizer='adam', loss='binary_crossentropy')
net.fit(X_train, y_train, validation_split=0.2, epochs=50, callbacks=[EarlyStopping(patience=3)])
print("test auc", roc_auc_score(y_test, net.predict(X_test).ravel()))
