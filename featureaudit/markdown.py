"""Text and code spans for summary.md and ``diff --format markdown`` that render as written.

CommonMark lets any ASCII punctuation be escaped with a backslash, and GFM tables split cells
on every unescaped ``|``, code spans included; so names and summaries are escaped, never
turned into HTML entities (which a code span would show as ``&lt;``), and a line break is
shown as ``\\n`` so that it can start no heading, list item or table row.
"""

from __future__ import annotations

import re
from typing import Any

__all__ = ["md_text", "md_code", "one_line"]

_CONTROL = re.compile(r"[\x00-\x1f\x7f\u2028\u2029\x85]")
_NAMED = {"\n": "\\n", "\r": "\\r", "\t": "\\t"}
# the punctuation that can start or end inline markup (emphasis, links, autolinks, raw HTML,
# entities, code, strikethrough, table cells); escaping it is always allowed
_SPECIAL = re.compile(r"([\\`*_\[\]<>&|~!#])")


def one_line(value: Any) -> str:
    """``value`` as text on one line: line breaks as ``\\n``, other controls as ``\\xNN``."""
    text = "" if value is None else str(value)
    return _CONTROL.sub(lambda m: _NAMED.get(m.group(), f"\\x{ord(m.group()):02x}"), text)


def md_text(value: Any) -> str:
    """Plain text that Markdown shows as it is (inline, and inside a table cell)."""
    return _SPECIAL.sub(r"\\\1", one_line(value))


def md_code(value: Any, *, cell: bool = True) -> str:
    """A code span showing ``value`` as ``droplist.txt`` writes it (a name that would be
    misread bare, such as one with a line break or outer spaces, as a JSON string): a fence
    one backtick longer than the longest run inside, padded when the text starts or ends with
    a backtick or a space; ``|`` escaped when the span sits in a table cell (GFM removes that
    backslash before the span is read)."""
    from featureaudit.names import quote_name

    text = one_line(quote_name("" if value is None else str(value)))
    runs = [len(r) for r in re.findall(r"`+", text)]
    fence = "`" * (max(runs, default=0) + 1)
    if text[0] in "` " or text[-1] in "` ":
        text = f" {text} "
    if cell:
        text = text.replace("|", "\\|")
    return f"{fence}{text}{fence}"
