import pandas as pd
from sklearn.feature_extraction.text import TfidfVectorizer, CountVectorizer
from sklearn.model_selection import train_test_split, cross_val_score
from sklearn.pipeline import make_pipeline
from sklearn.linear_model import LogisticRegression
from sklearn.naive_bayes import MultinomialNB
from sklearn.metrics import accuracy_score
df = pd.read_csv("churn.csv")
vec = TfidfVectorizer(stop_words='english', max_features=5000)
X = vec.fit_transform(df['text'])
X_train, X_test, y_train, y_test = train_test_split(X, df['label'], test_size=0.2)
nb = MultinomialNB().fit(X_train, y_train)
print(accuracy_score(y_test, nb.predict(X_test)))
