import numpy as np
import pandas as pd
from sklearn.model_selection import train_test_split
from sklearn.preprocessing import StandardScaler
from tensorflow import keras
from tensorflow.keras.callbacks import EarlyStopping, ModelCheckpoint
df = pd.read_csv("heart.csv")
X = df.drop(columns=["output"]).values
y = df["output"].values
X_train, X_test, y_train, y_test = train_test_split(X, y, test_size=0.2, random_state=0)
sc = StandardScaler()
X_train = sc.fit_transform(X_train)
X_test = sc.transform(X_test)
model = keras.Sequential([keras.layers.Dense(32, activation="relu"), keras.layers.Dense(1, activation="sigmoid")])
model.compile(optimizer="adam", loss="binary_crossentropy", metrics=["accuracy"])
x_val = X_train[:500]
x_part = X_train[500:]
y_val = y_train[:500]
y_part = y_train[500:]
model.fit(x_part, y_part, epochs=20, validation_data=(x_val, y_val), callbacks=[ModelCheckpoint('b.keras', save_best_only=True)])
loss, acc = model.evaluate(X_test, y_test)
print("test accuracy", acc)
