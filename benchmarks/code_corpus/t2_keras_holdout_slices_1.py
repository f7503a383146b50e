import numpy as np
import pandas as pd
from sklearn.model_selection import train_test_split
from sklearn.preprocessing import StandardScaler
from tensorflow import keras
from tensorflow.keras.callbacks import EarlyStopping, ModelCheckpoint
df = pd.read_csv("churn.csv")
X = df.drop(columns=["Exited"]).values
y = df["Exited"].values
X_train, X_test, y_train, y_test = train_test_split(X, y, test_size=0.2, random_state=0)
sc = StandardScaler()
X_train = sc.fit_transform(X_train)
X_test = sc.transform(X_test)
model = keras.Sequential([keras.layers.Dense(32, activation="relu"), keras.layers.Dense(1, activation="sigmoid")])
model.compile(optimizer="adam", loss="binary_crossentropy", metrics=["accuracy"])
x_val, partial_x = X_train[:1000], X_train[1000:]
y_val, partial_y = y_train[:1000], y_train[1000:]
model.fit(partial_x, partial_y, epochs=40, validation_data=(x_val, y_val), callbacks=[EarlyStopping(patience=4)])
loss, acc = model.evaluate(X_test, y_test)
print("test accuracy", acc)
