"""A zip member copied as stored: the same compressed bytes, CRC and sizes; the copy reads and tests clean."""
import zipfile

import pytest

from secretary.workbook.zipcopy import copy_member


def _stored_bytes(path, info):
    """A member's data as it lies in the file (after its local header), read independently of zipfile."""
    data = path.read_bytes()
    start = info.header_offset
    name_len = int.from_bytes(data[start + 26:start + 28], "little")
    extra_len = int.from_bytes(data[start + 28:start + 30], "little")
    begin = start + 30 + name_len + extra_len
    return data[begin:begin + info.compress_size]


def test_members_copied_as_stored(tmp_path):
    source, dest = tmp_path / "a.zip", tmp_path / "b.zip"
    with zipfile.ZipFile(source, "w") as z:
        z.writestr("xl/worksheets/sheet1.xml", b"<row>" * 50_000, compress_type=zipfile.ZIP_DEFLATED)
        z.writestr("stored.bin", bytes(range(256)) * 10, compress_type=zipfile.ZIP_STORED)
        z.writestr("Zoë/ünïcode.xml", "ö".encode() * 1000, compress_type=zipfile.ZIP_DEFLATED)
        z.writestr("empty", b"")
    with zipfile.ZipFile(source) as src, zipfile.ZipFile(dest, "w") as out:
        for info in src.infolist():
            copy_member(src, info, out)
        out.writestr("added.xml", b"<new/>")
    with zipfile.ZipFile(source) as a, zipfile.ZipFile(dest) as b:
        assert b.testzip() is None
        assert b.namelist() == a.namelist() + ["added.xml"]
        for old in a.infolist():
            new = b.getinfo(old.filename)
            assert (new.CRC, new.compress_size, new.file_size, new.compress_type) == \
                   (old.CRC, old.compress_size, old.file_size, old.compress_type)
            assert _stored_bytes(dest, new) == _stored_bytes(source, old)
            assert b.read(old.filename) == a.read(old.filename)


def test_an_encrypted_member_is_refused(tmp_path):
    source = tmp_path / "a.zip"
    with zipfile.ZipFile(source, "w") as z:
        z.writestr("x", b"data")
    with zipfile.ZipFile(source) as src, zipfile.ZipFile(tmp_path / "b.zip", "w") as out:
        info = src.infolist()[0]
        info.flag_bits |= 0x1
        with pytest.raises(zipfile.BadZipFile, match="encrypted"):
            copy_member(src, info, out)
