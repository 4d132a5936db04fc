"""Arm files, format 1 (poser.armfile): loading, validation, saving.

One test per class of bad file, each asserting the message, the line and the
joint; every problem reported at once; round trips of every demo arm; saving
keeps comments and is atomic; arbitrary bytes and text never raise anything
but ArmFileError.
"""

from __future__ import annotations

import datetime
import math
import os
import re
from pathlib import Path

import numpy as np
import pytest
import tomlkit
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from poser import armfile
from poser.armfile import ArmFileError, ArmSpec, JointSpec, Problem, dumps, load, loads, loads_bytes, save, validate
from poser.core.units import Units

DEMO_DIR = Path(__file__).resolve().parents[1] / "demo_arms"
DEMO_ARMS = sorted(DEMO_DIR.glob("*.toml"))

# A small valid arm; line numbers matter to the tests below.
GOOD = """\
# a comment that must survive
format = 1
name = "Test arm"
convention = "standard"

[units]
length = "mm"
angle = "deg"

[base]
xyz = [0, 0, 100]
rpy = [0, 0, 90]

[tool]
xyz = [0, 0, 50]

[[joint]]
name = "turn"                # line 18
type = "revolute"
a = 200
alpha = -90
d = 300
min = -170
max = 170

[[joint]]
name = "slide"               # line 27
type = "prismatic"
theta = 90
min = 0
max = 400
home = 100
"""


def problems_of(text: str, file: str = "arm.toml") -> list[Problem]:
    with pytest.raises(ArmFileError) as info:
        loads(text, file)
    assert str(info.value) == "\n".join(str(p) for p in info.value.problems)
    return info.value.problems


def only_problem(text: str, file: str = "arm.toml") -> Problem:
    found = problems_of(text, file)
    assert len(found) == 1, [str(p) for p in found]
    return found[0]


def edit(old: str, new: str, text: str = GOOD) -> str:
    assert text.count(old) == 1, old
    return text.replace(old, new)


# -- a good file -------------------------------------------------------------------


def test_good_file_loads_with_values_as_written():
    spec = loads(GOOD, "arm.toml")
    assert spec.name == "Test arm"
    assert spec.convention == "standard"
    assert spec.units == Units("mm", "deg")
    assert spec.base_xyz == (0, 0, 100) and spec.base_rpy == (0, 0, 90)
    assert spec.tool_xyz == (0, 0, 50) and spec.tool_rpy == (0.0, 0.0, 0.0)
    turn, slide = spec.joints
    assert (turn.name, turn.type, turn.a, turn.alpha, turn.d, turn.theta) == ("turn", "revolute", 200, -90, 300, 0)
    assert (turn.min, turn.max, turn.home) == (-170, 170, None)
    assert (slide.type, slide.theta, slide.min, slide.max, slide.home) == ("prismatic", 90, 0, 400, 100)
    assert spec.home_values() == [0.0, 100]


def test_defaults_when_keys_are_left_out():
    spec = loads('format = 1\n[[joint]]\ntype = "revolute"\nmin = 10\nmax = 50\n', "plain.toml")
    assert spec.name == "plain"  # the file's stem
    assert spec.convention == "standard"
    assert spec.units == Units("mm", "deg")
    assert spec.base_xyz == spec.base_rpy == spec.tool_xyz == spec.tool_rpy == (0.0, 0.0, 0.0)
    (j,) = spec.joints
    assert (j.name, j.a, j.alpha, j.d, j.theta, j.home) == ("J1", 0.0, 0.0, 0.0, 0.0, None)
    assert spec.home_values() == [30.0]  # 0 lies outside [10, 50]: mid-range
    chain = spec.to_chain()
    np.testing.assert_array_equal(chain.base, np.eye(4))
    assert chain.home[0] == pytest.approx(math.radians(30))


def test_to_chain_converts_angles_and_keeps_lengths():
    spec = loads(GOOD, "arm.toml")
    chain = spec.to_chain()
    assert chain.name == "Test arm" and chain.units == Units("mm", "deg")
    np.testing.assert_allclose(chain.lower, [math.radians(-170), 0.0])
    np.testing.assert_allclose(chain.upper, [math.radians(170), 400.0])
    np.testing.assert_allclose(chain.home, [0.0, 100.0])
    # base: 100 mm up, turned 90° about z
    np.testing.assert_allclose(chain.base, [[0, -1, 0, 0], [1, 0, 0, 0], [0, 0, 1, 100], [0, 0, 0, 1]], atol=1e-15)
    np.testing.assert_allclose(chain.q_from_user([90.0, 25.0]), [math.pi / 2, 25.0])


def test_large_values_up_to_the_bound_still_build_a_chain():
    text = 'format = 1\n[[joint]]\ntype = "prismatic"\nmin = 0.5e9\nmax = 1e9\na = ' + str(10**9) + "\n"
    spec = loads(text)
    assert spec.home_values() == [0.75e9]  # mid-range
    chain = spec.to_chain()
    assert chain.home[0] == 0.75e9 and chain.joints[0].post[0, 3] == 1e9
    assert np.all(np.isfinite(chain.fk([1e9])))


def test_absurdly_large_values_are_refused_with_their_unit_and_line():
    """Finite but absurd numbers (1e308 mm) made FK overflow to inf and NaN (and JSON output invalid)."""
    text = (
        'format = 1\n[units]\nlength = "m"\nangle = "rad"\n[base]\nxyz = [0, 0, 2e9]\n'
        '[[joint]]\nname = "slide"\ntype = "prismatic"\nmin = -1e308\nmax = 1\na = ' + str(10**300) + "\n"
        "alpha = 1e10\n"
    )
    with pytest.raises(ArmFileError) as info:
        loads(text, "big.toml")
    got = [str(p) for p in info.value.problems]
    assert got == [
        "big.toml:6: [base] xyz must lie within ±1e9 m, got [0, 0, 2000000000.0]",
        "big.toml:12: joint 'slide': a must lie within ±1e9 m (larger is absurd for an arm), got an integer of 301 "
        "digits",  # named by its size: 301 digits would flood the message
        "big.toml:13: joint 'slide': alpha must lie within ±1e9 rad (larger is absurd for an arm), got 10000000000.0",
        "big.toml:10: joint 'slide': min must lie within ±1e9 m (larger is absurd for an arm), got -1e+308",
    ]


def test_notes_table_is_free_form_and_kept():
    text = (
        GOOD
        + '\n[notes]\nowner = "cell 4"\nserial = 1234\n[notes.calibration]\ndate = 2026-11-30\noffsets = [0.1, -0.2]\n'
    )
    spec = loads(text, "arm.toml")
    assert spec.notes["owner"] == "cell 4"
    assert spec.notes["calibration"]["offsets"] == [0.1, -0.2]
    assert spec.notes["calibration"]["date"] == datetime.date(2026, 11, 30)


def test_byte_order_mark_is_accepted(tmp_path):
    path = tmp_path / "bom.toml"
    path.write_bytes(b"\xef\xbb\xbf" + GOOD.encode())
    assert load(path).name == "Test arm"


# -- one test per class of bad file ----------------------------------------------------


def test_missing_limits():
    p = only_problem(edit("min = -170\n", ""))
    assert p.message == "min is missing; give the joint's lower limit in deg"
    assert (p.file, p.line, p.joint) == ("arm.toml", 17, "turn")  # the [[joint]] header
    p = only_problem(edit("max = 400\n", ""))
    assert p.message == "max is missing; give the joint's upper limit in mm"
    assert (p.line, p.joint) == (26, "slide")
    assert str(p) == "arm.toml:26: joint 'slide': max is missing; give the joint's upper limit in mm"


def test_min_not_below_max():
    p = only_problem(edit("min = -170", "min = 170"))
    assert p.message == "min must be below max, got min = 170 and max = 170 deg"
    assert (p.line, p.joint) == (23, "turn")
    p = only_problem(edit("max = 400", "max = -5"))
    assert p.message == "min must be below max, got min = 0 and max = -5 mm"
    assert p.joint == "slide"


@pytest.mark.parametrize(
    "old, new, message, line",
    [
        ("a = 200", "a = nan", "a must be finite, got nan", 20),
        ("d = 300", "d = -inf", "d must be finite, got -inf", 22),
        ("max = 170", "max = inf", "max must be finite, got inf", 24),
        # beyond any float: too large, named by its size (printing 401 digits would flood the message)
        ("a = 200", "a = 1" + "0" * 400, "a must lie within ±1e9 mm (larger is absurd for an arm), got an integer "
         "of 401 digits", 20),
    ],
)
def test_nan_and_infinite_joint_values(old, new, message, line):
    p = only_problem(edit(old, new))
    assert (p.message, p.line, p.joint) == (message, line, "turn")


def test_nan_and_infinite_base_and_tool():
    found = problems_of(edit("xyz = [0, 0, 50]", "xyz = [0, nan, 50]", edit("rpy = [0, 0, 90]", "rpy = [inf, 0, 0]")))
    assert [(p.message, p.line) for p in found] == [
        ("[base] rpy must be finite, got [inf, 0, 0]", 12),
        ("[tool] xyz must be finite, got [0, nan, 50]", 15),
    ]


def test_unknown_joint_type():
    p = only_problem(edit('type = "prismatic"', 'type = "telescopic"'))
    assert p.message == "type must be 'revolute' or 'prismatic', got 'telescopic'"
    assert (p.line, p.joint) == (28, "slide")
    p = only_problem(edit('type = "revolute"\n', ""))
    assert p.message == 'type is missing; give type = "revolute" or "prismatic"'
    assert (p.line, p.joint) == (17, "turn")


def test_unknown_units():
    found = problems_of(edit('length = "mm"', 'length = "km"', edit('angle = "deg"', 'angle = "grad"')))
    assert [(p.message, p.line) for p in found] == [
        ("[units] length must be one of mm, m, in, got 'km'", 7),
        ("[units] angle must be one of deg, rad, got 'grad'", 8),
    ]
    p = only_problem(edit('length = "mm"', "length = [1]"))
    assert p.message == "[units] length must be one of mm, m, in, got [1]"


@pytest.mark.parametrize(
    "old, new, message",
    [
        ("a = 200", 'a = "200"', "a must be a number, got '200'"),
        ("alpha = -90", "alpha = true", "alpha must be a number, got True"),
        ("d = 300", "d = [300]", "d must be a number, got [300]"),
        ("min = -170", "min = 2026-01-01", "min must be a number, got datetime.date(2026, 1, 1)"),
        ("max = 170", "max = {value = 170}", "max must be a number, got {'value': 170}"),
    ],
)
def test_non_numeric_values(old, new, message):
    p = only_problem(edit(old, new))
    assert (p.message, p.joint) == (message, "turn")
    assert p.line == GOOD.splitlines().index(old) + 1


def test_non_numeric_base_tool_and_name():
    found = problems_of(edit("xyz = [0, 0, 100]", 'xyz = [0, "up", 100]', edit('name = "Test arm"', "name = 7")))
    assert [(p.message, p.line) for p in found] == [
        ("name must be a non-empty text, got 7", 3),
        ("[base] xyz must be a list of three numbers, got [0, 'up', 100]", 11),
    ]
    p = only_problem(edit("xyz = [0, 0, 50]", "xyz = [0, 50]"))
    assert (p.message, p.line) == ("[tool] xyz must be a list of three numbers, got [0, 50]", 15)


def test_empty_chain():
    text = GOOD[: GOOD.index("[[joint]]")]
    p = only_problem(text)
    assert p.message == "the arm has no joints; add at least one [[joint]] table"
    assert p.file == "arm.toml" and p.joint is None


def test_joint_written_as_a_single_table():
    found = problems_of('format = 1\n[joint]\nname = "a"\ntype = "revolute"\nmin = -1\nmax = 1\n')
    assert [(p.message, p.line) for p in found] == [
        ("joints must be [[joint]] tables", 2),
        ("the arm has no joints; add at least one [[joint]] table", None),
    ]


def test_more_than_32_joints():
    joint = '[[joint]]\ntype = "revolute"\nmin = -1\nmax = 1\n\n'
    assert loads("format = 1\n" + joint * 32).joints[31].name == "J32"
    p = only_problem("format = 1\n" + joint * 33)
    assert p.message == "the arm has 33 joints; at most 32 are supported"


def test_file_over_one_mib(tmp_path):
    path = tmp_path / "big.toml"
    path.write_text(GOOD + "# " + "x" * (1 << 20) + "\n")
    with pytest.raises(ArmFileError) as info:
        load(path)
    (p,) = info.value.problems
    assert re.fullmatch(r"file is \d+ bytes; an arm file may hold at most 1048576 \(1 MiB\)", p.message)
    assert p.file == str(path)
    with pytest.raises(ArmFileError, match="an arm file may hold at most 1048576"):
        loads_bytes(b"#" * ((1 << 20) + 1))


def test_device_that_never_ends_is_refused_before_it_is_read():
    # /dev/zero reports size 0 and never ends (Linux, where Poser runs): refused as a device, unopened.
    with pytest.raises(ArmFileError) as info:
        load("/dev/zero")
    assert str(info.value) == "/dev/zero: is a character device, not an arm file; arm files are regular files"


def test_malformed_toml_names_the_line():
    text = edit("a = 200", "a = = 200")
    p = only_problem(text)
    assert p.message.startswith("not valid TOML: ")
    assert p.line == 20
    assert str(p).startswith("arm.toml:20: not valid TOML")
    p = only_problem(edit('name = "Test arm"', 'name = "Test arm"\nname = "again"'))
    assert (p.message, p.line) == ('not valid TOML: "name" is given twice', 4)
    p = only_problem(edit("min = 0", "min = 0\nmin = 1"))
    assert (p.message, p.line) == ('not valid TOML: "min" is given twice', 31)
    p = only_problem('format = 1\n[[joint]\nname = "x"\n')
    assert p.message.startswith("not valid TOML") and p.line == 2


def test_unreadable_files(tmp_path, monkeypatch):
    missing = tmp_path / "missing.toml"
    with pytest.raises(ArmFileError) as info:
        load(missing)
    assert str(info.value) == f"{missing}: cannot read the file: No such file or directory"
    with pytest.raises(ArmFileError, match="is a folder, not an arm file"):
        load(tmp_path)
    # no read permission (simulated: the tests may run as root, who reads everything)
    path = tmp_path / "locked.toml"
    path.write_text(GOOD)
    real_open = os.open

    def refuse(file, *args, **kwargs):
        if str(file) == str(path):
            raise PermissionError(13, "Permission denied", str(file))
        return real_open(file, *args, **kwargs)

    monkeypatch.setattr("os.open", refuse)
    with pytest.raises(ArmFileError) as info:
        load(path)
    assert str(info.value) == f"{path}: cannot read the file: Permission denied"


def test_binary_files(tmp_path):
    path = tmp_path / "picture.toml"
    path.write_bytes(b"\x89PNG\r\n\x1a\n\x00\x00\x00\rIHDR")
    with pytest.raises(ArmFileError) as info:
        load(path)
    assert [str(p) for p in info.value.problems] == [f"{path}: this is a binary file, not a TOML arm file"]
    with pytest.raises(ArmFileError) as info:
        loads_bytes("format = 1\nname = 'Gr\u00fc\u00dfe'\n".encode("latin-1"), "latin.toml")
    assert str(info.value) == "latin.toml: not UTF-8 text (bad byte at offset 21); arm files are UTF-8 TOML"


def test_unknown_keys_including_a_typo():
    text = edit("alpha = -90", "alpah = -90")  # a typo must not pass silently
    text = edit('name = "Test arm"', 'name = "Test arm"\ncolour = "red"', text)
    text = edit('angle = "deg"', 'angle = "deg"\nlenght = "m"', text)
    text = edit("rpy = [0, 0, 90]", "rpy = [0, 0, 90]\nxzy = [1, 2, 3]", text)
    text += "\n[extras]\nfoo = 1\n"
    found = problems_of(text)
    msgs = [(p.message, p.line, p.joint) for p in found]
    assert msgs == [
        (
            "unknown key 'colour' at top level; expected one of format, name, convention, units, base, tool, "
            "joint, notes (put your own data under [notes])",
            4,
            None,
        ),
        (
            "unknown key 'extras' at top level; expected one of format, name, convention, units, base, tool, "
            "joint, notes (put your own data under [notes])",
            37,
            None,
        ),
        ("unknown key 'lenght' in [units]; expected length or angle", 10, None),
        ("unknown key 'xzy' in [base]; expected xyz or rpy", 15, None),
        ("unknown key 'alpah'; a joint takes name, type, a, alpha, d, theta, min, max, home", 24, "turn"),
    ]


def test_duplicate_joint_names():
    p = only_problem(edit('name = "slide"', 'name = "turn"'))
    assert p.message == "name is used twice (also joint 1); joint names must be unique"
    assert (p.line, p.joint) == (27, "turn")


def test_joint_names_must_be_text():
    found = problems_of(edit('name = "turn"', "name = 5", edit('name = "slide"', 'name = ""')))
    assert [(p.message, p.joint, p.line) for p in found] == [
        ("name must be a non-empty text, got 5", "#1", 18),
        ("name must be a non-empty text, got ''", "#2", 27),
    ]


def test_notes_must_be_a_table():
    p = only_problem(edit("format = 1", 'format = 1\nnotes = "see the binder"'))
    assert (p.message, p.line) == ("notes must be a table ([notes]), got str", 3)


def test_home_outside_limits():
    p = only_problem(edit("home = 100", "home = 500"))
    assert p.message == "home must lie within [0, 400] mm, got 500"
    assert (p.line, p.joint) == (32, "slide")


def test_format_and_convention_are_checked():
    p = only_problem(edit("format = 1", "format = 2"))
    assert (p.message, p.line) == ("format must be the integer 1, got 2; this Poser reads arm-file format 1", 2)
    p = only_problem(edit("format = 1\n", ""))
    assert p.message == "'format = 1' is missing at the top of the file"
    p = only_problem(edit('convention = "standard"', 'convention = "proximal"'))
    assert (p.message, p.line) == ("convention must be 'standard' or 'modified', got 'proximal'", 4)
    p = only_problem(edit("[tool]\nxyz = [0, 0, 50]\n", "", edit("format = 1", 'format = 1\ntool = "gripper"')))
    assert p.message == "[tool] must be a table with xyz and rpy, got 'gripper'"


def test_every_problem_is_reported_at_once():
    text = GOOD
    text = edit('length = "mm"', 'length = "furlong"', text)
    text = edit("a = 200", "a = nan", text)
    text = edit("max = 170", "max = -180", text)
    text = edit('type = "prismatic"', 'type = "linear"', text)
    text = edit("home = 100", 'home = "top"', text)
    text = edit("theta = 90", "theta = 90\ncolor = 1", text)
    found = problems_of(text, "cell/robot.toml")
    assert [str(p) for p in found] == [
        "cell/robot.toml:7: [units] length must be one of mm, m, in, got 'furlong'",
        "cell/robot.toml:30: joint 'slide': unknown key 'color'; a joint takes name, type, a, alpha, d, theta, min, "
        "max, home",
        "cell/robot.toml:20: joint 'turn': a must be finite, got nan",
        "cell/robot.toml:23: joint 'turn': min must be below max, got min = -170 and max = -180 deg",
        "cell/robot.toml:28: joint 'slide': type must be 'revolute' or 'prismatic', got 'linear'",
        "cell/robot.toml:33: joint 'slide': home must be a number, got 'top'",
    ]
    assert all(p.file == "cell/robot.toml" for p in found)


def test_load_reports_the_path(tmp_path):
    path = tmp_path / "bad.toml"
    path.write_text(edit("max = 400", "max = nan"))
    with pytest.raises(ArmFileError) as info:
        load(path)
    assert str(info.value) == f"{path}:31: joint 'slide': max must be finite, got nan"


def test_to_chain_and_dumps_refuse_an_invalid_spec():
    spec = loads(GOOD)
    spec.joints[0].max = -500
    with pytest.raises(ArmFileError, match="min must be below max"):
        spec.to_chain()
    with pytest.raises(ArmFileError, match="min must be below max"):
        dumps(spec)
    assert validate(spec)[0].joint == "turn"


# -- saving -----------------------------------------------------------------------


@pytest.mark.parametrize("path", DEMO_ARMS, ids=[p.stem for p in DEMO_ARMS])
def test_round_trip_every_demo_arm(path, tmp_path):
    spec = load(path)
    out = tmp_path / path.name
    save(spec, out)
    again = load(out)
    assert again == spec
    assert again.to_chain() == spec.to_chain()
    # an unchanged arm is written back byte for byte, comments and layout included
    assert out.read_text() == path.read_text()
    # and a second save changes nothing
    save(again, out)
    assert out.read_text() == path.read_text()


def test_round_trip_of_an_arm_built_in_code(tmp_path):
    spec = ArmSpec(
        name="Built",
        joints=[
            JointSpec("j1", "revolute", a=0.25, alpha=math.pi / 2, d=0.1, min=-3.0, max=3.0),
            JointSpec("j2", "prismatic", theta=0.3, min=0.0, max=0.75, home=0.125),
        ],
        convention="modified",
        units=Units("m", "rad"),
        base_xyz=(0.0, 0.0, 1.5),
        tool_rpy=(0.1, 0.2, 0.3),
        notes={"by": "test"},
    )
    path = tmp_path / "built.toml"
    save(spec, path)
    again = load(path)
    assert again == spec
    assert again.joints[0].alpha == math.pi / 2  # floats are written with full precision
    assert again.to_chain() == spec.to_chain()


def test_save_keeps_comments_after_an_edit(tmp_path):
    src = DEMO_DIR / "heron6.toml"
    path = tmp_path / "heron.toml"
    path.write_text(src.read_text())
    spec = load(path)
    spec.name = "Heron 6 (cell 2)"
    spec.joints[1].max = 135.5
    spec.joints[2].home = 10
    spec.tool_xyz = (0, -40, 300.25)
    spec.notes = {"maker": "Poser demo (invented)", "payload_kg": 6}
    save(spec, path)
    text = path.read_text()
    for line in src.read_text().splitlines():
        if "#" in line:
            comment = line[line.index("#") :]
            assert comment in text, f"comment lost: {comment}"
    again = load(path)
    assert again == spec
    assert again.name == "Heron 6 (cell 2)"
    assert again.joints[1].max == 135.5 and again.joints[2].home == 10
    assert again.tool_xyz == (0, -40, 300.25)
    assert again.notes["payload_kg"] == 6
    # only the edited lines changed (plus the one new home line)
    old_lines, new_lines = src.read_text().splitlines(), text.splitlines()
    assert len(new_lines) == len(old_lines) + 1
    changed = [n for o, n in zip(old_lines, [x for x in new_lines if not x.startswith("home = 10")]) if o != n]
    assert changed == ['name = "Heron 6 (cell 2)"', "xyz = [0, -40, 300.25]", "max = 135.5", "payload_kg = 6"]


def test_save_after_adding_and_removing_joints_does_not_grow_the_file(tmp_path):
    path = tmp_path / "quill.toml"
    path.write_text((DEMO_DIR / "quill4.toml").read_text())
    spec = load(path)
    spec.joints.insert(1, JointSpec("extra", "revolute", a=5, min=-1, max=1))
    save(spec, path)
    first = path.read_text()
    assert "# height of the column top above the table" in first
    assert [j.name for j in load(path).joints] == ["inner swing", "extra", "outer swing", "quill", "gripper turn"]
    for _ in range(3):
        save(load(path), path)
    assert path.read_text() == first
    spec = load(path)
    del spec.joints[1]
    save(spec, path)
    assert path.read_text() == (DEMO_DIR / "quill4.toml").read_text()


def test_copy_is_independent_but_saves_with_the_comments(tmp_path):
    path = tmp_path / "boom.toml"
    path.write_text((DEMO_DIR / "boom3.toml").read_text())
    path.chmod(0o640)
    spec = load(path)
    other = spec.copy()
    other.joints[2].max = 1.25
    other.notes = {"site": "tank 2"}
    assert spec.joints[2].max == 0.9 and spec.notes == {}
    save(other, path)
    text = path.read_text()
    assert "# boom length when fully retracted" in text and "# camera 0.05 m past the boom end" in text
    assert load(path) == other
    assert path.stat().st_mode & 0o777 == 0o640  # the file's permissions are kept


@pytest.mark.parametrize("failing", ["os.replace", "os.fsync"])
def test_save_is_atomic(failing, tmp_path, monkeypatch):
    path = tmp_path / "arm.toml"
    path.write_text(GOOD)
    spec = load(path)
    spec.joints[0].max = 160

    def boom(*args, **kwargs):
        raise OSError(28, "No space left on device")

    monkeypatch.setattr(failing, boom)
    with pytest.raises(armfile.SaveError) as info:
        save(spec, path)
    assert str(info.value) == f"{path}: cannot write the file: No space left on device; the file on disk is unchanged"
    assert path.read_text() == GOOD  # the old file is untouched
    assert sorted(p.name for p in tmp_path.iterdir()) == ["arm.toml"]  # no temporary file left behind


def test_save_writes_through_a_temporary_file_and_rename(tmp_path, monkeypatch):
    path = tmp_path / "arm.toml"
    seen = []
    real_replace = os.replace

    def spy(src, dst):
        seen.append((Path(src).parent, Path(src).name, Path(dst)))
        assert Path(src).read_text() == dumps(loads(GOOD))
        real_replace(src, dst)

    monkeypatch.setattr("os.replace", spy)
    save(loads(GOOD), path)
    ((folder, tmp_name, dst),) = seen
    assert folder == tmp_path and dst == path and tmp_name != "arm.toml"
    assert load(path) == loads(GOOD)


def test_save_refuses_an_invalid_arm_and_writes_nothing(tmp_path):
    spec = loads(GOOD)
    spec.joints[1].type = "hinge"
    path = tmp_path / "arm.toml"
    with pytest.raises(ArmFileError, match="type must be 'revolute' or 'prismatic', got 'hinge'"):
        save(spec, path)
    assert not path.exists() and list(tmp_path.iterdir()) == []


# -- arbitrary input never escapes as anything but ArmFileError -----------------------------


def _load_or_error(fn, data):
    try:
        spec = fn(data)
    except ArmFileError as exc:
        assert exc.problems and all(isinstance(p, Problem) and p.message for p in exc.problems)
        # one problem, one line (poser check prints them one per line); lines are 1-based
        assert all("\n" not in str(p) for p in exc.problems)
        assert all(p.line is None or p.line >= 1 for p in exc.problems)
        return None
    assert isinstance(spec, ArmSpec)
    return spec


@settings(max_examples=400, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(st.binary(max_size=2000))
def test_arbitrary_bytes_never_raise_anything_else(data):
    _load_or_error(loads_bytes, data)


@settings(max_examples=400, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(st.text(max_size=2000))
def test_arbitrary_text_never_raises_anything_else(text):
    _load_or_error(loads, text)


@settings(
    max_examples=60, deadline=None, suppress_health_check=[HealthCheck.too_slow, HealthCheck.function_scoped_fixture]
)
@given(data=st.binary(max_size=500) | st.text(max_size=500).map(str.encode))
def test_arbitrary_files_never_raise_anything_else(data, tmp_path):
    path = tmp_path / "fuzz.toml"
    path.write_bytes(data)
    _load_or_error(load, path)


# TOML documents over the real keys with values of every TOML type (and some near misses).
_scalars = st.one_of(
    st.integers(min_value=-(10**400), max_value=10**400),
    st.floats(allow_nan=True, allow_infinity=True),
    st.booleans(),
    st.sampled_from(["mm", "m", "in", "deg", "rad", "km", "revolute", "prismatic", "standard", "modified", "", "x"]),
    st.text(max_size=6),
    st.dates(),
    st.datetimes(timezones=st.none() | st.just(datetime.UTC)),
)
_values = st.recursive(
    _scalars,
    lambda inner: (
        st.lists(inner, max_size=4) | st.dictionaries(st.sampled_from(["a", "xyz", "min", "k"]), inner, max_size=3)
    ),
    max_leaves=8,
)
_joint_keys = st.sampled_from(list(armfile.JOINT_KEYS) + ["alpah", "offset"])
_joint = st.dictionaries(_joint_keys, _values, max_size=10)
_good_joint = st.fixed_dictionaries(
    {"type": st.sampled_from(["revolute", "prismatic"]), "min": st.floats(-10, 0), "max": st.floats(0.5, 10)},
    optional={k: _values for k in ("name", "a", "alpha", "d", "theta", "home")},
)
_place = st.dictionaries(st.sampled_from(["xyz", "rpy", "xzy"]), _values | st.lists(_scalars, min_size=3, max_size=3))
_document = st.fixed_dictionaries(
    {},
    optional={
        "format": st.sampled_from([1, 2, 1.0, "1"]) | _values,
        "name": _values,
        "convention": _values,
        "units": st.dictionaries(st.sampled_from(["length", "angle", "lenght"]), _values) | _values,
        "base": _place | _values,
        "tool": _place,
        "joint": st.lists(_joint | _good_joint, max_size=5) | _values,
        "notes": _values,
        "extra": _values,
    },
)


@settings(max_examples=500, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(_document)
def test_arbitrary_toml_documents_never_raise_anything_else(doc):
    try:
        text = tomlkit.dumps(doc)
    except Exception:  # a value tomlkit itself cannot write (not our concern)
        return
    spec = _load_or_error(loads, text)
    if spec is not None:
        # a file that loads is a usable arm, and saving it gives the same arm back
        spec.to_chain()
        assert loads(dumps(spec)) == spec


# -- the documentation ------------------------------------------------------------------


def test_documented_example_is_a_valid_arm():
    doc = (Path(__file__).resolve().parents[1] / "docs" / "arm-file.md").read_text()
    blocks = re.findall(r"```toml\n(.*?)```", doc, re.S)
    assert blocks, "docs/arm-file.md has no annotated toml example"
    for block in blocks:
        spec = loads(block, "example4.toml")
        assert spec.name == "Example 4"
        assert [j.type for j in spec.joints] == ["revolute", "revolute", "prismatic", "revolute"]
        assert spec.notes["owner"] == "line 3"
        chain = spec.to_chain()
        assert np.all(np.isfinite(chain.fk(chain.q_from_user([0, 45, 100, 0]))))
        assert loads(dumps(spec)) == spec
    # every key of the format is documented
    for key in armfile.TOP_KEYS + armfile.JOINT_KEYS + armfile.UNIT_KEYS + armfile.PLACE_KEYS:
        assert f"`{key}`" in doc or f"`[{key}]`" in doc or f"`[[{key}]]`" in doc, key


def test_save_into_missing_folder_is_an_arm_file_error(tmp_path):
    """A save that cannot even start reports through the loader's own error type."""
    from poser.armfile import load, save

    spec = load(Path(__file__).resolve().parent.parent / "demo_arms" / "planar3.toml")
    target = tmp_path / "no-such-folder" / "arm.toml"
    with pytest.raises(armfile.FolderNotWritableError) as info:
        save(spec, target)
    assert str(info.value) == (f"{target}: cannot save in the folder {target.parent}: No such file or directory; "
                               "save it elsewhere")
    assert not target.exists()


def test_new_file_gets_usual_permissions(tmp_path):
    """A brand-new arm file is readable by others as any file the user makes (umask applies)."""
    import os

    from poser.armfile import load, save

    spec = load(Path(__file__).resolve().parent.parent / "demo_arms" / "planar3.toml")
    target = tmp_path / "new.toml"
    old = os.umask(0o022)
    try:
        save(spec, target)
    finally:
        os.umask(old)
    assert target.stat().st_mode & 0o777 == 0o644


def test_a_joint_added_before_notes_keeps_a_blank_line_before_them(tmp_path):
    path = tmp_path / "heron6.toml"
    path.write_text((DEMO_DIR / "heron6.toml").read_text())
    spec = load(path)
    spec.joints.append(JointSpec(name="J7 extra", type="revolute", min=-90, max=90))
    save(spec, path)
    text = path.read_text()
    assert 'max = 90\n\n[notes]\n' in text  # not "max = 90\n[notes]"
    assert [j.name for j in load(path).joints][-1] == "J7 extra"
    save(spec, path)  # and a second save changes nothing
    assert path.read_text() == text
