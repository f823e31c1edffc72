"""Text from the input made safe to show: on a terminal, in a message, in any report.

Input text (ids, names, file names, values) can hold characters that act instead of printing:
terminal control codes (ESC starts a sequence that can clear the screen or move the cursor, BEL
rings), line breaks that start a fake line, and the Unicode bidirectional controls, which reorder
what a reader sees (U+202E shows ``txt.exe`` as ``exe.txt``). Every message and every report
shows these characters visibly, as an escape such as ``\\x1b`` or ``\\u202e``, never raw.

- :func:`terminal` escapes all of them (messages, ``rules show``/``list``, the text report).
- :func:`invisible` escapes only the bidirectional controls and the Unicode line and paragraph
  separators: the writers of formats that already escape their own control characters (HTML,
  Markdown, XML, JSON, YAML) use it, so a report looks the same in every format.
- :func:`excerpt` is the most of a file's content a message may quote: a short, escaped piece.

The character classes are those of Unicode (UAX #9 for the bidirectional formatting characters,
Table 1 "explicit directional embeddings/overrides/isolates" and the implicit marks).
"""

from __future__ import annotations

import re

#: explicit bidirectional formatting characters and implicit marks (UAX #9, §2), plus the
#: Unicode line and paragraph separators, which some readers take as a line break
BIDI_AND_SEPARATORS = "\u061c\u200e\u200f\u202a-\u202e\u2066-\u2069\u2028\u2029"
_INVISIBLE = re.compile(f"[{BIDI_AND_SEPARATORS}]")
#: C0 and C1 controls, DEL, the above, lone surrogates (undecodable bytes of a file name) and
#: the byte-order mark used as a zero-width no-break space
_TERMINAL = re.compile(f"[\x00-\x1f\x7f-\x9f{BIDI_AND_SEPARATORS}\ud800-\udfff\ufeff]")
_NAMED = {"\n": "\\n", "\r": "\\r", "\t": "\\t"}

#: the longest excerpt of input a message quotes [characters]
EXCERPT = 60


def _escape(m: re.Match) -> str:
    ch = m[0]
    if ch in _NAMED:
        return _NAMED[ch]
    code = ord(ch)
    return f"\\x{code:02x}" if code < 0x100 else f"\\u{code:04x}"


def terminal(text: object) -> str:
    """``text`` with every control, bidirectional and separator character escaped visibly."""
    s = str(text)
    return _TERMINAL.sub(_escape, s) if _TERMINAL.search(s) else s


def invisible(text: object) -> str:
    """``text`` with the bidirectional controls and line/paragraph separators escaped visibly
    (``\\u202e``); other characters unchanged, for writers that escape the rest themselves."""
    s = str(text)
    if s.isascii():  # every character it escapes is beyond ASCII
        return s
    return _INVISIBLE.sub(_escape, s) if _INVISIBLE.search(s) else s


def lines(rows: list[str]) -> str:
    """Lines of a listing joined for a terminal, each escaped with :func:`terminal` (a line
    break inside one is shown as ``\\n``, never starts a line of its own)."""
    return "".join(terminal(row) + "\n" for row in rows)


def excerpt(value: object, limit: int = EXCERPT) -> str:
    """A short quoted piece of ``value`` for a message: its ``repr`` for text, cut to ``limit``
    characters with ``…`` and escaped for a terminal (``'root:x:0:0:…'``)."""
    text = value if isinstance(value, str) else _short_repr(value, limit)
    if isinstance(value, str):
        cut = text[:limit] + ("…" if len(text) > limit else "")
        return "'" + terminal(cut).replace("'", "\\'") + "'"
    return terminal(text)


def _short_repr(value: object, limit: int) -> str:
    if isinstance(value, int) and not isinstance(value, bool) and value.bit_length() > 64:
        return f"a whole number of about {int(value.bit_length() * 0.30103) + 1} digits"
    if isinstance(value, dict):
        return "a mapping" if value else "{}"
    if isinstance(value, list):
        return "a list" if value else "[]"
    text = repr(value)
    return text[:limit] + ("…" if len(text) > limit else "")
