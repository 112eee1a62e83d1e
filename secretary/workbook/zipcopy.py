"""Copying a zip member's compressed bytes from one package to another, without inflating them.

A workbook update keeps the secretary's own sheets byte for byte; inflating
and deflating them again costs most of a save at a million rows.  ``zipfile``
has no public call for a raw copy, so ``copy_member`` writes the member's
local header and data the way ``ZipFile.writestr`` does (the header from
``ZipInfo.FileHeader``, the entry added to the archive's directory) and takes
the CRC and sizes from the source's directory, so a reader checks the data
exactly as before.  Encrypted members are refused (no workbook has them).
"""
from __future__ import annotations

import struct
import zipfile

_UTF8_NAMES = 0x800  # the one general-purpose flag a copy keeps (no data descriptor, no encryption)
_BLOCK = 1 << 20


def copy_member(source: zipfile.ZipFile, info: zipfile.ZipInfo, dest: zipfile.ZipFile) -> None:
    """Append member ``info`` of ``source`` to ``dest`` (open for writing) as it is stored."""
    if info.flag_bits & 0x1:
        raise zipfile.BadZipFile(f"{info.filename} is encrypted")
    fp = source.fp
    fp.seek(info.header_offset)
    header = fp.read(zipfile.sizeFileHeader)
    if len(header) != zipfile.sizeFileHeader:
        raise zipfile.BadZipFile(f"{info.filename}: truncated header")
    fields = struct.unpack(zipfile.structFileHeader, header)
    if fields[zipfile._FH_SIGNATURE] != zipfile.stringFileHeader:
        raise zipfile.BadZipFile(f"{info.filename}: bad header")
    fp.seek(fields[zipfile._FH_FILENAME_LENGTH] + fields[zipfile._FH_EXTRA_FIELD_LENGTH], 1)
    fresh = zipfile.ZipInfo(info.filename, info.date_time)
    fresh.compress_type, fresh.external_attr = info.compress_type, info.external_attr
    fresh.CRC, fresh.compress_size, fresh.file_size = info.CRC, info.compress_size, info.file_size
    fresh.flag_bits = info.flag_bits & _UTF8_NAMES
    out = dest.fp
    fresh.header_offset = out.tell()
    out.write(fresh.FileHeader())
    left = info.compress_size
    while left:
        block = fp.read(min(left, _BLOCK))
        if not block:
            raise zipfile.BadZipFile(f"{info.filename}: truncated data")
        out.write(block)
        left -= len(block)
    dest.start_dir = out.tell()
    dest.filelist.append(fresh)
    dest.NameToInfo[fresh.filename] = fresh
