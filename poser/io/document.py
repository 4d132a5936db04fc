"""The comment-keeping document: an arm's loaded text, and the new text for an edited arm.

:class:`ArmSource` is the text an arm was loaded from, read-only.  :func:`render`
writes an :class:`~poser.io.spec.ArmSpec` over it: the result is that text with
only the edited values rewritten, so

* an unchanged arm gives the loaded text back byte for byte (CRLF line
  ends, number spellings such as ``90.0``, ``1e3`` or ``-0``, inline arrays
  and tables, dotted keys, names with their spaces, no final newline);
* a changed value is rewritten where it stands (inside an inline table or a
  dotted key too); in an array only the changed elements are;
* a new key goes after the last key of its table (or into its inline table /
  dotted group); a removed ``home`` line goes away;
* joints keep the comment block above their ``[[joint]]`` header when they are
  moved, and take it with them when removed; new joints get a fresh
  ``[[joint]]`` table;
* ``[notes]`` is edited in place while its keys stay the same, else rewritten
  whole (comments inside it are then lost).

Which joint is which is told by :attr:`JointSpec.origin <poser.io.spec.JointSpec.origin>`,
never by position.  The renderer never changes the spec nor the source.
"""

from __future__ import annotations

import bisect
import hashlib
import threading
from pathlib import Path

from poser.io import layout as _layout
from poser.io.spec import ArmSpec, JointOrigin, JointSpec
from poser.io.tomltext import render_key, render_table, render_value, same
from poser.text import printable

__all__ = ["ArmSource", "render", "render_fresh", "default_name"]

_MISSING = object()
_JOINT_ORDER = ("name", "type", "a", "alpha", "d", "theta", "min", "max", "home")


def default_name(file) -> str:
    """The arm's name when the file gives none: the file name without ``.toml`` (``"arm"`` for no file)."""
    file = str(file) if file is not None else ""
    return Path(file).stem if file and not file.startswith("<") else "arm"


class ArmSource:
    """The text an arm was loaded from (read-only; shared by copies of the arm).

    Attributes
    ----------
    text : str
        The text after decoding (a leading byte-order mark removed).
    file : str
        The name it was loaded under (for the default arm name and messages).
    bom : bool
        Whether the file started with a UTF-8 byte-order mark (a save writes it back).
    digest : str
        SHA-256 of ``text``: two sources with one digest have one layout.
    """

    __slots__ = ("text", "file", "bom", "digest", "_data", "_layout", "_lock")

    def __init__(self, text: str, data: dict, file: str = "<arm>", bom: bool = False):
        self.text = text
        self.file = file
        self.bom = bom
        self.digest = hashlib.sha256(text.encode("utf-8", "surrogatepass")).hexdigest()
        self._data = data  # what tomllib read; never changed, never handed out
        self._layout = None
        self._lock = threading.Lock()

    @property
    def layout(self) -> _layout.Layout:
        """Where everything sits in the text (built on first use, once)."""
        if self._layout is None:
            with self._lock:
                if self._layout is None:
                    self._layout = _layout.scan(self.text)
        return self._layout

    def line_of(self, path) -> int | None:
        """Line (1-based) of the key or table at ``path`` in the text."""
        return self.layout.line_of(path)

    def same_text(self, other) -> bool:
        return isinstance(other, ArmSource) and (other is self or other.digest == self.digest)

    def __copy__(self):
        return self

    def __deepcopy__(self, memo):
        return self

    def __repr__(self):
        return f"ArmSource({self.file!r}, {len(self.text)} characters)"


# -- a new document -------------------------------------------------------------------


def _joint_lines(j: JointSpec) -> list[str]:
    lines = [f"name = {render_value(j.name)}", f"type = {render_value(j.type)}"]
    for key in ("a", "alpha", "d", "theta"):
        v = getattr(j, key)
        if not same(v, 0.0):
            lines.append(f"{key} = {render_value(v)}")
    lines += [f"min = {render_value(j.min)}", f"max = {render_value(j.max)}"]
    if j.home is not None:
        lines.append(f"home = {render_value(j.home)}")
    return lines


def _joint_section(j: JointSpec, nl: str) -> str:
    return nl + "[[joint]]" + nl + nl.join(_joint_lines(j)) + nl


def _joint_inline(j: JointSpec) -> str:
    return "{ " + ", ".join(_joint_lines(j)) + " }"


def _place_lines(xyz, rpy) -> list[str]:
    return [f"xyz = {render_value(list(xyz))}", f"rpy = {render_value(list(rpy))}"]


def render_fresh(spec: ArmSpec, nl: str = "\n") -> str:
    """A new arm file for ``spec`` (no loaded text): a short header, then every key in the usual order."""
    out = [
        f"# Poser arm file: {printable(spec.name)}",
        "# Format: docs/arm-file.md. Lengths in [units] length, angles in [units] angle.",
        "",
        "format = 1",
        f"name = {render_value(spec.name)}",
    ]
    if spec.convention != "standard":
        out.append(f"convention = {render_value(spec.convention)}")
    out += ["", "[units]", f"length = {render_value(spec.units.length)}", f"angle = {render_value(spec.units.angle)}"]
    for label in ("base", "tool"):
        xyz, rpy = getattr(spec, f"{label}_xyz"), getattr(spec, f"{label}_rpy")
        if not (same(xyz, (0, 0, 0)) and same(rpy, (0, 0, 0))):
            out += ["", f"[{label}]"] + _place_lines(xyz, rpy)
    text = nl.join(out) + nl
    for j in spec.joints:
        text += _joint_section(j, nl)
    if spec.notes:
        text += nl + render_table(("notes",), spec.notes, nl)
    return text


# -- editing a loaded document ---------------------------------------------------------


class _Render:
    def __init__(self, src: ArmSource, spec: ArmSpec, stem_default: str):
        self.src = src
        self.text = src.text
        self.data = src._data
        self.spec = spec
        self.stem_default = stem_default
        self.edits: list = []  # (owner section, start, end, seq, text)
        self.new_tables: dict = {}  # top-level table path → [(key, value)] for tables the text lacks
        self._starts = None

    @property
    def L(self) -> _layout.Layout:  # only read when something is to be edited: an unchanged arm needs no layout
        return self.src.layout

    @property
    def nl(self) -> str:
        return self.L.newline

    # - small tools -
    def old(self, path):
        v = self.data
        for p in path:
            try:
                v = v[p]
            except (KeyError, IndexError, TypeError):
                return _MISSING
        return v

    def owner(self, anchor: int) -> int:
        if self._starts is None:
            self._starts = [s.start for s in self.L.sections]
        return bisect.bisect_right(self._starts, anchor) - 1

    def edit(self, start, end, text, anchor=None):
        self.edits.append((self.owner(start if anchor is None else anchor), start, end, len(self.edits), text))

    def _item_indent(self, k) -> str:
        _, start, _, _ = self.L.items[k]
        line = self.text[start:]
        return line[: len(line) - len(line.lstrip(" \t"))]

    def _insert_after_item(self, k, key_text, value_text):
        _, start, end, _ = self.L.items[k]
        indent = self._item_indent(k)
        if self.text[end - 1 : end] == "\n":
            self.edit(end, end, f"{indent}{key_text} = {value_text}{self.nl}", anchor=start)
        else:  # the last line of a file without a final newline
            self.edit(end, end, f"{self.nl}{indent}{key_text} = {value_text}", anchor=start)

    # - keys -
    def set(self, table: tuple, key: str, new, default=_MISSING):
        path = table + (key,)
        old = self.old(path)
        if old is _MISSING:
            if new is None or (default is not _MISSING and same(new, default)):
                return
            self.insert(table, key, new)
        elif new is None:
            self.delete(path)
        elif not same(old, new):
            self.replace_value(path, old, new)

    def replace_value(self, path, old, new):
        e = self.L.entries[path]
        spans = self.L.arrays.get(path)
        if (spans is not None and isinstance(old, list) and isinstance(new, (list, tuple)) and len(old) == len(new)
                and len(spans) == len(old)):
            for (s, t), o, v in zip(spans, old, new):  # only the changed elements: the others keep their spelling
                if not same(o, v):
                    self.edit(s, t, render_value(v, path))
            return
        self.edit(e.value_start, e.value_end, render_value(new, path))

    def delete(self, path):
        e = self.L.entries[path]
        if e.item is not None:  # a line of its own: the line goes
            _, start, end, _ = self.L.items[e.item]
            self.edit(start, end, "")
            return
        text = self.text  # inside an inline table: the pair and one comma go
        after = e.value_end
        while after < len(text) and text[after] in " \t":
            after += 1
        if text[after] == ",":
            after += 1
            while text[after] in " \t":
                after += 1
            self.edit(e.key_start, after, "")
            return
        before = e.key_start
        while text[before - 1] in " \t":
            before -= 1
        if text[before - 1] == ",":
            self.edit(before - 1, e.value_end, "", anchor=e.key_start)
        else:
            self.edit(e.key_start, e.value_end, "")

    def insert(self, table: tuple, key: str, value):
        L = self.L
        key_text, value_text = render_key(key), render_value(value, table + (key,))
        if table in L.headers:
            sec = L.sections[L.headers[table]]
            if sec.items:
                self._insert_after_item(sec.items[-1], key_text, value_text)
            else:  # a header with no pairs yet
                hdr = next(k for k, it in enumerate(L.items) if it[1] == sec.header)
                self._insert_after_item(hdr, key_text, value_text)
            return
        if table in L.inline:
            start, end, last = L.inline[table]
            if last is not None:
                self.edit(last, last, f", {key_text} = {value_text}")
            else:
                pad = " " if self.text[end - 2] == "{" else ""
                self.edit(end - 1, end - 1, f"{pad}{key_text} = {value_text} ")
            return
        if table in L.dotted:
            k = L.dotted[table][-1]
            base = L.item_tables[k]
            rel = table[len(base):] + (key,)
            self._insert_after_item(k, ".".join(render_key(p) for p in rel), value_text)
            return
        if table == ():
            root = L.sections[0]
            if root.items:
                self._insert_after_item(root.items[-1], key_text, value_text)
            else:
                self.edit(root.content_end, root.content_end, f"{key_text} = {value_text}{self.nl}")
            return
        self.new_tables.setdefault(table, []).append((key, value))

    # - the arm -
    def top(self):
        spec = self.spec
        self.set((), "format", 1)
        self.set((), "name", spec.name, default=self.stem_default)
        self.set((), "convention", spec.convention, default="standard")
        self.set(("units",), "length", spec.units.length, default="mm")
        self.set(("units",), "angle", spec.units.angle, default="deg")
        for label in ("base", "tool"):
            for key in ("xyz", "rpy"):
                self.set((label,), key, list(getattr(spec, f"{label}_{key}")), default=[0, 0, 0])

    def joint(self, k: int, position: int, j: JointSpec):
        table = ("joint", k)
        old_name = self.old(table + ("name",))
        if old_name is _MISSING and j.name != f"J{position + 1}":
            self.insert(table, "name", j.name)  # the name came from the old position
        elif old_name is not _MISSING:
            self.set(table, "name", j.name)
        self.set(table, "type", j.type)
        for key in ("a", "alpha", "d", "theta"):
            self.set(table, key, getattr(j, key), default=0.0)
        self.set(table, "min", j.min)
        self.set(table, "max", j.max)
        self.set(table, "home", j.home)

    def notes_in_place(self, path, old, new) -> bool:
        """Edits for ``[notes]`` when its keys stay the same; False when it must be rewritten whole."""
        if isinstance(old, dict) != isinstance(new, dict):
            return False
        if isinstance(old, dict):
            if old.keys() != new.keys():
                return False
            return all(self.notes_in_place(path + (k,), old[k], new[k]) for k in old)
        if same(old, new):
            return True
        if path not in self.L.entries:  # e.g. a value inside an array of tables
            return False
        if isinstance(old, list) and any(isinstance(x, dict) for x in old):
            return False  # an array of tables: written as headers, not as a value
        self.replace_value(path, old, new)
        return True

    def build(self) -> str:
        text, spec = self.text, self.spec
        self.top()
        # joints: which loaded joint each one is (by origin, never by position)
        src_joints = self.data.get("joint", [])
        used: set = set()
        pieces = []  # per spec joint: ("old", k) or ("new", joint)
        for p, j in enumerate(spec.joints):
            o = j._table
            k = o.index if isinstance(o, JointOrigin) and self.src.same_text(o.source) else None
            if k is not None and 0 <= k < len(src_joints) and k not in used:
                used.add(k)
                pieces.append(("old", k))
                self.joint(k, p, j)
            else:
                pieces.append(("new", j))
        reordered = pieces != [("old", k) for k in range(len(src_joints))]
        # notes
        old_notes = self.data.get("notes", {})
        rewrite_notes = False
        if not same(old_notes, spec.notes):
            mark = len(self.edits)
            if not self.notes_in_place(("notes",), old_notes, spec.notes):
                del self.edits[mark:]
                rewrite_notes = True
        if not self.edits and not reordered and not self.new_tables and not rewrite_notes:
            return text  # nothing changed: the very same text
        L, nl = self.L, self.nl
        slots = [L.headers[("joint", k)] for k in range(len(src_joints)) if ("joint", k) in L.headers]
        inline_joints = bool(src_joints) and not slots
        notes_sections = [i for i, s in enumerate(L.sections) if s.path and s.path[0] == "notes"]
        if rewrite_notes:  # pairs defining notes outside its sections (dotted keys, an inline table) go
            for path, e in L.entries.items():
                if path[0] != "notes" or e.item is None:
                    continue
                _, start, end, _ = L.items[e.item]
                if L.sections[self.owner(start)].path is None:
                    self.edit(start, end, "")
        if inline_joints and reordered:
            self._rebuild_inline_joints(pieces)
        by_owner: dict = {}
        for owner, start, end, seq, new in self.edits:
            by_owner.setdefault(owner, []).append((start, end, seq, new))

        def piece(i, start=None, end=None):
            sec = L.sections[i]
            a, b = (sec.start if start is None else start), (sec.end if end is None else end)
            out, at = [], a
            for s, t, _seq, new in sorted(by_owner.get(i, ()), key=lambda e: (e[0], e[2])):
                if s < a or t > b:
                    continue
                out.append(text[at:s])
                out.append(new)
                at = t
            out.append(text[at:b])
            return "".join(out)

        def joint_text(pc):
            kind, val = pc
            return piece(L.headers[("joint", val)]) if kind == "old" else _joint_section(val, nl)

        new_tables_text = "".join(
            nl + render_table(path, dict(kv), nl) for path, kv in self.new_tables.items()
        )
        out: list = []

        def emit(s):
            if s:
                if out and not out[-1].endswith("\n"):
                    out.append(nl)
                out.append(s)

        slot_of = {sec: n for n, sec in enumerate(slots)}
        first_special = min(slots[:1] + notes_sections[:1], default=None)
        notes_done = False
        for i in range(len(L.sections)):
            if i == first_special and new_tables_text:
                emit(new_tables_text)
                new_tables_text = ""
            if i in slot_of and not inline_joints:
                n = slot_of[i]
                if n < len(pieces):
                    emit(joint_text(pieces[n]))
                if n == len(slots) - 1:
                    for pc in pieces[len(slots):]:
                        emit(joint_text(pc))
                continue
            if rewrite_notes and i in notes_sections:
                if not notes_done:
                    sec = L.sections[i]
                    emit(text[sec.start:sec.header])
                    if spec.notes:
                        emit(render_table(("notes",), spec.notes, nl))
                    notes_done = True
                continue
            emit(piece(i))
        emit(new_tables_text)
        if rewrite_notes and not notes_done and spec.notes:
            emit(nl + render_table(("notes",), spec.notes, nl))
        emit(text[L.trailer_start:])
        return "".join(out)

    def _rebuild_inline_joints(self, pieces):
        """Joints written as an inline array (``joint = [{...}, ...]``), added, removed or moved: a new array."""
        L, text = self.L, self.text
        e = L.entries[("joint",)]
        spans = L.arrays[("joint",)]
        inner = [x for x in self.edits if e.value_start <= x[1] and x[2] <= e.value_end]
        self.edits = [x for x in self.edits if x not in inner]
        parts = []
        for kind, val in pieces:
            if kind == "new":
                parts.append(_joint_inline(val))
                continue
            s, t = spans[val]
            out, at = [], s
            for _o, a, b, _seq, new in sorted(inner, key=lambda x: (x[1], x[3])):
                if s <= a and b <= t:
                    out += [text[at:a], new]
                    at = b
            parts.append("".join(out) + text[at:t])
        self.edit(e.value_start, e.value_end, "[" + ", ".join(parts) + "]")


def render(spec: ArmSpec, stem_default: str | None = None) -> str:
    """The arm as TOML text over its loaded text (see the module docstring); a new document if it has none.

    Parameters
    ----------
    spec : ArmSpec
        Not changed.
    stem_default : str, optional
        The name a file without ``name`` gives the arm where the text will be
        read (the file name without ``.toml``): ``name`` is written when the
        arm's name differs from it.  Default: the name the loaded file gave.
    """
    src = spec.source
    if not isinstance(src, ArmSource):
        return render_fresh(spec)
    stem = default_name(src.file) if stem_default is None else stem_default
    return _Render(src, spec, stem).build()
