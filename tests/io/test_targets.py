"""Target lists (:mod:`poser.io.targets`): every malformed row reported by line and skipped, units, header."""

from __future__ import annotations

import numpy as np
import pytest

from poser.core.transforms import rpy_to_matrix
from poser.core.units import Units
from poser.io.targets import TargetFileError, parse_targets, read_targets

MM_DEG = Units("mm", "deg")


def parse(text, units=MM_DEG):
    return parse_targets(text, units, "job.csv")


def test_good_rows_with_comments_blank_lines_and_optional_columns():
    tf = parse("# a job\n\nName , X, y, z, roll, pitch, yaw, free_spin\n"
               "a,1,2,3,180,0,90,yes\n# between\nb,4,5,6,,,,\nc,7,8,9,0,0,0,\n")
    assert [t.name for t in tf.targets] == ["a", "b", "c"]
    assert [t.line for t in tf.targets] == [4, 6, 7]
    a, b, c = tf.targets
    np.testing.assert_allclose(a.xyz, [1, 2, 3])
    np.testing.assert_allclose(a.R, rpy_to_matrix(np.radians([180, 0, 90])))
    assert a.free_spin and not c.free_spin
    assert b.R is None  # an empty orientation: position only
    assert tf.problems == () and tf.skipped == 0 and tf.has_orientation


def test_orientation_is_read_in_the_arms_angle_unit():
    tf = parse("name,x,y,z,roll,pitch,yaw\na,1,2,3,0,0,1.5\n", Units("m", "rad"))
    np.testing.assert_allclose(tf.targets[0].R, rpy_to_matrix([0, 0, 1.5]))


def test_every_malformed_row_is_reported_by_line_and_skipped():
    text = ("name,x,y,z,roll,pitch,yaw,free_spin\n"
            "ok1,1,2,3,0,0,0,no\n"
            "short,1,2\n"                      # 3: too few fields
            "word,abc,1,2,0,0,0,no\n"          # 4: not a number
            "half,1,2,3,0,0,,no\n"             # 5: part of the orientation
            "spin?,1,2,3,0,0,0,maybe\n"        # 6: free_spin not yes/no
            ",1,2,3,0,0,0,no\n"                # 7: no name
            "inf,1,inf,3,0,0,0,no\n"           # 8: not finite
            "big,1,2,3e13,0,0,0,no\n"          # 9: beyond 1e12
            "nospin,1,2,3,,,,yes\n"            # 10: free spin without orientation
            "long,1,2,3,0,0,0,no,extra\n"      # 11: too many fields
            "ok2,4,5,6,0,0,0,yes\n")
    tf = parse(text)
    assert [t.name for t in tf.targets] == ["ok1", "ok2"]
    assert tf.skipped == 9
    lines = [p.line for p in tf.problems]
    assert lines == [3, 4, 5, 6, 7, 8, 9, 10, 11]
    msgs = [p.message for p in tf.problems]
    assert all(m.startswith("row skipped: ") for m in msgs)
    assert "expected 8 fields" in msgs[0] and "got 3" in msgs[0]
    assert "x must be a number, got 'abc'" in msgs[1]
    assert "roll, pitch and yaw must all be given or all left empty" in msgs[2]
    assert "free_spin must be yes or no, got 'maybe'" in msgs[3]
    assert "name must not be empty" in msgs[4]
    assert "y must be a number, got 'inf'" in msgs[5]
    assert "within ±1e12" in msgs[6]
    assert "free_spin needs the tool orientation" in msgs[7]
    assert "got 9" in msgs[8]
    assert str(tf.problems[0]).startswith("job.csv:3: row skipped")


def test_warnings_for_ignored_columns_and_repeated_names_keep_the_rows():
    tf = parse("name,x,y,z,note\na,1,2,3,first\na,4,5,6,second\n")
    assert len(tf.targets) == 2 and tf.skipped == 0
    assert [p.line for p in tf.problems] == [1, 3]
    assert "columns ignored" in tf.problems[0].message and "note" in tf.problems[0].message
    assert "also on line 2" in tf.problems[1].message


@pytest.mark.parametrize("text,match", [
    ("", "holds no header"),
    ("# only a comment\n", "holds no header"),
    ("name,x,y\n", "missing z"),
    ("name,x,y,z,roll\n", "all of roll, pitch, yaw or none"),
    ("name,x,y,z,x\n", "more than once: x"),
])
def test_header_problems_stop_the_reading(text, match):
    with pytest.raises(TargetFileError, match=match):
        parse(text)


def test_files_that_cannot_be_read(tmp_path):
    with pytest.raises(TargetFileError, match="cannot read the file"):
        read_targets(tmp_path / "missing.csv", MM_DEG)
    with pytest.raises(TargetFileError, match="is a folder"):
        read_targets(tmp_path, MM_DEG)
    bad = tmp_path / "latin1.csv"
    bad.write_bytes("name,x,y,z\nsch\xe4del,1,2,3\n".encode("latin-1"))
    with pytest.raises(TargetFileError, match="is not UTF-8") as err:
        read_targets(bad, MM_DEG)
    assert err.value.problems[0].line == 2
    bom = tmp_path / "bom.csv"
    bom.write_bytes(b"\xef\xbb\xbfname,x,y,z\na,1,2,3\n")
    assert read_targets(bom, MM_DEG).targets[0].name == "a"
