"""Every bad workbook in the corpus is reported at the right sheet, row and column, or refused."""
from __future__ import annotations

import hashlib

import pytest

from tests.workbook.bad_corpus import BAD_WORKBOOKS
from secretary.errors import SecretaryError
from secretary.workbook.read import read_workbook


def test_corpus_is_large_and_ids_unique():
    ids = [case.case_id for case in BAD_WORKBOOKS]
    assert len(ids) >= 30
    assert len(set(ids)) == len(ids)


@pytest.mark.parametrize("case", BAD_WORKBOOKS, ids=lambda c: c.case_id)
def test_bad_workbook_is_reported_where_it_is(case, tmp_path):
    path = case.build(tmp_path / f"{case.case_id}.xlsx")
    before = hashlib.sha256(path.read_bytes()).hexdigest() if path.is_file() else None
    if case.where is None:
        with pytest.raises(SecretaryError) as refused:
            read_workbook(path)
        assert case.says.casefold() in str(refused.value).casefold(), str(refused.value)
        assert path.name in str(refused.value)
    else:
        book = read_workbook(path)
        matching = [p for p in book.problems if (p.sheet, p.row, p.column) == case.where]
        assert matching, f"nothing at {case.where}; found:\n" + "\n".join(map(str, book.problems))
        assert any(p.severity == case.severity and case.says.casefold() in str(p).casefold() for p in matching), \
            "\n".join(map(str, matching))
        assert book.has_errors == any(p.is_error for p in book.problems)
        if case.severity == "warning":
            assert not book.has_errors, "\n".join(map(str, book.errors))
        assert all(p.fix for p in book.problems)
    if before is not None:  # reading never changes the file
        assert hashlib.sha256(path.read_bytes()).hexdigest() == before
