"""Reading arm files safely (poser.io.reading, poser.io.stamp): only regular files, bounded work inside 1 MiB,
strict TOML 1.0, format as an integer, names that can be seen and told apart, bounded joint ranges.
"""

from __future__ import annotations

import math
import os
import socket
import string
import threading
from pathlib import Path

import pytest

from poser import armfile
from poser.armfile import ArmFileError, load, loads
from poser.text import name_key, printable

ROOT = Path(__file__).resolve().parents[2]
HERON = ROOT / "demo_arms" / "heron6.toml"

ARM = """\
format = 1
name = "Small"

[[joint]]
name = "turn"
type = "revolute"
min = -170
max = 170

[[joint]]
name = "slide"
type = "prismatic"
min = 0
max = 400
"""


def problems(text, file="arm.toml"):
    with pytest.raises(ArmFileError) as info:
        loads(text, file)
    return info.value.problems


def one(text, file="arm.toml"):
    found = problems(text, file)
    assert len(found) == 1, [str(p) for p in found]
    return found[0]


def load_in_thread(path):
    """load(path) on a thread, so that a regression that blocks fails the test instead of hanging the suite."""
    out = {}

    def run():
        try:
            out["spec"] = load(path)
        except ArmFileError as exc:
            out["error"] = exc

    t = threading.Thread(target=run, daemon=True)
    t.start()
    t.join(30)
    assert not t.is_alive(), f"load({path}) blocked"
    return out


# -- only regular files are opened ------------------------------------------------------------------


def test_a_named_pipe_is_refused_before_it_is_opened(tmp_path):
    fifo = tmp_path / "arm.toml"
    os.mkfifo(fifo)  # no writer: opening it for reading would block for ever
    out = load_in_thread(fifo)
    assert str(out["error"]) == f"{fifo}: is a named pipe (FIFO), not an arm file; arm files are regular files"
    link = tmp_path / "link.toml"
    link.symlink_to(fifo)
    assert "is a named pipe (FIFO)" in str(load_in_thread(link)["error"])


def test_a_socket_and_a_device_are_refused(tmp_path):
    path = tmp_path / "s.toml"
    with socket.socket(socket.AF_UNIX, socket.SOCK_STREAM) as s:
        s.bind(str(path))
        err = load_in_thread(path)["error"]
        assert str(err) == f"{path}: is a socket, not an arm file; arm files are regular files"
    assert str(load_in_thread("/dev/null")["error"]) == (
        "/dev/null: is a character device, not an arm file; arm files are regular files")


def test_a_name_swapped_for_a_pipe_after_the_check_does_not_block(tmp_path, monkeypatch):
    """The check and the open are two steps: the open itself must not wait on a pipe either."""
    fifo = tmp_path / "late.toml"
    os.mkfifo(fifo)
    real_stat = os.stat
    regular = real_stat(HERON)
    monkeypatch.setattr("os.stat", lambda p, *a, **k: regular if os.fspath(p) == str(fifo) else real_stat(p, *a, **k))
    out = load_in_thread(fifo)
    assert "is a named pipe (FIFO)" in str(out["error"])


# -- bounded work inside 1 MiB -----------------------------------------------------------------------


def _names(count):
    alphabet = string.ascii_letters + string.digits
    for i in range(count):
        s = ""
        while True:
            s += alphabet[i % 62]
            i //= 62
            if not i:
                break
        yield s


def test_a_notes_table_with_a_hundred_thousand_keys_is_refused_with_a_clear_message(tmp_path):
    path = tmp_path / "notes.toml"
    text = ARM + "\n[notes]\n" + "".join(f"{k}=1\n" for k in _names(170_000))
    assert len(text.encode()) <= armfile.MAX_BYTES
    path.write_text(text)
    (p,) = load_in_thread(path)["error"].problems
    assert p.message.startswith("the file holds 170")
    assert p.message.endswith(f"an arm file may hold at most {armfile.MAX_ITEMS} — it would take too long to read")


def test_many_notes_within_the_bound_load_and_save_unchanged():
    text = ARM + "\n[notes]\n" + "".join(f"{k} = {i}  # note {i}\n" for i, k in enumerate(_names(5000)))
    spec = loads(text)
    assert len(spec.notes) == 5000
    assert armfile.dumps(spec) == text


def test_absurd_nesting_and_dotted_keys_are_refused():
    p = one(ARM + "\n[notes]\ndeep = " + "[" * 5000 + "]" * 5000 + "\n")
    assert p.message == "values are nested more than 32 levels deep; an arm file needs no such nesting"
    p = one(ARM + "\n[notes]\ndeep = " + "[" * 40 + "]" * 40 + "\n")
    assert p.message.startswith("values are nested more than 32 levels")
    assert loads(ARM + "\n[notes]\nok = " + "[" * 30 + "]" * 30 + "\n").notes["ok"]
    p = one(ARM + "\n[notes]\n" + ".".join(["a"] * 200_000) + " = 1\n")
    assert (p.message, p.line) == ("a dotted key has more than 32 parts; an arm file needs no such key", 17)
    assert loads(ARM + "\n[notes]\n" + ".".join(["a"] * 20) + " = 1\n")


# -- strict TOML 1.0 ------------------------------------------------------------------------------------


@pytest.mark.parametrize(
    "line, why",
    [
        ("x = { a = 1,\n b = 2 }", "a newline inside an inline table (TOML 1.1)"),
        ("x = { a = 1, }", "a trailing comma in an inline table (TOML 1.1)"),
        ('x = "\\e[0m"', "the \\e escape (TOML 1.1)"),
        ('x = "\\x41"', "the \\x escape (TOML 1.1)"),
        ("x = 07:32", "a time without seconds (TOML 1.1)"),
        ("x = 1979-05-27T07:32Z", "a date-time without seconds (TOML 1.1)"),
    ],
)
def test_toml_1_1_syntax_is_refused(line, why):
    p = one(ARM + "\n[notes]\n" + line + "\n")
    assert p.message.startswith("not valid TOML: "), why
    assert p.line == 17, why  # the line of the notes value
    assert "(column " in p.message


@pytest.mark.parametrize("value", ["1.0", "true", '"1"', "1e0", "[1]"])
def test_format_must_be_the_integer_1(value):
    p = one(ARM.replace("format = 1", f"format = {value}"))
    assert p.line == 1
    assert p.message.startswith("format must be the integer 1, got ")
    if value == "1.0":
        assert p.message == "format must be the integer 1, got 1.0 (an integer: write 1, not 1.0); this Poser reads " \
                            "arm-file format 1"
    assert loads(ARM.replace("format = 1", "format = +1")).name == "Small"  # +1 is the integer 1 in TOML


# -- names --------------------------------------------------------------------------------------------


@pytest.mark.parametrize("name", ["\u200b", " ", "\t", "\u2060\u200d", "\u00ad", " \u202e "])
def test_a_name_that_shows_nothing_is_refused(name):
    encoded = name.encode("unicode_escape").decode().replace("\\x", "\\u00")
    p = one(ARM.replace('name = "turn"', f'name = "{encoded}"'))
    assert p.message.startswith("name must hold a visible character (not only spaces or invisible characters), got ")
    assert (p.joint, p.line) == ("#1", 5)
    p = one(ARM.replace('name = "Small"', f'name = "{encoded}"'))
    assert p.message.startswith("name must hold a visible character") and (p.joint, p.line) == (None, 2)


@pytest.mark.parametrize(
    "first, second",
    [
        ("J1", "J 1"),  # spaces
        ("J1", "J1 "),
        ("J1", "J\u200b1"),  # a zero-width space
        ("\u00e9lbow", "e\u0301lbow"),  # composed and combining é (NFC)
        ("J2", "J\u00b2"),  # superscript two (NFKC)
        ("wrist", "\uff57rist"),  # a full-width w (NFKC)
    ],
)
def test_names_that_look_the_same_are_an_error_naming_both(first, second):
    esc = second.encode("unicode_escape").decode().replace("\\x", "\\u00")
    text = ARM.replace('name = "turn"', f'name = "{first}"').replace('name = "slide"', f'name = "{esc}"')
    p = one(text)
    # names that still look alike once printed also show their code points, so the reader sees the difference
    written = "" if second == "J\u200b1" else f" (written {ascii(second)} and {ascii(first)})"
    assert p.message == (
        f"name '{printable(second)}' and joint 1's name '{first}'{written} differ only by spaces, invisible "
        "characters or Unicode form; joint names must be told apart at a glance"
    )
    assert p.line == 11 and p.joint == second


def test_letter_case_tells_names_apart():
    spec = loads(ARM.replace('name = "slide"', 'name = "TURN"'))
    assert [j.name for j in spec.joints] == ["turn", "TURN"]
    assert name_key("J1") != name_key("j1")


def test_control_characters_in_names_are_printed_as_escapes(capsys, tmp_path):
    text = ARM.replace('name = "turn"', 'name = "tu\\u0007rn\\nx"').replace("max = 170", "max = -180")
    (p,) = problems(text)
    assert str(p) == "arm.toml:7: joint 'tu\\x07rn\\nx': min must be below max, got min = -170 and max = -180 deg"
    assert "\n" not in str(p) and "\x07" not in str(p)
    from poser.cli import main

    path = tmp_path / "bell.toml"
    path.write_text(ARM.replace('name = "Small"', 'name = "Bell\\u0007 \\u202eend"'))
    assert main(["check", str(path)]) == 0
    out = capsys.readouterr().out
    assert "'Bell\\x07 \\u202eend'" in out and "\x07" not in out and "\u202e" not in out


def test_printable():
    assert printable("J1 turret") == "J1 turret"
    assert printable("Ünïcödé 机械臂 ok") == "Ünïcödé 机械臂 ok"
    assert printable("a\tb\nc\rd\x07e\x1b[0m\x7f") == "a\\tb\\nc\\rd\\x07e\\x1b[0m\\x7f"
    assert printable("x\u200by\u202ez\u2028\x85") == "x\\u200by\\u202ez\\u2028\\x85"
    assert printable(7) == "7"


# -- bounded joint ranges -----------------------------------------------------------------------------


def test_revolute_limits_lie_within_a_hundred_turns():
    assert loads(ARM.replace("min = -170", "min = -36000").replace("max = 170", "max = 36000")).joints[0].max == 36000
    p = one(ARM.replace("max = 170", "max = 1e9"))
    assert str(p) == ("arm.toml:8: joint 'turn': max must lie within ±36000 deg (100 turns) for a revolute joint, "
                      "got 1000000000.0")
    p = one(ARM.replace("min = -170", "min = -36000.5"))
    assert (p.message, p.line, p.joint) == (
        "min must lie within ±36000 deg (100 turns) for a revolute joint, got -36000.5", 7, "turn")


def test_the_bound_is_given_in_the_arms_own_angle_unit():
    rad = ARM.replace('name = "Small"', 'name = "Small"\n[units]\nangle = "rad"').replace("min = -170", "min = -3")
    assert loads(rad.replace("max = 170", f"max = {200 * math.pi!r}")).joints[0].max == 200 * math.pi
    p = one(rad.replace("max = 170", "max = 700"))
    assert p.message == ("max must lie within ±628.3185307179587 rad (200π) (100 turns) for a revolute joint, "
                         "got 700")


def test_prismatic_limits_keep_the_magnitude_bound():
    assert loads(ARM.replace("max = 400", "max = 1e9")).joints[1].max == 1e9
    p = one(ARM.replace("max = 400", "max = 2e9"))
    assert p.message == "max must lie within ±1e9 mm (larger is absurd for an arm), got 2000000000.0"
