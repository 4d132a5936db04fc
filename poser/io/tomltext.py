"""Writing plain values as TOML 1.0 text (what a save adds or rewrites).

Numbers: a whole float is written as an integer (``90``, not ``90.0``), any
other float with the shortest text that reads back to the same float; text as
a basic string with escapes for quotes, backslashes and control characters;
dates and times in RFC 3339 form (seconds always written, as TOML 1.0 needs).
"""

from __future__ import annotations

import datetime
import math
import re

__all__ = ["render_value", "render_key", "render_table", "same", "TomlValueError"]

_BARE_KEY = re.compile(r"[A-Za-z0-9_-]+\Z")
_ESC = {'"': '\\"', "\\": "\\\\", "\b": "\\b", "\t": "\\t", "\n": "\\n", "\f": "\\f", "\r": "\\r"}


class TomlValueError(ValueError):
    """A value that TOML cannot hold (None, a set, a non-text key, NaN in an arm value, …); ``path`` says where."""

    def __init__(self, path, value):
        self.path = tuple(path)
        where = ".".join(str(p) for p in self.path) or "value"
        super().__init__(f"{where} cannot be written to TOML: {type(value).__name__} {value!r}")


def _string(s: str) -> str:
    out = []
    for ch in s:
        if ch in _ESC:
            out.append(_ESC[ch])
        elif ord(ch) < 0x20 or ord(ch) == 0x7F:
            out.append(f"\\u{ord(ch):04X}")
        else:
            out.append(ch)
    return '"' + "".join(out) + '"'


def render_key(key) -> str:
    """A key as TOML writes it: bare when it can be, else quoted."""
    if not isinstance(key, str):
        raise TomlValueError((key,), key)
    return key if _BARE_KEY.match(key) else _string(key)


def _number(v) -> str:
    if isinstance(v, int):
        return str(v)
    if math.isnan(v):
        return "nan"
    if math.isinf(v):
        return "inf" if v > 0 else "-inf"
    if v.is_integer() and abs(v) < 1e15:
        return str(int(v)) if v or math.copysign(1.0, v) > 0 else "-0"
    return repr(v)


def render_value(v, path=()) -> str:
    """One value as TOML text (inline form for tables and arrays).

    Raises
    ------
    TomlValueError
        For a value TOML cannot hold.
    """
    if isinstance(v, bool):
        return "true" if v else "false"
    if isinstance(v, (int, float)):
        return _number(v)
    if isinstance(v, str):
        return _string(v)
    if isinstance(v, datetime.datetime):
        return v.isoformat()
    if isinstance(v, datetime.date):
        return v.isoformat()
    if isinstance(v, datetime.time):
        if v.tzinfo is not None:  # TOML has no time with an offset
            raise TomlValueError(path, v)
        return v.isoformat()
    if isinstance(v, (list, tuple)):
        return "[" + ", ".join(render_value(x, path + (i,)) for i, x in enumerate(v)) + "]"
    if isinstance(v, dict):
        if not v:
            return "{}"
        return "{ " + ", ".join(f"{render_key(k)} = {render_value(x, path + (k,))}" for k, x in v.items()) + " }"
    raise TomlValueError(path, v)


def render_table(path: tuple, table: dict, newline: str = "\n") -> str:
    """A table as a ``[header]`` section, its sub-tables as ``[header.sub]`` sections after it.

    Returns the text from the header to the last line (ending with ``newline``),
    sub-sections separated by a blank line.
    """
    if not isinstance(table, dict):
        raise TomlValueError(path, table)
    header = ".".join(render_key(p) for p in path)
    lines = [f"[{header}]"]
    subs = []
    for k, v in table.items():
        render_key(k)
        if isinstance(v, dict) and v:
            subs.append((k, v))
        else:
            lines.append(f"{render_key(k)} = {render_value(v, path + (k,))}")
    text = newline.join(lines) + newline
    for k, v in subs:
        text += newline + render_table(path + (k,), v, newline)
    return text


def same(a, b) -> bool:
    """Whether two plain values are the same value (numbers by value, NaN equal to NaN; text exactly)."""
    if isinstance(a, bool) or isinstance(b, bool):
        return type(a) is type(b) and a == b
    num = (int, float)
    if isinstance(a, num) and isinstance(b, num):
        return a == b or (a != a and b != b)
    if isinstance(a, dict) and isinstance(b, dict):
        return a.keys() == b.keys() and all(same(a[k], b[k]) for k in a)
    if isinstance(a, (list, tuple)) and isinstance(b, (list, tuple)):
        return len(a) == len(b) and all(same(x, y) for x, y in zip(a, b))
    return type(a) is type(b) and a == b
