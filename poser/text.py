"""Text shown to people: names made safe to print, names compared as people read them.

One home for both rules, so the command line, the window and the arm-file
messages print a name the same way (:func:`printable`) and agree on when two
names are "the same" (:func:`name_key`).
"""

from __future__ import annotations

import unicodedata

__all__ = ["printable", "visible", "name_key", "brief"]

_NAMED = {"\n": "\\n", "\r": "\\r", "\t": "\\t"}

# Categories that print as nothing (or move the cursor): controls, format characters
# (zero-width space/joiner, bidirectional overrides, soft hyphen), line and paragraph separators.
_HIDDEN = {"Cc", "Cf", "Zl", "Zp"}

# Characters that are letters or marks to Unicode but show as blank space or nothing: the Hangul fillers,
# the combining grapheme joiner, the Khmer inherent vowels, the braille blank.  Printed as escapes too.
_BLANK = frozenset(map(chr, (0x034F, 0x115F, 0x1160, 0x17B4, 0x17B5, 0x2800, 0x3164, 0xFFA0)))

# Unicode's Default_Ignorable_Code_Point ranges (DerivedCoreProperties.txt, from memory): drawn as nothing when
# a font has no glyph for them.  Beyond the categories above they hold the variation selectors, which change
# the character before them (kept when printing, but no name consists of them alone).
_IGNORABLE = ((0x00AD, 0x00AD), (0x034F, 0x034F), (0x061C, 0x061C), (0x115F, 0x1160), (0x17B4, 0x17B5),
              (0x180B, 0x180F), (0x200B, 0x200F), (0x202A, 0x202E), (0x2060, 0x206F), (0x3164, 0x3164),
              (0xFE00, 0xFE0F), (0xFEFF, 0xFEFF), (0xFFA0, 0xFFA0), (0xFFF0, 0xFFF8), (0x1BCA0, 0x1BCA3),
              (0x1D173, 0x1D17A), (0xE0000, 0xE0FFF))


def _ignorable(ch: str) -> bool:
    cp = ord(ch)
    return any(lo <= cp <= hi for lo, hi in _IGNORABLE)


def _shows_nothing(ch: str) -> bool:
    return ch.isspace() or ch in _BLANK or unicodedata.category(ch) in _HIDDEN or _ignorable(ch)


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
    space, bidirectional overrides, …), line/paragraph separators and letters that show as blank
    (the Hangul filler, the braille blank) ``\\u200b``-style escapes.
    Everything else — letters of any script, spaces, punctuation — is
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
    if s.isascii() and s.isprintable():  # the common case: nothing to escape (a plain space is printable)
        return s
    return "".join(_escape(ch) if ch in _BLANK or unicodedata.category(ch) in _HIDDEN else ch for ch in s)


def visible(s: str) -> str:
    """``s`` without whitespace and invisible characters (controls, format characters, separators, Unicode's
    default-ignorable characters such as variation selectors, and letters that show as blank, such as the
    Hangul filler).

    A name whose ``visible`` part is empty shows nothing on the screen; so does one of combining marks alone
    (an accent over nothing), for which ``visible`` is empty too.
    """
    out = "".join(ch for ch in s if not _shows_nothing(ch))
    if all(unicodedata.category(ch).startswith("M") for ch in out):
        return ""
    return out


def name_key(s: str) -> str:
    """The form under which two names count as the same: NFKC-normalised, without spaces or invisible characters.

    Letter case is kept (``"J1"`` and ``"j1"`` are different names); spaces,
    invisible characters and Unicode normal forms (``"J²"`` and ``"J2"``,
    a precomposed and a combining ``"é"``) are not.
    """
    return visible(unicodedata.normalize("NFKC", s))


def brief(value, limit: int = 80) -> str:
    """``repr(value)`` for a message, at most about ``limit`` characters: longer ones are cut (``'xxx…' (5000
    characters)``), an integer of hundreds of digits is named by its size, so a file's absurd value never floods
    an error message.

    Parameters
    ----------
    value : object
        Typically a value read from an arm file (text, number, list, table).
    limit : int
        Longest text returned before the size note.
    """
    if isinstance(value, int) and not isinstance(value, bool) and value.bit_length() > 3 * limit:
        digits = len(str(abs(value))) if value.bit_length() < 14_000 else int(value.bit_length() * 0.30103) + 1
        return f"{'a negative' if value < 0 else 'an'} integer of {digits} digits"
    if isinstance(value, (list, tuple)) and len(value) <= 8:
        inner = ", ".join(brief(v, limit) for v in value)
        text = f"[{inner}]" if isinstance(value, list) else f"({inner}{',' if len(value) == 1 else ''})"
    else:
        try:
            text = repr(value)
        except ValueError:  # an integer inside too long to print
            text = f"a {type(value).__name__} of {len(value)} items" if hasattr(value, "__len__") else "a value"
    text = printable(text)  # repr leaves letters that show as blank as they are
    if len(text) <= limit:
        return text
    return f"{text[: limit - 1]}… ({len(text)} characters)"
