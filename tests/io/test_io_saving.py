"""Saving under real use (poser.io.writing, poser.io.stamp): exactly the arm given, files changed on disk,
symbolic and hard links, read-only files and folders.

The tests may run as root, who may write anything; Poser honours the permission bits all the same, so the
read-only cases below hold for root and for an ordinary user alike.
"""

from __future__ import annotations

import hashlib
import os
import stat
from pathlib import Path

import pytest

from poser import armfile
from poser.armfile import (
    ArmFileError,
    ChangedOnDiskError,
    DiskStamp,
    FolderNotWritableError,
    NotARegularFileError,
    ReadOnlyError,
    SaveError,
    changed_on_disk,
    dumps,
    load,
    save,
)

ROOT = Path(__file__).resolve().parents[2]
PLANAR = ROOT / "demo_arms" / "planar3.toml"


@pytest.fixture
def arm(tmp_path) -> Path:
    path = tmp_path / "planar3.toml"
    path.write_bytes(PLANAR.read_bytes())
    return path


def _other_program_writes(path: Path, text: str) -> None:
    path.write_text(text)
    st = path.stat()  # make sure the time moves even on a coarse clock
    os.utime(path, ns=(st.st_atime_ns, st.st_mtime_ns + 10_000_000))


# -- exactly what is given -------------------------------------------------------------------------


def test_save_writes_exactly_the_arm_it_is_given(arm):
    spec = load(arm)
    spec.joints[1].max = 140
    spec.joints[2].home = 15
    save(spec, arm)
    assert load(arm) == spec
    assert dumps(spec) == arm.read_text()


def test_an_invalid_arm_is_refused_and_the_file_left_alone(arm):
    spec = load(arm)
    spec.joints[0].min = 500
    spec.joints[1].name = ""
    with pytest.raises(ArmFileError) as info:
        save(spec, arm)
    assert not isinstance(info.value, SaveError)  # the arm is wrong, not the file
    assert [p.joint for p in info.value.problems] == ["shoulder", "#2"]
    assert arm.read_bytes() == PLANAR.read_bytes()


# -- changed on disk ---------------------------------------------------------------------------------


def test_load_records_a_disk_stamp(arm):
    spec = load(arm)
    raw = arm.read_bytes()
    st = arm.stat()
    assert spec.stamp == DiskStamp(str(arm), st.st_mtime_ns, len(raw), hashlib.sha256(raw).hexdigest(),
                                   st.st_ino, st.st_dev)
    assert spec.copy().stamp == spec.stamp  # a copy is of the same file
    assert armfile.loads(raw.decode()).stamp is None  # text has no file


def test_changed_on_disk_is_cheap_and_ignores_a_touch(arm, monkeypatch):
    stamp = load(arm).stamp
    assert not changed_on_disk(stamp)
    reads = []
    real = DiskStamp.read.__func__

    def counting(cls, path):
        reads.append(path)
        return real(cls, path)

    monkeypatch.setattr(DiskStamp, "read", classmethod(counting))
    assert not changed_on_disk(stamp) and reads == []  # unchanged: one stat, no read
    os.utime(arm, ns=(stamp.mtime_ns + 5_000_000_000, stamp.mtime_ns + 5_000_000_000))  # touched, same bytes
    assert not changed_on_disk(stamp) and len(reads) == 1  # the bytes were compared
    _other_program_writes(arm, arm.read_text().replace("a = 450", "a = 460"))  # same size, other bytes
    assert changed_on_disk(stamp)
    arm.unlink()
    assert changed_on_disk(stamp)


def test_save_refuses_to_replace_a_file_changed_since_it_was_loaded(arm):
    spec = load(arm)
    spec.joints[0].max = 150
    theirs = arm.read_text().replace("max = 150", "max = 149").replace("a = 350", "a = 351")
    _other_program_writes(arm, theirs)
    with pytest.raises(ChangedOnDiskError) as info:
        save(spec, arm)
    err = info.value
    assert arm.read_text() == theirs  # their version is still there
    assert err.expected == spec.stamp and err.found == DiskStamp.read(arm)
    assert err.path == str(arm)
    assert str(err) == (f"{arm}: was changed by another program since it was loaded ({spec.stamp.size} bytes then, "
                        f"{err.found.size} bytes now); saving would replace that version — reload it, or save with "
                        "overwrite")
    stamp = save(spec, arm, overwrite=True)  # told to overwrite
    assert load(arm) == spec and spec.stamp == stamp and not changed_on_disk(stamp)


def test_saving_again_after_a_save_checks_against_the_new_stamp(arm):
    spec = load(arm)
    first = spec.stamp
    spec.name = "Planar 3b"
    second = save(spec, arm)
    assert second != first and spec.stamp == second
    spec.joints[0].home = 5
    save(spec, arm)  # no complaint: the file is what the last save wrote
    assert load(arm) == spec


def test_expect_none_skips_the_check_and_a_removed_file_is_reported(arm, tmp_path):
    spec = load(arm)
    _other_program_writes(arm, arm.read_text() + "\n")
    save(spec, arm, expect=None)
    assert load(arm) == spec
    spec2 = load(arm)
    arm.unlink()
    with pytest.raises(ChangedOnDiskError) as info:
        save(spec2, arm)
    assert info.value.found is None and "was removed or renamed since it was loaded" in str(info.value)
    assert not arm.exists()


def test_save_as_another_file_does_not_check_the_loaded_one(arm, tmp_path):
    spec = load(arm)
    _other_program_writes(arm, arm.read_text() + "# theirs\n")
    other = tmp_path / "copy.toml"
    save(spec, other)
    assert spec.stamp.path == str(other)
    with pytest.raises(ChangedOnDiskError):  # an explicit stamp of the changed file still refuses
        save(spec, arm, expect=load(PLANAR).stamp)


# -- links ---------------------------------------------------------------------------------------------


def test_saving_through_a_symbolic_link_writes_its_target(tmp_path):
    real_dir, link_dir = tmp_path / "real", tmp_path / "links"
    real_dir.mkdir()
    link_dir.mkdir()
    target = real_dir / "arm.toml"
    target.write_bytes(PLANAR.read_bytes())
    link = link_dir / "arm.toml"
    link.symlink_to(target)
    spec = load(link)
    spec.joints[0].max = 155
    save(spec, link)
    assert link.is_symlink() and os.readlink(link) == str(target)  # the link stays a link
    assert load(target) == spec
    assert sorted(p.name for p in link_dir.iterdir()) == ["arm.toml"]
    assert sorted(p.name for p in real_dir.iterdir()) == ["arm.toml"]  # no temporary file left beside it
    chain = tmp_path / "chain.toml"  # a link to the link
    chain.symlink_to(link)
    spec.joints[0].max = 156
    save(spec, chain, expect=None)
    assert chain.is_symlink() and link.is_symlink() and load(target).joints[0].max == 156


def test_a_hard_linked_file_is_rewritten_in_place(tmp_path):
    first = tmp_path / "a.toml"
    first.write_bytes(PLANAR.read_bytes())
    second = tmp_path / "b.toml"
    os.link(first, second)
    inode = first.stat().st_ino
    spec = load(first)
    spec.joints[2].max = 110
    save(spec, first)
    assert first.stat().st_ino == second.stat().st_ino == inode and first.stat().st_nlink == 2
    assert load(second) == spec  # both names see the new arm
    assert sorted(p.name for p in tmp_path.iterdir()) == ["a.toml", "b.toml"]  # the backup is gone
    assert not changed_on_disk(spec.stamp)


def test_a_failed_in_place_write_puts_the_old_bytes_back(tmp_path, monkeypatch):
    first = tmp_path / "a.toml"
    first.write_bytes(PLANAR.read_bytes())
    os.link(first, tmp_path / "b.toml")
    spec = load(first)
    spec.joints[2].max = 110
    from poser.io import writing

    real = writing._rewrite
    calls = []

    def fail_once(fh, data):
        calls.append(data)
        if len(calls) == 1:
            fh.write(data[:20])  # half written, then the disk is full
            raise OSError(28, "No space left on device")
        real(fh, data)

    monkeypatch.setattr(writing, "_rewrite", fail_once)
    with pytest.raises(SaveError) as info:
        save(spec, first)
    assert str(info.value) == f"{first}: cannot write the file: No space left on device; its old content was put back"
    assert first.read_bytes() == PLANAR.read_bytes()
    assert sorted(p.name for p in tmp_path.iterdir()) == ["a.toml", "b.toml"]


def test_when_even_the_old_bytes_cannot_be_put_back_the_backup_stays(tmp_path, monkeypatch):
    first = tmp_path / "a.toml"
    first.write_bytes(PLANAR.read_bytes())
    os.link(first, tmp_path / "b.toml")
    spec = load(first)
    spec.name = "x"
    from poser.io import writing

    def always_fail(fh, data):
        raise OSError(5, "Input/output error")

    monkeypatch.setattr(writing, "_rewrite", always_fail)
    with pytest.raises(SaveError) as info:
        save(spec, first)
    (backup,) = [p for p in tmp_path.iterdir() if p.name.endswith(".poser-backup")]
    assert str(info.value) == f"{first}: cannot write the file: Input/output error; its old content is kept in {backup}"
    assert backup.read_bytes() == PLANAR.read_bytes()


# -- permissions ------------------------------------------------------------------------------------------


def test_a_read_only_file_is_not_replaced_without_being_asked(arm):
    spec = load(arm)
    spec.joints[0].max = 150
    arm.chmod(0o444)
    with pytest.raises(ReadOnlyError) as info:
        save(spec, arm)
    assert str(info.value) == (f"{arm}: the file is read-only (permissions 0444); it is not replaced without being "
                               "asked (allow_readonly)")
    assert arm.read_bytes() == PLANAR.read_bytes()
    save(spec, arm, allow_readonly=True)
    assert load(arm) == spec
    assert stat.S_IMODE(arm.stat().st_mode) == 0o444  # still read-only


def test_a_folder_that_takes_no_files_is_reported(tmp_path):
    folder = tmp_path / "locked"
    folder.mkdir()
    existing = folder / "arm.toml"
    existing.write_bytes(PLANAR.read_bytes())
    spec = load(existing)
    spec.joints[0].max = 150
    folder.chmod(0o555)
    try:
        with pytest.raises(FolderNotWritableError) as info:
            save(spec, existing)
        assert str(info.value) == (f"{existing}: cannot save in the folder {folder}: no permission to add files "
                                   "(permissions 0555); save it elsewhere")
        assert info.value.folder == str(folder)
        with pytest.raises(FolderNotWritableError):
            save(spec, folder / "new.toml")
        with pytest.raises(FolderNotWritableError):
            armfile.write_text_atomic(folder / "new.toml", "x")
        assert sorted(p.name for p in folder.iterdir()) == ["arm.toml"]
        assert existing.read_bytes() == PLANAR.read_bytes()
    finally:
        folder.chmod(0o755)


def test_a_path_that_is_not_a_file_is_refused(tmp_path):
    spec = load(PLANAR)
    with pytest.raises(NotARegularFileError) as info:
        save(spec, tmp_path)
    assert str(info.value) == f"{tmp_path}: is a folder, not an arm file" and info.value.kind == "a folder"
    fifo = tmp_path / "pipe.toml"
    os.mkfifo(fifo)
    with pytest.raises(NotARegularFileError, match="is a named pipe"):
        save(spec, fifo)


def test_a_new_file_and_permissions_of_an_old_one(tmp_path, arm):
    spec = load(arm)
    arm.chmod(0o640)
    spec.name = "kept mode"
    save(spec, arm)
    assert stat.S_IMODE(arm.stat().st_mode) == 0o640
    old = os.umask(0o027)
    try:
        save(spec, tmp_path / "fresh.toml")
    finally:
        os.umask(old)
    assert stat.S_IMODE((tmp_path / "fresh.toml").stat().st_mode) == 0o640
