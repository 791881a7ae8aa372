"""User text shown as plain text inside Streamlit's Markdown (issue 11, item 2).

Streamlit renders the body of ``st.markdown``, ``st.caption``, ``st.error``/``warning``/``info``/
``success`` and the labels of widgets, expanders, popovers and metrics as GitHub-flavoured
Markdown, with its own additions: links that need no brackets (``http://...``, ``www....``, e-mail
addresses), emoji and logo shortcodes (``:name:``), icons, coloured text (``:red[...]``), LaTeX
between ``$`` signs, and typographic arrows (``->``). A file's column names, a file name, a
scenario's name, a note or an author is the user's text and must show exactly as typed, never as
an image, a link or HTML.

:func:`md` makes such text inert and leaves it readable: the signs that open Markdown or HTML
inline (`` \\ ` * [ ] < > | ~ $ & ``, and ``_`` unless it sits inside a word, where GFM never
reads it as emphasis) are escaped with a backslash, as are the block markers a line can start
with (``#``, ``-``, ``+``, ``=``, ``>``, ``1.``); an invisible word joiner (U+2060) goes where
Streamlit finds links, shortcodes and arrows in the text itself (after a colon, inside ``www.``,
before ``@``, between the two signs of an arrow). Line breaks and other control characters become
spaces, so a note cannot start a heading, a list or a table. Commas, full stops, quotes and
parentheses are left as they are: on their own they form nothing. Text that needs no Markdown at
all (a scenario's name in a select box, a table cell) is passed as it is: select options and data
frames are shown as plain text.
"""

from __future__ import annotations

import re
from typing import Any

WORD_JOINER = "\u2060"
# Signs that open an inline Markdown or HTML construct wherever they stand.
_INLINE = re.compile(r"[\\`*\[\]<>|~$&]|(?<![0-9A-Za-z])_|_(?![0-9A-Za-z])")
# A block marker at the start of the text (heading, list, quote, underline, numbered list).
_BLOCK_START = re.compile(r"^(\s*)([-+=#>]|\d+[.)])")
_CONTROL = re.compile(r"[\x00-\x1f\x7f-\x9f\u2028\u2029]+")
# Where Streamlit's renderer looks at the text itself (after the Markdown escapes are resolved):
# a colon before anything (shortcodes, icons, colour directives, "http://"), "www." and "@"
# (links without brackets) and the sign pairs it turns into arrows and relations.
_AFTER_COLON = re.compile(r"(?<=:)(?=\S)")
_WWW = re.compile(r"(?i)(?<=www)(?=\.)")
_SIGN_PAIR = re.compile(r"(?<=[-<>~])(?=[-<>=])")


def md(text: Any, *, limit: int | None = None) -> str:
    """``text`` escaped so that Streamlit shows it literally inside Markdown.

    Parameters
    ----------
    text : object
        The user's text (converted with ``str``); None gives ``""``.
    limit : int, optional
        Cut the text to this many characters (an ellipsis marks the cut) before escaping.

    Returns
    -------
    str
        Text to place in a Markdown body or label; it renders as the original characters
        (line breaks shown as spaces).
    """
    if text is None:
        return ""
    value = _CONTROL.sub(" ", str(text))
    if limit is not None and len(value) > limit:
        value = value[: max(limit - 1, 0)].rstrip() + "…"
    value = _AFTER_COLON.sub(WORD_JOINER, value)
    value = _WWW.sub(WORD_JOINER, value)
    value = value.replace("@", WORD_JOINER + "@")
    value = _SIGN_PAIR.sub(WORD_JOINER, value)
    value = _INLINE.sub(lambda m: "\\" + m.group(0), value)
    return _BLOCK_START.sub(lambda m: m.group(1) + _escape_marker(m.group(2)), value)


def _escape_marker(marker: str) -> str:
    """``-`` -> ``\\-``; ``12.`` -> ``12\\.`` (the sign that makes a list item)."""
    return marker[:-1] + "\\" + marker[-1]


def quoted(text: Any, *, limit: int | None = 80) -> str:
    """``md(text)`` between typographic quotes, for a name inside a sentence."""
    return f"‘{md(text, limit=limit)}’"


def shown(markdown_text: str) -> str:
    """The characters a reader sees for text made by :func:`md` (for tests and logs)."""
    unescaped = re.sub(r"\\(.)", r"\1", markdown_text)
    return unescaped.replace(WORD_JOINER, "")
