"""An independent check of the arm-file rules against inputs chosen to break them: integers too long to read,
absurd values that would flood a message, names of characters that show nothing, look-alike names.

The list of default-ignorable characters is Unicode's Default_Ignorable_Code_Point property
(Unicode Standard, DerivedCoreProperties.txt; from memory); the Hangul fillers and the braille blank show as
blank in common fonts (common practice of name-spoofing checks).
"""

from __future__ import annotations

import subprocess
import sys
from pathlib import Path

import pytest

from poser.armfile import ArmFileError, loads
from poser.text import brief, name_key, printable, visible

JOINT = '[[joint]]\nname = "J1"\ntype = "revolute"\nmin = -90\nmax = 90\n'


def problems(text):
    with pytest.raises(ArmFileError) as info:
        loads(text, "arm.toml")
    return info.value.problems


@pytest.mark.parametrize("where", ["[notes]\nserial = {n}\n", "[base]\nxyz = [0, 0, {n}]\n"])
def test_an_integer_too_long_for_python_is_a_problem_with_its_line_not_a_crash(where):
    # tomllib raises ValueError (not TOMLDecodeError) for integers beyond sys.get_int_max_str_digits (4300)
    text = "format = 1\n" + where.format(n="7" * 5000) + JOINT
    (p,) = problems(text)
    assert p.line == 3
    assert p.message == ("an integer of 5000 digits is far beyond any value an arm file holds (numbers lie within "
                         "±1e9)")


def test_an_integer_too_long_for_python_fails_poser_check_cleanly(tmp_path):
    arm = tmp_path / "long.toml"
    arm.write_text("format = 1\n[notes]\nx = 1" + "_2" * 4400 + "\n" + JOINT)
    res = subprocess.run([sys.executable, "-m", "poser", "check", str(arm)], capture_output=True, text=True,
                         timeout=60)
    assert res.returncode == 2
    assert res.stderr.strip() == (f"{arm}:3: an integer of 4401 digits is far beyond any value an arm file holds "
                                  "(numbers lie within ±1e9)")


def test_absurd_values_are_named_by_their_size_not_printed_whole():
    text = ("format = 1\n" + JOINT.replace('"revolute"', '"' + "r" * 5000 + '"')
            + JOINT.replace('"J1"', '"J2"').replace("min = -90", "min = -" + "1" * 4000))
    found = problems(text)
    messages = [p.message for p in found]
    assert all(len(m) < 300 for m in messages), [len(m) for m in messages]
    assert "type must be 'revolute' or 'prismatic', got 'rrrr" in messages[0]
    assert messages[0].endswith("… (5002 characters)")
    assert messages[1] == ("min must lie within ±1e9 deg (larger is absurd for an arm), got a negative integer "
                           "of 4000 digits")


def test_brief():
    assert brief("J1") == "'J1'"
    assert brief(10**300) == "an integer of 301 digits"
    assert brief([1, 2.5, -(10**500)]) == "[1, 2.5, a negative integer of 501 digits]"
    assert brief("\u3164") == "'\\u3164'"  # repr keeps it; it shows as blank
    long = brief("x" * 1000)
    assert len(long) < 110 and long.endswith("… (1002 characters)")


BLANK = ["\u3164", "\u115f", "\u1160", "\uffa0", "\u2800", "\u034f", "\ufe0f", "\U000e0101", "\u17b4", "\u0301",
         "\u0301\u0302", " \u0301", "\u3164\u200b \u2800"]


@pytest.mark.parametrize("name", BLANK)
def test_a_name_of_characters_that_show_nothing_is_refused(name):
    assert visible(name) == ""
    esc = name.encode("unicode_escape").decode()
    for text in (f'format = 1\nname = "{esc}"\n' + JOINT, "format = 1\n" + JOINT.replace('"J1"', f'"{esc}"')):
        (p,) = problems(text)
        assert p.message.startswith("name must hold a visible character"), p.message


@pytest.mark.parametrize("hidden", ["\u3164", "\ufe0f", "\u034f", "\u2800", "\U000e0041"])
def test_a_joint_name_differing_only_by_a_blank_character_is_a_look_alike(hidden):
    assert name_key("J1" + hidden) == name_key("J1")
    esc = ("J1" + hidden).encode("unicode_escape").decode()
    text = "format = 1\n" + JOINT + JOINT.replace('"J1"', f'"{esc}"')
    (p,) = problems(text)
    assert "differ only by spaces, invisible characters or Unicode form" in p.message


def test_names_with_marks_on_letters_stay_names():
    assert visible("e\u0301") == "e\u0301" and visible("\u00e9") == "\u00e9"
    assert printable("Gelenk \u00e4") == "Gelenk \u00e4"
    assert printable("J\u3164") == "J\\u3164" and printable("\u2800") == "\\u2800"


def test_look_alike_names_that_print_the_same_show_their_code_points():
    text = "format = 1\n" + JOINT.replace('"J1"', '"\\u00e9"') + JOINT.replace('"J1"', '"e\\u0301"')
    (p,) = problems(text)
    assert p.message == ("name '\u0065\u0301' and joint 1's name '\u00e9' (written 'e\\u0301' and '\\xe9') differ "
                         "only by spaces, invisible characters or Unicode form; joint names must be told apart at a "
                         "glance")


def test_control_and_blank_characters_in_names_are_escaped_by_every_command(tmp_path):
    root = Path(__file__).resolve().parents[2]
    text = (root / "demo_arms" / "heron6.toml").read_text(encoding="utf-8")
    text = text.replace('name = "Heron 6"', 'name = "Heron\\u001b[2J\\u3164"').replace(
        'name = "J6 flange"', 'name = "J6\\t\\u0007\\u001b[31m\\u200b\\u3164\\u0085"')
    arm = tmp_path / "ctl.toml"
    arm.write_text(text, encoding="utf-8")
    shown = "J6\\t\\x07\\x1b[31m\\u200b\\u3164\\x85"
    for args in (("check", str(arm)), ("fk", str(arm), "--joints", "0,0,90,0,0,400", "--frames"),
                 ("ik", str(arm), "--xyz", "900,-300,900", "--rpy", "180,0,0"),
                 ("ik", str(arm), "--xyz", "9000,0,0")):
        res = subprocess.run([sys.executable, "-m", "poser", *args], capture_output=True, text=True, timeout=120)
        both = res.stdout + res.stderr
        assert res.returncode in (0, 1), (args, res.stderr)
        assert not any(c in both for c in "\x1b\x07\x85\u200b\u3164"), args  # nothing raw reaches the terminal
        if args[0] != "check":
            assert shown in both, args
        assert "Heron\\x1b[2J\\u3164" in both, args
