"""One way to write a column name on a line of text so that it reads back unchanged.

A name that is empty, has a line break, tab or other control character, leading or trailing
spaces, or starts with a double quote is written as a JSON string (``"leak\\nx"``); every
other name is written as it is. ``droplist.txt``, the text output and the drafted data
dictionary all use this rule, and :func:`unquote_name` reverses it.
"""

from __future__ import annotations

import json
import re

__all__ = ["quote_name", "unquote_name", "needs_quotes"]


def needs_quotes(name: str) -> bool:
    """Would ``name`` be misread (or lost) when written bare on a line?"""
    return (
        name == ""
        or name != name.strip()
        or name.startswith('"')
        or any(ch < " " or ch == "\x7f" or ch in "\u2028\u2029\x85" for ch in name)
    )


# JSON leaves these raw inside a string; written raw, some readers break the line there or
# show them as nothing, so a quoted name carries them as \u escapes (JSON reads them back)
_RAW_IN_JSON = re.compile("[\x7f\x85\u2028\u2029]")


def quote_name(name: str) -> str:
    """``name`` as it is, or as a JSON string when written bare it would be misread (every
    control character escaped, so the quoted name is one line of visible text)."""
    if not needs_quotes(name):
        return name
    quoted = json.dumps(name, ensure_ascii=False)
    return _RAW_IN_JSON.sub(lambda m: f"\\u{ord(m.group()):04x}", quoted)


def unquote_name(text: str) -> str:
    """Reverse :func:`quote_name`: a JSON string literal is decoded, anything else kept."""
    if len(text) >= 2 and text.startswith('"') and text.endswith('"'):
        try:
            value = json.loads(text)
        except ValueError:
            return text
        if isinstance(value, str):
            return value
    return text
