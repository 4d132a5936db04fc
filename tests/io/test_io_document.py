"""The comment-keeping document (poser.io.document, poser.io.layout): byte-identical round trips of every demo
arm and of odd hand-written files, edits that change only what was edited, comments that travel with their
joint, and specs that are plain data (copies independent, dumps changing nothing).
"""

from __future__ import annotations

import copy
import tomllib
from pathlib import Path

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from poser import armfile
from poser.armfile import JointSpec, dumps, load, loads, save

ROOT = Path(__file__).resolve().parents[2]
DEMO_ARMS = sorted((ROOT / "demo_arms").glob("*.toml"))

# Odd but valid arm files, written by hand.  Each must come back byte for byte.
CRLF = (
    "# made on another system\r\n"
    "format = 1\r\n"
    'name = "Crlf arm"\r\n'
    "\r\n"
    "[[joint]]\r\n"
    "# the first joint\r\n"
    'name = "one"\r\n'
    'type = "revolute"\r\n'
    "min = -90.0\r\n"
    "max = 90.0\r\n"
    "\r\n"
    "# the second joint, commented above its header\r\n"
    "[[joint]]\r\n"
    'name = "two"\r\n'
    'type = "prismatic"\r\n'
    "min = 0\r\n"
    "max = 1e3\r\n"
)

COMMENTS_EVERYWHERE = """\
# head comment
  # indented comment

format = 1   # the format
name = 'Commented'   # a literal string

# about units
[units]   # header comment
length = "mm"  # millimetres
angle = "deg"
# glued below the units

[tool]
xyz = [ # open
    0,   # x
    0,   # y
    120, # z
]  # close
rpy = [0,0,0]

# === shoulder ===
# two lines about the shoulder

[[joint]]  # J1
name = "  padded name  "
type = "revolute"
theta = -0
a = 1_000
alpha = 90.0
min = -170   # low
max = 170    # high
# glued to the shoulder, then a blank line

# about the elbow
[[joint]]
name = "elbow"
type = "revolute"
min = -1.5e2
max = +150
home = 0.0

[notes]
# a note about notes
owner = "cell 4"   # who
when = 2026-11-30T07:32:00Z
nested = { a = 1, b = [1, 2] }

# the end of the file
"""

INLINE_AND_DOTTED = """\
format = 1
name = "Dotted"
units.length = "m"
units.angle = "rad"
base = { xyz = [0, 0, 0.5], rpy = [0, 0, 1.5707963267948966] }

[[joint]]
type = "revolute"
min = -3.0
max = 3.0

[[joint]]
type = "revolute"
a = 0.35
min = -2.5
max = 2.5"""  # no final newline

INLINE_JOINTS = """\
format = 1
name = "Inline joints"
joint = [ { name = "a", type = "revolute", min = -90, max = 90 },
          { name = "b", type = "prismatic", min = 0, max = 200, home = 20 } ]   # two joints
"""

QUOTED_AND_MULTILINE = '''\
\t# tab-indented head comment
"format" = 1
name = "\\u00c9tude arm"   # an escaped name
units . length = 'mm'

[notes]
text = """
[[joint]]
name = "not a joint"
"""
lit = \'\'\'
[fake] 'quotes' ''\'\'\'
empty = {}
list = [
  [1, 2],   # inner
  { a = "b" },
]

[ tool ]
\trpy = [ 0 , 0 , 90 ]

[[ joint ]]   # first
\t"name" = "α one"
\ttype = 'revolute'
\tmin = -1.5707963267948966
\tmax = 1.5707963267948966

[[joint]]
name = "β two"
type = "prismatic"
d = 1E2
min = 0
max = 0x10
# last comment, no newline'''  # tabs, quoted keys and headers, strings that look like tables, no final newline

ODD_FILES = {"crlf": CRLF, "comments": COMMENTS_EVERYWHERE, "dotted": INLINE_AND_DOTTED, "inline": INLINE_JOINTS,
             "quoted": QUOTED_AND_MULTILINE}


def changed_lines(old: str, new: str) -> list[tuple[str, str]]:
    a, b = old.splitlines(), new.splitlines()
    assert len(a) == len(b)
    return [(x, y) for x, y in zip(a, b) if x != y]


def block_of(text: str, name: str) -> str:
    """The text from the comment block above joint ``name``'s ``[[joint]]`` header to the next block."""
    at = text.index(f'name = "{name}"')
    head = text.rindex("[[joint]]", 0, at)
    # back to the start of the comment block above the header
    start = head
    lines = text[:head].split("\n")[:-1]
    for row in reversed(lines):
        if row.startswith("#") or row == "":
            start -= len(row) + 1
        else:
            break
    nxt = text.find("[[joint]]", at)
    return text[start: nxt if nxt >= 0 else len(text)]


# -- no edit: no byte changes ----------------------------------------------------------------------


@pytest.mark.parametrize("path", DEMO_ARMS, ids=[p.stem for p in DEMO_ARMS])
def test_every_demo_arm_round_trips_byte_for_byte(path, tmp_path):
    raw = path.read_bytes()
    spec = load(path)
    assert dumps(spec) == raw.decode("utf-8")
    out = tmp_path / path.name
    save(spec, out)
    assert out.read_bytes() == raw


@pytest.mark.parametrize("name", ODD_FILES)
def test_odd_files_round_trip_byte_for_byte(name, tmp_path):
    text = ODD_FILES[name]
    path = tmp_path / f"{name}.toml"
    path.write_bytes(text.encode("utf-8"))
    spec = load(path)
    assert dumps(spec) == text
    save(spec, path)
    assert path.read_bytes() == text.encode("utf-8")
    # and a copy of it too
    assert dumps(spec.copy()) == text


def test_odd_files_are_read_as_written():
    quoted = loads(QUOTED_AND_MULTILINE, "q.toml")
    assert quoted.name == "\u00c9tude arm" and [j.name for j in quoted.joints] == ["α one", "β two"]
    assert quoted.notes["text"] == '[[joint]]\nname = "not a joint"\n' and quoted.joints[1].max == 16
    spec = loads(COMMENTS_EVERYWHERE, "c.toml")
    assert spec.joints[0].name == "  padded name  "  # names are kept exactly, spaces included
    assert spec.joints[0].a == 1000 and spec.joints[0].theta == 0
    assert spec.tool_xyz == (0, 0, 120)
    dotted = loads(INLINE_AND_DOTTED, "dotted.toml")
    assert dotted.units.length == "m" and dotted.base_xyz == (0, 0, 0.5)
    assert [j.name for j in dotted.joints] == ["J1", "J2"]
    inline = loads(INLINE_JOINTS, "i.toml")
    assert [j.home for j in inline.joints] == [None, 20]


def test_a_byte_order_mark_is_kept_by_a_save(tmp_path):
    path = tmp_path / "bom.toml"
    raw = b"\xef\xbb\xbf" + (ROOT / "demo_arms" / "planar3.toml").read_bytes()
    path.write_bytes(raw)
    spec = load(path)
    save(spec, path)
    assert path.read_bytes() == raw


# -- edits change only what was edited -------------------------------------------------------------


def test_changing_values_keeps_spellings_and_line_ends_elsewhere():
    spec = loads(CRLF, "crlf.toml")
    spec.joints[1].max = 1500
    spec.joints[0].home = 10
    out = dumps(spec)
    assert "\n" not in out.replace("\r\n", "")  # every line still ends in CRLF, the new one too
    assert "min = -90.0\r\nmax = 90.0\r\nhome = 10\r\n" in out  # -90.0 and 90.0 keep their spelling
    assert "max = 1500\r\n" in out and "1e3" not in out
    assert loads(out) == spec


def test_only_the_changed_array_element_is_rewritten():
    spec = loads(COMMENTS_EVERYWHERE, "c.toml")
    spec.tool_xyz = (0, 0, 125.5)
    out = dumps(spec)
    assert changed_lines(COMMENTS_EVERYWHERE, out) == [("    120, # z", "    125.5, # z")]


def test_values_inside_inline_tables_and_dotted_keys_are_edited_where_they_stand():
    spec = loads(INLINE_AND_DOTTED, "dotted.toml")
    spec.units = type(spec.units)("mm", "rad")
    spec.base_rpy = (0, 0.25, 1.5707963267948966)
    spec.tool_rpy = (0, 0, 0.5)  # the file has no [tool]: a new table
    spec.joints[1].home = 1.0
    out = dumps(spec)
    assert 'units.length = "mm"\nunits.angle = "rad"\n' in out
    assert "base = { xyz = [0, 0, 0.5], rpy = [0, 0.25, 1.5707963267948966] }" in out
    assert out.endswith("max = 2.5\nhome = 1")  # added after the last key; still no final newline
    assert "\n[tool]\nrpy = [0, 0, 0.5]\n\n[[joint]]" in out  # before the joints; no default xyz added
    assert loads(out, "dotted.toml") == spec


def test_keys_added_to_an_inline_table_and_a_dotted_group():
    text = ('format = 1\nunits.length = "m"\ntool = { xyz = [0, 0, 1] }\n'
            '[[joint]]\ntype = "revolute"\nmin = -1\nmax = 1\n')
    spec = loads(text, "x.toml")
    spec.units = type(spec.units)("m", "rad")
    spec.tool_rpy = (0, 0, 1)
    spec.name = "Named"
    out = dumps(spec)
    assert out.startswith(
        'format = 1\nunits.length = "m"\nunits.angle = "rad"\ntool = { xyz = [0, 0, 1], rpy = [0, 0, 1] }\n'
        'name = "Named"\n[[joint]]\n'
    )
    assert loads(out, "x.toml") == spec


def test_renaming_keeps_the_line_and_its_comment():
    spec = loads(COMMENTS_EVERYWHERE, "c.toml")
    spec.joints[0].name = "shoulder"
    spec.name = "Renamed"
    out = dumps(spec)
    assert changed_lines(COMMENTS_EVERYWHERE, out) == [
        ("name = 'Commented'   # a literal string", 'name = "Renamed"   # a literal string'),
        ('name = "  padded name  "', 'name = "shoulder"'),
    ]


def test_removing_home_removes_its_line_only():
    spec = loads(COMMENTS_EVERYWHERE, "c.toml")
    spec.joints[1].home = None
    out = dumps(spec)
    assert COMMENTS_EVERYWHERE.replace("home = 0.0\n", "") == out


def test_notes_edited_in_place_while_their_keys_stay():
    spec = loads(COMMENTS_EVERYWHERE, "c.toml")
    spec.notes["owner"] = "cell 5"
    spec.notes["nested"]["b"] = [1, 3]
    out = dumps(spec)
    assert changed_lines(COMMENTS_EVERYWHERE, out) == [
        ('owner = "cell 4"   # who', 'owner = "cell 5"   # who'),
        ("nested = { a = 1, b = [1, 2] }", "nested = { a = 1, b = [1, 3] }"),
    ]


def test_notes_rewritten_whole_when_their_keys_change():
    spec = loads(COMMENTS_EVERYWHERE, "c.toml")
    spec.notes = {"site": "hall 2", "log": {"checked": True}}
    out = dumps(spec)
    assert out.endswith('[notes]\nsite = "hall 2"\n\n[notes.log]\nchecked = true\n\n# the end of the file\n')
    assert "owner" not in out and "# about the elbow" in out
    assert loads(out, "c.toml") == spec
    spec.notes = {}
    out = dumps(spec)
    assert "[notes]" not in out and loads(out, "c.toml") == spec


# -- joints keep their comments wherever they go ------------------------------------------------------


def _heron():
    return loads((ROOT / "demo_arms" / "heron6.toml").read_text(), "heron6.toml")


def test_moving_a_joint_takes_its_comments_along():
    spec = loads(COMMENTS_EVERYWHERE, "c.toml")
    spec.joints.reverse()
    out = dumps(spec)
    assert block_of(out, "elbow").startswith("\n# about the elbow\n[[joint]]\n")
    shoulder = block_of(out, "  padded name  ")
    assert "# === shoulder ===\n# two lines about the shoulder\n\n[[joint]]  # J1\n" in shoulder
    assert "# glued to the shoulder, then a blank line\n" in shoulder
    assert out.index('name = "elbow"') < out.index('name = "  padded name  "') < out.index("[notes]")
    assert out.endswith("# the end of the file\n")  # the file's trailer stays last
    assert sorted(out.splitlines()) == sorted(COMMENTS_EVERYWHERE.splitlines())  # nothing lost, nothing added
    again = loads(out, "c.toml")
    assert [j.name for j in again.joints] == ["elbow", "  padded name  "]
    spec.joints.reverse()  # moved back: the very same text
    assert dumps(spec) == COMMENTS_EVERYWHERE


def test_inserting_a_joint_in_the_middle_changes_nothing_else():
    spec = _heron()
    text = spec.source.text
    spec.joints.insert(2, JointSpec("J2b extra", "revolute", a=50, min=-45, max=45))
    out = dumps(spec)
    new_block = '\n[[joint]]\nname = "J2b extra"\ntype = "revolute"\na = 50\nmin = -45\nmax = 45\n'
    assert new_block in out
    assert out.replace(new_block, "", 1) == text
    assert "# upper arm points straight up at J2 = 0" in block_of(out, "J2 shoulder")
    assert [j.name for j in loads(out).joints][1:4] == ["J2 shoulder", "J2b extra", "J3 elbow"]


def test_deleting_a_joint_takes_its_comments_with_it():
    spec = loads(COMMENTS_EVERYWHERE, "c.toml")
    del spec.joints[0]
    out = dumps(spec)
    assert "shoulder" not in out and "padded" not in out
    assert "# about the elbow\n[[joint]]\nname = \"elbow\"" in out
    assert out.startswith(COMMENTS_EVERYWHERE[: COMMENTS_EVERYWHERE.index("# === shoulder")])
    assert out.endswith(COMMENTS_EVERYWHERE[COMMENTS_EVERYWHERE.index("\n# about the elbow"):])


def test_every_edit_at_once_keeps_every_comment_with_its_joint():
    spec = _heron()
    text = spec.source.text
    j = spec.joints
    j[1].max = 141  # change a value
    j[0].name = "J1 base"  # rename
    j.insert(3, JointSpec("extra", "prismatic", min=0, max=10))  # insert in the middle
    del j[6]  # delete one ("J6 flange", which has no comments)
    j.insert(0, j.pop(2))  # move "J3 elbow" to the front
    out = dumps(spec)
    again = loads(out)
    assert [x.name for x in again.joints] == ["J3 elbow", "J1 base", "J2 shoulder", "extra", "J4 forearm roll",
                                             "J5 wrist bend"]
    assert again == spec
    assert "# upper arm points straight up at J2 = 0" in block_of(out, "J2 shoulder")
    assert 'max = 141' in block_of(out, "J2 shoulder")
    assert "# ready pose: wrist bent" in block_of(out, "J5 wrist bend")
    assert "J6 flange" not in out
    # every comment of the file is still there, once
    comments = [row for row in text.splitlines() if "#" in row]
    assert all(out.count(c[c.index("#"):]) == text.count(c[c.index("#"):]) for c in comments)


def test_a_moved_joint_without_a_name_gets_its_name_written():
    spec = loads(INLINE_AND_DOTTED, "dotted.toml")  # names J1, J2 come from the positions
    spec.joints.reverse()
    out = dumps(spec)
    assert [j.name for j in loads(out, "dotted.toml").joints] == ["J2", "J1"]


def test_joints_in_an_inline_array_can_be_edited_and_reordered():
    spec = loads(INLINE_JOINTS, "i.toml")
    spec.joints[1].max = 250
    out = dumps(spec)
    assert changed_lines(INLINE_JOINTS, out) == [
        ('          { name = "b", type = "prismatic", min = 0, max = 200, home = 20 } ]   # two joints',
         '          { name = "b", type = "prismatic", min = 0, max = 250, home = 20 } ]   # two joints')]
    spec.joints.reverse()
    spec.joints.append(JointSpec("c", "revolute", min=-1, max=1))
    out = dumps(spec)
    assert loads(out, "i.toml") == spec
    assert out.endswith('{ name = "c", type = "revolute", min = -1, max = 1 }]   # two joints\n')


# -- plain data -------------------------------------------------------------------------------------


def test_dumps_changes_nothing_in_the_spec():
    spec = _heron()
    before = copy.deepcopy(spec)
    spec.joints[2].max = 150
    edited = copy.deepcopy(spec)
    dumps(spec)
    dumps(spec.copy())
    assert spec == edited and spec.source is before.source
    assert [j.origin for j in spec.joints] == [j.origin for j in before.joints]


def test_copies_are_independent_both_ways():
    original = _heron()
    text = dumps(original)
    copy_ = original.copy()
    copy_.name = "Heron copy"
    copy_.joints[0].max = 100
    copy_.joints.pop()
    copy_.notes["maker"] = "someone else"
    copied_text = dumps(copy_)
    assert dumps(original) == text  # editing and dumping the copy left the original alone
    original.joints[1].min = -90
    original.name = "Heron edited"
    assert dumps(copy_) == copied_text  # and the other way round
    assert 'name = "Heron copy"' in copied_text and "# upper arm points straight up" in copied_text
    assert original.notes["maker"] == "Poser demo (invented)"


def test_the_loaded_text_is_never_handed_out():
    spec = _heron()
    spec.notes["payload_kg"] = 99
    assert loads(spec.source.text).notes["payload_kg"] == 8
    assert tomllib.loads(dumps(_heron()))["notes"]["payload_kg"] == 8


def test_dumps_reads_its_own_output_back(monkeypatch):
    """Should the edited text ever not read back as the arm, a plain new document is written instead."""
    from poser.io import document

    spec = _heron()
    spec.joints[0].max = 160
    monkeypatch.setattr(document._Render, "build", lambda self: self.text)  # a broken renderer: the old text
    out = dumps(spec)
    assert loads(out, "heron6.toml") == spec
    assert out.startswith("# Poser arm file: Heron 6\n")


def test_a_new_arm_is_written_whole():
    spec = armfile.ArmSpec(name="Bell\x07", joints=[JointSpec("j\n1", "revolute", min=-1, max=1)],
                           notes={"when": [1, 2], "sub": {"k": "v"}})
    out = dumps(spec)
    assert out.startswith("# Poser arm file: Bell\\x07\n")  # no control character inside a comment
    assert loads(out, "new.toml") == spec


# -- any sequence of edits is written in place ---------------------------------------------------------

_BASES = [p.read_text() for p in DEMO_ARMS] + list(ODD_FILES.values())
_numbers = st.one_of(st.integers(-500, 500), st.floats(-500, 500, allow_nan=False).map(lambda v: round(v, 3)))


def _edit(spec, data):
    kind = data.draw(st.sampled_from(["value", "home", "rename", "insert", "delete", "move", "place", "top",
                                      "notes"]))
    joints = spec.joints
    k = data.draw(st.integers(0, len(joints) - 1))
    j = joints[k]
    if kind == "value":
        setattr(j, data.draw(st.sampled_from(["a", "alpha", "d", "theta"])), data.draw(_numbers))
    elif kind == "home":
        j.home = data.draw(st.none() | st.floats(j.min, j.max, allow_nan=False))
        lo = data.draw(st.floats(-300, 300, allow_nan=False))
        if lo < (j.home if j.home is not None else j.max):
            j.min = lo
    elif kind == "rename":
        j.name = data.draw(st.sampled_from(["x y", "Ünï", 'q"uote', "back\\slash", "tab\tname", "J9"])) + str(k)
    elif kind == "insert":
        joints.insert(data.draw(st.integers(0, len(joints))),
                      JointSpec(f"new {len(joints)}", data.draw(st.sampled_from(["revolute", "prismatic"])),
                                a=data.draw(_numbers), min=-1, max=1, home=data.draw(st.none() | st.just(0.5))))
    elif kind == "delete" and len(joints) > 1:
        del joints[k]
    elif kind == "move":
        joints.insert(data.draw(st.integers(0, len(joints) - 1)), joints.pop(k))
    elif kind == "place":
        attr = data.draw(st.sampled_from(["base_xyz", "base_rpy", "tool_xyz", "tool_rpy"]))
        setattr(spec, attr, tuple(data.draw(st.lists(_numbers, min_size=3, max_size=3))))
    elif kind == "top":
        spec.name = data.draw(st.sampled_from(["A", "B b", spec.name]))
        spec.convention = data.draw(st.sampled_from(["standard", "modified"]))
        spec.units = type(spec.units)(data.draw(st.sampled_from(["mm", "m", "in"])),
                                      data.draw(st.sampled_from(["deg", "rad"])))
    elif kind == "notes":
        if spec.notes and data.draw(st.booleans()):
            key = data.draw(st.sampled_from(sorted(spec.notes)))
            spec.notes[key] = data.draw(st.sampled_from([1, "two", [3, 4], {"five": 5}]))
        else:
            spec.notes[data.draw(st.sampled_from(["owner", "new key", "x.y"]))] = data.draw(_numbers)


@settings(max_examples=300, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(st.data())
def test_any_sequence_of_edits_is_written_over_the_loaded_text(data):
    from poser.io import writing

    text = data.draw(st.sampled_from(_BASES))
    spec = loads(text, "arm.toml")
    for _ in range(data.draw(st.integers(1, 6))):
        _edit(spec, data)
    if armfile.validate(spec):
        return  # an edit made the arm invalid (say a name twice): nothing to write
    real = writing.render_fresh
    writing.render_fresh = None  # the fallback must not be needed
    try:
        out = dumps(spec)
    finally:
        writing.render_fresh = real
    again = loads(out, "arm.toml")
    assert again == spec
    assert dumps(again) == out  # stable: saving what was saved changes nothing
    # the loaded comments are all still there unless their joint was deleted (or [notes] changed shape:
    # then it is rewritten whole)
    names = {j.name for j in spec.joints}
    if all(name in names for name in (j.name for j in loads(text, "arm.toml").joints)):
        end = text.find("\n[notes]")
        for row in (text if end < 0 else text[:end]).splitlines():
            if row.lstrip().startswith("#"):
                assert row.strip() in out
