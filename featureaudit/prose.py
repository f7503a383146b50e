"""Is a text column prose (notes, descriptions) rather than codes or identifiers?

Every note of a free-text column may be different, like an identifier's values, but it is
read as words: the data dictionary's draft and the audit table must not call it an
identifier, and the lineage probe audits its words and phrases.
"""

from __future__ import annotations

import pandas as pd

__all__ = ["looks_like_prose", "PROSE_WORDS"]

# common practice, no source: a value of three or more words is a phrase, not a code
PROSE_WORDS = 3


def looks_like_prose(s: pd.Series) -> bool:
    """Text values whose median holds at least ``PROSE_WORDS`` words (runs of non-spaces)."""
    if pd.api.types.is_numeric_dtype(s.dtype) or pd.api.types.is_bool_dtype(s.dtype):
        return False
    if pd.api.types.is_datetime64_any_dtype(s.dtype):
        return False
    present = s.dropna()
    if present.empty or pd.api.types.infer_dtype(present, skipna=True) != "string":
        return False
    words = present.astype(str).str.count(r"\S+")
    return bool(words.median() >= PROSE_WORDS)
