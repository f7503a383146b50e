import pandas as pd
import lightgbm as lgb
import xgboost as xgb
from sklearn.model_selection import train_test_split
from sklearn.metrics import roc_auc_score
from tensorflow import keras
from tensorflow.keras.callbacks import EarlyStopping
df = pd.read_csv("diabetes.csv")
X = df.drop(columns=["Outcome"])
y = df["Outcome"]
X_train, X_test, y_train, y_test = train_test_split(X, y, test_size=0.2, random_state=0)
X_tr, X_val, y_tr, y_val = train_test_split(X_train, y_train, test_size=0.2, random_state=1)
net = keras.Sequential([keras.layers.Dense(16, activation='relu'), keras.layers.Dense(1, activation='sigmoid')])
net.compile(optimizer='adam', loss='binary_crossentropy')
net.fit(X_tr, y_tr, validation_data=(X_val, y_val), epochs=100, callbacks=[EarlyStopping(patience=5)])
print("test auc", roc_auc_score(y_test, net.predict(X_test).ravel()))
