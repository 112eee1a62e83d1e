"""A finished job's long tuples cross from the background process in pieces and arrive whole and in order."""
from __future__ import annotations

import io
from dataclasses import dataclass

from secretary.gui.worker import PIECE, Failure, Worker, joined, receive, send_result
from tests.workbook.league_books import good_results, write_book


@dataclass(frozen=True)
class Result:
    long: tuple
    short: tuple
    other: tuple
    name: str
    table: dict


def messages(result, kind: str = "done") -> list:
    stream = io.BytesIO()
    send_result(stream, result, kind)
    stream.seek(0)
    out = []
    while (message := receive(stream)) is not None:
        out.append(message)
    return out


def arrived(sent: list):
    pieces: dict[str, list] = {}
    for kind, *rest in sent:
        if kind == "piece":
            pieces.setdefault(rest[0], []).extend(rest[1])
        else:
            return joined(rest[0], pieces)
    raise AssertionError("no result")


def test_long_tuples_come_ahead_in_pieces_of_at_most_piece_items_and_the_result_is_the_same():
    result = Result(long=tuple((k, f"player {k}") for k in range(2 * PIECE + 3)), short=tuple(range(PIECE)),
                    other=tuple(range(PIECE + 1)), name="league", table={"a": [1, 2]})
    sent = messages(result)
    kinds = [m[0] for m in sent]
    assert kinds == ["piece"] * 5 + ["done"]  # 3 pieces of `long`, 2 of `other`; `short` fits in the result
    assert [(m[1], len(m[2])) for m in sent[:5]] == [("long", PIECE), ("long", PIECE), ("long", 3),
                                                      ("other", PIECE), ("other", 1)]
    assert sent[-1][1].long == () and sent[-1][1].short == result.short  # the result itself is small
    assert arrived(sent) == result


def test_a_result_without_long_tuples_is_sent_as_it_is():
    for result in (Result((), (1,), (), "x", {}), "a plain value", None, [1] * (3 * PIECE)):
        sent = messages(result)
        assert [m[0] for m in sent] == ["done"] and arrived(sent) == result


def test_a_failure_with_many_problems_comes_in_pieces_too():
    failure = Failure("3 errors", "problems", tuple(f"problem {k}" for k in range(PIECE + 2)))
    sent = messages(failure, "failed")
    assert [m[0] for m in sent] == ["piece", "piece", "failed"] and arrived(sent) == failure


def test_every_problem_of_a_big_bad_workbook_arrives_through_the_background_process(tmp_path):
    rows = good_results() * (PIECE // 2)  # 4 rows a copy: about 2 PIECEs of rows, each with an error
    for row in rows:
        row[4] = "five"
    bad = write_book(tmp_path / "bad.xlsx", rows)
    worker = Worker()
    try:
        worker.start("check", worker.child.call("check", bad))
        worker.join(300)
        checked = [m for m in worker.poll() if m.kind == "done"][0].value
    finally:
        worker.child.close()
    errors = [(p.sheet, p.row, p.column) for p in checked.problems if p.is_error]
    assert errors == [("Results", k + 2, "Games A") for k in range(len(rows))]
