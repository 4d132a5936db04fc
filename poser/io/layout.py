"""Where every key, value and table of a TOML text sits: the layout behind comment-keeping saves.

The values of an arm file come from :mod:`tomllib` (strict TOML 1.0).  This
module reads the *same* text once more, only to learn where things are:

* every key/value pair, by its absolute key path (``("units", "length")``,
  ``("joint", 2, "min")``, ``("notes", "log", 0, "when")``): where its key and
  its value start and end, and on which line it stands — values inside inline
  tables and arrays included;
* every table header and the *section* it opens: the header, its key/value
  lines, and the comment block written above it;
* which tables are defined by a header, by dotted keys or as an inline table
  (so a new key can be added where it belongs).

It is only ever run on text that :mod:`tomllib` accepted, so it does not
check syntax.  The scan is regular-expression driven (one match per line for
the usual ``key = value  # comment``), and nesting depth was bounded before.

Sections and comments
---------------------
A comment block above a table header belongs to that header: when a joint is
moved or removed, the comments above its ``[[joint]]`` go with it.  Precisely,
the run of comment and blank lines between the end of one section's content
and the next header belongs to the next header, except comment lines that
stand directly below the content (no blank line between) and are followed by
a blank line — those stay with the section above.  At the end of the file,
comments directly below the last content line stay with the last section; the
rest (from the first blank line on) is the file's trailer and stays last.
"""

from __future__ import annotations

import re
import tomllib
from dataclasses import dataclass, field

__all__ = ["Entry", "Section", "Layout", "scan"]

_WS = re.compile(r"[ \t]*")
_SKIP = re.compile(r"(?:[ \t\r\n]|#[^\r\n]*)*")  # whitespace, newlines and comments (inside arrays)
_EOL = re.compile(r"[ \t]*(#[^\r\n]*)?(\r?\n|$)")
_BLANKS = re.compile(r"(?:[ \t]*\r?\n)+")
_COMMENTS = re.compile(r"(?:[ \t]*#[^\r\n]*(?:\r?\n|\Z))+")
_BARE = re.compile(r"[A-Za-z0-9_-]+")
_DOT = re.compile(r"[ \t]*\.[ \t]*")
_BASIC = re.compile(r'"(?:[^"\\\r\n]|\\.)*"')
_LITERAL = re.compile(r"'[^'\r\n]*'")
_ML_BASIC = re.compile(r'"""(?:[^"\\]|\\[\s\S]|"(?!""))*"{3,5}')
_ML_LITERAL = re.compile(r"'''(?:[^']|'(?!''))*'{3,5}")
_SCALAR = re.compile(
    r"\d{4}-\d{2}-\d{2}(?:[Tt ]\d{2}:\d{2}:\d{2}(?:\.\d+)?(?:[Zz]|[+-]\d{2}:\d{2})?)?"
    r"|\d{2}:\d{2}:\d{2}(?:\.\d+)?"
    r"|[A-Za-z0-9_+.\-]+"
)
# The usual line: a bare (dotted) key, "=", a scalar or one-line string, an optional comment.
_SIMPLE_KV = re.compile(
    r"[ \t]*([A-Za-z0-9_-]+(?:[ \t]*\.[ \t]*[A-Za-z0-9_-]+)*)[ \t]*=[ \t]*"
    r"(\"(?:[^\"\\\r\n]|\\.)*\"(?!\")|'[^'\r\n]*'(?!')|[A-Za-z0-9_+.:\-]+(?:[Tt ][0-9:.]+(?:[Zz]|[+-]\d\d:\d\d)?)?)"
    r"[ \t]*(?:#[^\r\n]*)?(?:\r?\n|$)"
)


@dataclass
class Entry:
    """A key/value pair: character offsets into the text (value end exclusive) and the key's line (1-based)."""

    key_start: int
    value_start: int
    value_end: int
    line: int
    item: int | None = None  # index of the top-level item (line group) it belongs to; None inside inline values


@dataclass
class Section:
    """A stretch of the file: the root (before the first header) or one table header with its lines.

    ``start:end`` is the whole section including the comment block above its
    header; ``header`` the offset of the header itself; ``content_end`` the end
    of its last header or key/value line (newline included).
    """

    path: tuple | None  # table path (absolute, array indices included); None for the root
    aot: bool
    start: int
    header: int
    content_end: int
    end: int
    line: int
    items: list = field(default_factory=list)  # indices of its key/value items


@dataclass
class Layout:
    """The layout of one TOML text (see the module docstring)."""

    text: str
    newline: str
    entries: dict  # path → Entry
    sections: list  # [root, section, ...]
    trailer_start: int
    items: list  # (kind, start, end, line): a header or key/value line (group), a run of blank or of comment lines
    headers: dict  # table path → index into sections (tables and array-of-tables elements opened by a header)
    inline: dict  # table path → (value_start, value_end, last child's value end or None) of an inline table
    dotted: dict  # table path → list of item indices of the dotted key/value lines that define it
    arrays: dict  # path → list of (start, end) element spans of an array value
    item_tables: dict  # item index → table path of a key/value item (the table its header opened)

    def line_of(self, path) -> int | None:
        """Line of the key (or table header) at ``path``, else of its nearest enclosing table; None if unknown."""
        path = tuple(path)
        while path:
            e = self.entries.get(path)
            if e is not None:
                return e.line
            k = self.headers.get(path)
            if k is not None:
                return self.sections[k].line
            if path in self.dotted:
                return self.items[self.dotted[path][0]][3]
            path = path[:-1]
        return None


def _key_part(text: str, pos: int):
    c = text[pos]
    if c == '"':
        m = _BASIC.match(text, pos)
        return tomllib.loads("k = " + m.group(0))["k"], m.end()
    if c == "'":
        m = _LITERAL.match(text, pos)
        return m.group(0)[1:-1], m.end()
    m = _BARE.match(text, pos)
    return m.group(0), m.end()


def _key(text: str, pos: int):
    """A (dotted) key at ``pos``: (parts, end)."""
    parts = []
    while True:
        part, pos = _key_part(text, pos)
        parts.append(part)
        pos = _WS.match(text, pos).end()
        if pos < len(text) and text[pos] == ".":
            pos = _WS.match(text, pos + 1).end()
            continue
        return tuple(parts), pos


class _Scanner:
    def __init__(self, text: str):
        self.text = text
        self.entries: dict = {}
        self.inline: dict = {}
        self.arrays: dict = {}
        self._line_pos = 0
        self._line = 1

    def line(self, pos: int) -> int:
        """1-based line of offset ``pos`` (offsets are asked in increasing order, so this stays linear)."""
        if pos < self._line_pos:  # rare: restart
            self._line_pos, self._line = 0, 1
        self._line += self.text.count("\n", self._line_pos, pos)
        self._line_pos = pos
        return self._line

    def value(self, pos: int, path: tuple) -> int:
        """Scan the value at ``pos`` (recording nested entries under ``path``); return its end."""
        text = self.text
        c = text[pos]
        if c == '"':
            m = (_ML_BASIC if text.startswith('"""', pos) else _BASIC).match(text, pos)
            return m.end()
        if c == "'":
            m = (_ML_LITERAL if text.startswith("'''", pos) else _LITERAL).match(text, pos)
            return m.end()
        if c == "[":
            spans = []
            pos = _SKIP.match(text, pos + 1).end()
            k = 0
            while text[pos] != "]":
                end = self.value(pos, path + (k,))
                spans.append((pos, end))
                k += 1
                pos = _SKIP.match(text, end).end()
                if text[pos] == ",":
                    pos = _SKIP.match(text, pos + 1).end()
            self.arrays[path] = spans
            return pos + 1
        if c == "{":
            start = pos
            last = None
            pos = _SKIP.match(text, pos + 1).end()
            while text[pos] != "}":
                key_start = pos
                parts, pos = _key(text, pos)
                pos = _WS.match(text, pos + 1).end()  # past "="
                line = self.line(key_start)
                end = self.value(pos, path + parts)
                self.entries[path + parts] = Entry(key_start, pos, end, line)
                last = end
                pos = _SKIP.match(text, end).end()
                if text[pos] == ",":
                    pos = _SKIP.match(text, pos + 1).end()
            self.inline[path] = (start, pos + 1, last)
            return pos + 1
        return _SCALAR.match(text, pos).end()


def scan(text: str) -> Layout:
    """The :class:`Layout` of ``text`` (which :func:`tomllib.loads` accepts)."""
    sc = _Scanner(text)
    n = len(text)
    items: list = []  # (kind, start, end, line)
    sections: list = [Section(None, False, 0, 0, 0, 0, 1)]
    headers: dict = {}
    dotted: dict = {}
    item_tables: dict = {}
    aot_count: dict = {}  # array-of-tables path → index of its last element
    table: tuple = ()
    nl_match = re.search(r"\r?\n", text)
    newline = nl_match.group(0) if nl_match else "\n"
    pos = 0
    while pos < n:
        start = pos
        pos = _WS.match(text, pos).end()
        c = text[pos] if pos < n else ""
        if c in ("\n", "\r", ""):  # blank lines: one item for the whole run
            pos = _EOL.match(text, pos).end()
            m = _BLANKS.match(text, pos)
            pos = m.end() if m else pos
            items.append(("blank", start, pos, sc.line(start)))
            continue
        if c == "#":  # comment lines: one item for the whole run
            pos = _COMMENTS.match(text, start).end()
            items.append(("comment", start, pos, sc.line(start)))
            continue
        if c == "[":
            aot = text.startswith("[[", pos)
            pos = _WS.match(text, pos + (2 if aot else 1)).end()
            parts, pos = _key(text, pos)
            pos = _EOL.match(text, pos + (2 if aot else 1)).end()
            # resolve array-of-tables elements on the way: [notes.log.detail] is in the last [[notes.log]]
            path: tuple = ()
            for p in parts[:-1]:
                path += (p,)
                if path in aot_count:
                    path += (aot_count[path],)
            path += (parts[-1],)
            if aot:
                aot_count[path] = aot_count.get(path, -1) + 1
                path += (aot_count[path],)
            table = path
            line = sc.line(start)
            items.append(("header", start, pos, line))
            headers[path] = len(sections)
            sections.append(Section(path, aot, start, start, pos, pos, line))
            continue
        m = _SIMPLE_KV.match(text, start)
        if m:  # the usual one-line pair: one match
            parts = tuple(_DOT.split(m.group(1)))
            key_start, value_start, value_end = m.start(1), m.start(2), m.end(2)
            line = sc.line(key_start)
            pos = m.end()
        else:
            key_start = pos
            line = sc.line(key_start)  # before the value: its nested entries ask for later lines
            parts, pos = _key(text, pos)
            value_start = _WS.match(text, pos + 1).end()  # past "="
            value_end = sc.value(value_start, table + parts)
            pos = _EOL.match(text, value_end).end()
        k = len(items)
        items.append(("kv", start, pos, line))
        sc.entries[table + parts] = Entry(key_start, value_start, value_end, line, k)
        sections[-1].items.append(k)
        item_tables[k] = table
        for depth in range(1, len(parts)):
            dotted.setdefault(table + parts[:depth], []).append(k)
    _bound_sections(items, sections, n)
    return Layout(
        text=text,
        newline=newline,
        entries=sc.entries,
        sections=sections,
        trailer_start=sections[-1].end,
        items=items,
        headers=headers,
        inline=sc.inline,
        dotted=dotted,
        arrays=sc.arrays,
        item_tables=item_tables,
    )


def _bound_sections(items, sections, n):
    """Give each section its comment block and end (see "Sections and comments" above)."""
    # which section each item is in, by position
    bounds = [s.header for s in sections[1:]] + [n + 1]
    k = 0
    owned = [[] for _ in sections]
    for idx, (_kind, start, _end, _line) in enumerate(items):
        while start >= bounds[k]:
            k += 1
        owned[k].append(idx)
    for k, sec in enumerate(sections):
        mine = owned[k]
        content = [i for i in mine if items[i][0] in ("header", "kv")]
        last = content[-1] if content else None
        sec.content_end = items[last][2] if last is not None else (sec.header if k else 0)
        if last is None:  # a root without pairs (only comments): it keeps everything, as the file's head
            tail = []
            sec.content_end = items[mine[-1]][2] if mine else 0
        else:
            tail = mine[mine.index(last) + 1:]
        # split the tail: glued comments stay, the rest goes to the next header (or the trailer)
        glued = 0
        while glued < len(tail) and items[tail[glued]][0] == "comment":
            glued += 1
        at_end = k + 1 == len(sections)
        has_blank_after = any(items[i][0] == "blank" for i in tail[glued:])
        if at_end:
            keep = glued
        elif glued and has_blank_after:
            keep = glued
        else:
            keep = 0
        sec.end = items[tail[keep - 1]][2] if keep else sec.content_end
        if not at_end:
            nxt = sections[k + 1]
            nxt.start = sec.end
    # the root always starts at 0; a section's start is the previous one's end
    sections[0].start = 0
