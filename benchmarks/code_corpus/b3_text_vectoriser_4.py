import pandas as pd
from sklearn.feature_extraction.text import TfidfVectorizer, CountVectorizer
from sklearn.model_selection import train_test_split, cross_val_score
from sklearn.pipeline import make_pipeline
from sklearn.linear_model import LogisticRegression
from sklearn.naive_bayes import MultinomialNB
from sklearn.metrics import accuracy_score
df = pd.read_csv("loans.csv")
X_train, X_test, y_train, y_test = train_test_split(df['text'], df['label'], test_size=0.2)
tfidf = TfidfVectorizer()
Xtr = tfidf.fit_transform(X_train)
Xte = tfidf.fit_transform(X_test)
print(MultinomialNB().fit(Xtr, y_train).score(Xte, y_test))
