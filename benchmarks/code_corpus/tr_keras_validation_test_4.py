import numpy as np
import pandas as pd
from sklearn.model_selection import train_test_split
from sklearn.preprocessing import StandardScaler
from tensorflow import keras
from tensorflow.keras.callbacks import EarlyStopping, ModelCheckpoint
df = pd.read_csv("loans.csv")
X = df.drop(columns=["default"]).values
y = df["default"].values
X_train, X_test, y_train, y_test = train_test_split(X, y, test_size=0.2, random_state=0)
sc = StandardScaler()
X_train = sc.fit_transform(X_train)
X_test = sc.transform(X_test)
model = keras.Sequential([keras.layers.Dense(32, activation="relu"), keras.layers.Dense(1, activation="sigmoid")])
model.compile(optimizer="adam", loss="binary_crossentropy", metrics=["accuracy"])
callbacks = [EarlyStopping(monitor='val_loss', patience=3), ModelCheckpoint('m.keras', save_best_only=True)]
model.fit(X_train, y_train, validation_data=(X_test, y_test), epochs=30, callbacks=callbacks)
loss, acc = model.evaluate(X_test, y_test)
print("test accuracy", acc)
