"""Text shown to people: names made safe to print, names compared as people read them.

One home for both rules, so the command line, the window and the arm-file
messages print a name the same way (:func:`printable`) and agree on when two
names are "the same" (:func:`name_key`).
"""

from __future__ import annotations

import unicodedata

__all__ = ["printable", "visible", "name_key"]

_NAMED = {"\n": "\\n", "\r": "\\r", "\t": "\\t"}

# Categories that print as nothing (or move the cursor): controls, format characters
# (zero-width space/joiner, bidirectional overrides, soft hyphen), line and paragraph separators.
_HIDDEN = {"Cc", "Cf", "Zl", "Zp"}


def _escape(ch: str) -> str:
    if ch in _NAMED:
        return _NAMED[ch]
    cp = ord(ch)
    if cp <= 0xFF:
        return f"\\x{cp:02x}"
    if cp <= 0xFFFF:
        return f"\\u{cp:04x}"
    return f"\\U{cp:08x}"


def printable(s) -> str:
    """``s`` with every control or invisible formatting character turned into a visible escape.

    Tab, newline and carriage return become ``\\t``, ``\\n``, ``\\r``; other
    control characters ``\\x07``-style escapes; format characters (zero-width
    space, bidirectional overrides, …) and line/paragraph separators ``\\u200b``-style
    escapes.  Everything else — letters of any script, spaces, punctuation — is
    kept as it is, so an ordinary name prints unchanged.  A backslash is kept
    as it is too: ``printable`` is for reading, not for parsing back.

    Parameters
    ----------
    s : str
        Any text (a value that is not a ``str`` is converted with ``str``).

    Returns
    -------
    str
        Text that prints on one line and shows every character it holds.
    """
    s = s if isinstance(s, str) else str(s)
    if s.isprintable():  # the common case: nothing to escape (a plain space is printable)
        return s
    return "".join(_escape(ch) if unicodedata.category(ch) in _HIDDEN else ch for ch in s)


def visible(s: str) -> str:
    """``s`` without whitespace and invisible characters (controls, format characters, separators).

    A name whose ``visible`` part is empty shows nothing on the screen.
    """
    return "".join(ch for ch in s if not ch.isspace() and unicodedata.category(ch) not in _HIDDEN)


def name_key(s: str) -> str:
    """The form under which two names count as the same: NFKC-normalised, without spaces or invisible characters.

    Letter case is kept (``"J1"`` and ``"j1"`` are different names); spaces,
    invisible characters and Unicode normal forms (``"J²"`` and ``"J2"``,
    a precomposed and a combining ``"é"``) are not.
    """
    return visible(unicodedata.normalize("NFKC", s))
